package report

import (
	"fmt"
	"math"
	"testing"
)

// TestBuildFindsObjectBesideFurtherConductor: a small steel fitting of the
// Harrow Fen fixture (dipole_split_test.go) beside cable 2, the weaker of
// the two, at the fourth traverse, with a twentieth of the drum's moment
// (0.06 A m^2). The fit keeps the two cables, the primary route (cable 1)
// finds nothing, and the track of cable 2 reports a current anomaly at H4
// (the object's field taken for about 0.07 A). Build searches that group
// for an object beside cable 2: the test checks that the object is
// reported once, on conductor 2 at H4, its position and moment within 4 of
// their reported sigmas of the truth, its distance measured from cable 2
// (within 4 sigma of the north coordinate of the object less cable 2's),
// that no current anomaly is left, and that both cables' refitted currents
// at H4 lie within 4 sigma of the truth. Without the search the current
// anomaly stands and no object is reported.
func TestBuildFindsObjectBesideFurtherConductor(t *testing.T) {
	moment := [3]float64{0.1 * splitMoment[0], 0.1 * splitMoment[1], 0.1 * splitMoment[2]}
	for _, north := range []float64{3.5, 4.5, 5.5} {
		obj := [3]float64{30.4, north, -0.8}
		t.Run("north "+metresLabel(north), func(t *testing.T) {
			d, err := Build(Document{}, splitFits(t, obj, moment), &BuildSettings{Noise: drumNoise})
			if err != nil {
				t.Fatal(err)
			}
			found := 0
			for _, f := range d.Findings {
				if f.Kind == "current-anomaly" {
					t.Errorf("current anomaly reported: %s", f.Message)
				}
				if f.Kind != "dipole-anomaly" {
					continue
				}
				found++
				if len(f.Groups) != 1 || f.Groups[0] != "H4" || f.Conductor != 2 {
					t.Errorf("object found at %v on conductor %d, want H4 on conductor 2", f.Groups, f.Conductor)
				}
				vals := checkObject(t, f, obj, moment)
				dist, n := vals["distance from conductor"], vals["north"]
				if w := north - splitCables[1].north; math.Abs(dist.Value-w) > 4*n.Sigma {
					t.Errorf("distance from the conductor %.3f m, true %.3f m from cable 2 (north sigma %.3f m)", dist.Value, w, n.Sigma)
				}
			}
			if found != 1 {
				t.Fatalf("%d magnetised objects reported, want 1", found)
			}
			for _, g := range d.Groups {
				if g.Key != "H4" {
					continue
				}
				var lines, dipoles int
				for _, s := range g.Sources {
					if s.Kind == KindDipole {
						dipoles++
						continue
					}
					lines++
					want := splitCables[0].current
					if s.Conductor == 2 {
						want = splitCables[1].current
					}
					if math.Abs(s.Current-want) > 4*s.CurrentSigma {
						t.Errorf("H4 conductor %d: %.4g ± %.2g A, true %g A", s.Conductor, s.Current, s.CurrentSigma, want)
					}
				}
				if lines != 2 || dipoles != 1 {
					t.Errorf("H4 has %d lines and %d dipoles, want 2 and 1", lines, dipoles)
				}
			}
		})
	}
}

func metresLabel(v float64) string { return fmt.Sprintf("%g m", v) }

// BenchmarkBuildObjectBesideFurtherConductor builds the Harrow Fen
// document whose fourth traverse is searched for the object beside cable 2
// (the route followed, its conductors followed, the search, both again).
func BenchmarkBuildObjectBesideFurtherConductor(b *testing.B) {
	fits := splitFits(b, [3]float64{30.4, 4.5, -0.8}, [3]float64{0.1 * splitMoment[0], 0.1 * splitMoment[1], 0.1 * splitMoment[2]})
	for b.Loop() {
		if _, err := Build(Document{}, fits, &BuildSettings{Noise: drumNoise}); err != nil {
			b.Fatal(err)
		}
	}
}
