package live

import (
	"context"
	"log/slog"
	"math"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// A worker whose lease is lost while its consumer is stalled (a broker
// outage: the client's iterator neither delivers nor finishes a drain)
// stops processing the asset at once, without waiting for the stalled
// reader; its lease loop goes on heartbeating and takes the asset again
// once it is free; and only the holder of the lease processes each
// window. Before the fix the lease loop waited, holding the service's
// lock, for the old processing to drain, which never came: no heartbeat,
// no re-acquisition, no shutdown, and the stalled messages, once
// delivered, were processed by a worker without the lease.
//
// The lease is taken from worker wa by writing worker wb's name into it
// (as wb's own Create would after the key expired), while every message
// stored after a point is held in wa's reader (deliveryGate).
func TestLeaseLostStopsProcessing(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, shortResumeSite)
	g := newStallGate(t, h)
	logs := &syncBuffer{}
	stopA := startWorker(t, h, site, "wa", slog.New(slog.NewTextHandler(logs, nil)))
	leases := h.leases()
	workers, err := h.js.KeyValue(context.Background(), broker.BucketWorkers)
	if err != nil {
		t.Fatal(err)
	}
	holder := func() string {
		e, err := leases.Get(context.Background(), "fenwick-lane")
		if err != nil {
			return ""
		}
		return string(e.Value())
	}
	waitFor(t, 20*time.Second, "wa to hold the asset", func() bool { return holder() == "wa" })
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "wa's estimates of windows 0 and 1", func() bool { return len(h.estimates()) >= 2 })

	// Stall wa's consumer, store windows 2 and 3, and take the lease.
	g.holdNew()
	h.publish(1, 1)
	if _, err := leases.Put(context.Background(), "fenwick-lane", []byte("wb")); err != nil {
		t.Fatal(err)
	}
	defer func() {
		if t.Failed() {
			t.Log(logs.String())
		}
	}()
	// The lease loop goes on: two more heartbeats mean a round has found
	// the lease lost (the first round to renew after the Put) and the
	// next one has run, which the loop blocked on the stalled drain never
	// reached.
	hb, err := workers.Get(context.Background(), "wa")
	if err != nil {
		t.Fatal(err)
	}
	waitFor(t, 30*time.Second, "wa to heartbeat twice after its lease was taken", func() bool {
		e, err := workers.Get(context.Background(), "wa")
		return err == nil && e.Revision() >= hb.Revision()+2
	})
	// The stalled messages are delivered now; wa must not process them.
	g.open()
	stopB := startWorker(t, h, site, "wb", nil)
	h.publish(2, 1)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	stopB() // hands the lease back: wa takes the asset again
	waitFor(t, 30*time.Second, "wa to take the asset again", func() bool { return holder() == "wa" })
	h.publish(3, 1)
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	stopA()

	ests := h.estimates()
	checkExactlyOnce(t, ests, 8)
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	for _, e := range ests {
		k := e.Window - k0
		want := "wa"
		if k >= 2 && k < 6 {
			want = "wb" // stored while wb held the lease
		}
		if e.Worker != want {
			t.Errorf("window %d was processed by %s, want %s (the lease holder)", k, e.Worker, want)
		}
	}
}

// A stop (SIGTERM) while the worker's consumer is stalled, as in a broker
// outage, returns: the drain reads what the consumer delivers for a
// bounded time, then stops reading and writes its checkpoint. Before the
// fix it waited for the consumer to finish the drain, which a stalled one
// never does, and serve did not exit. Nothing is lost: the next holder
// reads the held messages from the checkpoint, and every window has
// exactly one estimate.
func TestShutdownWithStalledConsumerReturns(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, shortResumeSite)
	g := newStallGate(t, h)
	stopA := startWorker(t, h, site, "wa", nil)
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "wa's estimates of windows 0 and 1", func() bool { return len(h.estimates()) >= 2 })
	g.holdNew()
	h.publish(1, 1)
	stopA() // fails the test unless Run returns
	g.open()
	stopB := startWorker(t, h, site, "wb", nil)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	stopB()
	checkExactlyOnce(t, h.estimates(), 4)
}

// stallGate holds, in every worker's reader (deliveryGate), each message
// stored after the point holdNew marks, until open: a consumer stalled as
// by a broker outage.
type stallGate struct {
	t         *testing.T
	h         *harness
	mu        sync.Mutex
	blockFrom uint64 // first stream sequence held; 0 holds nothing
	release   chan struct{}
	opened    bool
}

func newStallGate(t *testing.T, h *harness) *stallGate {
	g := &stallGate{t: t, h: h, release: make(chan struct{})}
	deliveryGate = func(m jetstream.Msg) {
		md, err := m.Metadata()
		g.mu.Lock()
		from := g.blockFrom
		g.mu.Unlock()
		if err == nil && from > 0 && md.Sequence.Stream >= from {
			<-g.release
		}
	}
	t.Cleanup(func() { g.open(); deliveryGate = nil })
	return g
}

// holdNew holds every message stored from now on.
func (g *stallGate) holdNew() {
	g.t.Helper()
	ds, err := g.h.js.Stream(context.Background(), broker.StreamData)
	if err != nil {
		g.t.Fatal(err)
	}
	info, err := ds.Info(context.Background())
	if err != nil {
		g.t.Fatal(err)
	}
	g.mu.Lock()
	g.blockFrom = info.State.LastSeq + 1
	g.mu.Unlock()
}

// open lets the held messages through and removes the gate.
func (g *stallGate) open() {
	g.mu.Lock()
	defer g.mu.Unlock()
	if !g.opened {
		g.opened = true
		g.blockFrom = 0
		close(g.release)
	}
}

// startWorker runs a service as worker with the test estimator; the
// function returned stops it and fails the test unless Run returns
// within 30 s.
func startWorker(t *testing.T, h *harness, site *Site, worker string, logger *slog.Logger) (stop func()) {
	t.Helper()
	_, stopRun := h.runConfig(t, Config{Site: site, Worker: worker, NewEstimator: newMean, Logger: logger}, worker)
	return func() {
		t.Helper()
		done := make(chan error, 1)
		go func() { done <- stopRun() }()
		select {
		case err := <-done:
			if err != nil {
				t.Errorf("worker %s: Run: %v", worker, err)
			}
		case <-time.After(30 * time.Second):
			t.Fatalf("worker %s did not stop within 30 s of its shutdown", worker)
		}
	}
}

// shortResumeSite is testSiteText with resume_idle as short as idle, so
// that windows a worker rebuilds from data stored before it took the
// asset (a backlog) close on idle as quickly as live ones.
var shortResumeSite = strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nresume_idle = \"400ms\"", 1)
