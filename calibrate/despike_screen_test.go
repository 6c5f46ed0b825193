package calibrate

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// acColumn is an invented AC log's column: a 50 Hz waveform of amp nT
// logged at 2 kHz over a static field, with Gaussian noise of 10 nT.
func acColumn(rng *rand.Rand, n int, amp, static float64) []float64 {
	c := make([]float64, n)
	for i := range c {
		t := float64(i) / 2000
		c[i] = static + amp*math.Sin(2*math.Pi*50*t+0.6) + 10*rng.NormFloat64()
	}
	return c
}

// TestTrendSpikesScreenSameSpikes: the screen that passes readings
// without their median (trendFit.screenedOut, used when no scale is kept,
// as for AC logs and the spike warning) finds exactly the spikes of the
// full filter, at the warning's cut (10) and --despike's (5), on AC
// waveforms with and without spikes (of 400 nT, or four times the
// waveform's amplitude where larger: the local quadratic misfits a
// fifth of a cycle by far more than the noise): spikes in the middle, at the first
// and last rows of the run (lopsided windows, the cubic and quartic
// second opinions), beside missing readings, in pairs, and spikes just
// above and below the cut. It also checks that the screen passes most
// readings, so that the comparison is not empty.
func TestTrendSpikesScreenSameSpikes(t *testing.T) {
	rng := rand.New(rand.NewPCG(26, 2))
	const n = 20000
	type log struct {
		name string
		c    []float64
	}
	var logs []log
	for _, amp := range []float64{0, 300, 5000} {
		logs = append(logs, log{"clean", acColumn(rng, n, amp, 19200)})
		c := acColumn(rng, n, amp, -45100)
		for _, i := range []int{0, 1, 2, 5, 9, 10, 11, 500, 501, 777, 4096, 9999, 10000, n - 12, n - 11, n - 3, n - 2, n - 1} {
			c[i] += []float64{1, -1}[i%2] * max(400, 4*amp)
		}
		// Spikes near the warning's cut: 10 sigmas of 10 nT noise, give
		// or take, so that some are found and some are not.
		for i := 12000; i < 19000; i += 97 {
			c[i] += (80 + 50*rng.Float64()) * []float64{1, -1}[rng.IntN(2)]
		}
		c[3000], c[3005] = math.NaN(), math.Inf(1) // missing readings
		c[3003] += 500
		logs = append(logs, log{"spiked", c})
	}
	for _, lg := range logs {
		for _, k := range []float64{5, 10} {
			ds, err := (&DespikeSettings{Threshold: k, AC: true}).withDefaults()
			if err != nil {
				t.Fatal(err)
			}
			full, fast := make([]bool, n), make([]bool, n)
			nFull := trendSpikes(lg.c, ds, full, make([][2]float64, n))
			nFast, screened := trendSpikesScreened(lg.c, ds, fast, nil)
			if nFast != nFull || !slices.Equal(fast, full) {
				for i := range full {
					if full[i] != fast[i] {
						t.Errorf("%s, cut %g: row %d spike %v with the screen, %v without", lg.name, k, i, fast[i], full[i])
					}
				}
				t.Fatalf("%s, cut %g: %d spikes with the screen, %d without", lg.name, k, nFast, nFull)
			}
			if lg.name == "spiked" && nFull < 5 {
				t.Errorf("%s, cut %g: only %d spikes found: the comparison misses the inserted spikes", lg.name, k, nFull)
			}
			if screened < n/2 {
				t.Errorf("%s, cut %g: the screen passed only %d of %d readings", lg.name, k, screened, n)
			}
			// FindSpikes on an AC log takes the screened path, and
			// counts the same.
			_, per, _, err := FindSpikes([][]float64{lg.c}, &DespikeSettings{Threshold: k, AC: true})
			if err != nil {
				t.Fatal(err)
			}
			if per[0] != nFull {
				t.Errorf("%s, cut %g: FindSpikes counts %d, the full filter %d", lg.name, k, per[0], nFull)
			}
		}
	}
}
