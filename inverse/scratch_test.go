package inverse

import (
	"fmt"
	"math/cmplx"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// snapshot renders everything a Result holds, covariance included, so that
// two snapshots are equal only if every value is.
func snapshot(r *Result) string {
	c := *r
	c.Covariance = nil
	s := fmt.Sprintf("%#v", c)
	if r.Covariance != nil {
		s += fmt.Sprintf("%v", mat.Formatted(r.Covariance))
	}
	return s
}

// A Result must own its memory: FitLines lends its work buffers from a
// pooled scratch (scratch.go) and the next fits reuse them, so a Result
// that kept one would change under its holder. Results of DC, AC, robust
// and dipole fits are kept while other fits run (one after another and at
// the same time), then compared with copies taken when they were returned.
func TestResultsOwnTheirMemory(t *testing.T) {
	robust := *benchCases[1].set
	robust.Robust = true
	withDipole := Settings{Count: 1, Dipoles: 1}
	type kept struct {
		res  *Result
		snap string
	}
	var keep []kept
	fit := func(p *Problem, s *Settings) {
		r, err := FitLines(p, s)
		if err != nil {
			t.Fatal(err)
		}
		keep = append(keep, kept{r, snapshot(r)})
	}
	for _, c := range benchCases {
		fit(c.problem(), c.set)
	}
	fit(benchCases[1].problem(), &robust)
	fit(benchCases[0].problem(), &withDipole)
	pts := grid(9, 31, 2.5, 0.4, 0.05)
	lines := []Line{
		{Point: [3]float64{-0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
		{Point: [3]float64{0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
	}
	ph := phasorReadings(pts, lines, []complex128{cmplx.Rect(50, 0.4), cmplx.Rect(46, 3.5)}, 2, rand.New(rand.NewPCG(5, 6)))
	fit(&Problem{Points: pts, Phasors: ph, Sigma: 2}, &Settings{Count: 2})
	// Other fits, one after another and concurrently, reuse the pool.
	done := make(chan struct{})
	for g := range 3 {
		go func() {
			defer func() { done <- struct{}{} }()
			for i := range 4 {
				c := benchCases[(g+i)%len(benchCases)]
				if _, err := FitLines(c.problem(), nil); err != nil {
					t.Error(err)
				}
			}
		}()
	}
	for range 3 {
		<-done
	}
	for i, k := range keep {
		if got := snapshot(k.res); got != k.snap {
			t.Errorf("result %d changed after later fits", i)
		}
	}
}

// TestLentSeparableKeepsItsWrapper: a separable lent again by a scratch keeps its LM
// wrapper (whose method values are bound to it) and the memory of its column layout,
// so that lending it and wrapping it for the LM engine allocates nothing (the wrapper
// had been dropped by newSeparableIn on every loan, four allocations per start
// polished), and the wrapper still evaluates the separable it is lent as.
func TestLentSeparableKeepsItsWrapper(t *testing.T) {
	c := benchCases[0]
	p, err := readBenchSurvey(filepath.Join("testdata", c.file))
	if err != nil {
		t.Fatal(err)
	}
	scr := new(scratch)
	sv := newSurveyIn(p, scr)
	geom := []lineGeom{sv.geomFrom(seed{e: 0.2, az: 0, z: -1}, true, true, 0, 0)}
	lend := func() (*separable, *lmProblem) {
		sp := newSeparableIn(scr, sv.pts, sv.y, sv.nrhs, BackgroundUniform, sv.centroid, geom, nil)
		sp.scr = scr
		lmp, _ := sp.problem()
		return sp, lmp
	}
	sp1, lmp1 := lend()
	scr.release()
	sp2, lmp2 := lend()
	if sp1 != sp2 || lmp1 != lmp2 {
		t.Fatalf("the separable lent again has wrapper %p, was %p (separable %p, was %p)", lmp2, lmp1, sp2, sp1)
	}
	// The wrapper evaluates the separable it was lent as: its residual is the one
	// the separable gives.
	x, _, _ := sp2.pack()
	r1, r2 := make([]float64, sp2.residLen()), make([]float64, sp2.residLen())
	if err := lmp2.resid(x, r1); err != nil {
		t.Fatal(err)
	}
	sp2.ok = false
	if err := sp2.resid(x, r2); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(r1, r2) {
		t.Error("the kept wrapper's residual differs from the separable's")
	}
	scr.release()
	if n := testing.AllocsPerRun(20, func() { lend(); scr.release() }); n != 0 {
		t.Errorf("lending a separable and wrapping it allocates %g times, want 0", n)
	}
}
