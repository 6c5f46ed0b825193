package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// A caller-held azimuth the readings reject makes the group unsound. Four
// traverses square to a 2 A line at azimuth 45 degrees, 1.2 m below the
// sensors, with 2 nT of noise (acrossLine: simulated truth), fitted with the
// noise estimated and the azimuth held by the caller: at the true 45 degrees
// every group is sound; at 75 degrees every group is a failed fit naming the
// held angles (inverse.HeldAnglesRejectedNote). Before, the groups held at 75
// degrees were all sound, their currents and depths biased beyond their
// sigmas.
func TestBuildHeldAzimuthRejectedUnsound(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 45))
	az := 45 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	var probs []inverse.Problem
	for i := range 4 {
		p0 := [3]float64{10 * float64(i) * u[0], 10 * float64(i) * u[1], -1.2}
		p := acrossLine(p0, u, 2, [3]float64{-310, 17900, -46300}, 2, rng)
		p.Sigma = 0
		probs = append(probs, p)
	}
	for _, c := range []struct {
		azimuth float64
		sound   bool
	}{{45, true}, {75, false}} {
		set := &inverse.Settings{Count: 1, Azimuth: &c.azimuth}
		var fits []Fit
		for i := range probs {
			r, err := inverse.FitLines(&probs[i], set)
			if err != nil {
				t.Fatal(err)
			}
			fits = append(fits, Fit{Key: fmt.Sprintf("K%d", i+1), Problem: &probs[i], Result: r, Settings: set})
		}
		d, err := Build(Document{}, fits, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, g := range d.Groups {
			if g.OK != c.sound || !c.sound && !strings.HasPrefix(g.Problem, "the fit failed: "+inverse.HeldAnglesRejectedNote) {
				t.Errorf("azimuth held at %g: %s ok %v (%q), want ok %v", c.azimuth, g.Key, g.OK, g.Problem, c.sound)
			}
		}
	}
}
