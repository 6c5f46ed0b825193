package live

import (
	"context"
	"fmt"
	"math/rand/v2"
	"runtime"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// loadSiteText returns a site with n assets of 100 three-axis sensors
// (1 s windows, a go/return pair) in the given mode.
func loadSiteText(n int, mode string) string {
	var b strings.Builder
	b.WriteString("[service]\nhttp = \"-\"\nlease_ttl = \"2s\"\nidle = \"2s\"\nmax_message_bytes = 4194304\n")
	for a := 0; a < n; a++ {
		fmt.Fprintf(&b, "[[asset]]\nname = \"load-%d\"\nmode = %q\nfrequency = 50.0\nwindow = \"1s\"\n", a, mode)
		if mode == "dc" {
			b.WriteString("frequency = 0.0\n")
		}
		for s := 0; s < 100; s++ {
			fmt.Fprintf(&b, "  [[asset.sensor]]\n  name = \"s%03d\"\n  position = [%g, %d, 0.3]\n", s, -5+0.1*float64(s), s%7)
		}
		b.WriteString("  [[asset.conductor]]\n  name = \"go\"\n  point = [-0.15, 0, -0.8]\n  direction = [0, 1, 0]\n")
		b.WriteString("  [[asset.conductor]]\n  name = \"return\"\n  point = [0.15, 0, -0.8]\n  direction = [0, 1, 0]\n")
	}
	return strings.Replace(b.String(), "frequency = 50.0\nwindow = \"1s\"\nfrequency = 0.0\n", "window = \"1s\"\n", -1)
}

// loadPayloads encodes seconds of 1 kHz data for every sensor of a as
// Arrow IPC messages of 0.1 s, grouped by tenth of a second.
func loadPayloads(b *testing.B, a *AssetConfig, t0 float64, seconds int) [][]*nats.Msg {
	rng := rand.New(rand.NewPCG(3, 4))
	w := synthWindow(a, []complex128{100, -98}, [3]float64{1520, 17850, -45760}, 0, 1000, 1000, 2, rng)
	var out [][]*nats.Msg
	for sec := 0; sec < seconds; sec++ {
		for tenth := 0; tenth < 10; tenth++ {
			var slice []*nats.Msg
			for si, s := range a.Sensors {
				sr := w.Sensors[si]
				lo, hi := tenth*100, tenth*100+100
				bt := &broker.Batch{Asset: a.Name, Sensor: s.Name, Bx: sr.Bx[lo:hi], By: sr.By[lo:hi], Bz: sr.Bz[lo:hi]}
				for _, tt := range sr.T[lo:hi] {
					bt.Time = append(bt.Time, t0+float64(sec)+tt)
				}
				data, err := broker.EncodeArrow(bt)
				if err != nil {
					b.Fatal(err)
				}
				m := nats.NewMsg(broker.DataSubject(a.Name, s.Name))
				m.Data = data
				m.Header.Set(broker.HeaderContentType, broker.ContentArrow)
				slice = append(slice, m)
			}
			out = append(out, slice)
		}
	}
	return out
}

// runLoad runs workers services on assets assets of 100 sensors at 1 kHz
// for seconds of data, paced at real time or as fast as possible, and
// reports throughput and the latency from the publication of a window's
// last batch to the broker's acknowledgement of its estimate.
func runLoad(b *testing.B, assets, workers int, mode string, paced bool, seconds int) {
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: b.TempDir(), MQTTPort: -1})
	if err != nil {
		b.Fatal(err)
	}
	defer srv.Shutdown()
	site, err := ParseSite("load.toml", []byte(loadSiteText(assets, mode)))
	if err != nil {
		b.Fatal(err)
	}
	t0 := float64(time.Now().Unix() + 2)
	if !paced {
		t0 = 1764650000
	}
	var payloads [][][]*nats.Msg
	for i := range site.Assets {
		payloads = append(payloads, loadPayloads(b, &site.Assets[i], t0, seconds))
	}
	var mu sync.Mutex
	lastPub := map[string]time.Time{} // asset/window -> publication of its last batch
	var lat []float64
	got := 0
	doneAll := make(chan struct{})
	total := assets * seconds
	onEst := func(e *Estimate, _ time.Duration) {
		now := time.Now()
		mu.Lock()
		defer mu.Unlock()
		if p, ok := lastPub[fmt.Sprintf("%s/%d", e.Asset, e.Window)]; ok {
			lat = append(lat, now.Sub(p).Seconds())
		}
		got++
		if got == total {
			close(doneAll)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		nc, err := broker.Connect(srv.ClientURL(), "load", broker.Auth{})
		if err != nil {
			b.Fatal(err)
		}
		defer nc.Close()
		svc, err := New(Config{Site: site, Conn: nc, Worker: fmt.Sprintf("load-w%d", w), OnEstimate: onEst})
		if err != nil {
			b.Fatal(err)
		}
		wg.Add(1)
		go func() { defer wg.Done(); svc.Run(ctx) }()
		<-svc.Ready()
	}
	pub, _ := broker.Connect(srv.ClientURL(), "load-publisher", broker.Auth{})
	defer pub.Close()
	js, _ := jetstream.New(pub, jetstream.WithPublishAsyncMaxPending(8192))
	// Let the workers take their leases before the clock starts.
	time.Sleep(3 * site.Service.LeaseTTL.Duration / 4)
	var ms0 runtime.MemStats
	runtime.ReadMemStats(&ms0)
	b.ResetTimer()
	start := time.Now()
	for i := range payloads[0] {
		if paced {
			due := time.Unix(0, int64((t0+float64(i+1)/10)*1e9))
			time.Sleep(time.Until(due))
		}
		for a := range payloads {
			for _, m := range payloads[a][i] {
				if _, err := js.PublishMsgAsync(m); err != nil {
					b.Fatal(err)
				}
			}
		}
		if i%10 == 9 {
			<-js.PublishAsyncComplete()
			mu.Lock()
			now := time.Now()
			for a := range payloads {
				k := int64(t0) + int64(i/10)
				lastPub[fmt.Sprintf("%s/%d", site.Assets[a].Name, k)] = now
			}
			mu.Unlock()
		}
	}
	select {
	case <-doneAll:
	case <-time.After(time.Duration(seconds)*10*time.Second + 30*time.Second):
		b.Fatalf("only %d of %d estimates", got, total)
	}
	elapsed := time.Since(start)
	b.StopTimer()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	cancel()
	wg.Wait()
	sort.Float64s(lat)
	pct := func(p float64) float64 {
		if len(lat) == 0 {
			return 0
		}
		return 1e3 * lat[min(len(lat)-1, int(p*float64(len(lat))))]
	}
	b.ReportMetric(float64(assets*100*1000*seconds)/elapsed.Seconds(), "samples/s")
	b.ReportMetric(pct(0.5), "p50-ms")
	b.ReportMetric(pct(0.95), "p95-ms")
	b.ReportMetric(pct(0.99), "p99-ms")
	if len(lat) > 0 {
		b.ReportMetric(1e3*lat[len(lat)-1], "max-ms")
	}
	b.ReportMetric(float64(ms.HeapInuse)/(1<<20), "heap-MB")
	b.ReportMetric(float64(ms.TotalAlloc-ms0.TotalAlloc)/float64(assets*seconds)/(1<<20), "alloc-MB/window")
}

// BenchmarkLoad100Sensors1kHz is the load test of issue 6: assets of 100
// three-axis sensors at 1 kHz (0.1 s Arrow batches, 1000 messages per
// second per asset) through the embedded broker with its file store, one
// 1 s window per asset per second, on the fixed-geometry path. Each
// iteration is one second of data. "realtime" publishes at the recorded
// rate and measures the latency from the last batch of a window to the
// acknowledged estimate; "max" publishes as fast as possible for
// throughput. Run with -benchtime=10x.
func BenchmarkLoad100Sensors1kHz(b *testing.B) {
	cases := []struct {
		name            string
		assets, workers int
		mode            string
		paced           bool
	}{
		{"realtime/ac/1asset/1worker", 1, 1, "ac", true},
		{"max/dc/1asset/1worker", 1, 1, "dc", false},
		{"max/ac/1asset/1worker", 1, 1, "ac", false},
		{"max/ac/2assets/1worker", 2, 1, "ac", false},
		{"max/ac/2assets/2workers", 2, 2, "ac", false},
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			runLoad(b, c.assets, c.workers, c.mode, c.paced, max(b.N, 2))
		})
	}
}
