package report

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// partnerLine is one DC filament of partnerFits: its east offset, depth and
// current along +y (A).
type partnerLine struct{ east, depth, current float64 }

// partnerFits simulates 10 m traverses 5 m apart across DC filaments running
// north on the invented Sedge Ings site, read every 5 cm 0.3 m above the
// ground, the field the filaments' (lineField, Biot-Savart, DOMAIN.md) plus
// a uniform Earth field and 1 nT noise per axis; traverse i crosses lines[i].
// Each is fitted with inverse.FitLines and the automatic count, depths below
// the ground.
func partnerFits(t testing.TB, seed uint64, lines [][]partnerLine) []Fit {
	rng := rand.New(rand.NewPCG(seed, 47))
	earth := [3]float64{-300, 18000, -46000}
	u := [3]float64{0, 1, 0}
	z := 0.0
	var fits []Fit
	for i, ls := range lines {
		y := 5 + 5*float64(i)
		var prob inverse.Problem
		for k := -100; k <= 100; k++ {
			r := [3]float64{0.05 * float64(k), y, 0.3}
			m := earth
			for _, l := range ls {
				b := lineField([3]float64{l.east, 0, -l.depth}, u, r, l.current)
				for j := range m {
					m[j] += b[j] * 1e9
				}
			}
			for j := range m {
				m[j] += rng.NormFloat64()
			}
			prob.Points = append(prob.Points, r)
			prob.Fields = append(prob.Fields, m)
		}
		set := &inverse.Settings{ReferenceZ: &z}
		res, err := inverse.FitLines(&prob, set)
		if err != nil {
			t.Fatalf("T%02d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: &prob, Result: res, Settings: set})
	}
	return fits
}

// TestPairPartnerChangeCaveated: a DC circuit, 10 A out at east 0 and 8 A
// back at east 0.6 m, 0.8 m down, where at the last two of eight traverses
// the return core is gone and another line, 3 A back at east 0.25 m, lies
// beside the go core. Its spacing unlike the other traverses' partners',
// the net current there (7 A against 2 A, the sums of the filaments'
// currents) is another pair's: the step set against it must say that it
// rests on a change of the core paired with conductor 1, and be no warning.
// Before, the route warned of current leaving the circuit, as for an earth
// fault.
func TestPairPartnerChangeCaveated(t *testing.T) {
	var lines [][]partnerLine
	for i := range 8 {
		ls := []partnerLine{{0, 0.8, 10}, {0.6, 0.8, -8}}
		if i >= 6 {
			ls = []partnerLine{{0, 0.8, 10}, {0.25, 0.8, -3}}
		}
		lines = append(lines, ls)
	}
	fits := partnerFits(t, 2, lines)
	d, err := Build(Document{Title: "Sedge Ings circuit (invented)"}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || !d.Route.PairNet {
		t.Fatal("want the route to follow the pair's net current")
	}
	n := 0
	for _, f := range d.Findings {
		if f.Conductor > 1 || !strings.HasPrefix(f.Kind, "current-") {
			continue
		}
		n++
		if !strings.Contains(f.Message, "change of the core paired with conductor 1") || f.Severity == SeverityWarning {
			t.Errorf("finding %s %s: want it worded as a change of partner, not a warning: %s", f.Severity, f.Kind, f.Message)
		}
	}
	if n == 0 {
		t.Error("no finding at the traverse whose partner changed")
	}
}
