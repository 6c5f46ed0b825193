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
func StampJitter(s *ingest.Samples, freq float64) (*ingest.TimeJitter, string) {
	t, tj := ingest.RetimeJittered(s.Time, s.Group)
	if t == nil {
		return nil, ""
	}
	cost := ""
	if freq > 0 {
		w := 2 * math.Pi * freq * tj.Scatter
		cost = fmt.Sprintf(" (%.2g° of phase at %g Hz): a sine fitted at them loses a share of its amplitude, about 1 - exp(-(2π f σ)²/2) = %.2g%%, and its phase is off by about 360·f·σ/sqrt(N) over the N readings of a group, which the fit counts only in part. The currents were raised by that share and each group's phase sigmas widened by that error (phase differences between conductors keep their sigmas)",
			360*freq*tj.Scatter, freq, 100*(1-math.Exp(-w*w/2)))
	}
	return tj, fmt.Sprintf("the time stamps scatter by %.3g s RMS (up to %.3g s) about a steady %.6g Hz clock (%.6g s sample interval), far beyond their resolution, with successive steps between rows anticorrelated (%.2f; -0.5 for errors of the written stamps alone, 0 for a sampling whose intervals really vary)%s; re-timing them on the clock's line would place every phase no better. Write the stamps from the sampling clock",
		tj.Scatter, tj.MaxShift, 1/tj.Interval, tj.Interval, tj.StepCorrelation, cost)
}
