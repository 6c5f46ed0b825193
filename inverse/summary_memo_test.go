package inverse

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"path/filepath"
	"reflect"
	"slices"
	"testing"
)

// TestSummaryMemoSameFits: keeping a fit's summary for its later uses (summaryMemo)
// is only a saving: every fit must be the same, bit for bit, with the memo and
// without it. The fixtures cover the paths that summarise a fit more than once: the
// automatic count's guard, two opposite lines checked for a pair (repolishPair), a
// go-and-return pair beside a cable (pairOrObject, pairRank's reordering), a stacked
// pair, AC phasors and robust reweighting.
func TestSummaryMemoSameFits(t *testing.T) {
	fx := sameFitFixtures(t)

	defer func() { summaryMemoOff = false }()
	for _, c := range fx {
		t.Run(c.name, func(t *testing.T) {
			summaryMemoOff = false
			with, err1 := FitLines(c.p, c.set)
			summaryMemoOff = true
			without, err2 := FitLines(c.p, c.set)
			summaryMemoOff = false
			if fmt.Sprint(err1) != fmt.Sprint(err2) {
				t.Fatalf("error %v with the memo, %v without", err1, err2)
			}
			if !reflect.DeepEqual(with, without) {
				t.Errorf("the fit differs with the memo:\n%+v\nwithout:\n%+v", with, without)
			}
		})
	}
}

// TestSummaryMemoGuards: the memo gives a copy (changing a summary a caller holds does
// not change the next), and a summary made afresh once the fit has moved or its
// weights were replaced; each time the same as summarising without the memo.
func TestSummaryMemoGuards(t *testing.T) {
	c0 := benchCases[1]
	p, err := readBenchSurvey(filepath.Join("testdata", c0.file))
	if err != nil {
		t.Fatal(err)
	}
	s := (&Settings{Count: 1}).orDefault()
	scr := scratchPool.Get().(*scratch)
	defer func() { scr.release(); scratchPool.Put(scr) }()
	f := &fitter{sv: newSurveyIn(p, scr), set: &s, prob: p, scr: scr}
	c, err := f.fitK(1, nil)
	if err != nil {
		t.Fatal(err)
	}
	fresh := func() *summary {
		t.Helper()
		su, err := f.summariseOrdered(c)
		if err != nil {
			t.Fatal(err)
		}
		return su
	}
	memo := func() *summary {
		t.Helper()
		su, err := f.summarise(c)
		if err != nil {
			t.Fatal(err)
		}
		return su
	}
	same := func(what string, got, want *summary) {
		t.Helper()
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: the memo's summary differs from a fresh one:\n%+v\nwant\n%+v", what, got.lines, want.lines)
		}
	}
	change := func(su *summary) {
		su.lines[0].Notes = append(su.lines[0].Notes, "changed by the caller")
		su.lines[0].Current = 1e6
		su.cov.SetSym(0, 0, 42)
		su.v[0] = 42
	}
	change(memo()) // made afresh
	change(memo()) // from the memo
	same("after callers changed their copies", memo(), fresh())

	// The fit moves: a summary for the new parameters.
	x := slices.Clone(c.x)
	x[0] += 0.01
	c.x = x
	moved := memo()
	if moved.v[0] != x[0] {
		t.Errorf("after the fit moved the summary is of parameter %g, want %g", moved.v[0], x[0])
	}
	same("after the fit moved", moved, fresh())

	// New robust weights: a summary with them.
	before := memo()
	c.sp.w = make([]float64, c.sp.m)
	for i := range c.sp.w {
		c.sp.w[i] = 1
		if i%2 == 0 {
			c.sp.w[i] = 0.5
		}
	}
	c.sp.ok = false
	weighted := memo()
	same("after the weights changed", weighted, fresh())
	if weighted.cov.At(0, 0) == before.cov.At(0, 0) {
		t.Errorf("the covariance %g is the unweighted one after the weights changed", before.cov.At(0, 0))
	}
}

// fitFixture is a survey and settings fitted twice by the tests that check a saving
// changes no fit (TestSummaryMemoSameFits, TestGaussNewtonShortcutSameFits).
type fitFixture struct {
	name string
	p    *Problem
	set  *Settings
}

// sameFitFixtures gives the surveys those tests fit: the benchmark surveys with the
// scipy mirror's settings, the automatic count and Huber weights; a stacked pair, DC
// and AC; and a go-and-return pair beside a cable (simulated, Biot-Savart).
func sameFitFixtures(t *testing.T) []fitFixture {
	t.Helper()
	var fx []fitFixture
	for _, c := range benchCases {
		p, err := readBenchSurvey(filepath.Join("testdata", c.file))
		if err != nil {
			t.Fatal(err)
		}
		fx = append(fx, fitFixture{c.file + "/mirror", p, mirrorSettings(c)}, fitFixture{c.file + "/auto", p, &Settings{}})
		fx = append(fx, fitFixture{c.file + "/huber", p, &Settings{Count: c.set.Count, Robust: true}})
	}
	z0 := 0.0
	pts := stackedTraverse()
	f := simulate(pts, stackedLines(0, 1.0, 1.3), []float64{10, -9}, [3]float64{-300, 18000, -46000}, 1, rand.New(rand.NewPCG(2, 31)))
	fx = append(fx, fitFixture{"stacked pair", &Problem{Points: pts, Fields: f}, &Settings{ReferenceZ: &z0}})
	cur := []complex128{cmplx.Rect(10, math.Pi/6), cmplx.Rect(-9, math.Pi/6)}
	ph := phasorReadings(pts, stackedLines(0, 1.0, 1.3), cur, 1, rand.New(rand.NewPCG(2, 37)))
	fx = append(fx, fitFixture{"stacked pair AC", &Problem{Points: pts, Phasors: ph}, &Settings{ReferenceZ: &z0}})
	side := []Line{
		{Point: [3]float64{-2, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{-0.15, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.15, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
	}
	survey := grid(5, 41, 2, 0.5, 0.3)
	fs := simulate(survey, side, []float64{6, 10, -10}, [3]float64{-300, 18000, -46000}, 2, rand.New(rand.NewPCG(4, 9)))
	fx = append(fx, fitFixture{"pair beside a cable", &Problem{Points: survey, Fields: fs}, &Settings{ReferenceZ: &z0}})
	return fx
}
