package report

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestBuildReportsHeldSegments: groups fitted by inverse.FitStrengths with a
// site plan's segment (the plan's conductor from one manhole to the next)
// are reported with that conductor. Three traverses 4 m apart cross a
// 12 A segment 1.1 m down running north from (0.3, -10) to (0.3, 14) m
// (simulated truth: the segment's Biot-Savart field, a uniform background
// and 2 nT of noise per axis, the noise given). Before, FitStrengths gave
// a segment no Result.Sources entry and report.Build called every group
// "no conductor was fitted"; each group must now carry a line whose
// current is within three sigma of 12 A.
func TestBuildReportsHeldSegments(t *testing.T) {
	const noise, amps = 2.0, 12.0
	seg := inverse.Segment{A: [3]float64{0.3, -10, -1.1}, B: [3]float64{0.3, 14, -1.1}}
	rng := rand.New(rand.NewPCG(5, 9))
	var fits []Fit
	for k, key := range []string{"S1", "S2", "S3"} {
		var pts, fields [][3]float64
		for i := range 61 {
			r := [3]float64{-3 + 0.1*float64(i), 4 * float64(k), 0}
			b := inverse.Fields(seg, [][3]float64{r}, []float64{amps}, nil)[0]
			var f [3]float64
			for j, bg := range []float64{150, 19200, -45100} {
				f[j] = b[j]*1e9 + bg + noise*rng.NormFloat64()
			}
			pts, fields = append(pts, r), append(fields, f)
		}
		p := &inverse.Problem{Points: pts, Fields: fields, Sigma: noise}
		res, err := inverse.FitStrengths(p, []inverse.Source{seg}, nil)
		if err != nil {
			t.Fatal(err)
		}
		fits = append(fits, Fit{Key: key, Problem: p, Result: res})
	}
	d, err := Build(Document{}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range d.Groups {
		if strings.Contains(g.Problem, "no conductor was fitted") || len(g.Sources) == 0 {
			t.Errorf("%s: problem %q, %d sources: want the held segment's line", g.Key, g.Problem, len(g.Sources))
			continue
		}
		s := g.Sources[0]
		if s.Kind != KindLine || !(math.Abs(s.Current-amps) <= 3*s.CurrentSigma) {
			t.Errorf("%s: %s of %.4g ± %.2g A, want a line of %g A", g.Key, s.Kind, s.Current, s.CurrentSigma, amps)
		}
	}
}
