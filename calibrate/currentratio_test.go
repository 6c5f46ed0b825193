package calibrate

import (
	"math"
	"strings"
	"testing"
)

// TestCurrentRatios: the ratio of a linearly interpolated record to its time
// average over the readings' span, worked by hand (invented record): samples
// 100, 200, 200, 100, 100 A at 0..4 s, readings at 0.5, 1.5, 3.5 s. The
// average over 0.5..3.5 s is (0.5 (150+200)/2 + 200 + 150 + 0.5 100) / 3 =
// 162.5 A; the ratios are 150, 200 and 100 over it.
func TestCurrentRatios(t *testing.T) {
	rt := []float64{0, 1, 2, 3, 4}
	ri := []float64{100, 200, 200, 100, 100}
	cr, err := CurrentRatios("rec.csv", rt, ri, []float64{1.5, 0.5, 3.5})
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-12 // a few roundings
	if math.Abs(cr.Mean-162.5) > tol*162.5 || cr.Min != 100 || cr.Max != 200 {
		t.Errorf("mean %v min %v max %v, want 162.5 100 200", cr.Mean, cr.Min, cr.Max)
	}
	for i, want := range []float64{200 / 162.5, 150 / 162.5, 100 / 162.5} {
		if math.Abs(cr.Ratio[i]-want) > tol {
			t.Errorf("ratio %d: %v, want %v", i, cr.Ratio[i], want)
		}
	}
	for _, tc := range []struct {
		ri   []float64
		at   []float64
		want string
	}{
		{ri, []float64{0.5, 4.5}, "ends 0.500 s before"},
		{ri, []float64{-1, 2}, "starts 1.000 s after"},
		{ri, []float64{5, 6}, "do not overlap"},
		{ri, []float64{1, math.NaN()}, "have no times"},
		{[]float64{100, 200, -5, 100, 100}, []float64{1.5, 2.5}, "is -5 A, not positive"},
		{[]float64{100, math.NaN(), 200, 100, 100}, []float64{0.5, 0.9}, "is missing"},
	} {
		if _, err := CurrentRatios("rec.csv", rt, tc.ri, tc.at); err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "rec.csv") {
			t.Errorf("readings at %v: %v, want %q", tc.at, err, tc.want)
		}
	}
	// A NaN outside the samples the interpolation uses is no matter.
	if _, err := CurrentRatios("rec.csv", rt, []float64{math.NaN(), 100, 200, 100, 100}, []float64{1.5, 2.5}); err != nil {
		t.Errorf("a missing current before the survey: %v", err)
	}
}
