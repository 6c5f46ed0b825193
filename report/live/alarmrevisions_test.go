package live

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// recalibrated is meanEstimator (every current is the mean vertical
// reading, 1001 + 10 k A in window k of the harness data) behind a
// switch standing for a calibration fixed between two reads of the same
// data: while bad, every current is bias amperes too high; once fixed,
// the window whose mean is degradedAt reports a reduced chi-square of 500
// (a degraded fit), and the window whose mean is holdAt waits in Solve
// until released, so that a test can look at a re-read that has not yet
// reached it.
type recalibrated struct {
	mu         sync.Mutex
	bias       float64
	fixed      bool
	degradedAt float64
	// badFrom: while bad, windows whose mean is at least badFrom are
	// degraded fits too (0: none), alarmed once at the first of them;
	// also with any sensor left out (means within 5 A of the window's),
	// so that no sensor is isolated as inconsistent.
	badFrom float64
	holdAt  float64
	held    chan struct{} // closed when Solve reaches holdAt
	release chan struct{} // Solve at holdAt returns when it is closed
}

func (r *recalibrated) Solve(in *SolveInput) (*SolveOutput, error) {
	out, err := meanEstimator{1}.Solve(in)
	if err != nil {
		return nil, err
	}
	mean := out.Current[0]
	r.mu.Lock()
	bias, fixed, held := r.bias, r.fixed, r.held
	hold := fixed && held != nil && math.Abs(mean-r.holdAt) < 1e-6
	if hold {
		r.held = nil // once
	}
	r.mu.Unlock()
	if !fixed {
		out.Current[0] += bias
		if r.badFrom > 0 && mean >= r.badFrom-5 {
			out.Chi2 = 500 * float64(out.DOF)
		}
		return out, nil
	}
	if math.Abs(mean-r.degradedAt) < 1e-6 {
		out.Chi2 = 500 * float64(out.DOF)
	}
	if hold {
		close(held)
		<-r.release
	}
	return out, nil
}

func (r *recalibrated) fix() {
	r.mu.Lock()
	r.fixed = true
	r.mu.Unlock()
}

// alarmRows lists alarms as "window kind revision" with windows counted
// from t0, for comparisons that read well in failures.
func alarmRows(as []Alarm) []string {
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	out := []string{}
	for _, a := range as {
		out = append(out, fmt.Sprintf("%d %s r%d", a.Window-k0, a.Kind, a.Revision))
	}
	return out
}

// A bad calibration makes every window of fenwick-lane over-current
// (1031 A and up against max_current 1025 A, at revision 0: alarmed once,
// at the onset in window 0) and windows 2 and 3 degraded fits (alarmed
// once, at the onset in window 2). With the calibration fixed the asset
// is re-read from the start (revision 1): window 0 (1001 A) raises
// nothing, window 1 is a degraded fit instead, window 2 (1021 A) fits
// (the degraded fit of window 1 is held: it clears after three windows
// that fit), window 3 (1031 A) is over-current again. The alarm listing
// follows the re-read window by window: while the re-read is held in
// window 2, windows 0 and 1 show their revision-1 answer and window 2
// still its revision-0 alarm; once it has passed, only window 1's
// degraded and window 3's revision-1 over-current remain. revisions=all
// lists all four, and the never-restarted harrow-fen-busbar's alarms are
// the stored payloads, byte for byte.
func TestAlarmsFollowReread(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	text := strings.Replace(testSiteText, "max_current = 1035", "max_current = 1025", 1)
	text += strings.Replace(text[strings.Index(text, "[[asset]]"):], "fenwick-lane", "harrow-fen-busbar", 1)
	held := make(chan struct{})
	est := &recalibrated{bias: 30, degradedAt: 1011, badFrom: 1021, holdAt: 1021, held: held, release: make(chan struct{})}
	released := false
	defer func() {
		if !released {
			close(est.release)
		}
	}()
	site := testSite(t, text)
	nc, err := broker.Connect(h.srv.ClientURL(), "w1", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	svc, err := New(Config{Site: site, Conn: nc, Worker: "w1",
		NewEstimator: func(string, []ConductorConfig) (Estimator, error) { return est, nil }})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	r := &running{svc: svc, nc: nc, cancel: cancel, done: make(chan error, 1)}
	go func() { r.done <- svc.Run(ctx) }()
	select {
	case <-svc.Ready():
	case err := <-r.done:
		t.Fatal(err)
	case <-time.After(20 * time.Second):
		t.Fatal("service not ready after 20 s")
	}
	t.Cleanup(func() { cancel(); nc.Close() })

	h.publish(0, 2) // windows 0..3
	h.publishAsset("harrow-fen-busbar", 0, 2)
	waitFor(t, 30*time.Second, "4 estimates of each asset", func() bool {
		return len(h.estimates()) >= 4 && len(h.estimatesOf("harrow-fen-busbar")) >= 4
	})
	list := func(query string) []Alarm {
		t.Helper()
		code, body := call(t, r, "GET", "/api/v1/alarms?asset=fenwick-lane"+query, "", "")
		var as []Alarm
		if code != 200 || json.Unmarshal([]byte(body), &as) != nil {
			t.Fatalf("alarms%s: %d %s", query, code, body)
		}
		return as
	}
	expect := func(when, query string, want ...string) {
		t.Helper()
		if want == nil {
			want = []string{}
		}
		if got := alarmRows(list(query)); !reflect.DeepEqual(got, want) {
			t.Errorf("%s, alarms%s: %q, want %q", when, query, got, want)
		}
	}
	oc, dg := AlarmOverCurrent, AlarmDegraded
	expect("before the restart", "", "0 "+oc+" r0", "2 "+dg+" r0")

	est.fix()
	req := requestRestart(t, r, "?start=retained", "")
	waitApplied(t, r, req.ID)
	select {
	case <-held:
	case <-time.After(30 * time.Second):
		t.Fatal("the re-read did not reach window 2 within 30 s")
	}
	// Held in window 2: windows 0 and 1 are re-read, 2 and 3 not yet.
	expect("re-read held in window 2", "", "1 "+dg+" r1", "2 "+dg+" r0")
	expect("re-read held in window 2", "&kind="+dg, "1 "+dg+" r1", "2 "+dg+" r0")
	expect("re-read held in window 2", "&kind="+oc)
	expect("re-read held in window 2", "&revisions=all", "0 "+oc+" r0", "1 "+dg+" r1", "2 "+dg+" r0")

	close(est.release)
	released = true
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	expect("re-read done", "", "1 "+dg+" r1", "3 "+oc+" r1")
	expect("re-read done", "&kind="+oc, "3 "+oc+" r1")
	expect("re-read done", "&kind="+dg, "1 "+dg+" r1")
	expect("re-read done", "&revisions=all", "0 "+oc+" r0", "1 "+dg+" r1", "2 "+dg+" r0", "3 "+oc+" r1")
	expect("re-read done, from window 2", "&limit=1&from="+fmt.Sprintf("%.3f", t0+1), "3 "+oc+" r1")
	if got := list("&limit=1"); len(got) != 1 || got[0].Kind != dg {
		t.Errorf("limit=1: %q, want window 1's degraded (window 0's alarm is superseded)", alarmRows(got))
	}

	// Listed alarms are the stored payloads, byte for byte: revision 0
	// (fenwick-lane's old ones and the never-restarted busbar's) without
	// a revision field, as before revisions existed.
	stored := map[string]bool{}
	if err := scan(context.Background(), h.js, broker.StreamAlarms, broker.AlarmPrefix+".>", func(d []byte) bool {
		stored[string(d)] = true
		return true
	}); err != nil {
		t.Fatal(err)
	}
	all := list("&revisions=all")
	busbar, err := svc.Alarms(context.Background(), "harrow-fen-busbar", "", -1e300, 1e300, time.Time{}, 100)
	if err != nil {
		t.Fatal(err)
	}
	if got := alarmRows(busbar); !reflect.DeepEqual(got, []string{"0 " + oc + " r0", "2 " + dg + " r0"}) {
		t.Errorf("busbar alarms %q, want window 0's over-current and window 2's degraded (held through window 3), at revision 0", got)
	}
	for _, a := range append(all, busbar...) {
		data, _ := json.Marshal(a)
		if !stored[string(data)] {
			t.Errorf("listed alarm %s is not a stored payload", data)
		}
		// revision is written when 0 too (schema version 1), as the
		// history CSV writes it.
		if a.Revision == 0 && !bytes.Contains(data, []byte(`"revision":0`)) {
			t.Errorf("revision-0 alarm %s does not say \"revision\":0", data)
		}
	}
	code, body := call(t, r, "GET", "/api/v1/alarms?asset=harrow-fen-busbar", "", "")
	var want bytes.Buffer
	enc := json.NewEncoder(&want)
	enc.SetIndent("", "  ")
	enc.Encode(h.allAlarms(broker.AlarmPrefix+".harrow-fen-busbar.>", func(Alarm) bool { return true }))
	if code != 200 || body != want.String() {
		t.Errorf("busbar listing differs from its stored alarms:\n%s\nwant\n%s", body, want.String())
	}
	r.stop(t)
}

// BenchmarkAlarmsRevisions times the alarm listing for windows 1090..1109
// of the TestHistoryRevisionRuns layout (three read revisions, about
// 4,400 stored estimates and 750 alarms; 13 alarms of the range, 4 of
// them listed): the latest revision of each window, which asks the
// estimate runs, against every revision.
func BenchmarkAlarmsRevisions(b *testing.B) {
	h := newHarness(b)
	r := h.startRevisions(b)
	ctx := context.Background()
	for _, c := range []struct {
		name string
		opts []QueryOption
		n    int
	}{{"latest", nil, 4}, {"all", []QueryOption{AllRevisions()}, 13}} {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				got, err := r.svc.Alarms(ctx, "fenwick-lane", AlarmOverCurrent, t0+0.5*1090, t0+0.5*1110, time.Time{}, 100, c.opts...)
				if err != nil || len(got) != c.n {
					b.Fatal(len(got), err)
				}
			}
		})
	}
	r.stop(b)
}
