package calibrate

import (
	"math/rand/v2"
	"testing"
)

// TestDespikeKeepsClearSpikesOnWideAnomalies: simulated truth, a 3 A line
// current (Biot-Savart, cleanTraverse) 3.3 m below the sensor, as on the
// deep-short-traverse scenario's traverses, across 10 m traverses of 101
// readings 0.1 m apart with 5 nT of white noise, crossing anywhere in the
// middle third; one spike of exactly 20 noise sigmas (100 nT), either
// sign, on one axis, at a random row at least 12 readings from an end.
// Every one must be found on each of 300 traverses: the line-shape second
// look, fitting a narrow line to the neighbours with a free crossing,
// could not predict the reading well and cleared such spikes (on that
// scenario's traverse T03 a -100 nT bz spike was kept by --despike).
func TestDespikeKeepsClearSpikesOnWideAnomalies(t *testing.T) {
	const n, d, h, I, noise = 101, 0.1, 3.3, 3.0, 5.0
	rng := rand.New(rand.NewPCG(303, 556))
	missed := 0
	for range 300 {
		x0 := (rng.Float64() - 0.5) * n * d / 3
		cols := cleanTraverse(rng, n, d, h, x0, I, noise)
		row := 12 + rng.IntN(n-24)
		size := 20 * noise
		if rng.IntN(2) == 0 {
			size = -size
		}
		cols[rng.IntN(3)][row] += size
		sp, _, _, err := FindSpikes(cols, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !sp[row] {
			missed++
		}
	}
	if missed > 0 {
		t.Errorf("%d of 300 spikes of 20 noise sigmas kept by the spike filter, want none", missed)
	}
}
