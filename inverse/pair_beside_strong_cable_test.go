package inverse

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// TestPairBesideStrongCableCount: a DC go-and-return pair (10 A out and back,
// cores 0.5 m apart at 2.0 m) with a 20 A cable at 1.0 m 3 m to its east,
// read on one 8 m traverse 0.3 m up (801 readings, 0.6 nT noise per axis;
// the field of three infinite filaments, Biot-Savart). The pair makes a
// tenth of the cable's field at the sensors. Two lines do not describe the
// field and the second line's azimuth is not determined by the traverse;
// the automatic count had stopped there, at one line 13.6% low and 0.12 m
// shallow that missed by 19 times the noise, reported as sound, on four
// traverses of seven of such a survey. A count refused for undetermined
// angles is now passed over while the fit with fewer lines misses the
// noise: three lines fit to the noise, the cable within 3 sigma and the
// pair reported as one. Required on at least three seeds of four (on the
// others no count may reach the noise, and the one-line fit stands).
func TestPairBesideStrongCableCount(t *testing.T) {
	pts := traverse(801, -4, 4, 5, 0.3)
	lines := []Line{
		{Point: [3]float64{-0.25, 0, -2}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.25, 0, -2}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{3, 0, -1}, Dir: [3]float64{0, 1, 0}},
	}
	cur := []float64{10, -10, 20}
	z := 0.0
	found := 0
	for seed := range uint64(4) {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			rng := rand.New(rand.NewPCG(seed, 44))
			f := simulate(pts, lines, cur, [3]float64{-300, 18000, -46000}, 0.6, rng)
			res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{ReferenceZ: &z})
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range res.Criteria {
				t.Logf("K=%d BIC %.1f %s", c.Count, c.BIC, c.Rejected)
			}
			c := res.Sources[0]
			t.Logf("%d lines, %d pairs; line 1 %.4f ± %.4f A at %.4f ± %.4f m", len(res.Sources), len(res.Pairs), c.Current, c.CurrentSigma, c.Depth, c.DepthSigma)
			// The current flows along Dir; the cable's runs north.
			cur := c.Current
			if c.Dir[1] < 0 {
				cur = -cur
			}
			if len(res.Sources) == 3 && len(res.Pairs) == 1 && within3ok(cur, 20, c.CurrentSigma) && within3ok(c.Depth, 1, c.DepthSigma) {
				found++
			}
		})
	}
	if found < 3 {
		t.Errorf("the cable and the pair found on %d seeds of 4, want at least 3", found)
	}
}
