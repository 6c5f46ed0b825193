package route

import (
	"math"
	"testing"
)

// halfLineShare integrates the Biot-Savart law along a straight line from
// its end at x = 0 back to x = -L (L long) for a point at horizontal
// distance d before the end and height h above the line, and returns the
// field's magnitude over that of an infinite line, mu0 I / (2 pi h), by
// the midpoint rule over the angle subtended.
func halfLineShare(d, h float64) float64 {
	// Point at (x = -d, z = h); an element at (x, 0) gives
	// dB = mu0 I / (4 pi) h dx / r^3, r^2 = (x + d)^2 + h^2.
	const n = 200000
	lo, hi := math.Atan2(-1e6+d, h), math.Atan2(d, h) // angle of the element seen from the point
	var sum float64
	for i := 0; i < n; i++ {
		a := lo + (hi-lo)*(float64(i)+0.5)/n
		// x + d = h tan(a): dx = h sec^2(a) da, h/r^3 dx = cos(a) da / h.
		sum += math.Cos(a)
	}
	sum *= (hi - lo) / n
	return sum / 2 // (mu0 I / (4 pi h)) sum over (mu0 I / (2 pi h))
}

// TestEndShareBiotSavart: the share a station reads before an end (the
// fraction of an infinite line's field that a half-line gives a point at
// distance d before its end, at the share's width H above it) agrees with
// the Biot-Savart law integrated numerically, and a station's current is
// divided by it, its sigma widened by the share's uncertainty.
func TestEndShareBiotSavart(t *testing.T) {
	b := beforeEnd{fitted: true, t: 1.5, h: 3}
	for _, d := range []float64{0, 2, 4, 8, 20} {
		f, s := b.share(d)
		want := halfLineShare(d+b.t, b.h)
		if math.Abs(f-want) > 1e-6 {
			t.Errorf("d = %g: share %.7f, Biot-Savart %.7f", d, f, want)
		}
		// Only the model's error (no grid points given): a third of
		// the correction.
		if want := endShareError * (1 - f); math.Abs(s-want) > 1e-12 {
			t.Errorf("d = %g: share sigma %g, want %g", d, s, want)
		}
	}
	ps := []Placed{{Station: Station{Current: 7.8, CurrentSigma: 0.08}}, {Station: Station{Current: 9.9, CurrentSigma: 0.02}}}
	ps[0].endShare, ps[0].endShareSigma = 0.78, 0.05
	got := endCorrected(ps)
	if &got[0] == &ps[0] {
		t.Fatal("endCorrected changed its argument in place")
	}
	if ps[0].Current != 7.8 {
		t.Errorf("the caller's station changed: %g A", ps[0].Current)
	}
	if c := got[0].Current; math.Abs(c-10) > 1e-9 {
		t.Errorf("corrected current %g A, want 7.8 / 0.78 = 10 A", c)
	}
	if s, want := got[0].CurrentSigma, math.Hypot(0.08/0.78, 7.8*0.05/(0.78*0.78)); math.Abs(s-want) > 1e-12 {
		t.Errorf("corrected sigma %g A, want %g A", s, want)
	}
	if got[1].Current != 9.9 || got[1].CurrentSigma != 0.02 {
		t.Errorf("a station without a share changed: %g ± %g A", got[1].Current, got[1].CurrentSigma)
	}
}
