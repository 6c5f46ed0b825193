package live

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"

	"github.com/nats-io/nats.go/jetstream"
)

// Review rv29a, finding 6: the estimate and alarm streams grew without
// bound (6.2 MB a day for one asset) until the store was full. serve now
// gives them [broker] estimate_retention, estimate_max_bytes,
// alarm_retention and alarm_max_bytes, also when the streams were made
// unbounded by an earlier serve, and the history of what is kept is
// still read after the oldest estimates are gone.
func TestRetentionServeBoundsEstimateAndAlarmStreams(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	srv, nc, js := startTestBroker(t, t.TempDir())
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	// The streams as serve made them before: no max age, no byte bound.
	for name, prefix := range map[string]string{broker.StreamEstimates: broker.EstimatePrefix, broker.StreamAlarms: broker.AlarmPrefix} {
		if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: name, Subjects: []string{prefix + ".>"}, Duplicates: time.Hour, AllowDirect: true}); err != nil {
			t.Fatal(err)
		}
	}
	h := &harness{t: t, srv: srv, js: js, nc: nc}
	site := testSite(t, strings.Replace(testSiteText, "[[asset]]", `[broker]
estimate_retention = "720h"
alarm_max_bytes = 2_097_152

[[asset]]`, 1))
	r := h.start(site, "w1")
	for _, want := range []struct {
		name     string
		age      time.Duration
		maxBytes int64
	}{{broker.StreamEstimates, 720 * time.Hour, -1}, {broker.StreamAlarms, broker.DefaultAlarmMaxAge, 2 << 20}} {
		st, err := js.Stream(ctx, want.name)
		if err != nil {
			t.Fatal(err)
		}
		c := st.CachedInfo().Config
		if c.MaxAge != want.age || c.MaxBytes != want.maxBytes || c.Discard != jetstream.DiscardOld {
			t.Errorf("%s after serve started: max age %v, max bytes %d, discard %v; want %v, %d, discard old",
				want.name, c.MaxAge, c.MaxBytes, c.Discard, want.age, want.maxBytes)
		}
	}

	h.publish(0, 5) // windows 0..9
	waitFor(t, 30*time.Second, "10 estimates", func() bool { return len(h.estimates()) >= 10 })
	// The oldest four estimates given up, as the max age or byte bound
	// gives them up.
	est, err := js.Stream(ctx, broker.StreamEstimates)
	if err != nil {
		t.Fatal(err)
	}
	first := est.CachedInfo().State.FirstSeq
	if err := est.Purge(ctx, jetstream.WithPurgeSubject(broker.EstimateSubject("fenwick-lane")), jetstream.WithPurgeSequence(first+4)); err != nil {
		t.Fatal(err)
	}
	get := func(from, to float64) []Estimate {
		t.Helper()
		resp, err := http.Get(fmt.Sprintf("http://%s/api/v1/assets/fenwick-lane/history?from=%.1f&to=%.1f", r.svc.HTTPAddr(), t0+from, t0+to))
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		var hist []Estimate
		if resp.StatusCode != 200 || json.Unmarshal(body, &hist) != nil {
			t.Fatalf("history [%g s, %g s): %d %s", from, to, resp.StatusCode, body)
		}
		return hist
	}
	if hist := get(0, 5); len(hist) != 6 || hist[0].Start != t0+2 || hist[5].Start != t0+4.5 {
		t.Errorf("history of all 5 s with the first 4 windows given up: %d estimates %+v; want the 6 from 2 s to 4.5 s", len(hist), hist)
	}
	if hist := get(0, 2); len(hist) != 0 {
		t.Errorf("history of the 4 windows given up: %+v; want none", hist)
	}
	if hist := get(1, 3); len(hist) != 2 || hist[0].Start != t0+2 {
		t.Errorf("history [1 s, 3 s) across the first kept window: %+v; want 2 s and 2.5 s", hist)
	}
	r.stop(t)
}

// The retention keys are read from [broker]; values under the broker's
// duplicate window, or byte bounds under 1 MiB, are refused by name.
func TestRetentionSiteKeys(t *testing.T) {
	site := func(b string) (*Site, error) {
		return ParseSite("site.toml", []byte("[broker]\n"+b+"\n"+minimalSite))
	}
	s, err := site("estimate_retention = \"2400h\"\nestimate_max_bytes = 5_000_000_000\nalarm_retention = \"43800h\"\nalarm_max_bytes = 100_000_000")
	if err != nil {
		t.Fatal(err)
	}
	b := s.Broker
	if b.EstimateRetention.Duration != 2400*time.Hour || b.EstimateMaxBytes != 5_000_000_000 || b.AlarmRetention.Duration != 43800*time.Hour || b.AlarmMaxBytes != 100_000_000 {
		t.Errorf("[broker] read as %+v", b)
	}
	for _, bad := range []struct{ broker, want string }{
		{`estimate_retention = "10m"`, "broker.estimate_retention 10m0s: want at least 1h"},
		{`alarm_retention = "-1h"`, "broker.alarm_retention -1h0m0s: want at least 1h"},
		{"estimate_max_bytes = 1000", "broker.estimate_max_bytes 1000: want 0"},
		{"alarm_max_bytes = -1", "broker.alarm_max_bytes -1: want 0"},
	} {
		if _, err := site(bad.broker); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("%q: error %v, want one containing %q", bad.broker, err, bad.want)
		}
	}
}

// A byte bound the store cannot reserve stops serve with advice naming
// the setting to lower.
func TestRetentionBoundAdvice(t *testing.T) {
	s := &Site{}
	for stream, key := range map[string]string{broker.StreamEstimates: "broker.estimate_max_bytes", broker.StreamAlarms: "broker.alarm_max_bytes"} {
		for _, external := range []bool{false, true} {
			if got := s.boundAdvice(&broker.BoundError{Stream: stream, MaxBytes: 1 << 40}, external); !strings.Contains(got, key) {
				t.Errorf("%s (external %v): advice %q lacks %s", stream, external, got, key)
			}
		}
	}
}
