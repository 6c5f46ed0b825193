package calibrate

import (
	"fmt"
	"math"

	"undercurrent/ingest"
)

// StampJitter looks for stamps of s scattered about a steady clock
// (ingest.RetimeJittered) and returns what was found with the warning to
// give for demodulation at freq Hz; nil and "" when they do not scatter
// so. The stamps are kept as they are, and the caller makes good what
// they cost (see the warning and cmd/undercurrent's jitterphase.go):
//
// A sine fitted at the written stamps is evaluated at the wrong instants.
// Its amplitude shrinks by E[cos ωδ], about exp(-(ω σ)²/2) for stamp errors
// δ of RMS σ, and every window's phase moves by the mean of its errors,
// which fall on its three axes alike, along the phase, so that the fit
// counts them only in part: over a group the phase is off by about
// 360·f·σ/sqrt(N) for N readings. Re-timing the samples on the clock's
// least-squares line does not remove that error: the line is placed by the
// same stamps, to the same σ/sqrt(N) at a group's middle, and its slope's
// error leaves a phase ramp along each group that the fit's residuals do
// not show; re-timed, a simulated 30 A cable and 8 A pipe at 60 Hz, 1 kHz
// and ±0.25 ms gave pipe currents with pulls of sd 2 (the pipe's sigma,
// no longer widened by the jitter's share of the residuals, too small for
// the ramp), where the stamps taken as they are gave 1.0.
//
// The stamps' statistics alone do not tell written stamps that are wrong
// from exact stamps of a sampler that keeps to deadlines (each reading
// taken a random latency after its tick and stamped with its true
// instant): both scatter within a band of the tick's line with successive
// steps anticorrelated. The readings tell them apart: a sine fitted at the
// true instants leaves the noise, one fitted at the wrong ones the noise
// plus the field's change over each error. So, with a frequency to
// demodulate at, the stamps are taken as jittered only when the clock's
// line fits the readings clearly better than the written stamps
// (clockFitsBetter); a deadline sampler's exact stamps, which fit better
// as written, are kept with no word (simulated: readings 0-0.95 ms after
// each 2 ms tick had been warned of and their currents raised 0.4%, 16
// sigma, found in review).
//
// A nil s has no stamps to scatter: nil and "".
func StampJitter(s *ingest.Samples, freq float64) (*ingest.TimeJitter, string) {
	if s == nil {
		return nil, ""
	}
	t, tj := ingest.RetimeJittered(s.Time, s.Group)
	if t == nil {
		return nil, ""
	}
	if freq > 0 && !clockFitsBetter(s, t, freq, tj.Interval) {
		return nil, ""
	}
	cost := ""
	if freq > 0 {
		w := 2 * math.Pi * freq * tj.Scatter
		cost = fmt.Sprintf(" (%.2g° of phase at %g Hz): a sine fitted at them loses a share of its amplitude, about 1 - exp(-(2π f σ)²/2) = %.2g%%, and its phase is off by about 360·f·σ/sqrt(N) over the N readings of a group, which the fit counts only in part. The currents were raised by that share and each group's phase uncertainties widened by that error (phase differences between conductors keep their sigmas)",
			360*freq*tj.Scatter, freq, 100*(1-math.Exp(-w*w/2)))
	}
	return tj, fmt.Sprintf("the time stamps scatter by %.3g s RMS (up to %.3g s) about a steady %.6g Hz clock (%.6g s sample interval), far beyond their resolution, with successive steps between rows anticorrelated (%.2f; -0.5 for errors of the written stamps alone, 0 for a sampling whose intervals really vary)%s; re-timing them on the clock's line would place every phase no better. Write the stamps from the sampling clock",
		tj.Scatter, tj.MaxShift, 1/tj.Interval, tj.Interval, tj.StepCorrelation, cost)
}

// jitterWindowCycles is the length of the windows clockFitsBetter fits,
// in cycles of the frequency; jitterMinWindows the fewest windows it
// judges by, and jitterClearZ the z-score by which the clock's line must
// fit better.
const (
	jitterWindowCycles = 2
	jitterMinWindows   = 10
	jitterClearZ       = 3
)

// clockFitsBetter reports whether a sine of freq Hz (with a constant and
// a linear drift, per field axis) fitted in short windows of s's readings
// leaves clearly less residual at the clock's times tc (the stamps
// rebuilt on the line, ingest.RetimeJittered) than at the written stamps:
// the mean over windows of the difference of the residual sums of squares
// beyond jitterClearZ of its standard error. Windows are runs of
// consecutive rows of one group, jitterWindowCycles cycles long at the
// clock's interval dt; false when there are fewer than jitterMinWindows.
func clockFitsBetter(s *ingest.Samples, tc []float64, freq, dt float64) bool {
	n := len(s.Time)
	if len(tc) != n || len(s.Bx) != n || len(s.By) != n || len(s.Bz) != n || !(dt > 0) {
		return false
	}
	w := int(math.Round(jitterWindowCycles / (freq * dt)))
	if w < 12 {
		w = 12
	}
	set := &SineSettings{Drift: true}
	var ds []float64
	start := 0
	for i := 1; i <= n; i++ {
		broken := i == n || (s.Group != nil && s.Group[i] != s.Group[i-1]) ||
			!(s.Time[i] > s.Time[i-1]) || !(tc[i] > tc[i-1]) || s.Time[i]-s.Time[i-1] > 4.5*dt
		if !broken && i-start < w {
			continue
		}
		if i-start == w {
			var d float64
			ok := true
			for _, b := range [][]float64{s.Bx, s.By, s.Bz} {
				y := b[start:i]
				fw, err1 := FitSine(s.Time[start:i], y, freq, set)
				fc, err2 := FitSine(tc[start:i], y, freq, set)
				if err1 != nil || err2 != nil || math.IsNaN(fw.RMS) || math.IsNaN(fc.RMS) {
					ok = false
					break
				}
				d += float64(w) * (fw.RMS*fw.RMS - fc.RMS*fc.RMS)
			}
			if ok {
				ds = append(ds, d)
			}
		}
		start = i
	}
	if len(ds) < jitterMinWindows {
		return false
	}
	var m, v float64
	for _, d := range ds {
		m += d
	}
	m /= float64(len(ds))
	for _, d := range ds {
		v += (d - m) * (d - m)
	}
	v /= float64(len(ds) - 1)
	return m > jitterClearZ*math.Sqrt(v/float64(len(ds)))
}
