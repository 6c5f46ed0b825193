package report

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// closeCircuitFits returns the fits of six traverses (invented fixtures, the Quillan
// Row cable corridor: 121 readings every 0.1 m, 0.3 m up, across lines running east)
// over the given 50 Hz circuits (north n[i] m, depth d[i] m, phasor cur[i]) under
// 0.5 nT per real and imaginary part, each fitted with count lines and given that
// noise as the windows' own (Fit.MeasuredNoise). The readings are Biot-Savart
// (inverse.Line.Field).
func closeCircuitFits(t *testing.T, n, d []float64, cur []complex128, count int) []Fit {
	t.Helper()
	const noise = 0.5
	rng := rand.New(rand.NewPCG(11, 5))
	var fits []Fit
	for g := range 6 {
		var pts [][3]float64
		var ph [][3]complex128
		for j := range 121 {
			r := [3]float64{4 * float64(g), -6 + 0.1*float64(j), 0.3}
			var b [3]complex128
			for i := range n {
				l := inverse.Line{Point: [3]float64{0, n[i], -d[i]}, Dir: [3]float64{1, 0, 0}}
				v := l.Field(r, 1e9)
				for a := range 3 {
					b[a] += complex(v[a], 0) * cur[i]
				}
			}
			for a := range 3 {
				b[a] += complex(noise*rng.NormFloat64(), noise*rng.NormFloat64())
			}
			pts, ph = append(pts, r), append(ph, b)
		}
		p := &inverse.Problem{Points: pts, Phasors: ph}
		z0 := 0.0
		res, err := inverse.FitLines(p, &inverse.Settings{Count: count, ReferenceZ: &z0})
		if err != nil {
			t.Fatal(err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", g+1), Problem: p, Result: res, MeasuredNoise: noise})
	}
	return fits
}

// TestSharedMisfitParallelLinesUnderShare: four 50 Hz circuits side by side (30 A at
// 0°, 20 A at 120°, 15 A at -120°, 1 m apart, and 7.5 A at 30° 0.45 m from the middle
// one) fitted with three lines on every traverse miss the readings by over ten times
// the windows' noise, yet by under 1% of the signal, the share allowed a single
// conductor's departure from a straight line, and there was no warning (in review,
// a wrong four-line fit of four circuits 0.35 m apart at 17 times the noise and 0.17%
// of the signal was all "sound", with no word). A fit of three lines or more missing
// by over ten times its readings' noise must be named whatever its share; one line
// missing as far but under the share (a single circuit beside a weak one the fit
// leaves out) is still not. The fixtures' misfits are checked first.
func TestSharedMisfitParallelLinesUnderShare(t *testing.T) {
	deg := math.Pi / 180
	n, d := []float64{-1.0, 0.0, 1.0, 0.45}, []float64{0.9, 1.0, 0.9, 0.9}
	cur := []complex128{cmplx.Rect(30, 0), cmplx.Rect(20, 120*deg), cmplx.Rect(15, -120*deg), cmplx.Rect(7.5, 30*deg)}
	fits := closeCircuitFits(t, n, d, cur, 3)
	for _, f := range fits {
		r := f.Result.RMS / math.Sqrt2
		share := f.Result.RMS / signalRMS(f.Result)
		if !(r > 10*f.MeasuredNoise) || !(share < 0.01) {
			t.Fatalf("%s: fixture misses by %.3g nT (%.3g times the noise) and %.2g%% of the signal; want over 10 times and under 1%%", f.Key, r, r/f.MeasuredNoise, 100*share)
		}
	}
	w := sharedMisfit(fits, &BuildSettings{}, &route.Settings{MaxReducedChi2: 4})
	if !strings.Contains(w, "6 of 6 groups' fits miss the readings") {
		t.Errorf("three lines over four circuits: warning %q, want one naming all six groups", w)
	}

	// One 30 A circuit beside a 0.4 A one 1.5 m away, fitted with one line.
	fits = closeCircuitFits(t, []float64{0, 1.5}, []float64{0.9, 0.9}, []complex128{30, cmplx.Rect(0.4, 90*deg)}, 1)
	for _, f := range fits {
		r := f.Result.RMS / math.Sqrt2
		if share := f.Result.RMS / signalRMS(f.Result); !(r > 10*f.MeasuredNoise) || !(share < 0.01) {
			t.Fatalf("%s: control misses by %.3g nT (%.3g times the noise) and %.2g%% of the signal; want over 10 times and under 1%%", f.Key, r, r/f.MeasuredNoise, 100*share)
		}
	}
	if w := sharedMisfit(fits, &BuildSettings{}, &route.Settings{MaxReducedChi2: 4}); w != "" {
		t.Errorf("one line under the share: warning %q", w)
	}
}
