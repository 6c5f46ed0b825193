package main

import (
	"fmt"
	"math"
	"testing"

	"undercurrent/inverse"
)

// fitWithRSS is a fit with dof degrees of freedom whose residual sum of
// squares is rss, nT².
func fitWithRSS(rss float64, dof int) *inverse.Result {
	return &inverse.Result{DOF: dof, ResidualPhasors: [][3]complex128{{complex(math.Sqrt(rss), 0)}}}
}

// TestDropMisfitRamps: with four groups meeting a measured noise of 1 nT
// (the reference), a ramp whose fit meets the noise is kept; one that
// leaves its fit missing by 80 times the noise variance, having taken out
// a fifth of the misfit beyond it (as the ramps beside a fault did), is
// taken back; ones that took out 45% (as beside the pair with a street
// light) or 70% of it are kept.
func TestDropMisfitRamps(t *testing.T) {
	const dof = 100
	var gs []*group
	for i := range 4 {
		gs = append(gs, &group{key: fmt.Sprint("clean", i), res: fitWithRSS(dof, dof), wsigma: []float64{1}})
	}
	for _, c := range []struct {
		key  string
		with float64 // the ramped fit's residual variance, nT²
		kept bool
	}{{"meets the noise", 1.0, true}, {"a fifth", 80, false}, {"45%", 55, true}, {"most", 30, true}} {
		res0 := fitWithRSS(100*dof, dof)
		gs = append(gs, &group{key: c.key, res: fitWithRSS(c.with*dof, dof), res0: res0, wsigma: []float64{1},
			ramp: &groupRamp{hz: 1e-4, sigma: 1e-5, held: rss(res0), heldDOF: dof}})
	}
	dropMisfitRamps(gs)
	for i, c := range []bool{true, false, true, true} {
		g := gs[4+i]
		if kept := g.ramp != nil; kept != c {
			t.Errorf("%s: ramp kept %v, want %v", g.key, kept, c)
		}
		if !c && rss(g.res) != 100*dof {
			t.Errorf("%s: keeps the fit with the ramp", g.key)
		}
	}
	for _, g := range gs[:4] {
		if g.res == nil {
			t.Errorf("%s lost its fit", g.key)
		}
	}
}

// TestDropLoneRamps: a small ramp (0.1° across its group) between groups
// that kept none is taken back; small ramps in successive groups (a
// steady offset) and a large lone one (a wandering grid, 10°) are kept.
func TestDropLoneRamps(t *testing.T) {
	mk := func(turns []float64) []*group {
		var gs []*group
		for i, turn := range turns {
			ts := make([]float64, rampMinWindows)
			for k := range ts {
				ts[k] = 30*float64(i) + float64(k)
			}
			g := &group{key: fmt.Sprint("T", i), times: ts, res: &inverse.Result{RMS: 0.5}}
			if turn != 0 {
				g.res0 = &inverse.Result{RMS: 1}
				g.ramp = &groupRamp{hz: turn / 360 / 7, turn: turn}
			}
			gs = append(gs, g)
		}
		return gs
	}
	for _, c := range []struct {
		name  string
		turns []float64
		kept  []bool
	}{
		{"lone small", []float64{0, 0.1, 0}, []bool{false, false, false}},
		{"lone small at the end", []float64{0, 0, 0.1}, []bool{false, false, false}},
		{"successive", []float64{0, 0.1, 0.12}, []bool{false, true, true}},
		{"lone large", []float64{0, 10, 0}, []bool{false, true, false}},
	} {
		gs := mk(c.turns)
		dropLoneRamps(gs)
		for i, g := range gs {
			if kept := g.ramp != nil; kept != c.kept[i] {
				t.Errorf("%s: %s ramp kept %v, want %v", c.name, g.key, kept, c.kept[i])
			}
		}
	}
}
