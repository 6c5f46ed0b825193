package calibrate

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// columnsWithout returns c less the rows for which drop is true.
func columnsWithout(c *Columns, drop func(i int) bool) *Columns {
	out := &Columns{}
	for i := range c.Time {
		if drop(i) {
			continue
		}
		out.Time = append(out.Time, c.Time[i])
		for k := 0; k < 3; k++ {
			out.B[k] = append(out.B[k], c.B[k][i])
			out.Pos[k] = append(out.Pos[k], c.Pos[k][i])
		}
		if c.Group != nil {
			out.Group = append(out.Group, c.Group[i])
		}
	}
	return out
}

// columnsRepeating returns c with the rows for which rep is true given twice.
func columnsRepeating(c *Columns, rep func(i int) bool) *Columns {
	out := &Columns{}
	for i := range c.Time {
		for n := 0; n < 1+map[bool]int{true: 1}[rep(i)]; n++ {
			out.Time = append(out.Time, c.Time[i])
			for k := 0; k < 3; k++ {
				out.B[k] = append(out.B[k], c.B[k][i])
				out.Pos[k] = append(out.Pos[k], c.Pos[k][i])
			}
			if c.Group != nil {
				out.Group = append(out.Group, c.Group[i])
			}
		}
	}
	return out
}

// TestDemodulateSpansOneMissingSample: a logger that drops one sample in
// 150 (0.67%) lost every window of 200 samples, which no run between two
// drops could hold. A window now spans a single missing sample and is
// fitted on its own time stamps; the answers must be those of the whole
// log within the noise. The reference is the tone the log was built with
// (its exact phasors), and the least-squares variance of a sine fit's
// coefficients (IEEE Std 1057: 2σ²/N on each peak component, σ²/N on
// each RMS component), so that |B - truth|²/Sigma² averages 2 (a
// chi-square of two degrees of freedom) over the windows.
func TestDemodulateSpansOneMissingSample(t *testing.T) {
	set := DemodSettings{Freq: 50, Window: 0.1}
	// Noise-free: a bridged window returns the tone exactly (to the 0.05 nT
	// the 0.5 nT/s drift leaves in a constant-only model, as in
	// TestDemodulatePhaseCoherent).
	clean := columnsWithout(acLog(nil, 2000, 20000, 1.7e9, 50, testPhasors, 0), func(i int) bool { return i%150 == 149 })
	res, err := DemodulateColumns(clean, &set)
	if err != nil {
		t.Fatal(err)
	}
	if want := len(clean.Time) / 200; len(res.Windows) != want || res.General == 0 || len(res.Losses) != 0 {
		t.Fatalf("%d windows (%d on their own time stamps), %d losses; want %d, some on their own time stamps, none lost", len(res.Windows), res.General, len(res.Losses), want)
	}
	for i, w := range res.Windows {
		for k := 0; k < 3; k++ {
			if d := cmplx.Abs(w.B[k] - testPhasors[k]); d > 0.05 {
				t.Fatalf("noise-free window %d axis %d: B = %.5f, want %.5f", i, k, w.B[k], testPhasors[k])
			}
		}
	}
	// With 5 nT noise: the chi-square of the windows against the truth,
	// and their sigmas, as on the whole log.
	const noise = 5.0
	full := acLog(rand.New(rand.NewPCG(31, 32)), 2000, 40000, 1.7e9, 50, testPhasors, noise)
	gappy := columnsWithout(full, func(i int) bool { return i%150 == 149 })
	stats := func(c *Columns) (chi2, sigma float64, n int) {
		res, err := DemodulateColumns(c, &set)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range res.Windows {
			for k := 0; k < 3; k++ {
				d := w.B[k] - testPhasors[k]
				chi2 += (real(d)*real(d) + imag(d)*imag(d)) / (w.Sigma[k] * w.Sigma[k])
				sigma += w.Sigma[k]
			}
		}
		n = 3 * len(res.Windows)
		return chi2 / float64(n), sigma / float64(n), len(res.Windows)
	}
	c0, s0, n0 := stats(full)
	c1, s1, n1 := stats(gappy)
	if n1 < n0*99/100 {
		t.Errorf("%d windows with one sample in 150 missing, %d without", n1, n0)
	}
	// The mean of n chi-square(2) values has sigma 2/sqrt(n): 0.08 for
	// the 200 x 3 here; five of them.
	for _, x := range []struct {
		name string
		chi2 float64
		n    int
	}{{"whole log", c0, n0}, {"one sample in 150 missing", c1, n1}} {
		if tol := 5 * 2 / math.Sqrt(3*float64(x.n)); math.Abs(x.chi2-2) > tol {
			t.Errorf("%s: |B - truth|²/Sigma² averages %.3f over the windows, want 2 ± %.2f", x.name, x.chi2, tol)
		}
	}
	// The expected sigma per RMS component, noise/sqrt(N) (N = 200), and
	// the windows' own within 5%.
	want := noise / math.Sqrt(200)
	for _, s := range []float64{s0, s1} {
		if math.Abs(s/want-1) > 0.05 {
			t.Errorf("mean window sigma %.4f nT (whole log %.4f), want %.4f", s1, s0, want)
		}
	}
}

// TestDemodulateCountsWindowsLost: windows lost to repeated times and
// pauses are counted per group, with their causes, and warned about; a log
// whose breaks leave no window is refused saying why. Windows are counted
// by hand: a stretch of n samples gives floor((n-N)/hop)+1 windows of N.
func TestDemodulateCountsWindowsLost(t *testing.T) {
	c := acLog(nil, 2000, 4000, 100, 50, testPhasors, 0)
	c.Group = make([]string, len(c.Time))
	for i := range c.Group {
		c.Group[i] = map[bool]string{true: "T1", false: "T2"}[i < 2000]
	}
	// T1: a row repeated at 150 and 1150; T2: three samples missing after
	// row 2500 (a pause of four intervals), one after 3300 (spanned).
	c = columnsRepeating(c, func(i int) bool { return i == 150 || i == 1150 })
	c = columnsWithout(c, func(i int) bool {
		if i < 2 { // the repeats shifted T2 by two rows
			return false
		}
		j := i - 2
		return j >= 2501 && j <= 2503 && c.Group[i] == "T2" || j == 3301
	})
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	// T1: 2002 rows would give 10 windows of 200; runs 151, 1001, 850
	// give 0 + 5 + 4, leaving 151 + 1 + 50 samples out. T2: 1996 rows
	// would give 9; runs 501 and 1495 give 2 + 7.
	if len(res.Losses) != 1 {
		t.Fatalf("losses %+v, want one, for T1", res.Losses)
	}
	l := res.Losses[0]
	if l.Group != "T1" || l.Windows != 1 || l.Expected != 10 || l.Repeats != 2 || l.Pauses != 0 || l.Samples != 151+1+50 {
		t.Errorf("T1 loss %+v; want 1 of 10 windows, 2 repeats, 202 samples in no window", l)
	}
	if len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], "1 of 10 AC windows lost") || !strings.Contains(res.Warnings[0], "T1 1/10 (2 repeated times)") {
		t.Errorf("warnings %q, want one saying T1 lost 1 of 10 windows to 2 repeated times", res.Warnings)
	}
	// Windows of 0.3 s (600 samples): T1's runs give 0+1+1 of 3, T2's
	// 0+2 of 3: both lose a window, T2 to its pause.
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Losses) != 2 || res.Losses[1].Group != "T2" || res.Losses[1].Pauses != 1 || res.Losses[1].Windows != 1 ||
		math.Abs(res.Losses[1].LongestPause-4.0/2000) > 1e-9 {
		t.Errorf("losses %+v; want T2 to lose 1 window to one pause of 2 ms", res.Losses)
	} else if !strings.Contains(res.Warnings[0], "T2 1/3 (1 pause)") {
		t.Errorf("warning %q does not name T2's pause", res.Warnings[0])
	}

	// Every 97th row repeated: no run holds a window of 200 samples.
	rep := columnsRepeating(acLog(nil, 2000, 4000, 100, 50, testPhasors, 0), func(i int) bool { return i%97 == 96 })
	_, err = DemodulateColumns(rep, &DemodSettings{Freq: 50, Window: 0.1})
	var nw *NoWindowError
	if !errors.As(err, &nw) || nw.Breaks.Repeats != 41 || nw.Longest != 98 || !strings.Contains(err.Error(), "repeats a time 41 times") {
		t.Errorf("err = %v, want a NoWindowError naming 41 repeated times and runs of 98 samples (a repeat, 96 rows and the next to be repeated)", err)
	}
}

// TestDemodulateLeftOutGapsNamed: gaps the caller made by leaving rows out
// (DemodSettings.LeftOut, as locate leaves out readings clipped at the
// sensor's range) are counted apart from the logger's pauses and worded
// with the caller's cause, not as a fault of the time stamps. A 50 Hz
// log of 4000 samples at 2000 Hz in two groups (windows of 0.3 s, 600
// samples, counted by hand as in TestDemodulateCountsWindowsLost): T1
// loses rows 801-803 (left out by the caller), T2 rows 2501-2503 (a
// logger's pause).
func TestDemodulateLeftOutGapsNamed(t *testing.T) {
	c := acLog(nil, 2000, 4000, 100, 50, testPhasors, 0)
	c.Group = make([]string, len(c.Time))
	for i := range c.Group {
		c.Group[i] = map[bool]string{true: "T1", false: "T2"}[i < 2000]
	}
	leftOut := []float64{c.Time[804]}
	both := columnsWithout(c, func(i int) bool { return i >= 801 && i <= 803 || i >= 2501 && i <= 2503 })
	set := DemodSettings{Freq: 50, Window: 0.3, LeftOut: leftOut, LeftOutWhy: "rows were left out as clipped", LeftOutFix: "read with a larger range"}
	res, err := DemodulateColumns(both, &set)
	if err != nil {
		t.Fatal(err)
	}
	// T1: runs of 801 and 1196 rows give 1 + 1 of the 3 windows 1997
	// would give; T2 runs of 501 and 1496 give 0 + 2.
	if len(res.Losses) != 2 || res.Losses[0].LeftOut != 1 || res.Losses[0].Pauses != 0 || res.Losses[1].LeftOut != 0 || res.Losses[1].Pauses != 1 {
		t.Fatalf("losses %+v; want T1 to lose a window to one gap left out, T2 to one pause", res.Losses)
	}
	w := res.Warnings[len(res.Warnings)-1]
	if !strings.Contains(w, "pauses once") || !strings.Contains(w, "1 gap is where rows were left out as clipped, not the time stamps' fault") || !strings.Contains(w, "T1 1/3 (1 gap left out)") {
		t.Errorf("mixed breaks: warning %q", w)
	}
	// The left-out gap alone: the time stamps are not blamed.
	only := columnsWithout(c, func(i int) bool { return i >= 801 && i <= 803 })
	res, err = DemodulateColumns(only, &set)
	if err != nil {
		t.Fatal(err)
	}
	w = res.Warnings[len(res.Warnings)-1]
	if !strings.Contains(w, "1 of 3 AC windows lost to gaps in the readings") || !strings.Contains(w, "the one gap is where rows were left out as clipped") || strings.Contains(w, "fix the logger's time stamps") || !strings.Contains(w, "read with a larger range") {
		t.Errorf("left-out gap alone: warning %q", w)
	}
	// Without LeftOut the same gap is a pause, as before.
	res, err = DemodulateColumns(only, &DemodSettings{Freq: 50, Window: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if w := res.Warnings[len(res.Warnings)-1]; !strings.Contains(w, "pauses once") || !strings.Contains(w, "fix the logger's time stamps") {
		t.Errorf("no LeftOut: warning %q", w)
	}
}
