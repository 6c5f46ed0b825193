package inverse

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// TestTwoConductorsSameWay: two conductors 1.5 to 2.5 m apart carrying 8 A and 3 A
// the same way (two circuits fed from one end), under one 10 m traverse read every
// 5 cm with 1 nT noise. The starts for a second line slide into a coincident pair
// carrying opposite currents (a line dipole); polished only three of them, the fit
// ended there on every such traverse, the guard refused it and one 12.4 A line was
// reported between the two, 0.5 m too deep. The automatic count must find both
// lines, each within three sigma of the truth, over several noise draws.
func TestTwoConductorsSameWay(t *testing.T) {
	for _, sep := range []float64{1.5, 2, 2.5} {
		for seed := range uint64(3) {
			t.Run(fmt.Sprintf("%gm/seed%d", sep, seed), func(t *testing.T) {
				pts := traverse(201, -5, 5, 0, 0.3)
				lines := []Line{
					{Point: [3]float64{-sep / 2, 0, -1}, Dir: [3]float64{0, 1, 0}},
					{Point: [3]float64{sep / 2, 0, -1.2}, Dir: [3]float64{0, 1, 0}},
				}
				f := simulate(pts, lines, []float64{8, 3}, [3]float64{-300, 18000, -46000}, 1, rand.New(rand.NewPCG(seed, 7)))
				res, err := FitLines(&Problem{Points: pts, Fields: f}, nil)
				if err != nil {
					t.Fatal(err)
				}
				if len(res.Sources) != 2 {
					for _, c := range res.Criteria {
						t.Logf("K=%d RSS %.4g BIC %.1f %s", c.Count, c.RSS, c.BIC, c.Rejected)
					}
					t.Fatalf("%d lines found, want 2 (RMS %.3g nT)", len(res.Sources), res.RMS)
				}
				// Their shares are resolved: no same-way split whose sum the
				// route would take in place of the 8 A cable.
				if len(res.SameWay) > 0 {
					t.Errorf("two resolved cables %g m apart taken as one split conductor: %+v", sep, res.SameWay[0])
				}
				want := []struct{ cur, x, depth float64 }{{8, -sep / 2, 1.3}, {3, sep / 2, 1.5}}
				for i, e := range res.Sources {
					// The current along north, as simulated (Dir is oriented by azimuth).
					north := e.Current
					if e.Dir[1] < 0 {
						north = -north
					}
					within3(t, fmt.Sprintf("line %d current", i+1), north, want[i].cur, e.CurrentSigma)
					within3(t, fmt.Sprintf("line %d east", i+1), e.Point[0], want[i].x, e.OffsetSigma)
					within3(t, fmt.Sprintf("line %d depth", i+1), e.Depth, want[i].depth, e.DepthSigma)
				}
			})
		}
	}
}
