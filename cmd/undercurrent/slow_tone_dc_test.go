package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// slowToneOverDC is a pipe 1.3 m down, 0.3 m off the traverses' middles, carrying 2 A DC (a cathodic
// protection current) and a 4 Hz tone of 0.5 A RMS on the same line,
// logged at 40 Hz and walked at 0.8 m/s: the 2.5 s windows of ten cycles
// each span 2 m of path, 1.3 times the sensor's distance to the pipe.
// 21 traverses walked to and fro.
// An invented survey over the Wrenfold Common main.
const slowToneOverDC = `
name = "slow-tone-over-dc"
site = "Wrenfold Common, CP-protected main"
seed = 4104
start = "2026-05-11T09:10:00Z"

[origin]
lat_deg = 53.08410
lon_deg = -1.93270
height_m = 140.0

[earth]
field_nt = [-300.0, 17900.0, -46300.0]
drift_nt_per_hour = [3.0, -12.0, 6.0]

[sensor]
height_m = 0.25
noise_nt = 1.0
sample_rate_hz = 40.0

[survey]
route = [[0.0, 0.0], [110.0, 0.0]]
count = 21
spacing_m = 5.0
first_at_m = 4.0
length_m = 16.0
speed_m_s = 0.8
turn_s = 20.0
zigzag = true

[[conductor]]
name = "main, CP current"
kind = "line"
point = [0.0, 0.3, -1.3]
direction = [1.0, 0.0, 0.0]
current_a = 2.0
frequency_hz = 0.0
phase_deg = 0.0

[[conductor]]
name = "main, 4 Hz tone"
kind = "line"
point = [0.0, 0.3, -1.3]
direction = [1.0, 0.0, 0.0]
current_a = 0.5
frequency_hz = 4.0
phase_deg = 30.0
`

// TestLocateSlowToneOverDC: the DC field changes along each window's 2 m
// of path far from linearly, and the linear term alone left its cubic part
// to leak into the 4 Hz phasors (a ramp's cubic projects onto sin ωτ at
// order 1/cycles²): before, a traverse of a survey like this one found
// further lines of 3-5 mA (1% of the tone) 0.01-0.1 m above the ground,
// most in sound fits, while the tone alone found none (found in review);
// this survey found 4 such lines, in sound fits, and residuals 1.4-1.6
// times the averaged noise.
// With the cubic background (calibrate.DemodSettings.Drift) every traverse
// must find the tone alone, its current within 3 sigma and its depth within kSigma of the
// simulated truth and its phase within kSigma of the 30° simulated.
func TestLocateSlowToneOverDC(t *testing.T) {
	sc, log := simulateScenario(t, t.TempDir(), "tone", slowToneOverDC)
	truth := map[string]float64{}
	depth := map[string]float64{}
	for _, c := range sc.Crossings() {
		if c.Frequency == 4 {
			truth[c.Line], depth[c.Line] = math.Abs(c.Current), c.Depth
		}
	}
	doc := locateDoc(t, "--freq", "4", "--group-by", "group", "--reference-z", "0", log)
	if len(doc.Groups) != 21 {
		t.Fatalf("%d groups, want the survey's 21", len(doc.Groups))
	}
	// A window of n samples averages the reading noise of sigma per axis
	// to sigma/sqrt(n/2) on its RMS phasor (the least-squares variance of
	// a sine fit's coefficients, IEEE Std 1057, 2 sigma²/n, over the RMS
	// scale's 2): a DC field leaking into the phasors lifts the fit's
	// residual above it (before, 1.4-1.6 times it on every traverse).
	floor := sc.Sensor.Noise / math.Sqrt(2.5*sc.Sensor.SampleRate/2)
	for _, g := range doc.Groups {
		want, ok := truth[g.Key]
		if !ok {
			t.Fatalf("group %q is not a traverse of the survey", g.Key)
		}
		if len(g.Sources) != 1 {
			var extra []string
			for _, s := range g.Sources[1:] {
				extra = append(extra, fmt.Sprintf("%.3g ± %.2g A at %.3g m", s.Current, s.CurrentSigma, s.Depth))
			}
			t.Errorf("%s: %d lines, want the tone's alone (further: %s)", g.Key, len(g.Sources), strings.Join(extra, "; "))
		}
		if !(g.RMS < 1.3*floor) {
			t.Errorf("%s: residual %.3g nT, want under %.3g nT (1.3 times the %.2g nT of the averaged noise)", g.Key, g.RMS, 1.3*floor, floor)
		}
		if len(g.Sources) == 0 {
			continue
		}
		s := g.Sources[0]
		if d := math.Abs(s.Current - want); !(d <= 3*s.CurrentSigma) {
			t.Errorf("%s: current %.5g ± %.2g A, true %.5g A", g.Key, s.Current, s.CurrentSigma, want)
		}
		if d := math.Abs(s.Depth - depth[g.Key]); !(d <= kSigma*s.DepthSigma+1e-3) {
			t.Errorf("%s: depth %.5g ± %.2g m, true %.5g m", g.Key, s.Depth, s.DepthSigma, depth[g.Key])
		}
		if s.Phase != nil && s.PhaseSigma != nil {
			if d := math.Abs(*s.Phase - 30); d > kSigma**s.PhaseSigma {
				t.Errorf("%s: phase %.4g ± %.2g°, true 30°", g.Key, *s.Phase, *s.PhaseSigma)
			}
		}
	}
}

// TestLocateDCLineFindsNoACAt16_7: the walk of ac-walk-2khz.toml over the
// 30 A DC line of dcPipe alone, its noise cut to 0.5 nT, located with
// --freq 16.7 (0.6 s windows of ten cycles, 0.6 m of path, 1.4 times the
// sensor's distance to the line): before, the DC field's cubic change
// within the windows leaked past their linear term, and every traverse
// was "sound" with AC lines of 0.2-0.7 mA (found in review: "DC field in
// AC windows at low frequency"). With the cubic background no group finds
// an AC current beyond kSigma: the truth is that there is none.
func TestLocateDCLineFindsNoACAt16_7(t *testing.T) {
	_, log := acWalkEdit(t, t.TempDir(), "50.0", "", false, func(s string) string {
		s = strings.Replace(s, "noise_nt = 10.0", "noise_nt = 0.5", 1)
		return s[:strings.Index(s, "[[conductor]]")] + dcPipe
	})
	doc := locateDoc(t, "--freq", "16.7", "--group-by", "group", "--reference-z", "0", log)
	if len(doc.Groups) != 3 {
		t.Fatalf("%d groups, want the walk's 3", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if g.OK {
			t.Errorf("%s: sound, with no AC conductor under it: %+v", g.Key, g.Sources)
		}
		for _, s := range g.Sources {
			if math.Abs(s.Current) > kSigma*s.CurrentSigma {
				t.Errorf("%s: a %s of %.4g ± %.2g at %.3g m, with no AC conductor under it", g.Key, s.Kind, s.Current, s.CurrentSigma, s.Depth)
			}
		}
	}
}
