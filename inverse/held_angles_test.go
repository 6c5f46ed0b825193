package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// cableBeyondEndTraverse returns a 24 m traverse (81 readings 0.3 m apart, 0.3 m
// above the ground) across a route running at azimuth 100 degrees, at chainage ch
// along it, and the cable: 15 A, 1.0 m down, at azimuth 150 degrees through the
// route's start, which at chainage 18 to 34 m crosses the traverse's line 9 to 29 m beyond its
// end (Kestrel Moor gas spur, an invented fixture).
func cableBeyondEndTraverse(ch float64) ([][3]float64, Line) {
	route := 100 * math.Pi / 180
	c := [2]float64{ch * math.Sin(route), ch * math.Cos(route)}
	across := route + math.Pi/2
	var pts [][3]float64
	for i := range 81 {
		s := -12 + 0.3*float64(i)
		pts = append(pts, [3]float64{c[0] + s*math.Sin(across), c[1] + s*math.Cos(across), 0.3})
	}
	az := 150 * math.Pi / 180
	return pts, Line{Point: [3]float64{0, 0, -1}, Dir: [3]float64{math.Sin(az), math.Cos(az), 0}}
}

// TestHeldAnglesNotBiasedSilently: a single traverse whose fitted angles are not
// determined has them held perpendicular to it and level (FitLines); where the
// line crosses the traverse's line 50 degrees off that, beyond its end, the held
// fit misses the readings (the field of an infinite line, Biot-Savart) by far more
// than the free one, and its current is biased beyond its sigma. Every fit is
// either within three sigma of the true 15 A or says that the angles held are
// rejected by the readings (HeldAnglesRejectedNote), which the report takes as a
// failed fit. Before, the held fits read 20 to 24 A ± 2 A, 2.5 to 4.5 sigma high,
// with nothing to say so (beyond three sigma on seven seeds of ten at chainage 24
// m), and a route read a false "current joining" from them.
func TestHeldAnglesNotBiasedSilently(t *testing.T) {
	bg := [3]float64{-150, 19200, -45100}
	for _, ch := range []float64{18, 20, 22, 24, 26, 28, 30, 34} {
		pts, cable := cableBeyondEndTraverse(ch)
		for seed := range uint64(10) {
			t.Run(fmt.Sprintf("chainage%g/seed%d", ch, seed), func(t *testing.T) {
				rng := rand.New(rand.NewPCG(seed, 9))
				f := simulate(pts, []Line{cable}, []float64{15}, bg, 3, rng)
				res, err := FitLines(&Problem{Points: pts, Fields: f}, nil)
				if err != nil {
					t.Fatal(err)
				}
				e := res.Sources[0]
				cur := e.Current
				if dot(e.Dir, cable.Dir) < 0 {
					cur = -cur
				}
				rejected := slices.ContainsFunc(res.Notes, func(n string) bool { return strings.HasPrefix(n, HeldAnglesRejectedNote) })
				t.Logf("%.3f ± %.3f A, azimuth %.1f ± %.1f deg, rejected %v", cur, e.CurrentSigma, e.Azimuth, e.AzimuthSigma, rejected)
				if !rejected && !within3ok(cur, 15, e.CurrentSigma) {
					t.Errorf("current %.3f ± %.3f A at azimuth %.1f ± %.1f deg, want 15 A within three sigma or the held angles rejected; notes %q",
						cur, e.CurrentSigma, e.Azimuth, e.AzimuthSigma, res.Notes)
				}
			})
		}
	}
}
