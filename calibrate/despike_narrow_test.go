package calibrate

import (
	"math/rand/v2"
	"testing"
)

// Simulated truth for the narrow anomalies of shallow cables: a 2 A line
// current (Biot-Savart, cleanTraverse) h m from the sensor across a 10 m
// traverse of 41 readings 0.25 m apart (4 Hz at walking pace), with 2 nT
// of white noise, h from 0.75 to 2.5 reading spacings, crossing the
// traverse anywhere in its middle third (on a reading or between).
// The Pipit Lane review's cable, 0.25 m deep below a sensor 0.1 m up, is
// 1.4 spacings away: the local quadratic took the two readings beside the
// line for spikes on every traverse, and one at 1.75 and 2.1 spacings.
var narrowSpacings = []float64{0.75, 1, 1.4, 1.75, 2.1, 2.5}

func narrowTraverse(rng *rand.Rand, hSpacings float64) [][]float64 {
	const n, d = 41, 0.25
	x0 := (rng.Float64() - 0.5) * n * d / 3
	return cleanTraverse(rng, n, d, hSpacings*d, x0, 2, 2)
}

// TestDespikeKeepsNarrowLineAnomalies: on 200 clean traverses at each
// distance, no more readings are taken for spikes than the documented
// false-alarm rate on noise (0.3% over three axes), one of the three
// readings nearest the line's crossing (the anomaly's peak) on at most 3%
// of the traverses (the quadratic alone took them on 50% to 100% at 1.4
// to 2.1 spacings), and none at the spike warning's 10 scales.
func TestDespikeKeepsNarrowLineAnomalies(t *testing.T) {
	for _, h := range narrowSpacings {
		rng := rand.New(rand.NewPCG(201, uint64(100*h)))
		var flagged, reads, peak, traverses, warned int
		for range 200 {
			cols := narrowTraverse(rng, h)
			// --despike's 5 scales, and the spike warning's 10 (which
			// advised --despike on such clean logs).
			sp, _, _, err := FindSpikes(cols, nil)
			if err != nil {
				t.Fatal(err)
			}
			sp10, _, _, err := FindSpikes(cols, &DespikeSettings{Threshold: 10})
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range sp10 {
				if f {
					warned++
				}
			}
			// The crossing is where the east component (h/r²) peaks.
			top := 0
			for i, v := range cols[0] {
				if v > cols[0][top] {
					top = i
				}
			}
			traverses++
			hit := false
			for i, f := range sp {
				reads++
				if f {
					flagged++
					if i >= top-1 && i <= top+1 {
						hit = true
					}
				}
			}
			if hit {
				peak++
			}
		}
		if rate := float64(flagged) / float64(reads); rate > 3e-3 {
			t.Errorf("line at %g spacings: %.2g%% of clean readings taken for spikes, want at most 0.3%%", h, 100*rate)
		}
		if rate := float64(peak) / float64(traverses); rate > 0.03 {
			t.Errorf("line at %g spacings: a reading at the peak taken for a spike on %.2g%% of traverses, want at most 3%%", h, 100*rate)
		}
		if warned > 0 {
			t.Errorf("line at %g spacings: %d clean readings beyond 10 scales (the spike warning's)", h, warned)
		}
	}
}

// TestDespikeNarrowAnomaliesWithSpikes: the same traverses with three
// spikes of 80 to 400 nT (either sign, each on one random axis) at known
// rows: one 2 to 4 rows from the line's crossing (on the anomaly's
// flank), one 6 to 9 rows away, and one near an end. Every spike the
// local quadratic alone finds (trendSpikes) is still found: the line
// shape, fitted to the neighbours, does not explain a one-reading spike
// away. And at most 1% of the other readings are taken for spikes (the
// quadratic alone took 1.6% to 6.1%, the peak's readings). Spikes the
// quadratic misses on so narrow an anomaly stay missed (DEVELOPERS.md,
// Known limits).
func TestDespikeNarrowAnomaliesWithSpikes(t *testing.T) {
	for _, h := range narrowSpacings {
		rng := rand.New(rand.NewPCG(202, uint64(100*h)))
		var planted, byQuadratic, kept, clean, falseHits int
		for range 200 {
			cols := narrowTraverse(rng, h)
			top := 0
			for i, v := range cols[0] {
				if v > cols[0][top] {
					top = i
				}
			}
			side := func() int { return 1 - 2*rng.IntN(2) }
			rows := []int{top + side()*(2+rng.IntN(3)), top + side()*(6+rng.IntN(4)), 2 + rng.IntN(3)}
			if rng.IntN(2) == 0 {
				rows[2] = 40 - rows[2]
			}
			spiked := map[int]bool{}
			for _, r := range rows {
				if r < 0 || r > 40 || spiked[r] {
					continue
				}
				spiked[r] = true
				size := float64(side()) * (80 + 320*rng.Float64())
				cols[rng.IntN(3)][r] += size
			}
			ds, err := (*DespikeSettings)(nil).withDefaults()
			if err != nil {
				t.Fatal(err)
			}
			quad := make([]bool, len(cols[0]))
			for _, c := range cols {
				trendSpikes(c, ds, quad, nil)
			}
			sp, _, _, err := FindSpikes(cols, nil)
			if err != nil {
				t.Fatal(err)
			}
			for i, f := range sp {
				switch {
				case spiked[i]:
					planted++
					if quad[i] {
						byQuadratic++
						if f {
							kept++
						}
					}
				default:
					clean++
					if f {
						falseHits++
					}
				}
			}
		}
		if kept < byQuadratic {
			t.Errorf("line at %g spacings: of %d spikes (%d planted) the quadratic found, %d are still found", h, byQuadratic, planted, kept)
		}
		if rate := float64(falseHits) / float64(clean); rate > 0.01 {
			t.Errorf("line at %g spacings: %.2g%% of the other readings taken for spikes, want at most 1%%", h, 100*rate)
		}
	}
}
