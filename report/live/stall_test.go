package live

import (
	"context"
	"io"
	"net/http"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// Losing the broker node that serves a worker's ordered consumer stalls
// delivery while the stream, on the surviving nodes, goes on storing (and
// acknowledging) the publishers' batches. The stall must not pass for the
// publishers' silence: the window open at the time is not closed on idle
// with what it has, and the rest of its data, once delivered, is used
// rather than refused as late. The stall is simulated by holding every
// message stored after a point in the worker's reader (deliveryGate).
func TestIdleCloseWaitsForStalledConsumer(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	// Idle 400 ms, 0.5 s windows; resume_idle as short, in case the worker
	// takes the asset after the first batches are stored (a backlog).
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nresume_idle = \"400ms\"", 1))
	var (
		mu        sync.Mutex
		blockFrom uint64 // first stream sequence held; 0 holds nothing
	)
	release := make(chan struct{})
	deliveryGate = func(m jetstream.Msg) {
		md, err := m.Metadata()
		mu.Lock()
		from := blockFrom
		mu.Unlock()
		if err == nil && from > 0 && md.Sequence.Stream >= from {
			<-release
		}
	}
	released := false
	defer func() {
		if !released {
			close(release)
		}
		deliveryGate = nil
	}()
	r := h.start(site, "w1")
	metrics := func() string {
		resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		return string(body)
	}
	h.publish(0, 1.2) // windows 0 and 1, and 20 of window 2's 50 samples per sensor
	waitSamples(t, "the worker to read 1.2 s of data", metrics, func(n float64) bool { return n == 360 })
	ds, err := h.js.Stream(context.Background(), broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	info, err := ds.Info(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	mu.Lock()
	blockFrom = info.State.LastSeq + 1
	mu.Unlock()
	h.publish(1.2, 0.8) // the rest of window 2, and window 3: stored, not delivered
	k0 := int64(t0 / 0.5)
	waitFor(t, 30*time.Second, "window 2 to be published or its idle close put off", func() bool {
		if strings.Contains(metrics(), `uc_consumer_stalls_total{asset="fenwick-lane"} 1`) {
			return true
		}
		for _, e := range h.estimates() {
			if e.Window-k0 == 2 {
				return true
			}
		}
		return false
	})
	close(release)
	released = true
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	if m := metrics(); strings.Contains(m, `reason="late"`) {
		t.Error("data for window 2, stored while the consumer was stalled, was dead-lettered as late")
	}
	r.stop(t)
	checkExactlyOnce(t, h.estimates(), 4) // 150 samples from 3 sensors in each
}

// While the data stream cannot be read (a cluster with no stream leader:
// the publishers cannot store either), an idle close waits, for up to
// resume_idle; when the stream answers again holding nothing newer, the
// publishers' idle time starts again from then.
func TestIdleCloseWhileStreamUnreadable(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: t.TempDir(), MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	nc, err := broker.Connect(srv.ClientURL(), "w1", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	site := testSite(t, testSiteText)
	svc, err := New(Config{Site: site, Conn: nc, Worker: "w1", NewEstimator: newMean})
	if err != nil {
		t.Fatal(err)
	}
	idle, resume := site.Service.Idle.Duration, site.Service.ResumeIdle.Duration
	at := time.Unix(1796105800, 0)
	worker := func() *assetWorker {
		w, err := svc.newAssetWorker(site.Asset("fenwick-lane"))
		if err != nil {
			t.Fatal(err)
		}
		w.asm.add(0, 1, mkBatch(t0, 100, 10, 0), at) // an open window
		return w
	}
	// No UC_DATA stream yet: every lookup fails.
	w1 := worker()
	if err := w1.closeReady(at.Add(idle), idle); err != nil {
		t.Fatal(err)
	}
	if len(w1.asm.open) != 1 {
		t.Fatal("the window closed on idle while the data stream could not be read")
	}
	if wait, _ := w1.storedAhead(at.Add(idle + resume/2)); !wait {
		t.Error("stopped waiting for the data stream before resume_idle")
	}
	if wait, _ := w1.storedAhead(at.Add(idle + resume)); wait {
		t.Error("still waiting for the data stream after resume_idle")
	}

	w2 := worker()
	if err := w2.closeReady(at.Add(idle), idle); err != nil {
		t.Fatal(err)
	}
	js, _ := jetstream.New(nc)
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	if _, err := broker.Setup(ctx, js, broker.StreamSettings{}); err != nil {
		t.Fatal(err)
	}
	back := at.Add(idle + 2*stallLookEvery) // the stream answers, holding nothing
	if err := w2.closeReady(back, idle); err != nil {
		t.Fatal(err)
	}
	if len(w2.asm.open) != 1 || !w2.asm.arrival.Equal(back) {
		t.Errorf("stream readable again: %d windows open, idle counted from %v; want the window open, idle from %v", len(w2.asm.open), w2.asm.arrival, back)
	}
	if wait, restart := w2.storedAhead(back.Add(idle)); wait || restart {
		t.Error("idle after the stream came back, with nothing newer stored: the close still waits")
	}
}
