package live

import (
	"context"
	"errors"
	"fmt"
	"net/http"
	"reflect"
	"sync"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// queryEvents records the query hook's events.
type queryEvents struct {
	mu sync.Mutex
	n  map[string]int
	on func(ctx context.Context, event string, n int) // n: count of event so far
}

func (e *queryEvents) install(s *Service) {
	e.n = map[string]int{}
	f := func(ctx context.Context, event string) {
		e.mu.Lock()
		e.n[event]++
		n := e.n[event]
		e.mu.Unlock()
		if e.on != nil {
			e.on(ctx, event, n)
		}
	}
	s.queryHook.Store(&f)
}

func (e *queryEvents) counts() map[string]int {
	e.mu.Lock()
	defer e.mu.Unlock()
	out := map[string]int{}
	for k, v := range e.n {
		out[k] = v
	}
	return out
}

// queryConsumers is the number of consumers on the streams queries read.
func (h *harness) queryConsumers() int {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	n := 0
	for _, name := range []string{broker.StreamEstimates, broker.StreamAlarms} {
		st, err := h.js.Stream(ctx, name)
		if err != nil {
			h.t.Fatal(err)
		}
		info, err := st.Info(ctx)
		if err != nil {
			h.t.Fatal(err)
		}
		n += info.State.Consumers
	}
	return n
}

// A query makes one broker consumer per subject it reads, however many
// revision runs and alarm chunks it reads (the others are reached by
// resets), and deletes it before it returns: after an answer, after a
// cancelled context at each step (the consumer just created, a fetch,
// a reset), and when the HTTP client goes away mid-query. The counts
// are checked at once after the call, well inside the broker's 10 s
// inactivity threshold, so a consumer the query forgot would be seen.
// The answers are those of the full-scan reference (latestReference).
func TestQueryConsumerOnePerQuery(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.startRevisions(t)
	w := func(k float64) float64 { return t0 + 0.5*k }
	fullEst := h.estimatesOf("fenwick-lane")
	estStart, estRev := func(e Estimate) float64 { return e.Start }, func(e Estimate) int { return e.Revision }
	estKey := func(e Estimate) string { return fmt.Sprint(e.Window) }

	// Answers: one consumer per query, reset to each further run.
	var ev queryEvents
	ev.install(r.svc)
	for _, c := range []struct {
		name          string
		from, to      float64
		created, rset int // consumers created; resets
	}{
		// Three runs hold the range: one consumer, moved twice.
		{"three runs", w(1090), w(1110), 1, 2},
		// Nothing in range: the positioning lookups tell, no consumer.
		{"nothing", w(-100), w(-10), 0, 0},
		// One run, many messages: one consumer, never moved.
		{"one run", w(100), w(400), 1, 0},
	} {
		ev.install(r.svc)
		got, err := r.svc.History(context.Background(), "fenwick-lane", c.from, c.to, 1000, AllRevisions())
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if want := latestReference(fullEst, true, c.from, c.to, 1000, estStart, estRev, estKey); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: %d estimates differ from the reference's %d", c.name, len(got), len(want))
		}
		n := ev.counts()
		if n["created"] != c.created || n["reset"] != c.rset {
			t.Errorf("%s: %d consumers created and %d resets, want %d and %d", c.name, n["created"], n["reset"], c.created, c.rset)
		}
		if k := h.queryConsumers(); k != 0 {
			t.Errorf("%s: %d consumers left after the query", c.name, k)
		}
	}
	// A broker without the consumer reset: a consumer per read, one at
	// a time, the same answer, nothing left.
	r.svc.noConsumerReset.Store(true)
	ev.install(r.svc)
	got, err := r.svc.History(context.Background(), "fenwick-lane", w(1090), w(1110), 1000, AllRevisions())
	if want := latestReference(fullEst, true, w(1090), w(1110), 1000, estStart, estRev, estKey); err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("without reset: %d estimates (%v) differ from the reference's %d", len(got), err, len(want))
	}
	if n := ev.counts(); n["created"] != 3 || n["reset"] != 0 {
		t.Errorf("without reset: %d consumers created and %d resets, want 3 and 0", n["created"], n["reset"])
	}
	if k := h.queryConsumers(); k != 0 {
		t.Errorf("without reset: %d consumers left after the query", k)
	}
	r.svc.noConsumerReset.Store(false)

	// The alarm listing reads its chunks through one consumer too.
	ev.install(r.svc)
	if _, err := r.svc.Alarms(context.Background(), "fenwick-lane", AlarmOverCurrent, w(480), w(1e6), time.Time{}, 30); err != nil {
		t.Fatal(err)
	}
	if n := ev.counts(); n["created"] != 1 {
		t.Errorf("alarm listing: %d consumers created, want 1 (%v)", n["created"], n)
	}
	if k := h.queryConsumers(); k != 0 {
		t.Errorf("alarm listing: %d consumers left after the query", k)
	}

	// Cancelled at each step: the query fails with the context's error
	// and leaves nothing behind.
	for _, step := range []struct {
		event string
		n     int
	}{{"created", 1}, {"fetch", 1}, {"fetch", 3}, {"reset", 1}, {"reset", 2}} {
		ctx, cancel := context.WithCancel(context.Background())
		ev.on = func(_ context.Context, event string, n int) {
			if event == step.event && n == step.n {
				cancel()
			}
		}
		ev.install(r.svc)
		_, err := r.svc.History(ctx, "fenwick-lane", w(1090), w(1110), 1000, AllRevisions())
		cancel()
		if !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled at %s %d: error %v, want context.Canceled", step.event, step.n, err)
		}
		if k := h.queryConsumers(); k != 0 {
			t.Errorf("cancelled at %s %d: %d consumers left after the query", step.event, step.n, k)
		}
	}

	// The HTTP client goes away during the second fetch: the handler's
	// context ends, the query stops and deletes its consumer.
	reqCtx, drop := context.WithCancel(context.Background())
	defer drop()
	stopped := make(chan error, 1)
	ev.on = func(ctx context.Context, event string, n int) {
		if event != "fetch" || n != 2 {
			return
		}
		drop()
		select {
		case <-ctx.Done():
			stopped <- nil
		case <-time.After(5 * time.Second):
			stopped <- errors.New("the query's context did not end within 5 s of the client leaving")
		}
	}
	ev.install(r.svc)
	req, _ := http.NewRequestWithContext(reqCtx, "GET", fmt.Sprintf("http://%s/api/v1/assets/fenwick-lane/history?revisions=all&from=%f&to=%f", r.svc.HTTPAddr(), w(1090), w(1110)), nil)
	if resp, err := http.DefaultClient.Do(req); err == nil {
		resp.Body.Close()
		t.Fatalf("the request was answered (%s) although the client left", resp.Status)
	}
	select {
	case err := <-stopped:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("the query never reached its second fetch")
	}
	// The handler returns after the hook; give it a moment, well under
	// the inactivity threshold.
	waitFor(t, 3*time.Second, "the disconnected query's consumer to be deleted", func() bool { return h.queryConsumers() == 0 })
	r.svc.queryHook.Store(nil)
	r.stop(t)
}
