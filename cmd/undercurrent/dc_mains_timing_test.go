package main

import (
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// mainsLog simulates a DC log of five 10 s traverses (2 s apart) at rate
// fs: on each axis a steady field with a slow linear trend, the direct
// current's part, and a mains field of amp nT at f Hz. stamp turns a
// reading's true time into its time stamp (rounding, jitter); skip says
// which readings the logger lost. The truth is the trend, a straight line
// in time, which a block with symmetric weights keeps at its mean time.
func mainsLog(fs, f, amp float64, stamp func(float64) float64, skip func(int) bool) *ingest.Samples {
	s := &ingest.Samples{Source: "mains.csv"}
	for g := range 5 {
		t0 := float64(g) * 12
		for k := range int(10 * fs) {
			if skip != nil && skip(k) {
				continue
			}
			t := t0 + float64(k)/fs
			w := 2 * math.Pi * f * t
			s.Time = append(s.Time, stamp(t))
			s.X = append(s.X, 0.6*(t-t0))
			s.Y = append(s.Y, float64(g)*20)
			s.Z = append(s.Z, 0.25)
			s.Bx = append(s.Bx, mainsTruth(0, t)+amp*math.Sin(w+0.3))
			s.By = append(s.By, mainsTruth(1, t)+0.7*amp*math.Sin(w+1.9))
			s.Bz = append(s.Bz, mainsTruth(2, t)-0.5*amp*math.Sin(w+0.8))
			s.Group = append(s.Group, "T0"+strconv.Itoa(g+1))
		}
	}
	return s
}

// mainsTruth is the direct current's field on axis k at time t, nT.
func mainsTruth(k int, t float64) float64 {
	return []float64{-300, 18400, -46300}[k] + []float64{5, -3, 2}[k]*t
}

// mainsLeftOver returns the largest departure of the averaged readings of
// a from the direct current's field, nT.
func mainsLeftOver(a *ingest.Samples) float64 {
	worst := 0.0
	for i := range a.Time {
		for k, c := range [][]float64{a.Bx, a.By, a.Bz} {
			worst = math.Max(worst, math.Abs(c[i]-mainsTruth(k, a.Time[i])))
		}
	}
	return worst
}

var leftOutRE = regexp.MustCompile(`(\d+) readings became (\d+)(?:, (\d+) left out)?`)

// leftOut reads how many readings the note says were left out.
func leftOut(t *testing.T, note string) int {
	t.Helper()
	m := leftOutRE.FindStringSubmatch(note)
	if m == nil {
		t.Fatalf("the note does not say what became of the readings: %q", note)
	}
	n, _ := strconv.Atoi(m[3])
	return n
}

// TestDCMainsJitteredStamps: a 200 Hz log beside a 1000 nT, 50 Hz mains
// field whose time stamps each wander by up to 0.2 ms (uniform; a
// logger's clock, simulated truth) is averaged over whole cycles with
// --dc-mains 50 and by default: next to no reading is left out, and the
// averaged readings hold the direct current's field to 0.05 nT. Before,
// every step off the interval by over a per cent was a break: 5 of 44011
// readings were kept (found in review), and by default nothing was
// averaged. A log whose readings are lost every few readings (two in
// every ten) cannot make whole blocks without leaving out much of it: it
// is fitted as it is, and the run says why.
func TestDCMainsJitteredStamps(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 1))
	jitter := func(t float64) float64 { return t + 0.0002*(2*rng.Float64()-1) }
	s := mainsLog(200, 50, 1000, jitter, nil)
	for _, o := range []*locateOptions{{dcMains: 50}, {dcMainsAuto: true}} {
		a, note, alert := dcMains(o, "mains.csv", s)
		if note == "" || a == s {
			t.Fatalf("--dc-mains %v auto %v: not averaged (alert %q)", o.dcMains, o.dcMainsAuto, alert)
		}
		if n := leftOut(t, note); n > s.Len()/100 {
			t.Errorf("--dc-mains %v auto %v: %d of %d readings left out: %s", o.dcMains, o.dcMainsAuto, n, s.Len(), note)
		}
		if d := mainsLeftOver(a); d > 0.05 {
			t.Errorf("--dc-mains %v auto %v: the averaged readings depart from the direct current's field by %.3g nT", o.dcMains, o.dcMainsAuto, d)
		}
	}

	lossy := mainsLog(200, 50, 1000, func(t float64) float64 { return t }, func(k int) bool { return k%10 >= 8 })
	a, note, alert := dcMains(&locateOptions{dcMains: 50}, "lossy.csv", lossy)
	if a != lossy || note != "" {
		t.Errorf("a log losing two readings in ten was averaged (%d of %d readings kept): %s", a.Len(), lossy.Len(), note)
	}
	if !strings.Contains(alert, "fitted as they are") {
		t.Errorf("the run does not say the lossy log was fitted as it is: %q", alert)
	}
}

// TestDCMainsMillisecondStamps: a 256 Hz log whose time stamps are
// rounded to the millisecond (steps of 3 and 4 ms; simulated truth) beside
// a 500 nT, 50 Hz mains field: the rate is read as 256 Hz, from the span,
// not 250 from the median step; no reading is left out for its rounding;
// the mains are found by default; and the note states the share left
// (256 Hz holds no whole number of 50 Hz cycles in a block of up to
// 0.1 s: 5 readings leave 0.065% of the amplitude after the triangle, by
// mainsLeft), under 0.5 nT here. Before, the rate read 250 Hz, 16% of the
// readings were left out "at breaks", the note said the mains cancelled to
// under 1%, and by default nothing was averaged (found in review).
func TestDCMainsMillisecondStamps(t *testing.T) {
	ms := func(t float64) float64 { return math.Round(t*1000) / 1000 }
	s := mainsLog(256, 50, 500, ms, nil)
	for _, o := range []*locateOptions{{dcMains: 50}, {dcMainsAuto: true}} {
		a, note, alert := dcMains(o, "mains.csv", s)
		if note == "" || a == s {
			t.Fatalf("--dc-mains %v auto %v: not averaged (alert %q)", o.dcMains, o.dcMainsAuto, alert)
		}
		if !strings.Contains(note, "at 256 Hz") {
			t.Errorf("--dc-mains %v auto %v: the rate is not read as 256 Hz: %s", o.dcMains, o.dcMainsAuto, note)
		}
		if n := leftOut(t, note); n > s.Len()/100 {
			t.Errorf("--dc-mains %v auto %v: %d of %d readings left out: %s", o.dcMains, o.dcMainsAuto, n, s.Len(), note)
		}
		if !strings.Contains(note, "left at about 0.065%") {
			t.Errorf("--dc-mains %v auto %v: the note does not state the mains' share left: %s", o.dcMains, o.dcMainsAuto, note)
		}
		if d := mainsLeftOver(a); d > 0.5 {
			t.Errorf("--dc-mains %v auto %v: the averaged readings depart from the direct current's field by %.3g nT", o.dcMains, o.dcMainsAuto, d)
		}
	}
}

// TestDCMainsWholeCycles60Hz: at 200 Hz, 60 Hz mains (1000 nT, simulated
// truth) are averaged in blocks of 10 readings, 3 whole cycles, which
// cancel them: the averaged readings hold the direct current's field to
// 0.05 nT. Before, blocks of 7 readings (35 ms for 33.3) left about 3 nT
// (found in review). And --dc-mains 60 on a log whose field alternates at
// 50 Hz says that the field's own line is the 50 Hz mains; before, the run
// said the mains cancelled while 20 nT was left (found in review).
func TestDCMainsWholeCycles60Hz(t *testing.T) {
	exact := func(t float64) float64 { return t }
	s := mainsLog(200, 60, 1000, exact, nil)
	a, note, _ := dcMains(&locateOptions{dcMains: 60}, "mains.csv", s)
	if note == "" || a == s {
		t.Fatal("--dc-mains 60: not averaged")
	}
	if d := mainsLeftOver(a); d > 0.05 {
		t.Errorf("the averaged readings depart from the direct current's field by %.3g nT: %s", d, note)
	}

	s50 := mainsLog(200, 50, 1000, exact, nil)
	_, _, alert := dcMains(&locateOptions{dcMains: 60}, "mains.csv", s50)
	if !strings.Contains(alert, "it is the 50 Hz mains") {
		t.Errorf("--dc-mains 60 on 50 Hz mains: no word of the field's own line: %q", alert)
	}
}
