package broker

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// simLog is an invented log of sensors sensors reading at rate Hz for
// seconds s (a slow sine on a steady field): only its size matters here.
func simLog(sensors int, rate, seconds float64) *ingest.Samples {
	s := &ingest.Samples{Source: "fenwick-lane-sim.csv"}
	for i := 0; i < int(rate*seconds); i++ {
		t := 1764650000 + float64(i)/rate
		for k := 0; k < sensors; k++ {
			s.Time = append(s.Time, t)
			s.Bx = append(s.Bx, 20+5*math.Sin(2*math.Pi*50*t)+float64(k))
			s.By = append(s.By, -3)
			s.Bz = append(s.Bz, 48000)
			s.Group = append(s.Group, fmt.Sprintf("s%d", k+1))
		}
	}
	return s
}

// BenchmarkReplayStoreSync measures what [broker] store_sync = "always"
// costs against the default (a sync every 2 min) on a replay as fast as
// the broker acknowledges (undercurrent replay --speed 0): one op is one
// replay of an invented 20 s log of 5 sensors at 500 Hz cut into 0.1 s
// batches (1000 batches of 50 samples, Arrow) into the embedded broker's
// file store. batches/s is the broker's acknowledged rate; cpu-ns/op is
// the process's CPU time (client and broker together, both in this
// process). Run with -cpu 1 -benchtime 5x; the figures are in README
// "Durability".
func BenchmarkReplayStoreSync(b *testing.B) {
	bs, err := SplitSamples(simLog(5, 500, 20), "fenwick-lane", "", 0.1)
	if err != nil {
		b.Fatal(err)
	}
	for _, c := range []struct {
		name string
		cfg  ServerConfig
	}{{"default", ServerConfig{}}, {"always", ServerConfig{SyncAlways: true}}} {
		b.Run(c.name, func(b *testing.B) {
			cfg := c.cfg
			cfg.MQTTPort, cfg.StoreDir = -1, b.TempDir()
			s, err := StartServer(cfg)
			if err != nil {
				b.Fatal(err)
			}
			defer s.Shutdown()
			nc, err := Connect(s.ClientURL(), "bench", Auth{}) // over loopback TCP, as replay
			if err != nil {
				b.Fatal(err)
			}
			defer nc.Close()
			js, err := jetstream.New(nc)
			if err != nil {
				b.Fatal(err)
			}
			ctx := context.Background()
			if _, err := Setup(ctx, js, StreamSettings{}); err != nil {
				b.Fatal(err)
			}
			b.ResetTimer()
			cpu, start := ingesttest.CPUTime(), time.Now()
			for i := 0; i < b.N; i++ {
				// Each op shifted by 100 s: new batch ids, none a duplicate.
				st, err := Replay(ctx, js, bs, &ReplaySettings{Encoding: ContentArrow, Shift: float64(i+1) * 100})
				if err != nil {
					b.Fatal(err)
				}
				if st.Batches != len(bs) || st.Duplicates != 0 {
					b.Fatalf("replay %+v; want %d batches stored", st, len(bs))
				}
			}
			b.StopTimer()
			b.ReportMetric(float64(b.N*len(bs))/time.Since(start).Seconds(), "batches/s")
			ingesttest.ReportCPU(b, cpu)
		})
	}
}
