package main

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"undercurrent/inverse"
)

// A sensor tilted by a constant few degrees with no attitude logged, over
// a strong conductor: the reading is R(θ)(B_earth + B_c(p)) for a small
// rotation θ. The fit's uniform background takes R(θ) B_earth whole, so
// the residual of the untilted fit is about θ × B_c(p), the fitted
// conductors' field turned: three regressors per group, the columns
// e_k × B_c(p_i) (tiltColumns). A misfit hundreds of times the noise but
// under 2% of the signal (300 A at 1 m tilted 3°: 570x the 0.5 nT noise,
// read as 332.9 ± 6.2 A with a phantom line) is then measured, not
// guessed at: the readings are turned back by R(θ)ᵀ and refitted, a few
// rounds, and the tilt is kept only when it explains the misfit (the
// residual falls to within tiltKeepNoise times the noise, chi-square by
// tiltMinFall, θ at tiltMinSigmas) in at least half the fitted groups and
// the groups' tilts agree within their sigmas (a constant tilt). Model
// errors of the conductor (a rise, a sag, a bend, an axis scale error)
// leave residuals a turn of its field does not take: no tilt is kept and
// the fits are left as they were.

const (
	// tiltMinMisfit is the least residual, in the readings' measured
	// noise per axis, for a group's tilt to be looked for: a fit at the
	// noise has nothing to mend.
	tiltMinMisfit = 5.0
	// tiltMinFall is the least factor by which the residual sum of
	// squares must fall with the tilt taken out.
	tiltMinFall = 10.0
	// tiltKeepNoise bounds the residual per axis after the tilt is taken
	// out, in the measured noise: the tilt must explain the misfit.
	tiltKeepNoise = 3.0
	// tiltMinSigmas is the least significance of the tilt (the square
	// root of θᵀ C⁻¹ θ).
	tiltMinSigmas = 5.0
	// tiltFirstGain is the least share of the residual sum of squares
	// the first step must promise to take (the linear model of a tilt
	// of degrees from a fit that took part of it is rough; the refits
	// decide).
	tiltFirstGain = 0.5
	// tiltRounds is the number of turn-back-and-refit rounds.
	tiltRounds = 4
	// tiltStep is the turn, radians, by which the readings are moved
	// along each tilt column to measure the fit's response (the
	// sensitivities and the tilt's covariance with the fitted lines).
	tiltStep = 1e-3
	// tiltAgreeChi2 bounds the groups' tilts' scatter about their
	// weighted mean, chi-square per degree of freedom.
	tiltAgreeChi2 = 4.0
)

// groupTilt is a constant sensor tilt measured in a DC group's fit.
type groupTilt struct {
	// theta is the rotation vector, radians (east, north, up), taking the
	// field to the reading (reading = R(theta) field); cov its covariance
	// with the fitted lines taken into account, rad².
	theta [3]float64
	cov   [3][3]float64
	// info is the tilt's information, rad⁻², in the directions the group
	// measures (measuredInfo): a traverse over a straight line cannot
	// tell a turn about its own direction or about the up axis from the
	// line's dip and azimuth, so those are held at zero and read as the
	// line's direction; cov is info's pseudo-inverse.
	info [3][3]float64
	// rms0 and rms1 are the residuals per axis, nT, before and after.
	rms0, rms1 float64
	// orig are the readings as logged; fitted the fit on them.
	orig   [][3]float64
	fitted *inverse.Result
}

// rotation returns R(theta), the rotation by |theta| about theta's
// direction (Rodrigues' formula).
func rotation(theta [3]float64) [3][3]float64 {
	a := norm(theta)
	r := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	if a == 0 {
		return r
	}
	k := [3]float64{theta[0] / a, theta[1] / a, theta[2] / a}
	s, c := math.Sin(a), math.Cos(a)
	kx := [3][3]float64{{0, -k[2], k[1]}, {k[2], 0, -k[0]}, {-k[1], k[0], 0}}
	for i := range 3 {
		for j := range 3 {
			r[i][j] = c*r[i][j] + s*kx[i][j] + (1-c)*k[i]*k[j]
		}
	}
	return r
}

// rotationVector returns the rotation vector of the rotation matrix r.
func rotationVector(r [3][3]float64) [3]float64 {
	c := math.Max(-1, math.Min(1, (r[0][0]+r[1][1]+r[2][2]-1)/2))
	a := math.Acos(c)
	v := [3]float64{r[2][1] - r[1][2], r[0][2] - r[2][0], r[1][0] - r[0][1]}
	if a < 1e-12 {
		return [3]float64{v[0] / 2, v[1] / 2, v[2] / 2}
	}
	f := a / (2 * math.Sin(a))
	return [3]float64{f * v[0], f * v[1], f * v[2]}
}

func mulMat(a, b [3][3]float64) (c [3][3]float64) {
	for i := range 3 {
		for j := range 3 {
			for k := range 3 {
				c[i][j] += a[i][k] * b[k][j]
			}
		}
	}
	return c
}

// turnBack returns Rᵀ v.
func turnBack(r [3][3]float64, v [3]float64) (w [3]float64) {
	for i := range 3 {
		for k := range 3 {
			w[i] += r[k][i] * v[k]
		}
	}
	return w
}

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// tiltColumns returns, per reading, the three regressors e_k × B_c: the
// change of the reading R(θ) B_c per radian of tilt about east, north
// and up at θ = 0 (d(R(θ) v)/dθ_k = e_k × v). bc is the fitted
// conductors' field.
func tiltColumns(bc [][3]float64) [][3][3]float64 {
	out := make([][3][3]float64, len(bc))
	for i, b := range bc {
		for k := range 3 {
			var e [3]float64
			e[k] = 1
			out[i][k] = cross(e, b)
		}
	}
	return out
}

// conductorField returns the fit's modelled field less its background:
// the conductors' field at each reading; nil without one.
func conductorField(r *inverse.Result, n int) [][3]float64 {
	if r == nil || len(r.Predicted) != n || len(r.Gradient) > 0 {
		return nil
	}
	out := make([][3]float64, n)
	for i, p := range r.Predicted {
		for k := range 3 {
			out[i][k] = p[k] - r.Background[k]
		}
	}
	return out
}

// regressTilt fits the residuals by the tilt columns and a uniform shift
// (the background's share), least squares; it returns θ, the residual
// sum of squares left and the normal matrix's inverse block for θ
// (multiply by σ² for the covariance); ok false when singular.
func regressTilt(res [][3]float64, cols [][3][3]float64) (theta [3]float64, rss float64, inv [3][3]float64, ok bool) {
	var a mat.SymDense
	a.ReuseAsSym(6)
	b := mat.NewVecDense(6, nil)
	row := make([]float64, 6)
	for i, d := range res {
		if !finite(d[0]) || !finite(d[1]) || !finite(d[2]) {
			continue
		}
		for ax := range 3 {
			for k := range 3 {
				row[k] = cols[i][k][ax]
				row[3+k] = 0
			}
			row[3+ax] = 1
			for p := range 6 {
				b.SetVec(p, b.AtVec(p)+row[p]*d[ax])
				for q := p; q < 6; q++ {
					a.SetSym(p, q, a.At(p, q)+row[p]*row[q])
				}
			}
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(&a) {
		return theta, 0, inv, false
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, b); err != nil {
		return theta, 0, inv, false
	}
	var ai mat.SymDense
	if err := ch.InverseTo(&ai); err != nil {
		return theta, 0, inv, false
	}
	for k := range 3 {
		theta[k] = x.AtVec(k)
		for l := range 3 {
			inv[k][l] = ai.At(k, l)
		}
	}
	for i, d := range res {
		if !finite(d[0]) || !finite(d[1]) || !finite(d[2]) {
			continue
		}
		for ax := range 3 {
			e := d[ax] - x.AtVec(3+ax)
			for k := range 3 {
				e -= theta[k] * cols[i][k][ax]
			}
			rss += e * e
		}
	}
	return theta, rss, inv, true
}

// sumSquares returns the residuals' sum of squares and count of axis
// readings.
func sumSquares(res [][3]float64) (rss float64, n int) {
	for _, d := range res {
		if !finite(d[0]) || !finite(d[1]) || !finite(d[2]) {
			continue
		}
		rss += d[0]*d[0] + d[1]*d[1] + d[2]*d[2]
		n += 3
	}
	return rss, n
}

// quadForm returns vᵀ m⁻¹ v for a symmetric 3x3 m; NaN when singular.
func quadForm(m [3][3]float64, v [3]float64) float64 {
	var s mat.SymDense
	s.ReuseAsSym(3)
	for i := range 3 {
		for j := i; j < 3; j++ {
			s.SetSym(i, j, m[i][j])
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(&s) {
		return math.NaN()
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, mat.NewVecDense(3, v[:])); err != nil {
		return math.NaN()
	}
	return mat.Dot(&x, mat.NewVecDense(3, v[:]))
}

// measureTilt looks for a constant tilt in the DC group g's fit and, when
// it explains the misfit, returns it with the refit on the readings
// turned back (its sigmas widened by the tilt's uncertainty) and those
// readings; g is not changed. The tilt is fitted jointly with the lines
// by Gauss-Newton on θ over the lines' variable projection: the tilt
// columns' part the lines and background do not take (projectedColumns)
// against the residual, the readings turned back by each step and the
// lines refitted (their count free, so that a line the tilt made up can
// go).
func measureTilt(g *group, set *inverse.Settings, noise float64) (*groupTilt, *inverse.Result, [][3]float64) {
	r := g.res
	n := len(g.fields)
	if g.err != nil || r == nil || n < 20 || len(r.Residuals) != n || g.scale != nil {
		return nil, nil, nil
	}
	sm := g.measuredNoise(false)
	if !(sm > 0) || conductorField(r, n) == nil {
		return nil, nil, nil
	}
	rss0, m := sumSquares(r.Residuals)
	if m < 60 || !(rss0 > tiltMinMisfit*tiltMinMisfit*sm*sm*float64(m)) {
		return nil, nil, nil
	}
	rot := rotation([3]float64{})
	res, fields := r, g.fields
	var proj *projection // the projected columns at res, when computed
	for round := range tiltRounds {
		left, moved, ok := projectedColumns(g, set, noise, fields, res)
		if !ok {
			return nil, nil, nil
		}
		proj = &projection{left, moved}
		// The first step from the untilted fit, whose lines took up
		// part of the tilt (a made-up line among them), goes along the
		// best measured direction only: the others may seem measured
		// there and are not.
		spread := tiltSpread
		if round == 0 {
			spread = 1
		}
		d, gain, ok := tiltStepOf(left, res.Residuals, sm, spread)
		if !ok || (round == 0 && !(gain > tiltFirstGain*rss0)) {
			return nil, nil, nil
		}
		if round > 0 && gain < 0.01*sm*sm {
			break // a step of under a tenth of its sigma: converged
		}
		proj = nil
		rot = mulMat(rot, rotation(d))
		fields = make([][3]float64, n)
		for i, b := range g.fields {
			fields[i] = turnBack(rot, b)
		}
		q := *g
		q.fields = fields
		var err error
		if res, err = inverse.FitLines(q.problem(false, noise), set); err != nil || len(res.Residuals) != n || conductorField(res, n) == nil {
			return nil, nil, nil
		}
	}
	rssT, mT := sumSquares(res.Residuals)
	if !(rssT*tiltMinFall < rss0) || !(rssT < tiltKeepNoise*tiltKeepNoise*sm*sm*float64(mT)) {
		return nil, nil, nil
	}
	t := &groupTilt{theta: rotationVector(rot), rms0: math.Sqrt(rss0 / float64(m)), rms1: math.Sqrt(rssT / float64(mT)), orig: g.fields, fitted: r}
	if !widenForTilt(g, set, noise, fields, res, t, proj) {
		return nil, nil, nil
	}
	if !(form(t.info, t.theta) >= tiltMinSigmas*tiltMinSigmas) {
		return nil, nil, nil
	}
	return t, res, fields
}

// tiltMaxSigma is the largest sigma, radians, of a direction of tilt
// for the group to count it measured (measuredInfo); about 0.3°.
const tiltMaxSigma = 0.005

// tiltSpread is the largest ratio of a measured direction's sigma to the
// best measured one's: a traverse over a straight line measures the turn
// about the line's direction tens of times better than the others, which
// a wrong start of the fit (a line the tilt made up) lets seem measured.
const tiltSpread = 10.0

// normalOf returns the projected columns' normal matrix and their
// products with the residuals.
func normalOf(left [3][][3]float64, res [][3]float64) (a [3][3]float64, b [3]float64) {
	for i, r := range res {
		if !finite(r[0]) || !finite(r[1]) || !finite(r[2]) {
			continue
		}
		for k := range 3 {
			for ax := range 3 {
				b[k] += left[k][i][ax] * r[ax]
			}
			for l := range 3 {
				for ax := range 3 {
					a[k][l] += left[k][i][ax] * left[l][i][ax]
				}
			}
		}
	}
	return a, b
}

// measuredInfo returns the part of the normal matrix a, divided by σ²
// (the tilt's information, rad⁻²), in the directions whose sigma is
// within tiltMaxSigma, and its pseudo-inverse (the covariance there);
// rank is the count of such directions.
func measuredInfo(a [3][3]float64, sigma, spread float64) (info, cov [3][3]float64, rank int) {
	s := mat.NewSymDense(3, nil)
	for i := range 3 {
		for j := range 3 {
			s.SetSym(i, j, a[i][j]/(sigma*sigma))
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(s, true) {
		return info, cov, 0
	}
	vals := eig.Values(nil)
	var vec mat.Dense
	eig.VectorsTo(&vec)
	best := slices.Max(vals)
	for e, l := range vals {
		if !(l > 0) || !(1/math.Sqrt(l) <= tiltMaxSigma) || !(l*spread*spread >= best) {
			continue
		}
		rank++
		for i := range 3 {
			for j := range 3 {
				info[i][j] += l * vec.At(i, e) * vec.At(j, e)
				cov[i][j] += vec.At(i, e) * vec.At(j, e) / l
			}
		}
	}
	return info, cov, rank
}

// form returns vᵀ m v.
func form(m [3][3]float64, v [3]float64) (s float64) {
	for i := range 3 {
		for j := range 3 {
			s += v[i] * m[i][j] * v[j]
		}
	}
	return s
}

func mulVec(m [3][3]float64, v [3]float64) (w [3]float64) {
	for i := range 3 {
		for j := range 3 {
			w[i] += m[i][j] * v[j]
		}
	}
	return w
}

// tiltStepOf returns the Gauss-Newton step of the tilt in the directions
// measured (the least-squares fit of the residuals by the projected
// columns left), and the fall of the residual sum of squares it promises.
func tiltStepOf(left [3][][3]float64, res [][3]float64, sigma, spread float64) (d [3]float64, gain float64, ok bool) {
	a, b := normalOf(left, res)
	_, cov, rank := measuredInfo(a, sigma, spread)
	if rank == 0 {
		return d, 0, false
	}
	// d = a⁺ b = (σ² cov) b.
	d = mulVec(cov, b)
	for k := range 3 {
		d[k] /= sigma * sigma
	}
	return d, d[0]*b[0] + d[1]*b[1] + d[2]*b[2], true
}

// projectedColumns returns the tilt columns' part that the fit of the
// lines (their count held) and background does not take, at the fit res
// of the readings fields: each column C_k is added to the readings by
// tiltStep and the lines refitted; the change of the predicted field is
// P C_k, and C_k - P C_k is left. moved are those refits.
func projectedColumns(g *group, set *inverse.Settings, noise float64, fields [][3]float64, res *inverse.Result) (left [3][][3]float64, moved [3]*inverse.Result, ok bool) {
	n := len(fields)
	bc := conductorField(res, n)
	if bc == nil {
		return left, moved, false
	}
	cols := tiltColumns(bc)
	hold := *set
	lines := 0
	for _, s := range res.Sources {
		if s.Kind == "line" {
			lines++
		}
	}
	if lines == 0 || lines != len(res.Sources) {
		return left, moved, false
	}
	hold.Count = lines
	for k := range 3 {
		f := make([][3]float64, n)
		for i := range fields {
			for ax := range 3 {
				f[i][ax] = fields[i][ax] + tiltStep*cols[i][k][ax]
			}
		}
		q := *g
		q.fields = f
		rk, err := inverse.FitLines(q.problem(false, noise), &hold)
		if err != nil || len(rk.Predicted) != n || len(rk.Sources) != len(res.Sources) {
			return left, moved, false
		}
		left[k] = make([][3]float64, n)
		for i := range f {
			for ax := range 3 {
				left[k][i][ax] = cols[i][k][ax] - (rk.Predicted[i][ax]-res.Predicted[i][ax])/tiltStep
			}
		}
		moved[k] = rk
	}
	return left, moved, true
}

// projection holds projectedColumns' columns and refits.
type projection struct {
	left  [3][][3]float64
	moved [3]*inverse.Result
}

// widenForTilt sets t.cov, the tilt's covariance in the joint fit of the
// lines, background and tilt, and widens res's sigmas by it: the
// projected columns r_k (projectedColumns) are the information the tilt
// has of its own (its covariance σ² (rᵀr)⁻¹, the Schur complement of the
// joint normal matrix), and the change of each fitted quantity per
// radian s_k in those refits widens its variance by sᵀ C s, as in the
// joint fit (the fit of the turned-back readings and the tilt's estimate
// are uncorrelated, one in the model's span, the other out of it). proj,
// when not nil, holds projectedColumns at res already.
func widenForTilt(g *group, set *inverse.Settings, noise float64, fields [][3]float64, res *inverse.Result, t *groupTilt, proj *projection) bool {
	if !(res.Sigma > 0) {
		return false
	}
	if proj == nil {
		left, moved, ok := projectedColumns(g, set, noise, fields, res)
		if !ok {
			return false
		}
		proj = &projection{left, moved}
	}
	left, moved := proj.left, proj.moved
	an, _ := normalOf(left, res.Residuals)
	info, cov, rank := measuredInfo(an, res.Sigma, tiltSpread)
	if rank == 0 {
		return false
	}
	t.info, t.cov = info, cov
	// The tilt held in the unmeasured directions: the measured one only.
	t.theta = mulVec(cov, mulVec(info, t.theta))
	widen := func(sigma *float64, at func(r *inverse.Result) float64) {
		var s [3]float64
		for k := range 3 {
			s[k] = (at(moved[k]) - at(res)) / tiltStep
		}
		var v float64
		for k := range 3 {
			for l := range 3 {
				v += s[k] * t.cov[k][l] * s[l]
			}
		}
		if finite(v) && v > 0 {
			*sigma = math.Sqrt(*sigma**sigma + v)
		}
	}
	for j := range res.Sources {
		src := &res.Sources[j]
		widen(&src.CurrentSigma, func(r *inverse.Result) float64 { return r.Sources[j].Current })
		widen(&src.DepthSigma, func(r *inverse.Result) float64 { return r.Sources[j].Depth })
		widen(&src.OffsetSigma, func(r *inverse.Result) float64 { return r.Sources[j].Offset })
		widen(&src.AzimuthSigma, func(r *inverse.Result) float64 { return r.Sources[j].Azimuth })
		widen(&src.DipSigma, func(r *inverse.Result) float64 { return r.Sources[j].Dip })
		for ax := range 3 {
			widen(&src.PointSigma[ax], func(r *inverse.Result) float64 { return r.Sources[j].Point[ax] })
		}
	}
	for ax := range 3 {
		widen(&res.BackgroundSigma[ax], func(r *inverse.Result) float64 { return r.Background[ax] })
	}
	return true
}

// mendConstantTilt measures a constant unlogged tilt in the DC survey's
// fits and, when it explains the misfit in at least half the fitted
// groups and their tilts agree, turns those groups' readings back and
// keeps the refits (g.tilt records it for the warning).
func mendConstantTilt(sv *survey, set *inverse.Settings, noise func(*group) float64) {
	if sv.ac {
		return
	}
	fitted := 0
	type found struct {
		g      *group
		t      *groupTilt
		res    *inverse.Result
		fields [][3]float64
	}
	var got []found
	for _, g := range sv.groups {
		if g.err != nil || g.res == nil || len(g.res.Sources) == 0 {
			continue
		}
		fitted++
		if t, res, f := measureTilt(g, set, noise(g)); t != nil {
			got = append(got, found{g, t, res, f})
		}
	}
	if len(got) == 0 || 2*len(got) < fitted {
		return
	}
	// The groups' tilts must agree: one constant tilt.
	var ts []*groupTilt
	for _, f := range got {
		ts = append(ts, f.t)
	}
	_, _, chi2, dof := meanTilt(ts)
	if dof > 0 && !(chi2 <= tiltAgreeChi2*float64(dof)) {
		return
	}
	for _, f := range got {
		f.g.fields, f.g.res, f.g.tilt = f.fields, f.res, f.t
	}
}

// meanTilt returns the groups' tilts' information-weighted mean, its
// covariance (the pseudo-inverse of the summed information), and the
// chi-square of the tilts about it with its degrees of freedom (the
// groups' measured directions less the mean's).
func meanTilt(ts []*groupTilt) (mean [3]float64, cov [3][3]float64, chi2 float64, dof int) {
	var w [3][3]float64
	var sum [3]float64
	for _, t := range ts {
		v := mulVec(t.info, t.theta)
		for i := range 3 {
			sum[i] += v[i]
			for j := range 3 {
				w[i][j] += t.info[i][j]
			}
		}
		_, _, r := measuredInfo(t.info, 1, tiltSpread)
		dof += r
	}
	// The summed information's pseudo-inverse (measuredInfo at σ = 1
	// keeps the directions within tiltMaxSigma, those the groups measure).
	_, cov, rank := measuredInfo(w, 1, tiltSpread)
	mean = mulVec(cov, sum)
	for _, t := range ts {
		d := [3]float64{t.theta[0] - mean[0], t.theta[1] - mean[1], t.theta[2] - mean[2]}
		chi2 += form(t.info, d)
	}
	return mean, cov, chi2, dof - rank
}

// tiltWarning names a constant tilt measured and taken out; "" for none.
func tiltWarning(sv *survey) string {
	var names []string
	var ts []*groupTilt
	var rms0, rms1 []float64
	for _, g := range sv.groups {
		t := g.tilt
		if t == nil {
			continue
		}
		names = append(names, g.key)
		ts = append(ts, t)
		sm := g.measuredNoise(false)
		rms0, rms1 = append(rms0, t.rms0/sm), append(rms1, t.rms1/sm)
	}
	if len(names) == 0 {
		return ""
	}
	th, cov, _, _ := meanTilt(ts)
	deg := 180 / math.Pi
	a := norm(th)
	if !(a > 0) {
		return ""
	}
	// The angle's sigma along the tilt's own direction.
	sa := math.Sqrt(form(cov, th)) / a
	az := math.Atan2(th[0], th[1]) * deg
	if az < 0 {
		az += 360
	}
	el := math.Asin(th[2]/a) * deg
	groups := strings.Join(names, ", ")
	if len(names) > 4 {
		groups = strings.Join(names[:3], ", ") + fmt.Sprintf(" and %d more", len(names)-3)
	}
	dec := 2
	if sa > 0 {
		dec = min(4, max(2, int(math.Ceil(-math.Log10(sa*deg)))+1))
	}
	return fmt.Sprintf("the sensor was tilted a constant %.*f ± %.*f° (turned about an axis at azimuth %.0f°, %.0f° above level) with no attitude logged: in %d of the fitted groups (%s) the fits missed the readings by %.0f times the noise in a way a turn of the conductors' field explains, down to %.1f times with the readings turned back. The results are the fits of the readings turned back, their sigmas widened by the tilt's. The tilt is measured from the conductors' field about the axes the traverses tell apart (about a line's own direction); a turn about the others reads as the lines' azimuth and dip, not measured here. Log roll and pitch (a sensor-frame log with attitude columns, --frame sensor) or level the sensor on its pole, and walk again if the estimates matter",
		dec, a*deg, dec, sa*deg, az, el, len(names), groups, medianOf(rms0), medianOf(rms1))
}

// medianNoise is the DC groups' median measured noise, nT (1 for none,
// so that a ratio stays finite).
func medianNoise(sv *survey) float64 {
	if s := dcMeasuredNoise(sv); s > 0 {
		return s
	}
	return 1
}
