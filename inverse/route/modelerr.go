package route

import (
	"fmt"
	"math"
)

// A fit's sigmas count the reading noise alone. Where the straight line
// misses the readings by well over the noise the model's error is the
// larger part, and the fit hides most of it: the part of the error field
// that a change of the line's current, depth and place can take up moves
// them and leaves no residual, and only the rest is seen. The misfit as a
// share of the signal is then a lower bound on the estimates' error, not
// its size. In review (rv24f, 20 seeds each) the fits 6 to 12 m from a
// service crossing missed 0.35%, 0.52% and 0.97% of their signal while
// their currents were 0.73%, 1.15% and 2.07% off, and their cover 2.0%:
// 2.0 to 2.2 times the share missed, at -7 to -19 of the fits' own sigmas,
// every one "sound".
//
// modelDoubt widens the sigmas of every usable station whose reduced
// chi-square is over ModelChi2 by two model-error terms, so that they
// count what its misfit shows:
//
//   - Birge's ratio: a fit whose noise was given (not estimated from its
//     residuals) has its sigmas scaled by sqrt(chi2/dof), as the fit's
//     own would be with the noise its residuals show. A fit that took
//     its noise from its residuals is so scaled already;
//   - the share missed: current and depth sigmas widened, in quadrature,
//     by ModelErrFactor times the misfit's share of the signal (RMS /
//     Signal) times the value. A line's field falls as I/r, so a share e
//     of the field misread moves the current, or the distance and with
//     it the depth, by about e of itself.

// ModelChi2 is the reduced chi-square above which modelDoubt widens a
// station's sigmas: at 2 the readings miss by 1.4 times the noise, which
// noise alone reaches over tens of readings by chance almost never.
const ModelChi2 = 2.0

// ModelErrFactor is the ratio of a misfitting fit's error, as a share of
// its value, to the share of its signal it misses: 2, what the review's
// crossing gave (2.0 to 2.2), the part of the error the line absorbed
// being as large as the part it left.
const ModelErrFactor = 2.0

// ModelDoubt records the widening of a station's sigmas for the error its
// misfit shows (modelDoubt).
type ModelDoubt struct {
	// ReducedChi2 is the fit's Chi2/DOF, and Share its RMS residual over
	// its signal.
	ReducedChi2, Share float64
	// Birge is the factor applied to the sigmas (1 when the fit's noise
	// came from its residuals).
	Birge float64
	// FitCurrentSigma, FitDepthSigma and FitDipSigma are the sigmas
	// before, CurrentSigma, DepthSigma and DipSigma after (A, m, deg).
	FitCurrentSigma, FitDepthSigma, FitDipSigma float64
	CurrentSigma, DepthSigma, DipSigma          float64
}

// modelDoubt widens the sigmas of stations whose fit misses the readings
// by more than ModelChi2 (see above) and records it in Placed.Model. It
// runs after bendDoubt, on the sigmas that left.
func modelDoubt(ps []Placed) {
	for k := range ps {
		p := &ps[k]
		if !p.usable() || p.DOF <= 0 || !(p.Chi2 > 0) {
			continue
		}
		r := p.Chi2 / float64(p.DOF)
		if !(r > ModelChi2) {
			continue
		}
		md := &ModelDoubt{ReducedChi2: r, Birge: 1, FitCurrentSigma: p.CurrentSigma, FitDepthSigma: p.DepthSigma, FitDipSigma: p.DipSigma}
		if !p.SigmaFromResiduals {
			md.Birge = math.Sqrt(r)
		}
		if p.Signal > 0 && p.RMS > 0 {
			md.Share = p.RMS / p.Signal
		}
		md.CurrentSigma = md.Widen(p.CurrentSigma, p.Current)
		md.DepthSigma = md.Widen(p.DepthSigma, p.Depth)
		md.DipSigma = md.Birge * p.DipSigma
		p.CurrentSigma, p.DepthSigma, p.DipSigma = md.CurrentSigma, md.DepthSigma, md.DipSigma
		p.Model = md
	}
}

// Widen is a sigma of a fitted value as md widens it: Birge times the
// sigma and ModelErrFactor times Share of the value, in quadrature.
func (md *ModelDoubt) Widen(sigma, value float64) float64 {
	return math.Hypot(md.Birge*sigma, ModelErrFactor*md.Share*math.Abs(value))
}

// ModelNote words a ModelDoubt for a group's notes.
func ModelNote(md *ModelDoubt) string {
	s := fmt.Sprintf("current and depth uncertainties widened for the model's error: the fit misses the readings by %.3g times the noise (reduced chi-square %.3g)", math.Sqrt(md.ReducedChi2), md.ReducedChi2)
	if md.Share > 0 {
		s += fmt.Sprintf(", %.2g%% of its signal, and the estimates can be off by about %.0f times that share (the line takes up part of the error unseen)", 100*md.Share, ModelErrFactor)
	}
	return s + fmt.Sprintf(" (the fit's own sigmas: current %s A, depth %s m)", SigmaText(md.FitCurrentSigma), SigmaText(md.FitDepthSigma))
}

// StepReachDepths is how many of a station's depths from a current step
// its sigmas are widened for the step's half-line term whenever that term
// is over 0.3 of the fit's own current sigma; farther, only a term of at
// least the sigma widens them. At 10 depths the term, read at the line's
// depth, is 0.5% of half the step.
const StepReachDepths = 10.0

// StepNear records the widening of a station's current and depth sigmas
// for a current step found near it (stepDoubt).
type StepNear struct {
	// Step is the size of the step, A, and Distance the station's
	// distance from it along the route, m.
	Step, Distance float64
	// Share is the share of the station's current that the step's
	// half-line field can move it by; the sigmas are widened by it.
	Share float64
	// FitCurrentSigma and FitDepthSigma are the sigmas before,
	// CurrentSigma and DepthSigma after (A, m).
	FitCurrentSigma, FitDepthSigma float64
	CurrentSigma, DepthSigma       float64
}

// stepDoubt widens the current and depth sigmas of the stations near a
// current step among steps (current-step findings), for the field of the
// current that changes there, which the straight infinite line fitted at
// each station does not model. A step of dI at distance s along the
// conductor is the field of a half-line of dI ending there: read at a
// distance R from the line, it differs from an infinite line's of the
// same current by dI/2 (1 - s/sqrt(s^2 + R^2)) of current (Biot-Savart,
// the field of a finite straight segment), so the station before the step
// reads low and the one after it high. The term is averaged over the
// station's Reach (its readings' distances from the line, in equal shares
// of their weight), and widens the current's sigma in quadrature, and the
// depth's by the same share of the depth (a line's field falls as I/r).
// In review (rv24f, tallow-brook-fault, 20 seeds) the feeder's stations 10
// m either side of a found fault read -6.3 and +6.3 of their sigmas off,
// those 30 m off -2.8 and +2.6, all "sound". The step is placed at its
// location when the finding gives one, else midway across its bracket.
func stepDoubt(ps []Placed, steps []Finding) {
	type st struct{ at, dI float64 }
	var ss []st
	for i := range steps {
		f := &steps[i]
		if f.Kind != KindCurrentStep {
			continue
		}
		s := st{at: (f.From + f.To) / 2}
		for _, v := range f.Values {
			switch v.Name {
			case "location (chainage)":
				if finite(v.Value) {
					s.at = v.Value
				}
			case "step":
				s.dI = math.Abs(v.Value)
			}
		}
		if s.dI > 0 && finite(s.dI) {
			ss = append(ss, s)
		}
	}
	if len(ss) == 0 {
		return
	}
	for k := range ps {
		p := &ps[k]
		if !p.usable() || !(math.Abs(p.Current) > 0) {
			continue
		}
		reach := p.Reach
		if len(reach) == 0 {
			reach = []float64{math.Abs(p.Depth)}
		}
		var best *StepNear
		for _, s := range ss {
			d := math.Abs(p.Chainage - s.at)
			m := 0.0
			for _, r := range reach {
				m += 1 - d/math.Hypot(d, r)
			}
			m /= float64(len(reach))
			share := s.dI / 2 * m / math.Abs(p.Current)
			if best == nil || share > best.Share {
				best = &StepNear{Step: s.dI, Distance: d, Share: share}
			}
		}
		// Under 0.3 of the fit's own sigma widens it by under 5%: left.
		// Past StepReachDepths depths from the step a term under the
		// fit's own sigma is left too: the demo's feeder had stations up
		// to 88 m (70 depths) from its step widened 10-30% by terms of
		// 0.0013-0.0018 A on 42 A, beyond what a fit's straight line
		// is held to; within reach, or with a term at least the
		// sigma, the station is widened as before.
		if best == nil || !(best.Share*math.Abs(p.Current) > 0.3*p.CurrentSigma) {
			continue
		}
		if best.Distance > StepReachDepths*math.Abs(p.Depth) && !(best.Share*math.Abs(p.Current) >= p.CurrentSigma) {
			continue
		}
		best.FitCurrentSigma, best.FitDepthSigma = p.CurrentSigma, p.DepthSigma
		best.CurrentSigma = best.Widen(p.CurrentSigma, p.Current)
		best.DepthSigma = best.Widen(p.DepthSigma, p.Depth)
		p.CurrentSigma, p.DepthSigma = best.CurrentSigma, best.DepthSigma
		p.StepNear = best
	}
}

// Widen is a sigma of a fitted value as sn widens it: Share of the value
// in quadrature.
func (sn *StepNear) Widen(sigma, value float64) float64 {
	return math.Hypot(sigma, sn.Share*math.Abs(value))
}

// StepNote words a StepNear for a group's notes.
func StepNote(sn *StepNear) string {
	return fmt.Sprintf("current and depth uncertainties widened for the change of current %.3g m along the conductor (a step of %.3g A, whose field one straight line does not model; the fit's own sigmas: current %s A, depth %s m)",
		sn.Distance, sn.Step, SigmaText(sn.FitCurrentSigma), SigmaText(sn.FitDepthSigma))
}
