package report

import (
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// TestObjectReachBoundsPeak: the bound objectTails skips far objects by
// (objectReach, 2 k |m| / r^3 at the box of the readings' paths) is never
// below the largest field component objectPeak sums reading by reading,
// for DC and AC moments, point and path-averaged readings, the object
// near the readings or far off; and it is tight: on the moment's axis a
// point reading sees the whole bound, k 2|m| / r^3 (the dipole field of
// DOMAIN.md along its axis). The check against objectPeak is what keeps
// the results the same as before the bound (rv14c, Finding 3).
func TestObjectReachBoundsPeak(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 3))
	for trial := range 400 {
		ac := trial%2 == 1
		n := 1 + rng.IntN(30)
		p := &inverse.Problem{Points: make([][3]float64, n)}
		for i := range p.Points {
			p.Points[i] = [3]float64{rng.Float64()*4 - 2, 10*rng.Float64() - 5, 0.3}
		}
		if trial%4 >= 2 {
			p.Travel = make([][3]float64, n)
			for i := range p.Travel {
				p.Travel[i] = [3]float64{0.4 * rng.NormFloat64(), 0.4 * rng.NormFloat64(), 0}
			}
		}
		// Objects within a metre of the readings to 50 m off.
		far := math.Pow(10, 3*rng.Float64()-1.5)
		pos := [3]float64{far * rng.NormFloat64(), far * rng.NormFloat64(), -0.5 - 2*rng.Float64()}
		mom := &inverse.Result{}
		for range 3 {
			if ac {
				mom.StrengthPhasors = append(mom.StrengthPhasors, complex(rng.NormFloat64(), rng.NormFloat64()))
			} else {
				mom.Strengths = append(mom.Strengths, rng.NormFloat64())
			}
		}
		if ac {
			p.Phasors = make([][3]complex128, n)
		} else {
			p.Fields = make([][3]float64, n)
		}
		ds := &dipoleSearch{obj: &route.Object{Point: pos}, moment: mom}
		peak := objectPeak(p, ds)
		if newObjectReach(ds).below(readingBox(p), peak) {
			t.Errorf("trial %d: the bound at %.3g m puts the object below %.6g nT, which it reaches", trial, far, peak)
		}
	}
	// On the axis: a moment of 1.5 A m^2 pointing north, a reading 2 m
	// north of it: 1e-7 * 2 * 1.5 / 8 T = 37.5 nT north.
	ds := &dipoleSearch{obj: &route.Object{Point: [3]float64{0, 0, -1}}, moment: &inverse.Result{Strengths: []float64{0, 1.5, 0}}}
	p := &inverse.Problem{Points: [][3]float64{{0, 2, -1}}, Fields: make([][3]float64, 1)}
	peak := objectPeak(p, ds)
	if math.Abs(peak-37.5)/37.5 > 1e-6 {
		t.Fatalf("on the axis the peak is %.9g nT, want 37.5 (mu0/4pi = 1e-7 T m/A, from memory; CODATA 2022's mu0 differs by 5e-10)", peak)
	}
	reach := newObjectReach(ds)
	if reach.below(readingBox(p), peak) || !reach.below(readingBox(p), peak*(1+1e-4)) {
		t.Errorf("on the axis the bound is not the peak, %.9g nT: %.9g nT", peak, reach.scale/8)
	}
}
