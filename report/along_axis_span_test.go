package report

import (
	"math"
	"strings"
	"testing"
)

// TestFloorSpan: a range narrower than the least span is widened about its
// middle to that span; a wider one, or one not finite, is kept.
func TestFloorSpan(t *testing.T) {
	for _, c := range []struct{ lo, hi, min, wantLo, wantHi float64 }{
		{1.0998, 1.1004, 0.2, 1.0001, 1.2001},
		{19.996, 20.008, 1, 19.502, 20.502},
		{0, 1, 0.2, 0, 1},
		{5, 5, 0.2, 4.9, 5.1},
	} {
		lo, hi := floorSpan(c.lo, c.hi, c.min)
		if math.Abs(lo-c.wantLo) > 1e-9 || math.Abs(hi-c.wantHi) > 1e-9 {
			t.Errorf("floorSpan(%g, %g, %g) = %g, %g; want %g, %g", c.lo, c.hi, c.min, lo, hi, c.wantLo, c.wantHi)
		}
	}
	if lo, hi := floorSpan(math.Inf(1), math.Inf(-1), 0.2); !math.IsInf(lo, 1) || !math.IsInf(hi, -1) {
		t.Errorf("an empty range was widened to %g, %g", lo, hi)
	}
	if got := minAlongSpan("current", []float64{-30, 30.02, 29.98}); math.Abs(got-1.5) > 1e-9 {
		t.Errorf("least current span %g A for 30 A, want 1.5 A (5%%)", got)
	}
	if got := minAlongSpan("depth", nil); got != minDepthSpan {
		t.Errorf("least depth span %g, want %g", got, minDepthSpan)
	}
}

// TestAlongAxisLeastSpan: on a route whose current and depth vary by
// milliamps and tenths of a millimetre (an AC walk of one straight
// cable), the current axis spans at least 5% of the current and the depth
// axis at least 0.2 m, so that noise is not drawn at full height as a
// cable that rises and falls, and each axis labels its ticks with one
// number of decimals. Before, the depth axis ran 1.0998 to 1.1004 m,
// labelled "1.1" beside "1.1001".
func TestAlongAxisLeastSpan(t *testing.T) {
	d := fenwickLane(false)
	d.DepthReference.SensorHeight = 0 // no ground line to widen the depth axis
	d.MinCover = nil
	d.Findings = nil
	for i := range d.Route.Stations {
		st := &d.Route.Stations[i]
		st.Current = 20 + 0.004*math.Sin(float64(i))
		st.CurrentSigma = 0.001
		st.Depth = 1.1 + 0.0002*math.Cos(float64(i))
		st.DepthSigma = 0.00005
	}
	for _, c := range []struct {
		which string
		least float64
	}{{"current", 1}, {"depth", 0.2}} {
		p, err := alongPlot(d, d.Route, 0, c.which, false)
		if err != nil {
			t.Fatal(err)
		}
		if span := p.Y.Max - p.Y.Min; span < c.least {
			t.Errorf("%s axis spans %g (%g to %g), want at least %g", c.which, span, p.Y.Min, p.Y.Max, c.least)
		}
		decimals := -1
		for _, tk := range p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max) {
			if tk.Label == "" {
				continue
			}
			n := 0
			if i := strings.IndexByte(tk.Label, '.'); i >= 0 {
				n = len(tk.Label) - i - 1
			}
			if decimals >= 0 && n != decimals {
				t.Errorf("%s axis: label %q has %d decimals, others %d", c.which, tk.Label, n, decimals)
			}
			decimals = n
		}
	}
	// The labels of an axis of 1.0998 to 1.1004 m, as drawn before.
	got := tickLabels([]float64{1.0998, 1.0999, 1.1, 1.1001, 1.1002}, 0.0006)
	for _, l := range got {
		if len(l) != len("1.0998") {
			t.Errorf("labels %q: not one number of decimals", got)
			break
		}
	}
}
