package main

import (
	"math"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
)

// Jittered stamps.
//
// An AC log whose samples were taken on a steady clock but whose stamps
// scatter about it (each written from another clock) was demodulated at
// the stamps with no word: the currents came out low by about
// exp(-(ω σ)²/2) and conductor 1's phase sigma half what it should be
// (±0.25 ms at 60 Hz, 1 kHz: current pulls of mean -1.0, phase pulls of
// sd 2.1; found in review, simulated). calibrate.StampJitter finds such
// stamps (the steps between rows anticorrelated, the stamps within a band
// of the clock's line); the stamps are kept (re-timing them on the line
// places the phases no better, and leaves a ramp that biased a second
// conductor's current, see calibrate/jitter.go), the warning says so, and
// mendStampJitter makes good the two costs: it raises each group's
// currents by the share of amplitude the stamp errors take off, and adds
// the phase error common to the group, 360·f·σ/sqrt(N) for N readings
// alike (commonShare), to its sources'
// phase sigmas.

// stampCost is what jittered stamps cost a group's fit: the stamps' RMS
// error, s.
type stampCost struct{ scatter float64 }

// stampJitter records in sv the cost of the stamps of s by group, with the
// warning, when they scatter about a steady clock.
func stampJitter(o *locateOptions, sv *survey, s *ingest.Samples) {
	tj, w := calibrate.StampJitter(s, o.freq)
	if tj == nil {
		return
	}
	sv.warnings = append(sv.warnings, s.Source+": "+w)
	if sv.jitter == nil {
		sv.jitter = map[string]stampCost{}
	}
	for k := range tj.GroupSigma {
		// A group read from several logs: the larger cost.
		sv.jitter[k] = stampCost{scatter: math.Max(sv.jitter[k].scatter, tj.Scatter)}
	}
}

// commonShare is the share of the stamps' error common to group g's
// phase, s per s of the stamps' RMS error. A sine fitted to samples whose
// times are off by δ_i finds its phase off by ω Σ sin²(ωt_i+φ) δ_i /
// Σ sin²(ωt_i+φ) (the least-squares projection of the errors A ω
// sin(ωt_i+φ) δ_i on the phase), of variance 1.5 ω² σ²/N over N samples
// of whole cycles (the mean of sin⁴ over the square of the mean of sin²);
// over a group the windows' phases are weighted by the power of their
// field, so the error is sqrt(1.5 Σ w²)/Σ w with w = |B|² for every
// reading (its window's phasor): sqrt(1.5/N) for a field alike in all N
// readings, more where the field is strong over a few (a traverse
// across a cable).
func commonShare(g *group) float64 {
	var s1, s2 float64
	for i, p := range g.phasors {
		n := 1.0
		if i < len(g.windowN) {
			n = g.windowN[i]
		}
		var b2 float64
		for _, c := range p {
			b2 += real(c)*real(c) + imag(c)*imag(c)
		}
		s1 += n * b2
		s2 += n * b2 * b2
	}
	if !(s1 > 0) {
		return 0
	}
	return math.Sqrt(1.5*s2) / s1
}

// mendStampJitter raises the currents and moments of each group's fits
// (and of its go-and-return pairs)
// by the share of amplitude its stamps' errors took off (1/exp(-(ωσ)²/2)
// at the frequency demodulated at) and adds the phase error common to the
// group to their phase sigmas.
func mendStampJitter(sv *survey) {
	if len(sv.jitter) == 0 || !sv.ac {
		return
	}
	f := sv.doc.Signal.FrequencyHz
	if !(f > 0) {
		return
	}
	for _, g := range sv.groups {
		c, ok := sv.jitter[g.key]
		if !ok {
			continue
		}
		w := 2 * math.Pi * f * c.scatter
		gain := math.Exp(w * w / 2)
		add := 360 * f * c.scatter * commonShare(g)
		for _, r := range []*inverse.Result{g.res, g.res0} {
			if r == nil {
				continue
			}
			for i := range r.Sources {
				e := &r.Sources[i]
				e.Current *= gain
				e.CurrentSigma *= gain
				for a := range e.Moment {
					e.Moment[a] *= gain
					e.MomentSigma[a] *= gain
				}
				if e.PhaseSigma > 0 {
					e.PhaseSigma = math.Hypot(e.PhaseSigma, add)
				}
			}
			for i := range r.Pairs {
				p := &r.Pairs[i]
				p.Moment *= gain
				p.MomentSigma *= gain
				p.NetCurrent *= gain
				p.NetCurrentSigma *= gain
				if p.NetCurrentPhaseSigma > 0 {
					p.NetCurrentPhaseSigma = math.Hypot(p.NetCurrentPhaseSigma, add)
				}
			}
		}
	}
}
