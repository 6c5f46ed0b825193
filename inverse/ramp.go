package inverse

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// CurrentRampNote begins the note (Result.Notes) of a DC traverse fit whose
// misfit a current changing in time while the traverse was walked explains
// (checkRamp): a further linear strength, the column (t - tc) g(x) of the one
// line's unit-current field g times the reading's time from the traverse's
// mean time tc, lowers the count's information criterion more than a further
// line does. A current that changes while the sensor walks adds a field
// shaped like (t - tc) B(x), which a deep line and the background otherwise
// absorb: a slow ±10 % load swing was fitted as two or three lines on most
// traverses (phantom conductors "ending" and "changing sign"), all called
// sound with sigmas 10-40 times too small. The line reported is then one line,
// its current the traverse's mean, its sigma widened to cover the change
// (Result.CurrentRamp). report makes it a crew caution.
const CurrentRampNote = "the current changed while this traverse was walked"

// rampMinChange is the least relative change of current over a traverse that
// checkRamp reports: below it a ramp is within what model error (a tee, a
// bend) and the demo's steady cables leave, and too small to matter to the
// line's current.
const rampMinChange = 0.005

// rampK is how many sigmas the ramp's strength must exceed (as the guard asks
// of a line's current).
const rampK = 3.0

// rampFit is a one-line DC fit with a current ramp in time.
type rampFit struct {
	x      []float64 // the line's free geometry (separable.pack order)
	order  int       // 1: a ramp; 2: a ramp and a curvature in time
	rss    float64
	dof    int     // the ramp fit's degrees of freedom
	rel    float64 // the current's change from the first reading to the last over its mean
	relSig float64
	rng    float64 // the current's range over the traverse over its mean
	rngSig float64
	relK   float64 // rng / its sigma
	span   float64 // s
	ends   [4]float64
}

// checkRamp fits the one-line fit c1 again with the column (t - tc) g(x) as a
// further linear strength (variable projection: the geometry iterated by
// Levenberg-Marquardt on the projected residual, numeric derivatives), for DC
// readings along one traverse with times (Problem.Times) and a uniform
// background, without per-reading scales (Problem.Scale: a reference current
// already models the change). It returns nil when the check does not apply or fails.
func (f *fitter) checkRamp(c1 *candidate, order int) *rampFit {
	p := f.prob
	if c1 == nil || p.Fields == nil || p.Scale != nil || len(p.Times) != len(p.Points) || !f.sv.single ||
		len(c1.sp.geom) != 1 || len(c1.sp.dips) != 0 || f.set.Background != BackgroundUniform || c1.sp.nrhs != 1 {
		return nil
	}
	n := len(p.Points)
	tmin, tmax, tc := math.Inf(1), math.Inf(-1), 0.0
	for _, t := range p.Times {
		if !finite(t) {
			return nil
		}
		tmin, tmax = math.Min(tmin, t), math.Max(tmax, t)
		tc += t
	}
	tc /= float64(n)
	span := tmax - tmin
	if !(span > 0) || n < 8 {
		return nil
	}
	tmp := &separable{geom: []lineGeom{c1.sp.geom[0]}}
	x0, lo, hi := tmp.pack()
	x := append([]float64(nil), x0...)
	m := 3 * n
	y := mat.NewVecDense(m, nil)
	for i := range n {
		for a := range 3 {
			y.SetVec(3*i+a, p.Fields[i][a]*c1.sp.weight(3*i+a))
		}
	}
	nl := 4 + order
	phi := mat.NewDense(m, nl, nil)
	coef := mat.NewVecDense(nl, nil)
	res := make([]float64, m)
	eval := func(x []float64, r []float64) (float64, bool) {
		tmp.unpack(x)
		ln := tmp.geom[0].line()
		for i := range n {
			g := ln.Field(p.Points[i], 1)
			dt := p.Times[i] - tc
			for a := range 3 {
				w := c1.sp.weight(3*i + a)
				row := 3*i + a
				phi.Set(row, 0, w*g[a])
				phi.Set(row, 1, w*dt*g[a])
				if order == 2 {
					phi.Set(row, 2, w*dt*dt*g[a])
				}
				for b := range 3 {
					v := 0.0
					if a == b {
						v = w
					}
					phi.Set(row, 1+order+b, v)
				}
			}
		}
		var qr mat.QR
		qr.Factorize(phi)
		if err := qr.SolveVecTo(coef, false, y); err != nil {
			return 0, false
		}
		var pred mat.VecDense
		pred.MulVec(phi, coef)
		s := 0.0
		for k := range m {
			r[k] = y.AtVec(k) - pred.AtVec(k)
			s += r[k] * r[k]
		}
		return s, finite(s)
	}
	rss, ok := eval(x, res)
	if !ok {
		return nil
	}
	np := len(x)
	jac := mat.NewDense(m, np, nil)
	rp, rm := make([]float64, m), make([]float64, m)
	xt := make([]float64, np)
	lambda := 1e-3
	for range 40 {
		for j := range np {
			h := 1e-6 * math.Max(1, math.Abs(x[j]))
			copy(xt, x)
			xt[j] = x[j] + h
			if _, ok := eval(xt, rp); !ok {
				return nil
			}
			xt[j] = x[j] - h
			if _, ok := eval(xt, rm); !ok {
				return nil
			}
			for k := range m {
				jac.Set(k, j, (rp[k]-rm[k])/(2*h))
			}
		}
		eval(x, res)
		var jtj mat.Dense
		jtj.Mul(jac.T(), jac)
		var jtr mat.VecDense
		jtr.MulVec(jac.T(), mat.NewVecDense(m, res))
		improved := false
		for range 10 {
			a := mat.DenseCopyOf(&jtj)
			for j := range np {
				a.Set(j, j, jtj.At(j, j)*(1+lambda)+1e-12)
			}
			var d mat.VecDense
			if err := d.SolveVec(a, &jtr); err != nil {
				lambda *= 10
				continue
			}
			for j := range np {
				xt[j] = math.Min(hi[j], math.Max(lo[j], x[j]-d.AtVec(j)))
			}
			if s, ok := eval(xt, rp); ok && s < rss {
				copy(x, xt)
				improved = rss-s > 1e-10*rss
				rss = s
				lambda = math.Max(lambda/10, 1e-9)
				break
			}
			lambda *= 10
		}
		if !improved {
			break
		}
	}
	if _, ok := eval(x, res); !ok {
		return nil
	}
	dof := m - nl - np
	if dof <= 0 {
		return nil
	}
	s2 := rss / float64(dof)
	if f.prob.Sigma > 0 {
		s2 = f.prob.Sigma * f.prob.Sigma
	}
	var ata mat.Dense
	ata.Mul(phi.T(), phi)
	var cov mat.Dense
	if err := cov.Inverse(&ata); err != nil {
		return nil
	}
	// The current in time, I(t) = i0 + ir dt + i2 dt^2: its change from
	// the first reading to the last and its range over the traverse, each
	// relative to its mean over the readings, with sigmas by the delta
	// method (numeric gradient) over the strengths' covariance.
	var dt2 float64
	for _, t := range p.Times {
		dt2 += (t - tc) * (t - tc)
	}
	dt2 /= float64(n)
	a, b := tmin-tc, tmax-tc
	cur := func(v [3]float64, d float64) float64 { return v[0] + v[1]*d + v[2]*d*d }
	change := func(v [3]float64) float64 {
		mean := v[0] + v[2]*dt2
		return (cur(v, b) - cur(v, a)) / mean
	}
	rangeOf := func(v [3]float64) float64 {
		lo, hi := math.Min(cur(v, a), cur(v, b)), math.Max(cur(v, a), cur(v, b))
		if v[2] != 0 {
			if d := -v[1] / (2 * v[2]); d > a && d < b {
				lo, hi = math.Min(lo, cur(v, d)), math.Max(hi, cur(v, d))
			}
		}
		return (hi - lo) / math.Abs(v[0]+v[2]*dt2)
	}
	var v [3]float64
	for j := range order + 1 {
		v[j] = coef.AtVec(j)
	}
	if v[0]+v[2]*dt2 == 0 {
		return nil
	}
	sigmaOf := func(h func([3]float64) float64) float64 {
		var grad [3]float64
		for j := range order + 1 {
			e := 1e-6 * math.Max(math.Abs(v[j]), 1e-3)
			vp, vm := v, v
			vp[j] += e
			vm[j] -= e
			grad[j] = (h(vp) - h(vm)) / (2 * e)
		}
		var s float64
		for j := range order + 1 {
			for k := range order + 1 {
				s += grad[j] * grad[k] * s2 * cov.At(j, k)
			}
		}
		return math.Sqrt(math.Max(s, 0))
	}
	out := &rampFit{order: order, x: x, rss: rss, dof: dof, span: span,
		rel: change(v), relSig: sigmaOf(change), rng: rangeOf(v), rngSig: sigmaOf(rangeOf)}
	mean := v[0] + v[2]*dt2
	slope := func(d float64) float64 { return v[1] + 2*v[2]*d }
	out.ends = [4]float64{cur(v, a)/mean - 1, cur(v, b)/mean - 1, slope(a) / mean, slope(b) / mean}
	if out.rngSig > 0 {
		out.relK = out.rng / out.rngSig
	}
	return out
}

// rampScore is the criterion (Settings.Criterion) of the ramp fit r of the
// one-line fit c1: c1's score with r's residual and one parameter more for
// the ramp (two with a curvature in time).
func (f *fitter) rampScore(c1 *candidate, r *rampFit) float64 {
	n, k := c1.counts()
	aic, bic := f.criteria(r.rss, n, k+r.order)
	if f.set.Criterion == AIC {
		return aic
	}
	return bic
}

// rampNote is the note of a ramp found (CurrentRampNote).
func rampNote(r *rampFit, lines int) string {
	s := fmt.Sprintf("%s: a current changing in time explains the misfit (the current changed by about %.2g%% ± %.2g%% over the %.3g s of the traverse, from a ramp in time fitted with the line)",
		CurrentRampNote, 100*r.rng, 100*r.rngSig, r.span)
	if lines > 1 {
		s += fmt.Sprintf(" better than %d lines do, so one line is reported", lines)
	}
	return s + "; its current is the traverse's mean, its uncertainty widened to cover the change (a varying load, e.g. traction): walk faster or log a reference current"
}

// rampCandidate is the one-line fit c1 with its line where the ramp fit r
// puts it (the fit without the ramp had pulled it to absorb part of the
// change), as a candidate whose residual is what the line without a ramp
// leaves there: its sigmas, scaled to that residual, are wider than the
// ramp fit's own. nil when it cannot be evaluated.
func (f *fitter) rampCandidate(c1 *candidate, r *rampFit) *candidate {
	x := append([]float64(nil), r.x...)
	res, err := c1.sp.fullResiduals(x)
	if err != nil {
		return nil
	}
	var rss float64
	for i, v := range res {
		w := c1.sp.weight(i)
		rss += w * w * v * v
	}
	if !finite(rss) || !(rss > 0) {
		return nil
	}
	return &candidate{sp: c1.sp, x: x, res: c1.res, rss: rss, iters: c1.iters, noPairs: c1.noPairs}
}

// findRamp checks the one-line fit c1 for a current changing in time
// (checkRamp): a ramp, and a ramp with a curvature in time (a slow swing
// over a good part of its period is not straight), the better by the
// criterion taken. It returns the fit and its criterion when its change is
// over rampK sigmas and rampMinChange, else nil. ceiling is the criterion
// the caller needs the ramp fit to beat: when the screen (rampMayPass)
// shows that neither fit can come near it, neither is run.
func (f *fitter) findRamp(c1 *candidate, ceiling float64) (*rampFit, float64) {
	if rampScreenOn && !f.rampMayPass(c1, ceiling) {
		return nil, 0
	}
	rampFullChecks.Add(1)
	r := f.checkRamp(c1, 1)
	if r2 := f.checkRamp(c1, 2); r2 != nil && (r == nil || f.rampScore(c1, r2) < f.rampScore(c1, r)) {
		r = r2
	}
	if r == nil || !(r.relK > rampK) || r.rng < rampMinChange {
		return nil, 0
	}
	return r, f.rampScore(c1, r)
}

// rampAtNoise is whether the ramp fit r meets the readings' noise by the test
// every FitLines fit is held to (linesMiss): its residual RMS per degree of
// freedom within lineMissFactor times the noise floor (noiseFloor; the
// given Problem.Sigma where there is one). Where no floor can be estimated
// it is taken to. The automatic count lets one line with a ramp displace a
// fit of several lines only when it does (see run): before, a ramp fit that
// still missed by hundreds of times the floor displaced two lines (100 A and
// 40 A swinging 30 % over 15 s, read as one line of 137 ± 121 A changing
// "about 180 %", the reported fit missing by 698 times; found in review).
func (f *fitter) rampAtNoise(r *rampFit) bool {
	floor := f.noiseFloor()
	if !(floor > 0) || r.dof <= 0 {
		return true
	}
	return math.Sqrt(r.rss/float64(r.dof)) <= lineMissFactor*floor
}

// applyRamp notes the ramp r on the one-line result res (CurrentRampNote;
// kb the most lines a count accepted before it) and widens the line's
// current sigma to cover the change: the current reported is the
// traverse's mean, and ranged over about half the change either side of it.
func applyRamp(res *Result, r *rampFit, kb int) {
	res.Notes = append(res.Notes, rampNote(r, kb))
	res.CurrentRamp, res.CurrentRampSigma = r.rel, r.relSig
	res.CurrentRampEnds = r.ends
	if len(res.Sources) > 0 {
		s := &res.Sources[0]
		s.CurrentSigma = math.Hypot(s.CurrentSigma, r.rng*math.Abs(s.Current)/2)
	}
}
