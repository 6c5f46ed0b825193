package calibrate

import (
	"fmt"
	"math"

	"undercurrent/ingest"
)

// Time stamps quantised to a resolution coarser than the sample interval
// (ingest.TimeQuantum): a steady 800 Hz log written to the millisecond
// steps 1 ms and 2 ms, each stamp up to 0.5 ms off its sample's time. A
// sine fit on such stamps sees, in every window, a timing error that
// repeats with the rounding's pattern: it multiplies the amplitude by the
// mean of cos(ω δ) over the errors δ (0.995 at 50 Hz for errors of ±0.25
// and ±0.5 ms) and shifts the phase, far beyond the fit's own sigma, and
// the windows, counted in samples from the median step, come out too long.
// Demodulation therefore rebuilds the times on the steady sampling the
// stamps fit (ingest.RetimeQuantised) and says so.

// quantumWarning words what demodulation did about quantised stamps at
// freq Hz (0: not known).
func quantumWarning(tq *ingest.TimeQuantum, freq float64) string {
	turn := func(dt float64) string {
		if !(freq > 0) {
			return ""
		}
		return fmt.Sprintf(", %.2g° of phase at %g Hz", 360*freq*dt, freq)
	}
	if !tq.Uniform {
		return fmt.Sprintf("the time stamps look quantised to %.4g s (steps of %.4g and %.4g s), coarser than the sampling, but do not fit a steady sampling, so they were taken as they are: amplitudes and phases carry a timing error of up to %.4g s%s; write the times with more digits",
			tq.Quantum, tq.Steps[0], tq.Steps[1], tq.Quantum/2, turn(tq.Quantum/2))
	}
	return fmt.Sprintf("the time stamps are quantised to %.4g s, coarser than the %.6g s sample interval (%.6g Hz; steps of %.4g and %.4g s, %s): the samples were re-timed on the least-squares line of time against row within each of %d continuous runs before demodulation, moving them by up to %.3g s%s (a logger that truncates its stamps rather than rounding them leaves every time %.3g s early, which the rebuilt times keep%s)",
		tq.Quantum, tq.Interval, 1/tq.Interval, tq.Steps[0], tq.Steps[1], tq.NotGaps(), tq.Runs, tq.MaxShift, turn(tq.MaxShift), tq.Quantum/2, turn(tq.Quantum/2))
}

// RetimeSamples returns s with its times rebuilt on the steady sampling
// its quantised stamps fit (ingest.RetimeQuantised; a shallow copy, s
// untouched) and the warning to give, for demodulation at freq Hz. It
// returns s itself with a warning when they look quantised but cannot be
// rebuilt, and s itself and "" when they are not quantised (see
// RetimeJittered for stamps scattered about a steady clock). A nil s gives
// nil and "".
func RetimeSamples(s *ingest.Samples, freq float64) (*ingest.Samples, string) {
	if s == nil {
		return nil, ""
	}
	t, tq := ingest.RetimeQuantised(s.Time, s.Group)
	if tq == nil {
		return s, ""
	}
	if t == nil {
		return s, quantumWarning(tq, freq)
	}
	c := *s
	c.Time = t
	return &c, quantumWarning(tq, freq)
}

// retimeColumns is RetimeSamples for DemodulateColumns: c itself, or a
// copy with the rebuilt times, and the quantum found (nil: none).
func retimeColumns(c *Columns) (*Columns, *ingest.TimeQuantum) {
	t, tq := ingest.RetimeQuantised(c.Time, c.Group)
	if t == nil {
		return c, tq
	}
	r := *c
	r.Time = t
	return &r, tq
}

// usedWindow is the length of N samples dt apart as a window, s: win when
// within a part in ten thousand of it (what the user asked for, without the
// rounding of dt), else N dt.
func usedWindow(win float64, N int, dt float64) float64 {
	if w := float64(N) * dt; math.Abs(w-win) > 1e-4*win {
		return w
	}
	return win
}
