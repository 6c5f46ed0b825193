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
// its sigmas are widened for the step's field whenever the error that
// field gives its current is over 0.3 of the fit's own current sigma;
// farther, only an error of at least the sigma widens them. At 10 depths
// a step's error is under 1% of half the step.
const StepReachDepths = 10.0

// StepNear records the widening of a station's current and depth sigmas
// for a current step found near it (stepDoubt).
type StepNear struct {
	// Step is the size of the step, A, and Distance the station's
	// distance from it along the route, m.
	Step, Distance float64
	// Share is the share of the station's current, and DepthShare of its
	// depth, that the step's field moves the fit by (stepBias, scaled
	// by Seen); the sigmas are widened by them.
	Share, DepthShare float64
	// Seen is the share of the step's field that the fit's misfit leaves
	// room for (1 when the fit's chi-square is not known): the root of
	// the misfit over the noise against the misfit the step's field
	// would leave, at most 1.
	Seen float64
	// Beside is true when the step is on another conductor beside the
	// station's (Route.WidenForStepsBeside).
	Beside bool
	// FitCurrentSigma and FitDepthSigma are the sigmas before,
	// CurrentSigma and DepthSigma after (A, m).
	FitCurrentSigma, FitDepthSigma float64
	CurrentSigma, DepthSigma       float64
}

// stepBias is what the field of a current step dI at distance d along
// the line moves a straight infinite line's fit of current I by, at a
// station whose readings lie at the distances reach from the line
// (Station.Reach): the change of current dCur (A) and of depth dDepth (m),
// and the share of the line's field the fit is left missing, resid.
//
// A step of dI at distance d is the field of a half-line of dI ending
// there: read at a distance r from the line it differs from an infinite
// line's of the same current by that of a line of dI/2 (1 - d/sqrt(d² +
// r²)) (Biot-Savart, the field of a finite straight segment). The
// readings are taken on a level traverse across the line, the nearest
// straight above it at r = reach[0], the others either side, each
// distance standing for an equal share of the readings' weight 1/r² (so
// for readings in number as r²); the fit of current, depth and a uniform
// background is linearised about the line, and the error field split by
// least squares into the part the fit takes up, which moves its current
// and depth, and the part it leaves. The near readings set the fit: the
// error field, growing as r there, is mostly taken up (at 10 depths from
// a 15 A step on 40 A, 1.2 m under the sensors, 0.43 A of current and
// 1 cm of depth).
func stepBias(reach []float64, d, dI, I float64) (dCur, dDepth, resid float64) {
	if len(reach) == 0 || !(reach[0] > 0) || !(I > 0) {
		return 0, 0, 0
	}
	h := reach[0]
	var a [4][4]float64
	var b [4]float64
	var ee, sig float64
	for _, r := range reach {
		if !(r >= h) {
			r = h
		}
		r2 := r * r
		x := math.Sqrt(math.Max(0, r2-h*h))
		g := 1 - d/math.Hypot(d, r)
		for _, sx := range [2]float64{x, -x} {
			w := r2 / 2
			// The line's horizontal and vertical field across the
			// traverse, per unit of mu0/2pi: I h/r², -I x/r².
			e := [2]float64{-dI / 2 * g * h / r2, dI / 2 * g * sx / r2}
			cols := [4][2]float64{
				{h / r2, -sx / r2}, // d/dI
				{I * (r2 - 2*h*h) / (r2 * r2), 2 * I * h * sx / (r2 * r2)}, // d/dh
				{1, 0}, {0, 1}, // background
			}
			for m := range 4 {
				for n := range 4 {
					a[m][n] += w * (cols[m][0]*cols[n][0] + cols[m][1]*cols[n][1])
				}
				b[m] += w * (cols[m][0]*e[0] + cols[m][1]*e[1])
			}
			ee += w * (e[0]*e[0] + e[1]*e[1])
			sig += w * I * I / r2
		}
	}
	sol, ok := solve4(a, b)
	if !ok {
		return 0, 0, 0
	}
	left := ee
	for m := range 4 {
		left -= sol[m] * b[m]
	}
	return sol[0], sol[1], math.Sqrt(math.Max(0, left) / sig)
}

// solve4 solves a x = b by Gaussian elimination with partial pivoting;
// false when a is singular.
func solve4(a [4][4]float64, b [4]float64) ([4]float64, bool) {
	var x [4]float64
	for c := range 4 {
		p := c
		for r := c + 1; r < 4; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		if !(math.Abs(a[p][c]) > 1e-300) {
			return x, false
		}
		a[c], a[p] = a[p], a[c]
		b[c], b[p] = b[p], b[c]
		for r := c + 1; r < 4; r++ {
			f := a[r][c] / a[c][c]
			for k := c; k < 4; k++ {
				a[r][k] -= f * a[c][k]
			}
			b[r] -= f * b[c]
		}
	}
	for c := 3; c >= 0; c-- {
		v := b[c]
		for k := c + 1; k < 4; k++ {
			v -= a[c][k] * x[k]
		}
		x[c] = v / a[c][c]
	}
	return x, true
}

// stepSeen is the share of a step's field, as stepBias gives it, that
// p's misfit leaves room for: the field would leave the fit missing pred
// of its signal; the fit misses by RMS, of which the noise accounts for
// DOF/Chi2 of its square, leaving a share sqrt(RMS² (Chi2 - DOF)/Chi2) /
// Signal for the model, the part of the chi-square over DOF taken as
// hiddenChi2 gives it (a tee's fits 18 m before it, 0.024 A off, missed by
// some 43 of chi-square, under the noise's scatter of 29). Their ratio, at
// most 1, scales the step's error: a field
// that is only part of the step's (a tee, whose branch carries the
// current on beside the line and leaves the fits before it missing a
// fortieth of what a loss would) moves the fit by the same part. 1 when
// the fit's chi-square or signal is not known, or its chi-square is more
// than 3 of its standard deviations under its degrees of freedom.
// hiddenChi2 is the misfit, in chi-square, a fit's model leaves it,
// given the excess x of its chi-square over its degrees of freedom, which
// the noise scatters by sd: the mean of a misfit of at least 0, equally
// likely at any size, given x, x + sd phi(x/sd)/Phi(x/sd) (the mean of a
// normal cut at 0). With x at 0 it is 0.8 sd: a misfit the noise can
// hide is not taken to be none.
func hiddenChi2(x, sd float64) float64 {
	if !(sd > 0) {
		return math.Max(0, x)
	}
	u := x / sd
	c := 0.5 * math.Erfc(-u/math.Sqrt2)
	if !(c > 1e-12) {
		return -sd / u // the cut normal's mean as u goes to minus infinity
	}
	return x + sd*math.Exp(-u*u/2)/math.Sqrt(2*math.Pi)/c
}

func stepSeen(p *Placed, pred float64) float64 {
	if p.DOF <= 0 || !(p.Chi2 > 0) || !(p.Signal > 0) || !(p.RMS > 0) || !(pred > 0) {
		return 1
	}
	dof := float64(p.DOF)
	if p.Chi2 < dof-3*math.Sqrt(2*dof) {
		// The noise the chi-square is taken against is well over
		// what the fit's residuals show (an AC fit's reference
		// noise, at 0.3 to 0.5 of chi-square per degree of freedom
		// in the demo): the misfit cannot be told from it.
		return 1
	}
	ex := hiddenChi2(p.Chi2-dof, math.Sqrt(2*dof)) / p.Chi2
	seen := p.RMS * math.Sqrt(ex) / p.Signal
	return math.Min(1, seen/pred)
}

// stepDoubt widens the current and depth sigmas of the stations near a
// current step among steps (current-step findings), for the field of the
// current that changes there, which the straight infinite line fitted at
// each station does not model: by the error that field gives the fit's
// current and depth (stepBias), scaled by the share of it the fit's
// misfit shows (stepSeen), in quadrature. In review (rv24f,
// tallow-brook-fault, 20 seeds) the feeder's stations 10 m either side of
// a found fault read -6.3 and +6.3 of their sigmas off, those 30 m off
// -2.8 and +2.6, all "sound"; widened by the half-line term averaged over
// the readings' reach, blanket (review rg25a), every station of a tee
// was widened, some 47 times, its fits downstream (already within 0.01
// A) among them, and the z of the 51 fits of three seeds spread by only
// 0.6. The step is placed anywhere within its location's sigma, where
// the finding gives one (within its bracket), else midway across its
// bracket, and each station is widened as for the nearest place: two
// losses 13 m apart (7 A and 6 A) found as one step "most likely at 103
// ± 13 m" left the station 3 m past the second, 17.5 m from the
// location's centre, unwidened and 1.7-3.2 sigma high on six runs,
// while one 37.5 m off was widened (review rg26a, s4 and s7).
func stepDoubt(ps []Placed, steps []Finding) {
	type st struct{ at, lo, hi, dI float64 } // the step's centre, its place lo to hi, and size
	var ss []st
	for i := range steps {
		f := &steps[i]
		if f.Kind != KindCurrentStep {
			continue
		}
		mid := (f.From + f.To) / 2
		s := st{at: mid, lo: mid, hi: mid}
		for _, v := range f.Values {
			switch v.Name {
			case "location (chainage)":
				if finite(v.Value) {
					s.at, s.lo, s.hi = v.Value, v.Value, v.Value
					if sg := math.Abs(v.Sigma); finite(sg) && sg > 0 {
						s.lo, s.hi = v.Value-sg, v.Value+sg
						if f.To > f.From {
							s.lo, s.hi = math.Max(s.lo, f.From), math.Min(s.hi, f.To)
						}
						if s.lo > s.hi { // a location outside its bracket: its own
							s.lo, s.hi = v.Value, v.Value
						}
					}
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
		cur := math.Abs(p.Current)
		if !p.usable() || !(cur > 0) {
			continue
		}
		reach := p.Reach
		if len(reach) == 0 {
			reach = []float64{math.Abs(p.Depth)}
		}
		var best *StepNear
		for _, s := range ss {
			sn := stepNearOver(p, reach, s.at, s.lo, s.hi, s.dI, cur)
			if best == nil || sn.Share > best.Share {
				best = sn
			}
		}
		if !widenForStep(p, best, p.CurrentSigma, p.DepthSigma) {
			continue
		}
		p.CurrentSigma, p.DepthSigma = best.CurrentSigma, best.DepthSigma
		p.StepNear = best
	}
}

// stepNearOver is the error a step of dI (A) placed anywhere from lo to
// hi along the route (its location's sigma; at, its centre) leaves in
// station p's fit: the largest current share and the largest depth share
// over those places, each taken on its own, never below what the centre
// alone gives. The two peak apart: at the step's own place (d = 0) every
// reading sees half the step (stepBias's g = 1), a pure current error
// with no depth error, while the depth error is largest about a depth or
// so away. Taken as for the nearest place alone, a station inside the
// location's sigma had its depth widened for d = 0, that is not at all:
// end-loss-trend's T02, 0.38 m from a location of 2.62 ± 0.38 m, read
// 1.0096 ± 0.0015 m over 1.000 m, 6.3 sigma, where the centre alone had
// given ± 0.0032 (review rg26c). Distance is the nearest place's, which
// the reach test (widenForStep) takes.
func stepNearOver(p *Placed, reach []float64, at, lo, hi, dI, cur float64) *StepNear {
	x := p.Chainage
	dmin := math.Max(0, math.Max(lo-x, x-hi))
	dmax := math.Max(math.Abs(x-lo), math.Abs(x-hi))
	ds := []float64{math.Abs(x - at), dmin, dmax}
	if dmax > dmin {
		const n = 16
		for i := 1; i < n; i++ {
			ds = append(ds, dmin+(dmax-dmin)*float64(i)/n)
		}
		// The depth error's peak, about a depth or so away, when the
		// range holds it: a uniform grid over a wide range could miss it.
		if h := reach[0]; h > 0 {
			for _, f := range []float64{0.25, 0.5, 0.75, 1, 1.5, 2, 3} {
				if d := f * h; d > dmin && d < dmax {
					ds = append(ds, d)
				}
			}
		}
	}
	sn := &StepNear{Step: dI, Distance: dmin}
	dep := math.Abs(p.Depth)
	for i, d := range ds {
		dc, dd, pred := stepBias(reach, d, dI, cur)
		seen := stepSeen(p, pred)
		if sh := seen * math.Abs(dc) / cur; i == 0 || sh > sn.Share {
			sn.Share, sn.Seen = sh, seen
		}
		if dep > 0 {
			sn.DepthShare = math.Max(sn.DepthShare, seen*math.Abs(dd)/dep)
		}
	}
	return sn
}

// widenForStep sets best's sigmas (and the fit's own it widens, sigma
// and depthSigma) for station p, as stepDoubt widens a station: false
// when the step's error is too small beside the fit's sigma to widen it.
func widenForStep(p *Placed, best *StepNear, sigma, depthSigma float64) bool {
	// Under 0.3 of the fit's own sigma widens it by under 5%: left.
	// Past StepReachDepths depths from the step an error under the
	// fit's own sigma is left too: the demo's feeder had stations up
	// to 88 m (70 depths) from its step widened 10-30% by terms of
	// 0.0013-0.0018 A on 42 A, beyond what a fit's straight line
	// is held to; within reach, or with an error at least the
	// sigma, the station is widened.
	cur := math.Abs(p.Current)
	if best == nil || !(best.Share*cur > 0.3*sigma) {
		return false
	}
	if best.Distance > StepReachDepths*math.Abs(p.Depth) && !(best.Share*cur >= sigma) {
		return false
	}
	// A fit widened for its misfit (modelDoubt) already counts the
	// step's field its misfit shows: the step's error widens it only
	// by what it adds to the misfit's, ModelErrFactor Share.
	if md := p.Model; md != nil {
		mc, mdp := ModelErrFactor*md.Share, ModelErrFactor*md.Share
		if best.Share <= mc && best.DepthShare <= mdp {
			return false
		}
		best.Share = math.Sqrt(math.Max(0, best.Share*best.Share-mc*mc))
		best.DepthShare = math.Sqrt(math.Max(0, best.DepthShare*best.DepthShare-mdp*mdp))
	}
	best.FitCurrentSigma, best.FitDepthSigma = sigma, depthSigma
	best.CurrentSigma = best.Widen(sigma, p.Current)
	best.DepthSigma = best.WidenDepth(depthSigma, p.Depth)
	return true
}

// Widen is a current's sigma as sn widens it: Share of the current in
// quadrature.
func (sn *StepNear) Widen(sigma, value float64) float64 {
	return math.Hypot(sigma, sn.Share*math.Abs(value))
}

// WidenDepth is a depth's sigma as sn widens it: DepthShare of the depth
// in quadrature.
func (sn *StepNear) WidenDepth(sigma, depth float64) float64 {
	return math.Hypot(sigma, sn.DepthShare*math.Abs(depth))
}

// StepNote words a StepNear for a group's notes.
func StepNote(sn *StepNear) string {
	if sn.Beside {
		return fmt.Sprintf("current and depth uncertainties widened for the change of current on a conductor beside this one, %.3g m along it (a step of %.3g A, whose field the straight lines fitted do not model; the fit's own sigmas: current %s A, depth %s m)",
			sn.Distance, sn.Step, SigmaText(sn.FitCurrentSigma), SigmaText(sn.FitDepthSigma))
	}
	return fmt.Sprintf("current and depth uncertainties widened for the change of current %.3g m along the conductor (a step of %.3g A, whose field one straight line does not model; the fit's own sigmas: current %s A, depth %s m)",
		sn.Distance, sn.Step, SigmaText(sn.FitCurrentSigma), SigmaText(sn.FitDepthSigma))
}
