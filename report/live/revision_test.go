package live

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	dto "github.com/prometheus/client_model/go"

	"undercurrent/ingest/broker"
)

// A restart that re-reads windows 2 and 3 leaves two stored estimates of
// each; history returns one per window, revision 1 for 2 and 3 and 0 for
// 0 and 1, in window order, unless revisions=all asks for every one. The
// over-current alarm of window 3 (1031 A against max_current 1025 A) is
// raised in both revisions and listed once, at revision 1. The expected
// currents are meanEstimator's on the harness data (1001 + 10 k A).
func TestHistoryAfterRestartLatestRevision(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, strings.Replace(testSiteText, "max_current = 1035", "max_current = 1025", 1)), "w1")
	h.publish(0, 1) // windows 0, 1
	time.Sleep(20 * time.Millisecond)
	mark := time.Now().UTC().Format(time.RFC3339Nano)
	time.Sleep(20 * time.Millisecond)
	h.publish(1, 1) // windows 2, 3
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	req := requestRestart(t, r, "", `{"start": "`+mark+`"}`)
	waitApplied(t, r, req.ID)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })

	from, to := fmt.Sprintf("%.3f", t0), fmt.Sprintf("%.3f", t0+3) // windows 0..5
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	type wr struct {
		Window   int64
		Revision int
	}
	windows := func(es []Estimate) []wr {
		var out []wr
		for _, e := range es {
			out = append(out, wr{e.Window - k0, e.Revision})
			if want := 1001 + 10*float64(e.Window-k0); len(e.Conductors) != 1 || e.Conductors[0].Current != want {
				t.Errorf("window %d revision %d: conductors %+v, want %v A", e.Window-k0, e.Revision, e.Conductors, want)
			}
		}
		return out
	}
	var latest, all []Estimate
	if code, body := call(t, r, "GET", "/api/v1/assets/fenwick-lane/history?from="+from+"&to="+to, "", ""); code != 200 || json.Unmarshal([]byte(body), &latest) != nil {
		t.Fatalf("history: %d %s", code, body)
	}
	if got, want := windows(latest), []wr{{0, 0}, {1, 0}, {2, 1}, {3, 1}}; !reflect.DeepEqual(got, want) {
		t.Errorf("history after the restart: %v, want %v", got, want)
	}
	if code, body := call(t, r, "GET", "/api/v1/assets/fenwick-lane/history?revisions=all&from="+from+"&to="+to, "", ""); code != 200 || json.Unmarshal([]byte(body), &all) != nil {
		t.Fatalf("history revisions=all: %d %s", code, body)
	}
	if got, want := windows(all), []wr{{0, 0}, {1, 0}, {2, 0}, {2, 1}, {3, 0}, {3, 1}}; !reflect.DeepEqual(got, want) {
		t.Errorf("history revisions=all: %v, want %v", got, want)
	}
	// The payload field: written in revision 0 too (schema version 1),
	// as the CSV writes it.
	_, body := call(t, r, "GET", "/api/v1/assets/fenwick-lane/history?revisions=all&from="+from+"&to="+to, "", "")
	if n, n0 := strings.Count(body, `"revision": 1`), strings.Count(body, `"revision": 0`); n != 2 || n0 != 4 {
		t.Errorf("revisions=all JSON holds %d \"revision\": 1 (want 2) and %d \"revision\": 0 (want 4):\n%s", n, n0, body)
	}
	// CSV: the revision comes after the columns the history always had
	// (the 15th), then the geometry's share of the sigmas.
	for q, want := range map[string][]string{"": {"0", "0", "1", "1"}, "&revisions=all": {"0", "0", "0", "1", "0", "1"}} {
		code, body := call(t, r, "GET", "/api/v1/assets/fenwick-lane/history?format=csv&from="+from+"&to="+to+q, "", "")
		rows, err := csv.NewReader(strings.NewReader(body)).ReadAll()
		if code != 200 || err != nil || len(rows) != len(want)+1 {
			t.Fatalf("csv%s: %d %v\n%s", q, code, err, body)
		}
		const rev = 14
		if h := rows[0]; h[0] != "asset" || h[rev] != "revision" || !slices.Contains(h, "current_sigma_geometry_a") || !slices.Contains(h, "phase_sigma_geometry_deg") {
			t.Errorf("csv header %v: want asset first, revision 15th and the geometry's sigma columns", h)
		}
		for i, row := range rows[1:] {
			if row[rev] != want[i] {
				t.Errorf("csv%s row %d: revision %s, want %s", q, i+1, row[rev], want[i])
			}
		}
	}
	if code, _ := call(t, r, "GET", "/api/v1/assets/fenwick-lane/history?revisions=newest", "", ""); code != 400 {
		t.Errorf("revisions=newest: %d, want 400", code)
	}

	// Alarms: window 3's over-current once at revision 1, or both.
	for q, want := range map[string][]int{"": {1}, "&revisions=all": {0, 1}} {
		code, body := call(t, r, "GET", "/api/v1/alarms?asset=fenwick-lane&from="+from+"&to="+to+q, "", "")
		var as []Alarm
		if code != 200 || json.Unmarshal([]byte(body), &as) != nil {
			t.Fatalf("alarms%s: %d %s", q, code, body)
		}
		var revs []int
		for _, a := range as {
			if a.Kind != AlarmOverCurrent || a.Window-k0 != 3 || a.Value != 1031 {
				t.Errorf("alarms%s: unexpected %+v", q, a)
			}
			revs = append(revs, a.Revision)
		}
		if !reflect.DeepEqual(revs, want) {
			t.Errorf("alarms%s: revisions %v, want %v", q, revs, want)
		}
	}
	if code, _ := call(t, r, "GET", "/api/v1/alarms?revisions=2", "", ""); code != 400 {
		t.Errorf("alarms revisions=2: %d, want 400", code)
	}
	r.stop(t)
}

// twoAssetSite is the test site with a second asset, harrow-fen-busbar,
// beside fenwick-lane.
func twoAssetSite(t testing.TB) *Site {
	return testSite(t, testSiteText+strings.Replace(testSiteText[strings.Index(testSiteText, "[[asset]]"):], "fenwick-lane", "harrow-fen-busbar", 1))
}

// startRevisions starts worker w1 on twoAssetSite with three read
// revisions of fenwick-lane stored (windows 0..1299 at revision 0 after
// the busbar's, 500..1199 re-read at 1, 1100..1299 at 2), the fixture of
// the revision-run queries.
func (h *harness) startRevisions(t testing.TB) *running {
	r := h.start(twoAssetSite(t), "w1")
	h.storeRevision(0, 1300, 0, true)
	h.storeRevision(500, 1200, 1, false)
	h.storeRevision(1100, 1300, 2, false)
	return r
}

// storeRevision stores windows [k0, k1) of fenwick-lane at read revision
// rev (with HeaderRevision and the payload field, as the worker does) and,
// when busbar is set, the same windows of the never-restarted
// harrow-fen-busbar. Each revision has its own alarm pattern: an
// over-current every (rev+3)-th window, so re-read windows raise alarms
// that the older revision did not and the reverse.
func (h *harness) storeRevision(k0, k1, rev int, busbar bool) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	pub := func(subject string, rev int, v any) {
		data, _ := json.Marshal(v)
		m := &nats.Msg{Subject: subject, Data: data, Header: nats.Header{}}
		if rev > 0 {
			m.Header.Set(HeaderRevision, strconv.Itoa(rev))
		}
		if _, err := h.js.PublishMsgAsync(m); err != nil {
			h.t.Fatal(err)
		}
	}
	for k := k0; k < k1; k++ {
		start := t0 + 0.5*float64(k)
		pub(broker.EstimateSubject("fenwick-lane"), rev, Estimate{Asset: "fenwick-lane", Window: int64(k), Start: start, End: start + 0.5, Mode: "dc",
			Conductors: []ConductorEstimate{{Name: "go", Current: float64(100*rev + k)}}, Quality: "good", Revision: rev})
		if k%(rev+3) == 0 {
			pub(broker.AlarmSubject("fenwick-lane", AlarmOverCurrent), rev, Alarm{Asset: "fenwick-lane", Kind: AlarmOverCurrent, Subject: "go",
				Window: int64(k), Start: start, End: start + 0.5, Value: float64(100*rev + k), Revision: rev})
		}
		if busbar {
			pub(broker.EstimateSubject("harrow-fen-busbar"), 0, Estimate{Asset: "harrow-fen-busbar", Window: int64(k), Start: start, End: start + 0.5, Mode: "dc",
				Conductors: []ConductorEstimate{{Name: "go", Current: float64(k)}}, Quality: "good"})
		}
	}
	select {
	case <-h.js.PublishAsyncComplete():
	case <-ctx.Done():
		h.t.Fatal("revision not stored within 60 s")
	}
}

// latestReference is the answer History and Alarms must give, computed
// from a full scan of the stream: of each key the last stored message of
// the highest revision, those with start in [from, to), sorted by start,
// the first limit. With all, every message in range sorted by start and
// then revision.
func latestReference[T any](full []T, all bool, from, to float64, limit int, start func(T) float64, rev func(T) int, key func(T) string) []T {
	out := []T{}
	idx := map[string]int{}
	for _, v := range full {
		if s := start(v); s < from || s >= to {
			continue
		}
		if all {
			out = append(out, v)
			continue
		}
		if i, ok := idx[key(v)]; ok {
			if rev(v) >= rev(out[i]) {
				out[i] = v
			}
			continue
		}
		idx[key(v)] = len(out)
		out = append(out, v)
	}
	sort.SliceStable(out, func(i, j int) bool {
		if start(out[i]) != start(out[j]) {
			return start(out[i]) < start(out[j])
		}
		return rev(out[i]) < rev(out[j])
	})
	if len(out) > limit {
		out = out[:limit]
	}
	return out
}

// alarmReference is the answer Alarms must give without AllRevisions,
// from full scans of the alarms and the estimates: of each window the
// alarms of the highest revision that stored an estimate or an alarm of
// it (the last stored of each kind and subject), those with start in
// [from, to), sorted by start, the first limit.
func alarmReference(alarms []Alarm, ests []Estimate, from, to float64, limit int) []Alarm {
	high := map[int64]int{}
	for _, e := range ests {
		high[e.Window] = max(high[e.Window], e.Revision)
	}
	for _, a := range alarms {
		high[a.Window] = max(high[a.Window], a.Revision)
	}
	var top []Alarm
	for _, a := range alarms {
		if a.Revision == high[a.Window] {
			top = append(top, a)
		}
	}
	return latestReference(top, false, from, to, limit, func(a Alarm) float64 { return a.Start }, func(a Alarm) int { return a.Revision },
		func(a Alarm) string { return fmt.Sprintf("%d/%s/%s", a.Window, a.Kind, a.Subject) })
}

// spannedAlarms counts the stored alarms of every revision that a query
// for [from, to) answered by got must look at: those starting in range
// up to the last one returned when the limit was reached.
func spannedAlarms(alarms []Alarm, from, to float64, got []Alarm, limit int) int {
	if len(got) == limit {
		to = math.Nextafter(got[len(got)-1].Start, math.Inf(1))
	}
	n := 0
	for _, a := range alarms {
		if a.Start >= from && a.Start < to {
			n++
		}
	}
	return n
}

// Three read revisions of fenwick-lane in one stream (windows 0..1299 at
// revision 0, 500..1199 re-read at 1, 1100..1299 at 2: windows
// 1200..1299 are superseded by revision 2 only), after a never-restarted
// asset's windows: every query returns exactly what the full-scan
// reference says (for the alarm listing, those of each window's highest
// revision, so a re-read window that raises no alarm lists none), and
// still reads about as many messages as it returns plus a binary search
// or two per revision run, not the stream.
func TestHistoryRevisionRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.startRevisions(t)
	ctx := context.Background()
	reads := func(q string) float64 {
		var m dto.Metric
		if err := r.svc.met.queryReads.WithLabelValues(q).Write(&m); err != nil {
			t.Fatal(err)
		}
		return m.GetCounter().GetValue()
	}
	fullEst := h.estimatesOf("fenwick-lane")
	fullAl := h.allAlarms(broker.AlarmSubject("fenwick-lane", AlarmOverCurrent), func(Alarm) bool { return true })
	estStart, estRev := func(e Estimate) float64 { return e.Start }, func(e Estimate) int { return e.Revision }
	estKey := func(e Estimate) string { return strconv.FormatInt(e.Window, 10) }
	alStart, alRev := func(a Alarm) float64 { return a.Start }, func(a Alarm) int { return a.Revision }
	alKey := func(a Alarm) string { return fmt.Sprintf("%d/%s/%s", a.Window, a.Kind, a.Subject) }
	w := func(k float64) float64 { return t0 + 0.5*k }

	// Read budget: 3 revision runs in about 4,400 stored messages, each
	// found by one lookup and a binary search and searched by another
	// (2 x 13 probes), plus the newest-estimate lookup: 90 probes; then
	// at most the messages in range of each run up to limit, plus one.
	// The alarm listing (latest revision) also finds the 3 estimate runs
	// (up to 90 probes again) and reads every stored alarm of the range
	// up to the last one it returns, suppressed ones included ("spanned"),
	// each once and at most once more through a doubled quota, with
	// about two probes of an estimate run for each: 4 per spanned alarm.
	const probes = 90
	cases := []struct {
		name     string
		from, to float64
		limit    int
	}{
		{"revision 0 only", w(100), w(110), 100},
		{"across the first re-read", w(490), w(510), 100},
		{"all three", w(1090), w(1110), 100},
		{"newest only", w(1250), w(1260), 100},
		{"limit cuts revision 1", w(480), w(1e6), 30},
		{"limit across all three", w(1095), w(1e6), 7},
		{"before", w(-100), w(-10), 100},
		{"after", w(5000), w(6000), 100},
		{"everything", -1e300, 1e300, DefaultQueryLimit},
	}
	for _, c := range cases {
		for _, all := range []bool{false, true} {
			var opts []QueryOption
			if all {
				opts = append(opts, AllRevisions())
			}
			name := fmt.Sprintf("%s (all=%v)", c.name, all)
			before := reads("history")
			got, err := r.svc.History(ctx, "fenwick-lane", c.from, c.to, c.limit, opts...)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			used := reads("history") - before
			want := latestReference(fullEst, all, c.from, c.to, c.limit, estStart, estRev, estKey)
			budget := probes + 3*float64(len(latestReference(fullEst, true, c.from, c.to, c.limit, estStart, estRev, estKey))+1)
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%s: %d estimates differ from the reference's %d", name, len(got), len(want))
				for i := range min(len(got), len(want)) {
					if !reflect.DeepEqual(got[i], want[i]) {
						t.Logf("first difference at %d: window %d r%d, want window %d r%d", i, got[i].Window, got[i].Revision, want[i].Window, want[i].Revision)
						break
					}
				}
			}
			if used > budget {
				t.Errorf("%s: read %v messages for %d results, want at most %v", name, used, len(got), budget)
			}
			t.Logf("%s: %d estimates, %v messages read", name, len(got), used)

			before = reads("alarms")
			gotA, err := r.svc.Alarms(ctx, "fenwick-lane", AlarmOverCurrent, c.from, c.to, time.Time{}, c.limit, opts...)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			usedA := reads("alarms") - before
			wantA := latestReference(fullAl, all, c.from, c.to, c.limit, alStart, alRev, alKey)
			budgetA := probes + 3*float64(len(latestReference(fullAl, true, c.from, c.to, c.limit, alStart, alRev, alKey))+1)
			if !all {
				wantA = alarmReference(fullAl, fullEst, c.from, c.to, c.limit)
				spanned := spannedAlarms(fullAl, c.from, c.to, wantA, c.limit)
				budgetA = 2*probes + 4*float64(spanned+1)
				t.Logf("%s: %d alarms, %v messages read, %d alarms spanned", name, len(gotA), usedA, spanned)
			}
			if !reflect.DeepEqual(gotA, wantA) {
				t.Errorf("%s: %d alarms differ from the reference's %d", name, len(gotA), len(wantA))
			}
			if usedA > budgetA {
				t.Errorf("%s: read %v messages for %d alarms, want at most %v", name, usedA, len(gotA), budgetA)
			}
		}
	}
	// Spot checks independent of the reference: window 505 was re-read at
	// revision 1 (current 100 + 505), window 1150 at 2, window 100 never.
	got, _ := r.svc.History(ctx, "fenwick-lane", w(100), w(101), 10)
	got2, _ := r.svc.History(ctx, "fenwick-lane", w(505), w(506), 10)
	got3, _ := r.svc.History(ctx, "fenwick-lane", w(1150), w(1151), 10)
	for _, c := range []struct {
		got  []Estimate
		rev  int
		curr float64
	}{{got, 0, 100}, {got2, 1, 605}, {got3, 2, 1350}} {
		if len(c.got) != 1 || c.got[0].Revision != c.rev || c.got[0].Conductors[0].Current != c.curr {
			t.Errorf("single window: %+v, want revision %d with %v A", c.got, c.rev, c.curr)
		}
	}

	// Alarm spot checks: window 300 was never re-read (its revision-0
	// alarm is listed); 501 was re-read at revision 1, which raised
	// nothing (501 is not a multiple of 4), and 1236 at revision 2 (not a
	// multiple of 5): their revision-0 alarms are no longer listed; 1200
	// was re-read at revision 2, whose alarm replaces revision 0's.
	for _, c := range []struct {
		k    float64
		want []int // revisions listed; all revisions
		all  []int
	}{{300, []int{0}, []int{0}}, {501, nil, []int{0}}, {1236, nil, []int{0}}, {1200, []int{2}, []int{0, 2}}} {
		for _, all := range []bool{false, true} {
			var opts []QueryOption
			want := c.want
			if all {
				opts, want = append(opts, AllRevisions()), c.all
			}
			got, err := r.svc.Alarms(ctx, "fenwick-lane", "", w(c.k), w(c.k+1), time.Time{}, 10, opts...)
			var revs []int
			for _, a := range got {
				revs = append(revs, a.Revision)
			}
			if err != nil || !reflect.DeepEqual(revs, want) {
				t.Errorf("window %v alarms (all=%v): revisions %v %v, want %v", c.k, all, revs, err, want)
			}
		}
	}

	// Queries leave no consumer behind on the streams they read (a
	// query's consumer is deleted before it returns; without that, it
	// lingers for the 10 s inactivity threshold).
	waitFor(t, 5*time.Second, "the query consumers to be deleted", func() bool {
		n := 0
		for _, name := range []string{broker.StreamEstimates, broker.StreamAlarms} {
			st, err := h.js.Stream(ctx, name)
			if err != nil {
				t.Fatal(err)
			}
			info, err := st.Info(ctx)
			if err != nil {
				t.Fatal(err)
			}
			n += info.State.Consumers
		}
		return n == 0
	})

	// The never-restarted asset: unchanged answers, positioned reads.
	busbar := h.estimatesOf("harrow-fen-busbar")
	before := reads("history")
	gotB, err := r.svc.History(ctx, "harrow-fen-busbar", w(1290), w(1300), 100)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(gotB, busbar[1290:1300]) {
		t.Errorf("busbar history differs from the full scan")
	}
	if used := reads("history") - before; used > 40 {
		t.Errorf("busbar: read %v messages for %d results", used, len(gotB))
	}

	// An estimate stored with the header only (before payloads carried
	// the field) is listed with its header's revision.
	m := &nats.Msg{Subject: broker.EstimateSubject("fenwick-lane"), Header: nats.Header{}}
	m.Data, _ = json.Marshal(Estimate{Asset: "fenwick-lane", Window: 1300, Start: w(1300), End: w(1301), Mode: "dc", Conductors: []ConductorEstimate{}})
	m.Header.Set(HeaderRevision, "3")
	if _, err := h.js.PublishMsg(ctx, m); err != nil {
		t.Fatal(err)
	}
	if got, err := r.svc.History(ctx, "fenwick-lane", w(1299), w(1301), 10); err != nil || len(got) != 2 || got[0].Revision != 2 || got[1].Revision != 3 {
		t.Errorf("header-only revision: %+v %v, want windows 1299 at revision 2 and 1300 at 3", got, err)
	}
	r.stop(t)
}

// BenchmarkHistoryRevisions times a query for 10 windows that three read
// revisions cover (windows 1150..1159 of the TestHistoryRevisionRuns
// layout, about 4,400 stored estimates), latest revision only, against
// the same query of a never-restarted asset.
func BenchmarkHistoryRevisions(b *testing.B) {
	h := newHarness(b)
	r := h.startRevisions(b)
	ctx := context.Background()
	for _, asset := range []string{"fenwick-lane", "harrow-fen-busbar"} {
		b.Run(asset, func(b *testing.B) {
			for b.Loop() {
				got, err := r.svc.History(ctx, asset, t0+0.5*1150, t0+0.5*1160, 100)
				if err != nil || len(got) != 10 {
					b.Fatal(len(got), err)
				}
			}
		})
	}
	r.stop(b)
}
