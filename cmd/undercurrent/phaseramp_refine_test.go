package main

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestRefineRampSettlesOnMinimum: refineRamp, started from a vertex short
// of the minimum (as the search's first parabola leaves it over a wide
// turn), settles on the minimum of a residual profile that is not a
// parabola, S(f) = S0 + K (1 - cos 2π (f - f0) T), the residual of one
// phasor turned by 2π (f - f0) t across a group of T s (K its power, in
// nT²), and gives the sigma of its curvature there, S”(f0) = K (2πT)²:
// sigma = sqrt(2 σ² / S”(f0)) for Δχ² = 1 at a noise variance σ². The
// profile's minimum and curvature are the simulated truth (here in closed
// form).
func TestRefineRampSettlesOnMinimum(t *testing.T) {
	const (
		f0, T  = -0.0150, 32.0 // Hz, s: an 86° turn across the group
		s0, k  = 3.3e4, 2.0e4  // nT²
		sigma2 = 80.0          // nT²
	)
	ss := func(f float64) float64 { return s0 + k*(1-math.Cos(2*math.Pi*(f-f0)*T)) }
	want := math.Sqrt(2 * sigma2 / (k * (2 * math.Pi * T) * (2 * math.Pi * T)))
	for _, start := range []float64{-0.0112, -0.0090, -0.0175} {
		best, sb, sigma := refineRamp(start, ss(start), 0.5*want, sigma2, ss)
		if d := math.Abs(best - f0); !(d <= rampRefineTol*want) {
			t.Errorf("from %.4f Hz: minimum at %.6f Hz, true %.6f Hz (%.2g of its sigma off)", start, best, f0, d/want)
		}
		if !(sb <= ss(best)+1e-9) {
			t.Errorf("from %.4f Hz: residual %.6g, the profile gives %.6g there", start, sb, ss(best))
		}
		// The stencil spans ±3 sigmas, where the cosine's curvature is
		// still within 0.1% of its value at the minimum.
		if r := sigma / want; !(math.Abs(r-1) <= 0.01) {
			t.Errorf("from %.4f Hz: sigma %.3g Hz, the curvature at the minimum gives %.3g Hz", start, sigma, want)
		}
	}
}

// TestRampPullsOnLongTraverses: short slow traverses (16 m at 0.5 m/s,
// 32 s each) over a cable giving 200 nT at the sensor, at 60 and 90 nT of
// reading noise, the field at 50.1 Hz located with --freq 50. The windows
// put the frequency a few hundredths of a hertz off (within their own
// sigma of 0.01-0.03 Hz), the log is demodulated there (or, not told from
// 50 Hz, searched from there) and each group fits the rest as a phase
// ramp, a turn of up to 400° across the group. The ramp search's first
// parabola, through its start and one or two steps of the linearised
// ramp, stopped short of the residual's minimum on such turns, and the
// search stopped at 0.02 Hz: the groups' frequencies (the one demodulated
// at plus the ramp) came out 11-18 of their sigmas from the simulated
// 50.1 Hz on seeds 3 and 4 at 60 nT, and up to 16 (31 with the first
// fixed alone) on five of eight seeds at 90 nT. Now every group's pull is
// within 4 and their RMS near 1 (1.0 on both). The warning giving the
// ramps' frequency put the estimate's offset down to "the walk over
// conductors of different phase, or the signal's harmonics" though it lay
// within the estimate's own sigma; now it says so. Truth: the simulated
// frequency.
func TestRampPullsOnLongTraverses(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates fourteen logs")
	}
	const truth = 50.1
	for _, c := range []struct {
		noise float64
		seeds int
	}{{60, 6}, {90, 8}} {
		t.Run(fmt.Sprintf("%gnT", c.noise), func(t *testing.T) {
			var sum2 float64
			var n int
			for seed := 1; seed <= c.seeds; seed++ {
				text := fmt.Sprintf(`name = "long-traverse ramps"
site = "Marlow Dyke (invented)"
seed = %d
start = "2026-03-14T11:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = %g
sample_rate_hz = 500.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 5
spacing_m = 5.0
first_at_m = 10.0
length_m = 16.0
speed_m_s = 0.5
turn_s = 5.0
[[conductor]]
name = "service cable"
kind = "line"
point = [0.0, 0.4, -0.7]
direction = [1.0, 0.0, 0.0]
current_a = 1.0
frequency_hz = %g
phase_deg = 35.0
`, seed, c.noise, truth)
				_, log := simulateScenario(t, t.TempDir(), "slow", text)
				doc := locateInto[struct {
					Warnings []string `json:"warnings"`
					Signal   struct {
						FrequencyHz float64 `json:"frequency_hz"`
					} `json:"signal"`
					Groups []struct {
						Key       string   `json:"key"`
						RampHz    *float64 `json:"phase_ramp_hz"`
						RampSigma *float64 `json:"phase_ramp_sigma_hz"`
					} `json:"groups"`
				}](t, "--freq", "50", "--group-by", "group", log)
				// An estimate within three of its sigmas of the truth is
				// off by its noise, and the warning that gives the ramps'
				// frequency says so rather than naming a bias.
				for _, w := range doc.Warnings {
					m := estimatedRE.FindStringSubmatch(w)
					if m == nil {
						continue
					}
					est, _ := strconv.ParseFloat(m[1], 64)
					sig, _ := strconv.ParseFloat(m[2], 64)
					if !(math.Abs(est-truth) <= 3*sig) {
						continue
					}
					for _, w2 := range doc.Warnings {
						if strings.Contains(w2, "estimated from single windows") && !strings.Contains(w2, "within three times its own uncertainty") {
							t.Errorf("seed %d: the estimate %s ± %s Hz lies within three sigmas of the simulated %g Hz, yet: %s", seed, m[1], m[2], truth, w2)
						}
						// The offset and the sigma it is judged by are printed
						// so that a reader can check it: the sigma had been
						// rounded to one decimal place of its own, so that an
						// offset of 0.026 Hz read as 2.6 times "± 0.01 Hz".
						if o := withinRE.FindStringSubmatch(w2); o != nil {
							off, _ := strconv.ParseFloat(o[1], 64)
							sig, _ := strconv.ParseFloat(o[2], 64)
							if !(math.Abs(off) <= 3.1*sig) {
								t.Errorf("seed %d: the warning's offset %s Hz is %.2g of its printed sigma %s Hz, said to be within three: %s", seed, o[1], math.Abs(off)/sig, o[2], w2)
							}
						}
					}
				}
				for _, g := range doc.Groups {
					if g.RampHz == nil || g.RampSigma == nil || !(*g.RampSigma > 0) {
						continue
					}
					f := doc.Signal.FrequencyHz + *g.RampHz
					pull := (f - truth) / *g.RampSigma
					sum2 += pull * pull
					n++
					if !(math.Abs(pull) <= 4) {
						t.Errorf("seed %d, %s: demodulated at %.5f Hz with a ramp of %+.5f ± %.5f Hz, so %.5f Hz, %.1f of its sigmas from the simulated %g Hz", seed, g.Key, doc.Signal.FrequencyHz, *g.RampHz, *g.RampSigma, f, pull, truth)
					}
				}
			}
			// Every group takes a ramp when fixed; their pulls spread
			// about 1.
			if n < 4*c.seeds {
				t.Fatalf("%d of %d groups took a phase ramp, want most", n, 5*c.seeds)
			}
			if rms := math.Sqrt(sum2 / float64(n)); !(rms <= 1.6) {
				t.Errorf("the ramps' pulls have an RMS of %.2f over %d groups, want about 1", rms, n)
			}
		})
	}
}

// withinRE reads the offset and the estimate's printed sigma from the
// warning that says the estimate was off within three of its sigmas.
var withinRE = regexp.MustCompile(`off by ([-+0-9.]+) ± [0-9.]+ Hz, within three times its own uncertainty \(its sigma ± ([0-9.]+) Hz\)`)
