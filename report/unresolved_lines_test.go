package report

import (
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestUnresolvedLinesNotSound: two DC cables carrying 8 A and 5 A the same
// way, one 0.3 m above the other at 1.0 and 1.3 m, read on one 8 m traverse
// 0.3 m up every 5 cm with 1 nT noise (the field of two infinite filaments,
// Biot-Savart). Two lines fit the readings to their noise but do not
// resolve the currents, so the automatic count reports one line of about
// 13 A between them, tens of sigmas from either cable, with the note
// inverse.UnresolvedLinesNote. The group must not pass as sound: its
// Problem carries the note, and so does the route's station (which the
// route then judges as a poor fit rather than a level to trust). Before,
// the note sat in the fit's notes while the group counted as sound.
func TestUnresolvedLinesNotSound(t *testing.T) {
	lines := []inverse.Line{
		{Point: [3]float64{0, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0, 0, -1.3}, Dir: [3]float64{0, 1, 0}},
	}
	cur := []float64{8, 5}
	rng := rand.New(rand.NewPCG(3, 4))
	p := &inverse.Problem{}
	for k := -80; k <= 80; k++ {
		r := [3]float64{0.05 * float64(k), 5, 0.3}
		var b [3]float64
		for i, l := range lines {
			f := l.Field(r, cur[i])
			for a := range b {
				b[a] += f[a] * 1e9
			}
		}
		earth := [3]float64{-300, 18000, -46000}
		for a := range b {
			b[a] += earth[a] + rng.NormFloat64()
		}
		p.Points, p.Fields = append(p.Points, r), append(p.Fields, b)
	}
	res, err := inverse.FitLines(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	noted := false
	for _, n := range res.Notes {
		noted = noted || strings.HasPrefix(n, inverse.UnresolvedLinesNote)
	}
	if !noted {
		t.Fatalf("the fit found %d line(s) without the unresolved-lines note (notes %q)", len(res.Sources), res.Notes)
	}
	g, st := buildGroup(&Fit{Key: "T01", Problem: p, Result: res}, false, 0, 0, false)
	if !strings.HasPrefix(g.Problem, inverse.UnresolvedLinesNote) || !strings.HasPrefix(st.Problem, inverse.UnresolvedLinesNote) {
		t.Errorf("group problem %q, station problem %q: want both to carry the unresolved-lines note", g.Problem, st.Problem)
	}
}
