package inverse

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// FitStrengths summarises a line given as a pointer as it does one given as
// a value, and refuses nil sources. A 41-reading traverse over a 10 A line
// 1.2 m down (simulated truth: its Biot-Savart field, a uniform background
// and 1 nT of noise) is solved with the line held as Line{...} and as
// &Line{...}: both give one Result.Sources entry, the same current, within
// three sigma of 10 A. Before, the pointer's current was solved
// (Result.Strengths) but Result.Sources stayed empty, and report.Build
// called every such group "no conductor was fitted"; a nil source panicked.
func TestFitStrengthsLinePointerAndNil(t *testing.T) {
	pts := traverse(41, -4, 4, 0, 0)
	cable := Line{Point: [3]float64{0.2, 0, -1.2}, Dir: [3]float64{0, 1, 0}}
	rng := rand.New(rand.NewPCG(10, 12))
	p := &Problem{Points: pts, Fields: simulate(pts, []Line{cable}, []float64{10}, [3]float64{120, 18650, -45200}, 1, rng), Sigma: 1}
	byValue, err := FitStrengths(p, []Source{cable}, nil)
	if err != nil {
		t.Fatal(err)
	}
	c := cable
	byPointer, err := FitStrengths(p, []Source{&c, &Dipole{Pos: [3]float64{3, 0, -1}}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for name, r := range map[string]*Result{"Line": byValue, "*Line": byPointer} {
		// The line first; the dipole held beside the pointer has an entry
		// of its own since FitStrengths summarises dipoles too.
		if len(r.Sources) == 0 || r.Sources[0].Kind != "line" || len(r.Sources) > 1 && (name == "Line" || r.Sources[1].Kind != "dipole") {
			t.Errorf("%s: %d sources, want the line (and the dipole held with the pointer)", name, len(r.Sources))
			continue
		}
		e := r.Sources[0]
		if !within3ok(e.Current, 10, e.CurrentSigma) || e.Current != r.Strengths[0] {
			t.Errorf("%s: current %.4f ± %.4f A (strength %.4f), want 10 A within three sigma", name, e.Current, e.CurrentSigma, r.Strengths[0])
		}
	}
	var nilLine *Line
	var nilDipole *Dipole
	for _, c := range []struct {
		name string
		src  []Source
	}{
		{"nil", []Source{cable, nil}},
		{"nil *Line", []Source{nilLine}},
		{"nil *Dipole", []Source{cable, nilDipole}},
	} {
		func() {
			defer func() {
				if v := recover(); v != nil {
					t.Errorf("%s: panic %v", c.name, v)
				}
			}()
			if _, err := FitStrengths(p, c.src, nil); err == nil || !strings.Contains(err.Error(), "is a nil") && !strings.Contains(err.Error(), "is nil") {
				t.Errorf("%s: err %v, want one saying the source is nil", c.name, err)
			}
		}()
	}
}
