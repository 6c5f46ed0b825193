package live

import (
	"io"
	"math"
	"math/rand/v2"
	"net/http"
	"strings"
	"testing"
	"time"
)

// A condition held before a gap in the data of the service's
// silent_after or more (no data from any sensor: the asset was silent)
// counted as the same one after the gap, raising nothing. It is now
// raised anew when it holds again after the gap, marked after_gap_s, and
// one that does not hold after the gap is cleared with the gap given (it
// may have ended in it); a gap shorter than silent_after changes
// nothing. Simulated truth: synthWindow's currents, max_current 125 A,
// max_imbalance 5 A, silent_after 2 s; windows from 0, 0.5, 2 (a gap of
// 1 s) and 6 s (a gap of 3.5 s) and 6.5 s, go 130 A throughout, return
// -130, -115, -115, -130, -130 A.
func TestConditionAfterDataGapRaisedAnew(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Alarms = AlarmConfig{MaxChi2: 25, MaxCurrent: 125, MaxImbalance: 5, Balance: []string{"go", "return"}}
	rng := rand.New(rand.NewPCG(16, 21))
	p, err := newProcessor(a, "test")
	if err != nil {
		t.Fatal(err)
	}
	p.gapAfter = 2
	est, _ := NewInverseEstimator(a.Mode, a.Conductors)
	p.est, p.names = est, []string{"go", "return"}
	starts := []float64{0, 0.5, 2, 6, 6.5}
	returns := []complex128{-130, -115, -115, -130, -130}
	var wins []*window
	for k := range starts {
		wins = append(wins, synthWindow(a, []complex128{130, returns[k]}, [3]float64{}, starts[k], 1000, 500, 2, rng))
	}
	got, ests := latchRun(p, wins)
	oc := alarmsOf(got, AlarmOverCurrent, "go")
	if len(oc) != 2 || oc[0].Window != 0 || oc[0].AfterGap != 0 {
		t.Fatalf("over-current of go %+v; want the onset in window 0 and again after the gap in window 3", oc)
	}
	if r := oc[1]; r.Window != 3 || r.Cleared || r.Worsened || math.Abs(r.AfterGap-3.5) > 1e-9 || !strings.Contains(r.Message, "gap of 3.5 s") {
		t.Errorf("after the gap %+v, want window 3 raised anew, after_gap_s 3.5", r)
	}
	imb := alarmsOf(got, AlarmImbalance, "")
	if len(imb) != 2 || imb[0].Window != 1 || imb[0].AfterGap != 0 {
		t.Fatalf("imbalance %+v; want the onset in window 1 (held across the 1 s gap) and its clearing after the 3.5 s gap", imb)
	}
	if c := imb[1]; c.Window != 3 || !c.Cleared || c.Windows != 2 || math.Abs(c.AfterGap-3.5) > 1e-9 || !strings.Contains(c.Message, "may have ended in the gap") {
		t.Errorf("imbalance clearing %+v, want window 3 after 2 windows, after_gap_s 3.5", c)
	}
	if o, ok := ongoingOf(ests[2], AlarmImbalance, ""); !ok || o.Windows != 2 || o.Since != 0.5 {
		t.Errorf("window 2 (after a 1 s gap) ongoing imbalance %+v (%v), want it held for 2 windows since 0.5 s", o, ok)
	}
	if o, ok := ongoingOf(ests[4], AlarmOverCurrent, "go"); !ok || o.Windows != 2 || o.Since != 6 {
		t.Errorf("window 4 ongoing over-current %+v (%v), want 2 windows since 6 s (the renewed onset)", o, ok)
	}
	// The return's over-current cleared in window 1 (115 A) and begins
	// again in window 3: a new onset, not one held across the gap.
	if ret := alarmsOf(got, AlarmOverCurrent, "return"); len(ret) != 3 || ret[2].Window != 3 || ret[2].Cleared || ret[2].AfterGap != 0 {
		t.Errorf("over-current of return %+v; want raised in window 0, cleared in 1, raised in 3 without after_gap_s", ret)
	}
	for _, al := range got {
		if al.Window == 4 {
			t.Errorf("window 4 raised %+v: every condition was held", al)
		}
	}
}

// Through the service, silent_after (2.4 s here: six times idle) is the
// gap: the harness's currents (1001 + 10 k A in window k, max_current
// 1035 A) are over it from window 4; data for windows 3 to 5, then none
// for 3 s, then windows 12 and 13: the over-current is stored twice, at
// window 4 and, marked after_gap_s 3, at window 12, and counted twice.
func TestServiceConditionAfterDataGapRaisedAnew(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(1.5, 1.5) // windows 3..5
	h.publish(6, 1)     // windows 12, 13
	waitFor(t, 30*time.Second, "5 estimates", func() bool { return len(h.estimates()) >= 5 })
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	r.stop(t)
	as := h.storedAlarms(t, AlarmOverCurrent)
	if got := alarmRows(as); strings.Join(got, ",") != "4 over-current r0,12 over-current r0" {
		t.Fatalf("over-current alarms %q, want windows 4 and 12", got)
	}
	if as[0].AfterGap != 0 || math.Abs(as[1].AfterGap-3) > 1e-6 || as[1].Cleared {
		t.Errorf("after_gap_s %v and %v, want 0 and 3 s (window 12 from 6 s, the data up to 3 s)", as[0].AfterGap, as[1].AfterGap)
	}
	if want := `uc_alarms_total{asset="fenwick-lane",kind="over-current"} 2`; !strings.Contains(string(body), want) {
		t.Errorf("metrics lack %s:\n%s", want, grepLines(string(body), "uc_alarms_total"))
	}
}
