package calibrate

import (
	"math/rand/v2"
	"testing"
)

// cleanTraverse is one traverse of n readings d m apart across a long
// line current of I A h m below the sensor, crossing the traverse x0 m
// from its middle: the east and up components by Biot-Savart (μ0 I/2π r,
// mu0over2pi in despike_flank_test.go) on a constant Earth's field, with
// white Gaussian noise of the given size on each axis. A fixture: the
// shape is the law's, the numbers are invented.
func cleanTraverse(rng *rand.Rand, n int, d, h, x0, I, noise float64) [][]float64 {
	cols := [][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
	for i := range n {
		x := float64(i)*d - float64(n-1)*d/2 - x0
		c := mu0over2pi * I / (x*x + h*h)
		cols[0][i] = -150 + c*h + noise*rng.NormFloat64()
		cols[1][i] = 19200 + noise*rng.NormFloat64()
		cols[2][i] = -45100 - c*x + noise*rng.NormFloat64()
	}
	return cols
}

// traverseKind is a family of clean traverses for the false-alarm tests.
type traverseKind struct {
	name           string
	n              int
	d, h, I, noise float64
}

// The Harrow Fen earthing conductor's traverses (single-line.toml: 25 A
// 1.4 m below the sensor, 81 readings 0.1 m apart, 2 nT noise), and the
// short traverses of a Wetherby Carr cable (3 A 3.3 m below the sensor,
// 10 m traverses of 7 to 21 readings, 2 nT noise) on which the spike check
// took the anomaly's curvature at the ends, and whole short runs, for
// spikes.
var (
	longTraverses  = []traverseKind{{"81 readings 0.1 m apart", 81, 0.1, 1.4, 25, 2}}
	shortTraverses = []traverseKind{
		{"7 readings", 7, 10.0 / 6, 3.3, 3, 2},
		{"11 readings", 11, 1, 3.3, 3, 2},
		{"12 readings", 12, 10.0 / 11, 3.3, 3, 2},
		{"15 readings", 15, 10.0 / 14, 3.3, 3, 2},
		{"21 readings", 21, 0.5, 3.3, 3, 2},
	}
)

// flagRates runs FindSpikes at threshold k over trials clean traverses of
// each kind, the line crossing anywhere along them (at the ends too), and
// returns the share of readings flagged and that of the first and last
// two readings of each traverse.
func flagRates(t *testing.T, kinds []traverseKind, k float64, trials int) (all, ends float64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(91, 92))
	var flagged, reads, endFlagged, endReads int
	for _, tk := range kinds {
		for range trials {
			x0 := (rng.Float64() - 0.5) * float64(tk.n) * tk.d
			sp, _, _, err := FindSpikes(cleanTraverse(rng, tk.n, tk.d, tk.h, x0, tk.I, tk.noise), &DespikeSettings{Threshold: k})
			if err != nil {
				t.Fatal(err)
			}
			for i, f := range sp {
				end := i < 2 || i >= tk.n-2
				reads++
				if end {
					endReads++
				}
				if f {
					flagged++
					if end {
						endFlagged++
					}
				}
			}
		}
	}
	return float64(flagged) / float64(reads), float64(endFlagged) / float64(endReads)
}

// TestFindSpikesCleanTraversesAtEnds: on clean traverses (a Biot-Savart
// line and white noise, 2000 of each kind) the spike test flags few
// readings, at the ends of the traverses as in their middles. At the
// spike warning's 10 scales, where a Gaussian departure has a probability
// of 1.5e-23, at most 2 readings in 100 000 (the warning fires on one
// flagged reading in a log of under a thousand); at --despike's default
// 5 scales at most 0.3% of readings, the rate documented for white noise
// (0.1% per axis, three axes), and at most 0.5% of the first and last two.
// The quadratic carried two rows beyond one side's neighbours flagged
// 0.064% of the long traverses' readings at 10 scales and 0.62% at 5 (9%
// of their end readings); that and the median of a whole short run, which
// spans the anomaly, 2.5% and 11% of the short ones' (30% of their end
// readings).
func TestFindSpikesCleanTraversesAtEnds(t *testing.T) {
	for _, set := range []struct {
		name  string
		kinds []traverseKind
	}{{"long traverses", longTraverses}, {"short traverses", shortTraverses}} {
		all, _ := flagRates(t, set.kinds, 10, 2000)
		if all > 2e-5 {
			t.Errorf("%s: %.3g%% of clean readings flagged at 10 scales, want at most 0.002%%", set.name, 100*all)
		}
		all, ends := flagRates(t, set.kinds, 5, 2000)
		if all > 3e-3 || ends > 5e-3 {
			t.Errorf("%s: %.3g%% of clean readings flagged at 5 scales (%.3g%% of the first and last two), want at most 0.3%% (0.5%%)",
				set.name, 100*all, 100*ends)
		}
	}
}

// TestFindSpikesCaughtAtEnds: leaving the anomaly's curvature alone at
// a traverse's ends does not leave a spike there alone. On the clean
// traverses of 11 readings and more (500 of each kind, the line anywhere
// along them), one reading on bz raised or lowered at the first, second,
// second-last or last row is flagged at least 85% as often as one in the
// middle of the same traverses: 500 nT (250 times the noise, less than
// the 800 nT of the flank tests) at the warning's 10 scales, and on the
// long traverses 50 nT at --despike's 5 scales. (Near the anomaly the
// neighbours' misfit to the local trend raises the scale, in the middle as
// at the ends, so that not every such spike is caught.)
func TestFindSpikesCaughtAtEnds(t *testing.T) {
	type check struct {
		tk      traverseKind
		k, size float64
	}
	var checks []check
	for _, tk := range append(append([]traverseKind(nil), longTraverses...), shortTraverses[1:]...) {
		checks = append(checks, check{tk, 10, 500})
	}
	checks = append(checks, check{longTraverses[0], 5, 50})
	for _, c := range checks {
		const trials = 500
		caughtAt := func(at int) float64 {
			rng := rand.New(rand.NewPCG(93, 94))
			caught := 0
			for trial := range trials {
				x0 := (rng.Float64() - 0.5) * float64(c.tk.n) * c.tk.d
				cols := cleanTraverse(rng, c.tk.n, c.tk.d, c.tk.h, x0, c.tk.I, c.tk.noise)
				cols[2][at] += float64(1-2*(trial%2)) * c.size
				sp, _, _, err := FindSpikes(cols, &DespikeSettings{Threshold: c.k})
				if err != nil {
					t.Fatal(err)
				}
				if sp[at] {
					caught++
				}
			}
			return float64(caught) / trials
		}
		mid := caughtAt(c.tk.n / 2)
		for _, at := range []int{0, 1, c.tk.n - 2, c.tk.n - 1} {
			if got := caughtAt(at); got < 0.85*mid {
				t.Errorf("%s, a spike of %g nT at row %d: flagged at %g scales in %.1f%% of traverses, in the middle %.1f%%; want at least 85%% of that",
					c.tk.name, c.size, at, c.k, 100*got, 100*mid)
			}
		}
	}
}
