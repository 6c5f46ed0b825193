package calibrate

import (
	"math"
	"math/cmplx"
	"regexp"
	"strconv"
	"testing"
)

// TestDemodulateShortWindowNamesWindow: a window too short for the
// parameters each window fits is refused with the shortest window that
// holds enough samples, and that window demodulates. 50 Hz sampled at 120 Hz
// (invented, as a slow logger on a mains cable): a 0.075 s window holds 9
// samples, too few for the 8 parameters of a window with its linear term.
// The refusal had read "9 samples, too few for 8 parameters" and named no way
// out (found in review).
func TestDemodulateShortWindowNamesWindow(t *testing.T) {
	const fs = 120.0
	var tt, y []float64
	for i := range 1200 {
		ti := float64(i) / fs
		tt = append(tt, 1.8e9+ti)
		y = append(y, 100*math.Cos(2*math.Pi*50*ti+0.4))
	}
	c := &Columns{Time: tt, B: [3][]float64{y, y, y}}
	_, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.075, Drift: true})
	if err == nil {
		t.Fatal("a 9-sample window for 8 parameters was taken")
	}
	m := regexp.MustCompile(`use a window of at least ([0-9.]+) s`).FindStringSubmatch(err.Error())
	if m == nil {
		t.Fatalf("refusal %q names no window that would do", err)
	}
	win, _ := strconv.ParseFloat(m[1], 64)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: win, Drift: true})
	if err != nil {
		t.Fatalf("the %g s window named: %v", win, err)
	}
	if len(res.Windows) == 0 {
		t.Fatalf("the %g s window named gave no windows", win)
	}
	// The amplitude read back: RMS 100/sqrt(2) nT on each axis.
	if got := cmplx.Abs(res.Windows[0].B[0]); math.Abs(got-100/math.Sqrt2) > 1e-6*100 {
		t.Errorf("window of %g s reads %.6g nT RMS, want %.6g", win, got, 100/math.Sqrt2)
	}
}
