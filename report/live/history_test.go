package live

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	dto "github.com/prometheus/client_model/go"

	"undercurrent/ingest/broker"
)

// storeHistory publishes windows [k0, k1) of estimates for both assets of
// the two-asset test site, with an over-current alarm on fenwick-lane
// every third window and a step alarm on harrow-fen-busbar every fifth.
func (h *harness) storeHistory(k0, k1 int) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	pub := func(subject string, v any) {
		data, _ := json.Marshal(v)
		if _, err := h.js.PublishMsgAsync(&nats.Msg{Subject: subject, Data: data}); err != nil {
			h.t.Fatal(err)
		}
	}
	for k := k0; k < k1; k++ {
		start := t0 + 0.5*float64(k)
		for _, a := range []string{"fenwick-lane", "harrow-fen-busbar"} {
			pub(broker.EstimateSubject(a), Estimate{Asset: a, Window: int64(k), Start: start, End: start + 0.5, Mode: "dc",
				Conductors: []ConductorEstimate{{Name: "go", Current: float64(k)}}, Quality: "good"})
		}
		if k%3 == 0 {
			pub(broker.AlarmSubject("fenwick-lane", AlarmOverCurrent), Alarm{Asset: "fenwick-lane", Kind: AlarmOverCurrent, Window: int64(k), Start: start, End: start + 0.5})
		}
		if k%5 == 0 {
			pub(broker.AlarmSubject("harrow-fen-busbar", AlarmStep), Alarm{Asset: "harrow-fen-busbar", Kind: AlarmStep, Window: int64(k), Start: start, End: start + 0.5})
		}
	}
	select {
	case <-h.js.PublishAsyncComplete():
	case <-ctx.Done():
		h.t.Fatal("history not stored within 60 s")
	}
}

// allAlarms is the full-scan reference for Alarms.
func (h *harness) allAlarms(filter string, keep func(Alarm) bool) []Alarm {
	h.t.Helper()
	out := []Alarm{}
	err := scan(context.Background(), h.js, broker.StreamAlarms, filter, func(d []byte) bool {
		var a Alarm
		if err := json.Unmarshal(d, &a); err != nil {
			h.t.Fatal(err)
		}
		if keep(a) {
			out = append(out, a)
		}
		return true
	})
	if err != nil {
		h.t.Fatal(err)
	}
	return out
}

// A query for a narrow, late window of a long history is positioned by the
// broker: it reads about as many messages as it returns (counted by
// uc_query_messages_read_total), and returns exactly what a full scan of
// the stream returns.
func TestHistoryReadsOnlyTheRange(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(twoAssetSite(t), "w1")
	const n = 2000
	h.storeHistory(0, n/2)
	mid := time.Now()
	waitFor(t, 5*time.Second, "the broker clock to move past the first half", func() bool { return time.Since(mid) > 20*time.Millisecond })
	h.storeHistory(n/2, n)
	ctx := context.Background()
	reads := func(q string) float64 {
		var m dto.Metric
		if err := r.svc.met.queryReads.WithLabelValues(q).Write(&m); err != nil {
			t.Fatal(err)
		}
		return m.GetCounter().GetValue()
	}

	// Reference: the whole stream.
	full := h.estimatesOf("fenwick-lane")
	if len(full) != n {
		t.Fatalf("%d estimates stored, want %d", len(full), n)
	}
	cases := []struct {
		name       string
		from, to   float64
		limit      int
		want       []Estimate
		maxReads   float64
		checkReads bool
	}{
		// 10 late windows: 10 results, at most 1 past the end, and about
		// log2(8000 stored messages) = 13 positioning probes.
		{"late10", t0 + 0.5*1990, t0 + 0.5*2000, 100, full[1990:2000], 40, true},
		{"middle", t0 + 0.5*700 - 0.1, t0 + 0.5*710 - 0.1, 100, full[700:710], 40, true},
		{"limited", t0 + 0.5*1500, t0 + 1e6, 25, full[1500:1525], 60, true},
		{"first", -1e300, t0 + 0.5*3, 100, full[0:3], 40, true},
		{"before", t0 - 100, t0 - 10, 100, []Estimate{}, 40, true},
		{"after", t0 + 1e4, t0 + 2e4, 100, []Estimate{}, 40, true},
		{"empty range", t0 + 10, t0 + 10, 100, []Estimate{}, 0, true},
		{"all", -1e300, 1e300, DefaultQueryLimit, full, 1e9, false},
	}
	for _, c := range cases {
		before := reads("history")
		got, err := r.svc.History(ctx, "fenwick-lane", c.from, c.to, c.limit)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		used := reads("history") - before
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s: %d estimates differ from the full scan's %d", c.name, len(got), len(c.want))
		}
		if c.checkReads && used > c.maxReads {
			t.Errorf("%s: read %v messages for %d results, want at most %v (the stream holds %d estimates)", c.name, used, len(got), c.maxReads, 2*n)
		}
		t.Logf("%s: %d results, %v messages read", c.name, len(got), used)
	}

	// Alarms: one asset and kind, every asset, and since.
	from, to := t0+0.5*1900, t0+0.5*1960
	inRange := func(a Alarm) bool { return a.Start >= from && a.Start < to }
	before := reads("alarms")
	got, err := r.svc.Alarms(ctx, "fenwick-lane", AlarmOverCurrent, from, to, time.Time{}, 100)
	if err != nil {
		t.Fatal(err)
	}
	if want := h.allAlarms(broker.AlarmSubject("fenwick-lane", AlarmOverCurrent), inRange); !reflect.DeepEqual(got, want) || len(want) != 20 {
		t.Errorf("fenwick-lane over-current alarms: got %d, full scan %d (want 20)", len(got), len(want))
	}
	if used := reads("alarms") - before; used > 40 {
		t.Errorf("one asset's alarms: read %v messages for %d results", used, len(got))
	}
	before = reads("alarms")
	got, err = r.svc.Alarms(ctx, "", "", from, to, time.Time{}, 100)
	if err != nil {
		t.Fatal(err)
	}
	want := h.allAlarms(broker.AlarmPrefix+".>", inRange) // fenwick-lane then the busbar within each window
	byStart := func(as []Alarm) map[string]int {
		m := map[string]int{}
		for _, a := range as {
			m[fmt.Sprintf("%s/%d/%s", a.Asset, a.Window, a.Kind)]++
		}
		return m
	}
	if len(got) != 32 || !reflect.DeepEqual(byStart(got), byStart(want)) {
		t.Errorf("all alarms: got %d, full scan %d (want 20 + 12)", len(got), len(want))
	}
	for i := 1; i < len(got); i++ {
		if got[i].Start < got[i-1].Start {
			t.Errorf("alarms not sorted by start at %d: %v after %v", i, got[i].Start, got[i-1].Start)
		}
	}
	if used := reads("alarms") - before; used > 80 {
		t.Errorf("all alarms: read %v messages for %d results", used, len(got))
	}
	got, err = r.svc.Alarms(ctx, "harrow-fen-busbar", "", -1e300, 1e300, mid, 1000)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 200 || got[0].Window != n/2 {
		t.Errorf("busbar alarms since the middle: %d from window %v, want 200 from %d", len(got), got[0].Window, n/2)
	}

	// The API: limits, since, bad parameters.
	base := "http://" + r.svc.HTTPAddr()
	for path, code := range map[string]int{
		"/api/v1/assets/fenwick-lane/history?limit=0":          400,
		"/api/v1/assets/fenwick-lane/history?limit=100001":     400,
		"/api/v1/assets/fenwick-lane/history?limit=7":          200,
		"/api/v1/alarms?kind=over.current":                     400,
		"/api/v1/alarms?since=" + mid.Format(time.RFC3339Nano): 200,
		"/api/v1/alarms?since=noon":                            400,
	} {
		resp, err := http.Get(base + path)
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		if resp.StatusCode != code {
			t.Errorf("GET %s: %d %s, want %d", path, resp.StatusCode, body, code)
		}
		if strings.HasSuffix(path, "limit=7") {
			var es []Estimate
			if json.Unmarshal(body, &es); len(es) != 7 || es[0].Window != 0 {
				t.Errorf("GET %s: %d estimates", path, len(es))
			}
		}
		if strings.Contains(path, "since=20") {
			var as []Alarm
			json.Unmarshal(body, &as)
			if len(as) != 333+200 {
				t.Errorf("GET %s: %d alarms, want 333 + 200", path, len(as))
			}
		}
	}
	r.stop(t)
}

// BenchmarkHistoryLateWindow times a query for 10 late windows of a
// 2,000-window history of two assets (4,000 stored estimates), against
// a full scan of the asset's estimates.
func BenchmarkHistoryLateWindow(b *testing.B) {
	h := newHarness(b)
	r := h.start(twoAssetSite(b), "w1")
	h.storeHistory(0, 2000)
	ctx := context.Background()
	b.Run("positioned", func(b *testing.B) {
		for b.Loop() {
			got, err := r.svc.History(ctx, "fenwick-lane", t0+0.5*1990, t0+0.5*2000, 100)
			if err != nil || len(got) != 10 {
				b.Fatal(len(got), err)
			}
		}
	})
	b.Run("fullscan", func(b *testing.B) {
		for b.Loop() {
			n := 0
			err := scan(ctx, h.js, broker.StreamEstimates, broker.EstimateSubject("fenwick-lane"), func(d []byte) bool {
				if s, ok := startOf(d); ok && s >= t0+0.5*1990 && s < t0+0.5*2000 {
					n++
				}
				return true
			})
			if err != nil || n != 10 {
				b.Fatal(n, err)
			}
		}
	})
	r.stop(b)
}
