package main

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// quillbankTracer is a tracer survey at an invented site: one cable of
// amps A at tone Hz depth m down, 0.2 m beside the traverses' centre line,
// four traverses of 8 m walked at speed m/s with the sensor 0.3 m up,
// noise nT of reading noise at rate Hz.
func quillbankTracer(tone, depth, amps, speed, noise, rate float64, seed int) string {
	return fmt.Sprintf(`name = "quillbank-tracer"
site = "Quillbank Road (invented)"
seed = %d
start = "2026-06-02T09:00:00Z"
[origin]
lat_deg = 52.3
lon_deg = -1.2
height_m = 10.0
[earth]
field_nt = [-200.0, 19000.0, -45000.0]
drift_nt_per_hour = [3.0, 12.0, -6.0]
[sensor]
height_m = 0.3
noise_nt = %g
sample_rate_hz = %g
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 4
spacing_m = 6.0
first_at_m = 10.0
length_m = 8.0
speed_m_s = %g
turn_s = 5.0

[[conductor]]
name = "c1"
kind = "line"
point = [0.0, 0.2, %g]
direction = [1.0, 0.0, 0.0]
current_a = %g
frequency_hz = %g
phase_deg = 20
`, seed, noise, rate, speed, -depth, amps, tone)
}

// TestWalkedOffNominalToneUsesEstimate: one tracer 0.05 Hz off the
// nominal --freq, walked over a shallow cable (0.25 m at 1 m/s) or at a
// brisk walk (0.4 m at 1.5 m/s). The field's rise and fall along the walk
// spreads the one tone in the spectrum, and a scan for a second line
// within 2/window of the tone (since taken out) read that spread as "a
// second line at about 514.5 Hz", threw away the windows' estimate
// (512.050 ± 0.002 Hz, right) and held the run at 512 Hz: most traverses
// became phantom go-and-return pairs of thousands of amperes (found in
// review; simulated truth: one line of 1 A per traverse). The estimate is
// used, and every traverse reads one line at the simulated current and
// depth.
func TestWalkedOffNominalToneUsesEstimate(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two tracer logs")
	}
	for _, c := range []struct {
		name         string
		depth, speed float64
	}{
		{"shallow", 0.25, 1},
		{"brisk", 0.4, 1.5},
	} {
		t.Run(c.name, func(t *testing.T) {
			sc, log := simulateScenario(t, t.TempDir(), "tone", quillbankTracer(512.05, c.depth, 1, c.speed, 10, 5000, 51))
			doc := locateDoc(t, "--freq", "512", "--group-by", "group", "--reference-z", "0", log)
			for _, w := range doc.Warnings {
				if strings.Contains(w, "not trusted") || strings.Contains(w, "second line") {
					t.Errorf("the estimate was not used: %q", w)
				}
			}
			// Demodulated at the estimate, within 0.005 Hz of the simulated
			// 512.05 Hz (the windows' sigma is about 0.002 Hz).
			m := regexp.MustCompile(`demodulated at (\d+\.\d+) Hz`).FindStringSubmatch(warned(doc, "AC frequency estimated at"))
			if m == nil {
				t.Fatalf("not demodulated at an estimate: %q", doc.Warnings)
			}
			if f, _ := strconv.ParseFloat(m[1], 64); !(math.Abs(f-512.05) < 0.005) {
				t.Errorf("demodulated at %.4f Hz, simulated 512.05 Hz", f)
			}
			for _, g := range doc.Groups {
				lines := 0
				for _, s := range g.Sources {
					if s.Kind == "line" {
						lines++
					}
				}
				if lines != 1 {
					t.Errorf("%s: %d lines, simulated one", g.Key, lines)
				}
			}
			checkTracer(t, doc, sc)
		})
	}
}
