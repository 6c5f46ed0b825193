package report

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// highRateDrum returns the drum fixture's traverse past the drum (see
// drumFits) walked at a high rate: n readings spread evenly from north
// -6 m to 6 m, 1 nT of white noise, fitted by inverse.FitLines as locate
// fits a traverse.
func highRateDrum(t testing.TB, n int, seed uint64) *Fit {
	rng := rand.New(rand.NewPCG(seed, 77))
	earth := [3]float64{-150, 19200, -45100}
	cable := inverse.Line{Point: [3]float64{0, 0, -drumDepth}, Dir: [3]float64{1, 0, 0}}
	prob := &inverse.Problem{Sigma: drumNoise}
	for k := range n {
		r := [3]float64{drumPos[0], -6 + 12*float64(k)/float64(n-1), 0}
		b := cable.Field(r, drumCurrent)
		d := inverse.Dipole{Pos: drumPos}.Field(r, drumMoment)
		var m [3]float64
		for a := range m {
			m[a] = (b[a]+d[a])*1e9 + earth[a] + drumNoise*rng.NormFloat64()
		}
		prob.Points = append(prob.Points, r)
		prob.Fields = append(prob.Fields, m)
	}
	set := &inverse.Settings{}
	res, err := inverse.FitLines(prob, set)
	if err != nil {
		t.Fatal(err)
	}
	return &Fit{Key: "F4", Problem: prob, Result: res, Settings: set}
}

// highRateTolerance is how far apart the object placed with the coarse
// stages on thinned readings and the one placed on all the readings may
// lie: both polishes end at a 1 mm step, so either stops within about a
// millimetre of the same minimum on each axis.
const highRateTolerance = 0.003 // m

// TestLocateHighRateCoarse places the drum beside its cable on a 3001-reading
// traverse (the fixture's 12 m at 250 Hz and 1 m/s) from the grid, with
// the cable held where it lies, once on all the readings and once with the
// coarse stages on thinned ones. The two land on the same minimum (within
// highRateTolerance, the residual sum within 1e-6 of it), the thinned
// search makes under a fifth of the trials on all the readings that the
// full search makes (before the coarse stages every trial used all 3001),
// and the object lies where the fixture put it (within 4 of the sigmas of
// the whole search, which dipole_coverage_test.go finds calibrated).
func TestLocateHighRateCoarse(t *testing.T) {
	f := highRateDrum(t, 3001, 1)
	cable := []inverse.Source{inverse.Line{Point: [3]float64{0, 0, -drumDepth}, Dir: [3]float64{1, 0, 0}}, nil}
	set := &inverse.Settings{}
	full := &dipoleLocator{p: f.Problem, set: set, srcs: append([]inverse.Source(nil), cable...), zTop: -0.1}
	thin := newDipoleLocator(f.Problem, set, append([]inverse.Source(nil), cable...), -0.1)
	if thin.coarse == nil {
		t.Fatal("no coarse locator for 3001 readings")
	}
	if n := len(thin.coarse.p.Points); n > coarseReadings+6 || n < coarseReadings/2 {
		t.Fatalf("%d thinned readings, want about %d", n, coarseReadings)
	}
	pf, rf := full.locate(nil)
	pt, rt := thin.locate(nil)
	t.Logf("all readings: %.4f m, RSS %.6g, %d trials; thinned: %.4f m, RSS %.6g, %d trials on all and %d on %d thinned",
		pf, rf, full.evals, pt, rt, thin.evals, thin.coarse.evals, len(thin.coarse.p.Points))
	for a := range 3 {
		if d := math.Abs(pt[a] - pf[a]); d > highRateTolerance {
			t.Errorf("axis %d: thinned search at %.4f m, full at %.4f m (%.4f m apart, want at most %g)", a, pt[a], pf[a], d, highRateTolerance)
		}
	}
	if math.Abs(rt-rf) > 1e-6*rf {
		t.Errorf("RSS %.9g with the coarse stages, %.9g without", rt, rf)
	}
	if thin.evals*5 > full.evals {
		t.Errorf("%d trials on all the readings with the coarse stages, %d without: want under a fifth", thin.evals, full.evals)
	}

	ds := searchDipole(f)
	if ds == nil {
		t.Fatal("no object found on the high-rate traverse")
	}
	for a := range 3 {
		if d := math.Abs(ds.obj.Point[a] - drumPos[a]); !(d <= 4*ds.obj.PointSigma[a]) {
			t.Errorf("axis %d: object at %.4f ± %.2g m, true %.4f m", a, ds.obj.Point[a], ds.obj.PointSigma[a], drumPos[a])
		}
	}
}

// TestThinReadings keeps every k-th reading, the ends and each axis's
// extremes (for AC readings the moduli's, with their travel), and leaves
// a short traverse alone.
func TestThinReadings(t *testing.T) {
	f := highRateDrum(t, 3001, 2)
	p := f.Problem
	if thinReadings(p, len(p.Points)) != nil {
		t.Error("a traverse of max readings thinned")
	}
	q := thinReadings(p, coarseReadings)
	// 3001 readings in at most 500: k = 7, 429 readings, the last, and up
	// to six extremes.
	if n := len(q.Points); n < 430 || n > 436 {
		t.Fatalf("%d readings kept, want 430-436", n)
	}
	if q.Points[0] != p.Points[0] || q.Points[len(q.Points)-1] != p.Points[len(p.Points)-1] {
		t.Error("the traverse's ends not kept")
	}
	for a := range 3 {
		hi, lo := math.Inf(-1), math.Inf(1)
		for _, b := range p.Fields {
			hi, lo = math.Max(hi, b[a]), math.Min(lo, b[a])
		}
		var gotHi, gotLo bool
		for _, b := range q.Fields {
			gotHi, gotLo = gotHi || b[a] == hi, gotLo || b[a] == lo
		}
		if !gotHi || !gotLo {
			t.Errorf("axis %d: extremes kept %v %v", a, gotHi, gotLo)
		}
	}
	for i := 1; i < len(q.Points); i++ {
		if q.Points[i][1] <= q.Points[i-1][1] {
			t.Fatalf("reading %d out of order", i)
		}
	}

	// AC readings with travel: the largest and smallest moduli kept, each
	// reading's travel beside it.
	ac := &inverse.Problem{Points: p.Points, Sigma: p.Sigma}
	for i, b := range p.Fields {
		var z [3]complex128
		for a := range 3 {
			z[a] = complex(0, b[a]) // modulus |b[a]|
		}
		ac.Phasors = append(ac.Phasors, z)
		ac.Travel = append(ac.Travel, [3]float64{0, float64(i), 0})
	}
	qa := thinReadings(ac, coarseReadings)
	if len(qa.Phasors) != len(qa.Points) || len(qa.Travel) != len(qa.Points) || qa.Fields != nil {
		t.Fatalf("AC: %d points, %d phasors, %d travels, fields %v", len(qa.Points), len(qa.Phasors), len(qa.Travel), qa.Fields != nil)
	}
	for i, r := range qa.Points {
		if j := int(qa.Travel[i][1]); p.Points[j] != r || imag(qa.Phasors[i][0]) != p.Fields[j][0] {
			t.Fatalf("AC reading %d: travel or phasor of reading %d beside position %v", i, j, r)
		}
	}
	for a := range 3 {
		hi, lo := 0.0, math.Inf(1)
		for _, b := range p.Fields {
			hi, lo = math.Max(hi, math.Abs(b[a])), math.Min(lo, math.Abs(b[a]))
		}
		var gotHi, gotLo bool
		for _, z := range qa.Phasors {
			gotHi, gotLo = gotHi || cmplx.Abs(z[a]) == hi, gotLo || cmplx.Abs(z[a]) == lo
		}
		if !gotHi || !gotLo {
			t.Errorf("AC axis %d: largest modulus kept %v, smallest %v", a, gotHi, gotLo)
		}
	}
}

// BenchmarkSearchDipoleHighRate searches the drum traverse walked at 250
// Hz (3001 readings) for the object, as checkDipoles does for each group
// it searches.
func BenchmarkSearchDipoleHighRate(b *testing.B) {
	f := highRateDrum(b, 3001, 1)
	for b.Loop() {
		if searchDipole(f) == nil {
			b.Fatal("no object")
		}
	}
}
