package inverse

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestPairNetCurrentAlongItsDirection: a go-and-return pair running north, 10 A out
// on one core and 8 A back on the other (2 A flowing north is lost elsewhere), cores
// 0.6 m apart at 1.5 m, read along one 10 m traverse 0.3 m up with 3 nT of noise, DC
// and at 50 Hz (3 nT per phasor component, both currents at 30 degrees). The readings
// are the two filaments' exact Biot-Savart field (Line.Field, DOMAIN.md "Infinite
// straight filament"); the net current is the sum of the filaments' currents, 2 A
// northward (2 A at 30 degrees flowing north for AC), whatever the fit makes of the
// cores. The cores are laid half a degree either side of north, the stronger at
// 359.5 degrees, so that the fitted lines' azimuths straddle north and the stronger
// one's, folded to [0, 180), lies near 179.5 degrees. The pair's net current, taken
// along the pair's direction (Dir), must be 2 A northward within three sigma on
// every seed: before, the mean azimuth was folded again past 180 degrees while the
// net current stayed signed along the stronger line, and the pair read 2 A flowing
// south; for AC the net current had no phase at all.
func TestPairNetCurrentAlongItsDirection(t *testing.T) {
	pts := traverse(201, -5, 5, 0, 0.3)
	half := 0.5 * math.Pi / 180
	lines := []Line{
		{Point: [3]float64{-0.3, 0, -1.5}, Dir: [3]float64{-math.Sin(half), math.Cos(half), 0}},
		{Point: [3]float64{0.3, 0, -1.5}, Dir: [3]float64{math.Sin(half), math.Cos(half), 0}},
	}
	z := 0.0
	for _, ac := range []bool{false, true} {
		for seed := range uint64(6) {
			t.Run(fmt.Sprintf("ac%v/seed%d", ac, seed), func(t *testing.T) {
				rng := rand.New(rand.NewPCG(seed, 7))
				p := &Problem{Points: pts}
				if ac {
					p.Phasors = phasorReadings(pts, lines, []complex128{cmplx.Rect(10, math.Pi/6), cmplx.Rect(-8, math.Pi/6)}, 3, rng)
				} else {
					p.Fields = simulate(pts, lines, []float64{10, -8}, [3]float64{-300, 18000, -46000}, 3, rng)
				}
				res, err := FitLines(p, &Settings{ReferenceZ: &z})
				if err != nil {
					t.Fatal(err)
				}
				var pe *PairEstimate
				switch {
				case len(res.Pairs) == 1:
					pe = &res.Pairs[0]
				case len(res.Opposed) > 0:
					pe = &res.Opposed[0] // resolved cores: their net current is reported alike
				default:
					t.Fatalf("%d lines, no pair: want the two cores as a pair", len(res.Sources))
				}
				if !(pe.Azimuth >= 0 && pe.Azimuth < 180) {
					t.Errorf("pair azimuth %.3f, want it in [0, 180)", pe.Azimuth)
				}
				t.Logf("pairs %d opposed %d az %.2f lines %.2f %.2f net %.4f±%.4f ph %.2f±%.2f", len(res.Pairs), len(res.Opposed), pe.Azimuth, res.Sources[0].Azimuth, res.Sources[1].Azimuth, pe.NetCurrent, pe.NetCurrentSigma, pe.NetCurrentPhase, pe.NetCurrentPhaseSigma)
				north := math.Copysign(1, pe.Dir[1]) // +1 when Dir points north
				if !ac {
					within3(t, "net current flowing north", north*pe.NetCurrent, 2, pe.NetCurrentSigma)
					return
				}
				within3(t, "net current (RMS)", pe.NetCurrent, 2, pe.NetCurrentSigma)
				ph := pe.NetCurrentPhase
				if north < 0 {
					ph += 180 // the phase of the same current flowing north
				}
				within3(t, "net current's phase flowing north", math.Remainder(ph-30, 360), 0, pe.NetCurrentPhaseSigma)
			})
		}
	}
}

// TestOpposedNetCurrent: two cores of a DC circuit the fit resolves, 10 A out and 6 A
// back (4 A returning through the ground), 0.6 m apart at 1.2 m, read along one 10 m
// traverse 0.3 m up with 3 nT of noise: the exact Biot-Savart field of the two
// filaments (Line.Field). Whether the fit reports them as two lines or as an
// unresolved pair, Result.Opposed or Result.Pairs gives the pair's net current, and it
// must be the filaments' sum, 4 A along +y, within three sigma on every seed, with a
// sigma (from the covariance) under 0.05 A: the net current is what the far field
// determines best. A report that takes the net current at some traverses and a core's
// current at others reports the difference as current leaving the conductor.
func TestOpposedNetCurrent(t *testing.T) {
	pts := traverse(201, -5, 5, 0, 0.3)
	lines := []Line{
		{Point: [3]float64{-0.3, 0, -1.2}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.3, 0, -1.2}, Dir: [3]float64{0, 1, 0}},
	}
	z := 0.0
	for seed := range uint64(6) {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			f := simulate(pts, lines, []float64{10, -6}, [3]float64{-300, 18000, -46000}, 3, rand.New(rand.NewPCG(seed, 9)))
			res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{ReferenceZ: &z})
			if err != nil {
				t.Fatal(err)
			}
			var pe *PairEstimate
			switch {
			case len(res.Pairs) == 1:
				pe = &res.Pairs[0]
			case len(res.Opposed) == 1:
				pe = &res.Opposed[0]
				if pe.Lines != [2]int{0, 1} || !(pe.Spacing > 0) {
					t.Errorf("opposed lines %v spacing %.3g, want lines 0 and 1 apart", pe.Lines, pe.Spacing)
				}
				within3(t, "spacing", pe.Spacing, 0.6, pe.SpacingSigma)
			default:
				t.Fatalf("%d lines, %d pairs, %d opposed: want the two cores", len(res.Sources), len(res.Pairs), len(res.Opposed))
			}
			within3(t, "net current along +y", math.Copysign(1, pe.Dir[1])*pe.NetCurrent, 4, pe.NetCurrentSigma)
			if !(pe.NetCurrentSigma < 0.05) {
				t.Errorf("net current sigma %.3g A, want under 0.05 A", pe.NetCurrentSigma)
			}
			within3(t, "centre depth", pe.Depth, 1.2, pe.DepthSigma)
		})
	}
}
