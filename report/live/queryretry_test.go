package live

import (
	"context"
	"log/slog"
	"net/http"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// On a three-node cluster 1-4% of history and alarm queries answered 502
// "no responders", logged nowhere: a fetch from a query consumer just
// created can reach the client's node before the consumer's interest
// does. Here the consumer vanishes between its creation and the first
// fetch, which then has no responder, and comes back (as its interest
// arrives) before the query tries again: the query retries the fetch and
// answers as the full-scan reference does.
func TestQueryRetriesFetchWithoutResponders(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 3)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	r.stop(t)
	want := h.estimates()

	var mu sync.Mutex
	var saved *jetstream.ConsumerConfig
	var retried []string
	var ev queryEvents
	ev.on = func(ctx context.Context, event string, n int) {
		if event != "fetch" || n != 1 {
			return
		}
		// The query's consumer: take it away, keeping its settings.
		eachQueryConsumer(ctx, t, h, func(st jetstream.Stream, name string) bool {
			c, err := st.Consumer(ctx, name)
			if err != nil {
				t.Error(err)
				return false
			}
			ci := c.CachedInfo().Config
			mu.Lock()
			saved = &jetstream.ConsumerConfig{Name: ci.Name, FilterSubject: ci.FilterSubject, DeliverPolicy: ci.DeliverPolicy,
				OptStartSeq: ci.OptStartSeq, AckPolicy: ci.AckPolicy, MemoryStorage: ci.MemoryStorage, Replicas: ci.Replicas, InactiveThreshold: ci.InactiveThreshold}
			mu.Unlock()
			if err := st.DeleteConsumer(ctx, name); err != nil {
				t.Error(err)
			}
			return true
		})
	}
	ev.install(r.svc)
	hook := func(step string) {
		mu.Lock()
		defer mu.Unlock()
		retried = append(retried, step)
		if saved != nil {
			// Back before the retry, as the interest reaching the node.
			ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
			defer cancel()
			if _, err := h.js.CreateConsumer(ctx, broker.StreamEstimates, *saved); err != nil {
				t.Error(err)
			}
			saved = nil
		}
	}
	r.svc.queryRetryHook.Store(&hook)
	got, err := r.svc.History(context.Background(), "fenwick-lane", 0, 1e10, 1000)
	if err != nil {
		t.Fatalf("history: %v", err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("history gave %d estimates, the full scan %d", len(got), len(want))
	}
	mu.Lock()
	defer mu.Unlock()
	if len(retried) != 1 || retried[0] != "fetch" {
		t.Errorf("steps retried: %v, want one fetch", retried)
	}
	if k := h.queryConsumers(); k != 0 {
		t.Errorf("%d query consumers left", k)
	}
}

// A query the broker keeps failing answers 502 after its retries, and
// the failure is logged at WARN with the request (it was logged nowhere).
func TestQueryFailureLogged(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	var logs syncBuffer
	svc, _ := h.runConfig(t, Config{Site: testSite(t, testSiteText), Worker: "w1", NewEstimator: newMean, Logger: slog.New(slog.NewTextHandler(&logs, nil))}, "w1")
	h.publish(0, 3)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	var ev queryEvents
	ev.on = func(ctx context.Context, event string, n int) {
		if event != "fetch" {
			return
		}
		eachQueryConsumer(ctx, t, h, func(st jetstream.Stream, name string) bool {
			st.DeleteConsumer(ctx, name) // gone for good: every fetch has no responder
			return true
		})
	}
	ev.install(svc)
	var mu sync.Mutex
	retries := 0
	hook := func(string) { mu.Lock(); retries++; mu.Unlock() }
	svc.queryRetryHook.Store(&hook)
	resp, err := http.Get("http://" + svc.HTTPAddr() + "/api/v1/assets/fenwick-lane/history?limit=1000")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusBadGateway {
		t.Errorf("history answered %d, want 502", resp.StatusCode)
	}
	mu.Lock()
	if retries != queryRetries {
		t.Errorf("%d retries, want %d", retries, queryRetries)
	}
	mu.Unlock()
	line := ""
	for _, l := range strings.Split(logs.String(), "\n") {
		if strings.Contains(l, "API request failed") {
			line = l
		}
	}
	for _, want := range []string{"level=WARN", "path=/api/v1/assets/fenwick-lane/history", `query="limit=1000"`, "status=502", "no responders"} {
		if !strings.Contains(line, want) {
			t.Errorf("failure log %q lacks %q", line, want)
		}
	}
}

// eachQueryConsumer calls f with the estimates stream and the name of
// each query consumer on it (uc_query_*) until f returns false; failing
// to find the stream is reported with t.Error.
func eachQueryConsumer(ctx context.Context, t testing.TB, h *harness, f func(st jetstream.Stream, name string) bool) {
	t.Helper()
	st, err := h.js.Stream(ctx, broker.StreamEstimates)
	if err != nil {
		t.Error(err)
		return
	}
	for name := range st.ConsumerNames(ctx).Name() {
		if strings.HasPrefix(name, "uc_query_") && !f(st, name) {
			return
		}
	}
}
