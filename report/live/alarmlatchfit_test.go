package live

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// latchRun feeds windows through solve and latch as the worker does and
// returns every alarm published and every estimate.
func latchRun(p *processor, wins []*window) ([]Alarm, []*Estimate) {
	var got []Alarm
	var ests []*Estimate
	for k, w := range wins {
		w.Index = int64(k)
		e, al := p.solve(w, p.reduce(w))
		got = append(got, p.latch(w, e, al)...)
		ests = append(ests, e)
	}
	return got, ests
}

func alarmsOf(as []Alarm, kind, subject string) []Alarm {
	var out []Alarm
	for _, a := range as {
		if a.Kind == kind && a.Subject == subject {
			out = append(out, a)
		}
	}
	return out
}

func ongoingOf(e *Estimate, kind, subject string) (OngoingAlarm, bool) {
	for _, o := range e.Ongoing {
		if o.Kind == kind && o.Subject == subject {
			return o, true
		}
	}
	return OngoingAlarm{}, false
}

// A fit that misses the readings for several windows was alarmed degraded
// in every one; it is alarmed once at its onset, again (worsened) when
// its misfit has grown 1.5 times (the reduced chi-square 2.25 times), and
// cleared after three windows in a row that fit within max_chi2/2.25
// (clearAfter). A window that cannot be solved
// (no sensor sent anything) in between is a condition of its own
// (alarmed, then cleared by the next solved window) and neither
// continues nor clears the degraded fit. Simulated truth: synthWindow's
// Biot-Savart fields with Gaussian noise of 2 nT per sample against a
// stated noise of 2 nT (reduced chi-square about 1), then of 14 nT
// (about 49, over max_chi2 25), 14, none (failed), 40 (about 400, over
// 2.25 x 49), 18 (about 80: held, not grown) and 2 nT again in windows
// 6 to 8 (held in 6 and 7, cleared in 8).
func TestDegradedFitAlarmedOnce(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Noise = 2
	a.Alarms = AlarmConfig{MaxChi2: 25}
	rng := rand.New(rand.NewPCG(17, 3))
	p := solvingProcessor(t, a, []string{"go", "return"})
	noise := []float64{2, 14, 14, 0, 40, 18, 2, 2, 2}
	var wins []*window
	for k, n := range noise {
		w := synthWindow(a, []complex128{100, -100}, [3]float64{}, 0.5*float64(k), 1000, 500, n, rng)
		if n == 0 {
			w.Sensors = make([]series, len(a.Sensors))
		}
		wins = append(wins, w)
	}
	got, ests := latchRun(p, wins)
	for k, e := range ests {
		t.Logf("window %d: quality %s, chi2/dof %.3g", k, e.Quality, e.Chi2/math.Max(1, float64(e.DOF)))
	}
	var fit, failed []Alarm
	for _, al := range alarmsOf(got, AlarmDegraded, "") {
		if al.fitFailed {
			failed = append(failed, al)
		} else {
			fit = append(fit, al)
		}
	}
	if len(fit) != 3 {
		t.Fatalf("degraded-fit alarms %+v; want the onset (window 1), a worsening (window 4) and a clearing (window 8)", fit)
	}
	if o := fit[0]; o.Window != 1 || o.Worsened || o.Cleared || o.Value <= 25 || o.Threshold != 25 {
		t.Errorf("onset %+v, want window 1, reduced chi-square over 25", o)
	}
	if w := fit[1]; w.Window != 4 || !w.Worsened || w.Cleared || w.Previous != fit[0].Value || w.Value < 2.25*w.Previous || w.Since != 0.5 {
		t.Errorf("worsening %+v, want window 4, at least 2.25 x the onset's %v, since 0.5 s", w, fit[0].Value)
	}
	if c := fit[2]; c.Window != 8 || !c.Cleared || c.Value > 25/2.25 || c.Value <= 0 || c.Peak != fit[1].Value || c.Windows != 6 || c.Threshold != 25 {
		t.Errorf("clearing %+v, want window 8, this window's reduced chi-square (under 25/2.25), peak %v, 6 windows (the failed one not counted)", c, fit[1].Value)
	}
	for _, k := range []int{6, 7} {
		if o, ok := ongoingOf(ests[k], AlarmDegraded, ""); !ok || ests[k].Quality != "good" || o.Value > 25/2.25 {
			t.Errorf("window %d: quality %s, ongoing %+v (%v); want good, the degraded fit still held with this window's value", k, ests[k].Quality, o, ok)
		}
	}
	if len(failed) != 2 || failed[0].Window != 3 || failed[0].Cleared || failed[1].Window != 4 || !failed[1].Cleared || failed[1].Windows != 1 {
		t.Errorf("failed-window alarms %+v; want one raised in window 3 and cleared in window 4", failed)
	}
	if len(failed) == 2 && !strings.Contains(failed[1].Message, "failed windows") {
		t.Errorf("failure's clearing message %q", failed[1].Message)
	}
	// The windows in between list it as ongoing with their own value.
	if o, ok := ongoingOf(ests[2], AlarmDegraded, ""); !ok || o.Windows != 2 || o.Since != 0.5 || o.Value <= 25 {
		t.Errorf("window 2 ongoing %+v (%v), want the degraded fit, 2 windows since 0.5 s", o, ok)
	}
	if o, ok := ongoingOf(ests[5], AlarmDegraded, ""); !ok || o.Windows != 4 || o.Value <= 25 || o.Value >= 2.25*fit[1].Value {
		t.Errorf("window 5 ongoing %+v (%v), want the degraded fit, 4 windows", o, ok)
	}
	// Window 4 clears the failure and raises the worsening: their
	// message ids (the broker's duplicate check) must differ.
	ids := map[string]bool{}
	for _, al := range got {
		id := alarmID(fmt.Sprintf("fenwick-lane/%d", al.Window), al)
		if ids[id] {
			t.Errorf("two alarms of window %d share the message id %s", al.Window, id)
		}
		ids[id] = true
	}
}

// A sensor knocked round on its mount was alarmed inconsistent in every
// window; it is alarmed once, again when turned further (its misfit, the
// square root of the window's reduced chi-square with it, grown 1.5
// times or more), and cleared when it reads in line again. Simulated
// truth: the Kestrel Moor layout (TestKnockedSensorNamedAndLeftOut),
// sensor km-c turned 10 degrees about its x axis in windows 1 and 2, 30
// degrees in window 3 (the Earth's field it misreads about three times
// as far off: the chi-square about nine times), 10 degrees in window 4
// and not at all in window 5.
func TestInconsistentSensorAlarmedOnce(t *testing.T) {
	a, p := kestrelProcessor(t, "0.5")
	rng := rand.New(rand.NewPCG(13, 9))
	earth := [3]float64{-150, 19200, -45100}
	var wins []*window
	for k, deg := range []float64{0, 10, 10, 30, 10, 0} {
		w := synthWindow(a, []complex128{5}, earth, 1796279400+2*float64(k), 10, 20, a.Noise, rng)
		if deg != 0 {
			turnAboutX(w, 2, deg)
		}
		wins = append(wins, w)
	}
	got, ests := latchRun(p, wins)
	inc := alarmsOf(got, AlarmInconsistent, "km-c")
	if len(inc) != 3 {
		t.Fatalf("inconsistent alarms of km-c %+v; want the onset (window 1), a worsening (window 3) and a clearing (window 5)", inc)
	}
	if o := inc[0]; o.Window != 1 || o.Cleared || o.Worsened || o.Value <= 25 || o.Threshold != 25 {
		t.Errorf("onset %+v, want window 1 with the window's reduced chi-square (over max_chi2 25)", o)
	}
	if w := inc[1]; w.Window != 3 || !w.Worsened || w.Previous != inc[0].Value || w.Value < 2.25*w.Previous {
		t.Errorf("worsening %+v, want window 3, at least 2.25 x %v", w, inc[0].Value)
	}
	if c := inc[2]; c.Window != 5 || !c.Cleared || c.Windows != 4 || c.Peak != inc[1].Value || c.Value != 0 {
		t.Errorf("clearing %+v, want window 5 after 4 windows, peak %v, value 0 (a sensor condition)", c, inc[1].Value)
	}
	for k := 1; k <= 4; k++ {
		if !strings.Contains(ests[k].Missing["km-c"], "inconsistent") {
			t.Errorf("window %d: km-c not left out (missing %v)", k, ests[k].Missing)
		}
	}
	if o, ok := ongoingOf(ests[4], AlarmInconsistent, "km-c"); !ok || o.Windows != 4 || o.Value <= 25 {
		t.Errorf("window 4 ongoing %+v (%v), want km-c inconsistent for 4 windows", o, ok)
	}
	if n := len(alarmsOf(got, AlarmDegraded, "")); n != 0 {
		t.Errorf("%d degraded alarms: the windows are solved without km-c", n)
	}
}

// Readings in the wrong unit (microtesla sent as nanotesla) were alarmed
// implausible in every window; each check is alarmed once and cleared in
// the first window that passes it, with that window's value. The checks
// do not worsen. Simulated truth: TestImplausibleDCWindowInWrongUnit's
// windows (a mid-latitude Earth's field of about 49,000 nT), scaled down
// 1000 times in windows 0 to 2 and as sent in window 3; a failed window
// (nothing sent) in between clears neither check.
func TestImplausibleReadingsAlarmedOnce(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Mode, a.Frequency = "dc", 0
	a.fieldLo, a.fieldHi = defaultEarthField[0], defaultEarthField[1]
	earth := [3]float64{1520, 17850, -45760}
	p := solvingProcessor(t, a, []string{"go", "return"})
	rng := rand.New(rand.NewPCG(7, 2))
	var wins []*window
	for k, scale := range []float64{1000, 1000, 0, 1000, 1} {
		w := synthWindow(a, []complex128{200, -180}, earth, 1764650000+float64(k), 200, 200, a.Noise, rng)
		if scale == 0 {
			w.Sensors = make([]series, len(a.Sensors))
		} else {
			scaleWindow(w, scale)
		}
		wins = append(wins, w)
	}
	got, ests := latchRun(p, wins)
	for _, check := range []string{checkEarthField, checkChi2} {
		as := alarmsOf(got, AlarmImplausible, check)
		if len(as) != 2 || as[0].Window != 0 || as[0].Cleared || as[1].Window != 4 || !as[1].Cleared || as[1].Windows != 3 {
			t.Errorf("%s: alarms %+v; want one raised in window 0 and cleared in window 4 after 3 windows", check, as)
			continue
		}
		if o, ok := ongoingOf(ests[3], AlarmImplausible, check); !ok || o.Windows != 3 {
			t.Errorf("%s: window 3 ongoing %+v (%v), want 3 windows", check, o, ok)
		}
		if _, ok := ongoingOf(ests[2], AlarmImplausible, check); ok {
			t.Errorf("%s: the failed window 2 lists it as ongoing (it judged nothing)", check)
		}
	}
	if as := alarmsOf(got, AlarmImplausible, checkEarthField); len(as) == 2 {
		if v := as[1].Value; math.Abs(v-math.Sqrt(earth[0]*earth[0]+earth[1]*earth[1]+earth[2]*earth[2])) > 500 {
			t.Errorf("earth-field cleared with value %v nT, want this window's field, about 49,000 nT", v)
		}
		if v := as[1].Peak; v < 30 || v > 70 {
			t.Errorf("earth-field peak %v nT, want the field read 1000 times too small (about 49 nT)", v)
		}
	}
	for k := range 4 {
		if k != 2 && ests[k].Quality != "implausible" {
			t.Errorf("window %d: quality %s, want implausible while the alarm is held", k, ests[k].Quality)
		}
	}
}

// A sensor whose offset is near what max_chi2 lets through is left out
// in some windows and not in others; it was raised and cleared at each
// change. Once raised it is held while the window's reduced chi-square
// with it stays over max_chi2/2.25 and leaving it out would still remove
// nine tenths of it (the deadband), and cleared when it reads in line.
// Simulated truth: the Kestrel Moor layout with km-c's x axis offset by
// 3 nT (left out: the reduced chi-square over 25) in windows 0 and 3,
// 2 nT (kept: between 11.1 and 25) in windows 1, 2 and 4, and 0 in
// window 5, against 0.5 nT of noise per sample.
func TestInconsistentSensorHeldNearThreshold(t *testing.T) {
	a, p := kestrelProcessor(t, "0.5")
	rng := rand.New(rand.NewPCG(3, 22))
	earth := [3]float64{-150, 19200, -45100}
	var wins []*window
	offsets := []float64{3, 2, 2, 3, 2, 0}
	for k, off := range offsets {
		w := synthWindow(a, []complex128{5}, earth, 1796279400+2*float64(k), 10, 20, a.Noise, rng)
		for i := range w.Sensors[2].Bx {
			w.Sensors[2].Bx[i] += off
		}
		wins = append(wins, w)
	}
	got, ests := latchRun(p, wins)
	for k, e := range ests {
		t.Logf("window %d (offset %v nT): quality %s, missing %v, ongoing %+v", k, offsets[k], e.Quality, e.Missing, e.Ongoing)
	}
	inc := alarmsOf(got, AlarmInconsistent, "km-c")
	if len(inc) != 2 || inc[0].Window != 0 || inc[0].Cleared || inc[1].Window != 5 || !inc[1].Cleared || inc[1].Windows != 5 {
		t.Fatalf("inconsistent alarms of km-c %+v; want one raised in window 0 and cleared in window 5 after 5 windows", inc)
	}
	for _, k := range []int{1, 2, 4} {
		o, ok := ongoingOf(ests[k], AlarmInconsistent, "km-c")
		if _, out := ests[k].Missing["km-c"]; out {
			t.Errorf("window %d: km-c left out with a 2 nT offset; the test wants it kept (in the deadband)", k)
		}
		if !ok || o.Value <= 25/2.25 || o.Value > 25 {
			t.Errorf("window %d: ongoing %+v (%v), want km-c held with the window's reduced chi-square between 11.1 and 25", k, o, ok)
		}
	}
}
