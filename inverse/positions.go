package inverse

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Uncertain positions (Settings.PositionSigmaPlan, PositionSigmaUp).
//
// A fit takes each reading's position as exact. A position off by d
// (satellite positioning without corrections, a sensor height that wanders
// unlogged on a walked pole) leaves the reading the field of the true
// place, which differs from the model's at the logged one by about
// grad B . d: an error in the variables whose size follows the field's
// gradient, largest on the anomaly's flanks, the readings that fix the
// depth and the offset, and nothing far from the line. Taken as noise of
// one size everywhere (the plain fit), the flanks weigh too much and the
// sigmas of depth and offset come out too small: in review 0.15 m of
// height wander over a 25 A line left depth errors 2.1 times their sigma
// (RMS), 31 of 84 fits beyond two sigma.
//
// To first order in d the position error adds to each reading axis's
// variance
//
//	(dB/dx sp)^2 + (dB/dy sp)^2 + (dB/dz su)^2
//
// (sp across the plan, su in height, independent from reading to reading
// and Gaussian), with the gradient that of the true field, here the fitted
// model's at the logged position. The fit is weighted by the inverse of
// the whole variance, refitted, the gradients taken again from the new
// fit, and so on to a fixed point (positionRounds at most): generalised
// least squares with a variance that depends on the fit, the usual
// approximation to errors in the variables when the model is smooth on
// the scale of the position error (the "effective variance" of fitting
// with errors in both variables: Orear, Am. J. Phys. 50:912, 1982, for one
// variable; from memory; here for three coordinates through the model's
// gradient). Three things beyond the first order matter here and are
// taken too (positionVariance): the curvature's own variance, which is
// what remains where the gradient vanishes (the horizontal field right
// over a line); the curvature's mean, sum_j H_jj s_j^2 / 2, by which the
// readings are corrected at each round (a scatter flattens and widens the
// anomaly: in review 0.2 m across the plan read 3.9 cm deep at 1.4 m, a
// 0.15 m height wander 2.5 cm shallow, each two sigma and more, and the
// correction left under 0.1 sigma); and that one position error moves all
// three axes of a reading together, which diagonal weights cannot say,
// so the covariance is the sandwich of the whole per-reading covariance
// (positionSandwich; DC only). The count of lines is chosen before, as
// without position sigmas.

// positionRounds bounds the refits of positionWeights.
const positionRounds = 8

// positionRatioLow and positionRatioHigh bound the weighted chi-square
// per degree of freedom of a fit with position sigmas (noise estimated)
// beyond which its note says the variances taken do not match the
// residuals: its sampling spread is sqrt(2/DOF), 0.09 on 240 readings.
const positionRatioLow, positionRatioHigh = 0.5, 2.0

// positionStep is the step of the central differences that give the
// model's gradient, m: a thousandth of the closest reading's distance from
// a line of 1 m, whose error (step over distance, squared) is far below
// what matters to a variance.
const positionStep = 1e-3

// PositionSigmaNote starts the note a fit with Settings.PositionSigmaPlan or
// PositionSigmaUp carries (Result.Notes): the positions' uncertainty entered
// each reading's variance.
const PositionSigmaNote = "position uncertainty in the reading variances"

// PositionSigmaShortNote is in the PositionSigmaNote of a fit whose
// readings miss it by over positionRatioHigh times the variance the noise
// and the positions explain: without it that whole variance holds the
// misfit (report judges such a fit's misfit against it).
const PositionSigmaShortNote = "the position sigmas may be too small, or the model misses"

// PositionSystematicNote ends the note of a fit with position sigmas whose
// residuals are correlated from reading to reading (SerialNotePrefix).
const PositionSystematicNote = "the residuals are correlated from reading to reading: position errors that are not independent from reading to reading (a shifted traverse, a drift, a chainage that stretches) are not this model, and the position sigmas neither cover nor mend them; check the positioning against marks"

// PositionSigmaRobustNote is the note of a fit given position sigmas and
// Robust: the position sigmas were not used.
const PositionSigmaRobustNote = "position sigmas not used with robust (Huber) weights"

// positioned reports whether the settings give the positions an
// uncertainty.
func (s *Settings) positioned() bool {
	return s.PositionSigmaPlan > 0 || s.PositionSigmaUp > 0
}

// positioned reports whether the settings or the problem's readings
// (Problem.PositionSigmas) give the positions an uncertainty.
func (f *fitter) positioned() bool {
	if f.set.positioned() {
		return true
	}
	for _, v := range f.prob.PositionSigmas {
		if v[0] > 0 || v[1] > 0 {
			return true
		}
	}
	return false
}

// positionSigmas returns the position sigmas of each of the n readings,
// m, east, north and up: the problem's own (Problem.PositionSigmas), each
// no smaller than the settings' (a floor; NaN, not logged, takes it),
// else the settings' alike for every reading.
func (f *fitter) positionSigmas(n int) ([][3]float64, error) {
	plan, up := f.set.PositionSigmaPlan, f.set.PositionSigmaUp
	own := f.prob.PositionSigmas
	if own != nil && len(own) != n {
		return nil, fmt.Errorf("inverse: %d readings but %d position sigmas", n, len(own))
	}
	sig := make([][3]float64, n)
	for i := range sig {
		p, u := plan, up
		if own != nil {
			if v := own[i][0]; v > p {
				p = v
			}
			if v := own[i][1]; v > u {
				u = v
			}
		}
		sig[i] = [3]float64{p, p, u}
	}
	return sig, nil
}

// uniformSigmas returns the sigmas plan, plan, up for each of n readings.
func uniformSigmas(n int, plan, up float64) [][3]float64 {
	sig := make([][3]float64, n)
	for i := range sig {
		sig[i] = [3]float64{plan, plan, up}
	}
	return sig
}

// sigmaSpan says the range of one axis's sigmas over the readings (j 0
// across the plan, 2 in height), each times scale, for a note: "0.3 m",
// or "0.02 to 0.4 m (median 0.02 m)".
func sigmaSpan(sig [][3]float64, j int, scale float64) string {
	v := make([]float64, len(sig))
	for i, s := range sig {
		v[i] = s[j] * scale
	}
	slices.Sort(v)
	if len(v) == 0 {
		return "0 m"
	}
	lo, hi, med := v[0], v[len(v)-1], v[len(v)/2]
	if hi-lo <= 1e-3*hi {
		return fmt.Sprintf("%.3g m", hi)
	}
	return fmt.Sprintf("%.3g to %.3g m (median %.3g m)", lo, hi, med)
}

// positionParts are the terms of positionVariance at the position sigmas
// given, per element of the separable's residuals (a reading axis, and
// part for AC): g the gradient times the sigma of each axis (east, north,
// up), h the curvature H_jj times its sigma squared, x the cross terms
// H_jk s_j s_k of the pairs (east, north), (east, up), (north, up). A
// scatter of sigma sqrt(t_j) s_j gives from them (scales)
//
//	variance sum_j t_j g_j^2 + 1/2 sum_j t_j^2 h_j^2 + sum_jk t_j t_k x_jk^2
//	mean     sum_j t_j h_j / 2
//
// so that the scatter's size can be taken from the residuals without
// evaluating the model again (positionScale).
type positionParts struct {
	g, h, x [][3]float64
	nr      int
}

// at returns the variance and the mean of element i at variance scales
// tp across the plan and tu in height.
func (pp *positionParts) at(i int, tp, tu float64) (v, mean float64) {
	t := [3]float64{tp, tp, tu}
	g, h, x := pp.g[i], pp.h[i], pp.x[i]
	for j := range 3 {
		v += t[j]*g[j]*g[j] + t[j]*t[j]*h[j]*h[j]/2
		mean += t[j] * h[j] / 2
	}
	v += t[0]*t[1]*x[0]*x[0] + t[0]*t[2]*x[1]*x[1] + t[1]*t[2]*x[2]*x[2]
	return v, mean
}

// scaled returns, at variance scales tp and tu, the variance per row (the
// mean over its parts: the weights are per row), the mean change per
// element (bias), and the gradient's shares and the curvature's variance
// per element, for positionSandwich.
func (pp *positionParts) scaled(tp, tu float64) (g2, bias []float64, grad [][3]float64, curv []float64) {
	n, nr := len(pp.g), pp.nr
	m := n / nr
	g2 = make([]float64, m)
	bias = make([]float64, n)
	grad = make([][3]float64, n)
	curv = make([]float64, n)
	s := [3]float64{math.Sqrt(tp), math.Sqrt(tp), math.Sqrt(tu)}
	for i := range n {
		v, b := pp.at(i, tp, tu)
		bias[i] = b
		g2[i/nr] += v / float64(nr)
		c := v
		for j := range 3 {
			grad[i][j] = pp.g[i][j] * s[j]
			c -= grad[i][j] * grad[i][j]
		}
		curv[i] = c
	}
	return g2, bias, grad, curv
}

// positionVariance returns, per row of the separable (a reading axis),
// the variance the positions' uncertainty adds to it at the fit x, nT^2:
// for a position error d of independent Gaussian axes of sd
// s = (plan, plan, up), the field's change g.d + d.H.d/2 (g and H the
// gradient and Hessian of the model's field: conductors, dipoles and a
// background gradient; a uniform background has none) has the variance
//
//	sum_j (g_j s_j)^2 + 1/2 sum_jk (H_jk s_j s_k)^2
//
// (the second term, of the curvature, is what remains where the gradient
// vanishes: the horizontal field right over a line, whose readings the
// first term alone weighted as exact). For AC the mean over the real and
// imaginary parts. Both by central differences. bias (m x nrhs, row-major)
// is the mean of that change, sum_j H_jj s_j^2 / 2: the field a reading
// logged at x has on average is the model's there plus bias (a scatter
// flattens and widens the anomaly). grad (per row and part) is the
// gradient times s, each axis's share of the first term, and curv the
// second term, for positionSandwich.
func (sp *separable) positionVariance(x []float64, plan, up float64) (g2, bias []float64, grad [][3]float64, curv []float64, err error) {
	pp, err := sp.positionParts(x, uniformSigmas(len(sp.pts), plan, up))
	if err != nil {
		return nil, nil, nil, nil, err
	}
	g2, bias, grad, curv = pp.scaled(1, 1)
	return g2, bias, grad, curv, nil
}

// positionParts returns the terms of positionVariance at the fit x for
// the sigmas sig of each reading (east, north, up; the readings' own,
// Problem.PositionSigmas, or the settings' alike for all).
func (sp *separable) positionParts(x []float64, sigs [][3]float64) (*positionParts, error) {
	if err := sp.evaluate(x); err != nil {
		return nil, err
	}
	m, nr := sp.m, sp.nrhs
	n := m * nr
	if len(sigs)*3 != m {
		return nil, fmt.Errorf("inverse: %d position sigmas for %d readings", len(sigs), m/3)
	}
	h := positionStep
	// sig: whether any reading has a sigma on the axis (1), else 0;
	// each element's own is sigs of its reading (element i: row i/nr,
	// reading i/nr/3).
	var sig [3]float64
	for _, s := range sigs {
		for j := range 3 {
			if s[j] > 0 {
				sig[j] = 1
			}
		}
	}
	of := func(i, j int) float64 { return sigs[i/nr/3][j] }
	at := func(d [3]float64) ([]float64, error) {
		out := make([]float64, n)
		return out, sp.modelShifted(d, out)
	}
	f0, err := at([3]float64{})
	if err != nil {
		return nil, err
	}
	pp := &positionParts{g: make([][3]float64, n), h: make([][3]float64, n), x: make([][3]float64, n), nr: nr}
	var fp, fm [3][]float64
	for j := range 3 {
		if !(sig[j] > 0) {
			continue
		}
		var d [3]float64
		d[j] = h
		if fp[j], err = at(d); err != nil {
			return nil, err
		}
		d[j] = -h
		if fm[j], err = at(d); err != nil {
			return nil, err
		}
	}
	pair := 0
	for j := range 3 {
		if !(sig[j] > 0) {
			pair += 2 - j
			continue
		}
		for i := range n {
			s := of(i, j)
			pp.g[i][j] = (fp[j][i] - fm[j][i]) / (2 * h) * s
			pp.h[i][j] = (fp[j][i] + fm[j][i] - 2*f0[i]) / (h * h) * s * s
		}
		for k := j + 1; k < 3; k, pair = k+1, pair+1 {
			if !(sig[k] > 0) {
				continue
			}
			var dpp, dpm, dmp, dmm []float64
			for _, c := range []struct {
				a, b float64
				out  *[]float64
			}{{h, h, &dpp}, {h, -h, &dpm}, {-h, h, &dmp}, {-h, -h, &dmm}} {
				var d [3]float64
				d[j], d[k] = c.a, c.b
				if *c.out, err = at(d); err != nil {
					return nil, err
				}
			}
			for i := range n {
				// Squared once in at: the two terms jk and kj of the sum.
				pp.x[i][pair] = (dpp[i] - dpm[i] - dmp[i] + dmm[i]) / (4 * h * h) * of(i, j) * of(i, k)
			}
		}
	}
	return pp, nil
}

// modelShifted writes into out (m x nrhs, row-major) the model's field at
// every reading moved by d, m, with the strengths of the separable's last
// evaluation and without a uniform background; readings walked along a
// path (Problem.Travel) move their path alike. The separable's positions
// and weights are left as they were.
func (sp *separable) modelShifted(d [3]float64, out []float64) error {
	shift := func(pts [][3]float64) [][3]float64 {
		if pts == nil {
			return nil
		}
		s := make([][3]float64, len(pts))
		for i, p := range pts {
			s[i] = [3]float64{p[0] + d[0], p[1] + d[1], p[2] + d[2]}
		}
		return s
	}
	pts, lo, hi, w := sp.pts, sp.ptsLo, sp.ptsHi, sp.w
	sp.pts, sp.ptsLo, sp.ptsHi, sp.w = shift(pts), shift(lo), shift(hi), nil
	m, q, nr := sp.m, sp.q, sp.nrhs
	phi := make([]float64, m*max(sp.g, 1)) // column-major, in the layout of sp.a
	err := sp.fillPhi(phi, 1, m, sp.pos)
	sp.pts, sp.ptsLo, sp.ptsHi, sp.w = pts, lo, hi, w
	if err != nil {
		return err
	}
	clear(out)
	for k := range nr {
		for c := range q {
			p := sp.pos[c]
			if p < 0 {
				continue
			}
			cc := sp.coef[c*nr+k]
			for row, v := range phi[p*m : (p+1)*m] {
				out[row*nr+k] += v * cc
			}
		}
	}
	return nil
}

// positionWeights refits the candidate c with each reading axis weighted
// by the inverse of its variance, the reading noise's and what the
// positions' uncertainty adds (positionVariance), to a fixed point: the
// weights s^2/(s^2 + g^2) (sqrt of them in the separable, as the robust
// weights). The position sigmas given are an upper bound: the size of the
// scatter the weights and the mean correction take is the one the
// residuals bear, up to the given (positionScale), and so is the reading
// noise s unless Problem.Sigma gives it. A stated sigma larger than the
// true scatter, taken as it stood, corrected the readings for a scatter
// that was not there (the correction grows as its square): in review
// 0.5 m stated over 0.2 m of scatter left depths 0.17 m shallow at 1.4 m,
// 8.6 sigma. The readings are corrected by the mean change the scatter
// makes (bias) at each round. The summary's sigma follows from the
// weighted fit as for any weights, its covariance from positionSandwich.
// It returns the note for the Result.
func (f *fitter) positionWeights(c *candidate) (string, error) {
	sp := c.sp
	n, k := c.counts()
	dof := n - k
	if dof <= 0 {
		return "", nil
	}
	sigs, err := f.positionSigmas(len(sp.pts))
	if err != nil {
		return "", err
	}
	// plan, up: the largest over the readings, for the note and to say
	// which axes carry a sigma.
	var plan, up float64
	for _, s := range sigs {
		plan, up = max(plan, s[0]), max(up, s[2])
	}
	// The reading noise: the given Problem.Sigma, else the one the
	// residuals bear beside the positions' share (positionScale), but no
	// more than the readings' own from their differences (noiseFloor),
	// which a field's curvature and a scatter of the true positions can
	// only raise: where the positions' share dominates the residuals set
	// the noise poorly (2 nT of noise under 200 nT of position misfit read
	// anywhere from 0.2 to 24 nT). With the noise estimated, the weighted
	// residuals scale the whole variance in the summary (its sigma over
	// this one).
	known := f.prob.Sigma > 0
	s2 := f.prob.Sigma * f.prob.Sigma
	plain := c.rss / float64(dof)
	if !known {
		s2 = plain
	}
	if !(s2 > 0) {
		return "", nil
	}
	floor2 := f.noiseFloor()
	floor2 *= floor2
	// The noise may not fall below a millionth of the plain fit's
	// variance, nor rise above it or the floor.
	s2lo, s2hi := 1e-6*plain, plain
	if floor2 > 0 && floor2 < s2hi {
		s2hi = floor2
	}
	if s2lo > s2hi {
		s2lo = s2hi
	}
	m := sp.m
	w := make([]float64, m)
	// The fit as it stands, for positionsRefused.
	x0, res0, rss0, w0 := slices.Clone(c.x), c.res, c.rss, sp.w
	// The separable's readings may be the survey's: corrected in a copy.
	y := sp.y
	sp.y = slices.Clone(y)
	sp.pd = nil
	tp, tu := 1.0, 1.0
	rounds := 0
	var pp *positionParts
	for rounds < positionRounds {
		rounds++
		var err error
		if pp, err = sp.positionParts(c.x, sigs); err != nil {
			return "", err
		}
		saved := sp.w
		res, err := sp.fullResiduals(c.x)
		sp.w = saved
		if err != nil {
			return "", err
		}
		tp, tu, s2 = positionScale(pp, res, dof, s2, known, s2lo, s2hi, plan > 0, up > 0)
		g2, bias, _, _ := pp.scaled(tp, tu)
		// The readings less the mean change the scatter makes (the
		// second-order bias of errors in the variables): the model is
		// fitted to what a reading at the logged place reads on average.
		moved := 0.0
		for i, b := range bias {
			moved = math.Max(moved, math.Abs(y[i]-b-sp.y[i]))
			sp.y[i] = y[i] - b
		}
		change := 0.0
		for row := range m {
			nw := s2 / (s2 + g2[row])
			change = math.Max(change, math.Abs(nw-w[row]))
			w[row] = nw
		}
		// At least one weighted fit: the weights start from none.
		if rounds > 1 && change < 1e-3 && moved < 1e-3*math.Sqrt(s2) {
			break
		}
		if err := f.refitWeighted(c, w); err != nil {
			return "", err
		}
	}
	// The terms at the fit, for the covariance (positionSandwich).
	pp, err = sp.positionParts(c.x, sigs)
	if err != nil {
		return "", err
	}
	g2, _, grad, curv := pp.scaled(tp, tu)
	// The displacements' correlation along the traverse (positionAR1),
	// from the residuals at the weighted fit.
	var prho float64
	var innov []float64
	if sp.nrhs == 1 {
		saved := sp.w
		res, err := sp.fullResiduals(c.x)
		sp.w = saved
		if err != nil {
			return "", err
		}
		starts := []int{0}
		if len(f.sv.pts)*3 == len(res) {
			starts = traverseStarts(f.sv.pts)
		}
		var ok bool
		if prho, innov, ok = positionAR1(res, grad, curv, s2, starts); !ok {
			prho, innov = 0, nil
		}
		if prho > 0 {
			// Displacements that wander: the fit's lines and
			// background take up their slow part (a shift or a tilt
			// of the whole traverse moves the line, not the residuals),
			// so the residuals cannot bear their size, and the
			// covariance takes the sigmas as given (an upper bound: the
			// uncertainties are then conservative). The weights and the
			// mean correction keep the scatter the residuals bear.
			_, _, grad, curv = pp.scaled(1, 1)
		}
	}
	if rho, ok := positionsRefused(sp, c.x, g2, s2, plain, floor2, prho, innov, f.sv.pts); ok {
		// The scatter taken holds a misfit that is not scatter: the
		// plain fit stands, and the note says why.
		sp.y, sp.w, sp.pd, sp.ok = y, w0, nil, false
		c.x, c.res, c.rss, c.memo = x0, res0, rss0, nil
		f.pos = nil
		if err := sp.evaluate(c.x); err != nil {
			return "", err
		}
		return fmt.Sprintf("%s: %.3g m across the plan, %.3g m in height given, %s: what the fit misses is smooth along the traverse (lag-1 autocorrelation %.2f of the residuals in units of their sigmas, against under %.2g for a scatter independent from reading to reading), as a conductor, a bend or an object left out of the model leaves it, and the positions' variance would have taken it up wherever the field's gradient is steep; the fit is judged, and its uncertainties given, as without them",
			PositionSigmaNote, plan, up, PositionSigmaRefusedNote, rho, positionSerialMax), nil
	}
	f.pos = &positionTerms{s2: s2, grad: grad, curv: curv, rho: prho, innov: innov}
	if err := sp.evaluate(c.x); err != nil {
		return "", err
	}
	note := fmt.Sprintf("%s: %.3g m across the plan, %.3g m in height", PositionSigmaNote, plan, up)
	hp, hu := plan*math.Sqrt(tp), up*math.Sqrt(tu)
	if f.prob.PositionSigmas != nil {
		// Per reading, from the log's columns: their range, and the
		// flag's as a floor.
		note = fmt.Sprintf("%s: each reading's own, from the log's position sigma columns: %s across the plan, %s in height", PositionSigmaNote, sigmaSpan(sigs, 0, 1), sigmaSpan(sigs, 2, 1))
		if f.set.positioned() {
			note += fmt.Sprintf(", none below the %.3g m and %.3g m given for the run", f.set.PositionSigmaPlan, f.set.PositionSigmaUp)
		}
		if hp < 0.95*plan || hu < 0.95*up {
			note += fmt.Sprintf("; the residuals bear %.2g and %.2g times these, taken for the weights and the mean correction (a larger value taken as it stood would over-correct the depths)", math.Sqrt(tp), math.Sqrt(tu))
		}
	} else if hp < 0.95*plan || hu < 0.95*up {
		note += fmt.Sprintf(" given, of which the residuals bear %.2g m and %.2g m, taken for the weights and the mean correction (a larger value taken as it stood would over-correct the depths)", hp, hu)
	}
	note += fmt.Sprintf(" (effective variance, %d rounds)", rounds)
	if prho > 0 {
		note += fmt.Sprintf("; %s (lag-1 autocorrelation %.2f of the displacements from reading to reading, as a receiver's fix wanders), which the uncertainties carry at the sigmas given", PositionWanderNote, prho)
	}
	// The weighted residuals against the variances taken: near 1 when the
	// position sigmas and the noise hold.
	if k := c.rss / float64(dof) / s2; !known && k < positionRatioLow {
		note += fmt.Sprintf("; the readings miss the fit by %.2g times what the noise from their differences and the position scatter taken explain, and the uncertainties are narrowed by that ratio", math.Sqrt(k))
	} else if !known && k > positionRatioHigh {
		what := "the full position sigmas given"
		if hp < 0.95*plan || hu < 0.95*up {
			what = "the position scatter taken"
		}
		note += fmt.Sprintf("; the readings miss the fit by %.2g times what the noise and %s explain: %s, and the uncertainties are widened by that ratio", math.Sqrt(k), what, PositionSigmaShortNote)
	}
	return note, nil
}

// PositionWanderNote is in the PositionSigmaNote of a fit whose residuals
// are the field's gradient times a displacement that wanders along the
// traverse (positionAR1): the positions' correlation is in its covariance
// (positionSandwich) and the position sigmas are kept although the
// residuals are smooth (positionsRefused).
const PositionWanderNote = "the readings' misfit follows the field's gradient times a displacement that wanders slowly along the traverse"

// PositionSigmaRefusedNote is in the PositionSigmaNote of a fit that
// refused the position sigmas (positionsRefused): the plain fit stands.
const PositionSigmaRefusedNote = "not used in this fit"

// positionSerialMax is the lag-1 autocorrelation of a position-weighted
// DC fit's residuals, in units of their sigmas, above which the misfit is
// not taken for the positions' scatter (positionsRefused): a scatter
// independent from reading to reading leaves it near 0 (0.17 at most in
// review, over 28 fits of a receiver's scatter of 0.02 to 0.4 m), a line
// left out of the model 0.86-0.89.
const positionSerialMax = 0.5

// positionRefuseMisfit is the least plain reduced chi-square, against the
// readings' noise floor (fitter.noiseFloor), of a fit whose position
// sigmas positionsRefused may refuse: below it the positions' share
// changes little and is kept.
const positionRefuseMisfit = 4

// positionsRefused reports whether a DC fit weighted by the positions'
// variance g2 (per row) beside the noise s2, at x, takes for position
// scatter a misfit that does not follow it from reading to reading, and
// the lag-1 autocorrelation of its residuals in units of their sigmas.
// The variance-component fit (positionScale) takes any misfit for
// scatter wherever the gradient is steep: in review an unmodelled 20 A
// line crossing a 25 A cable (positions exact, 0.02 m given) left the
// plain fit poor at 24.01 ± 0.50 A, and the weighted one "sound" at
// 23.68 ± 0.23 A, 5.7 sigma off, its rms 10 times the noise. Position
// scatter, independent from reading to reading, leaves residuals that are
// too; a conductor left out leaves them smooth. Refused when the lag-1
// autocorrelation exceeds positionSerialMax, the plain fit missed by
// positionRefuseMisfit times the noise floor's variance and the positions
// carry more of the variance than the noise does.
func positionsRefused(sp *separable, x, g2 []float64, s2, plain, floor2, prho float64, innov []float64, pts [][3]float64) (float64, bool) {
	if sp.nrhs != 1 || !(floor2 > 0) || !(plain > positionRefuseMisfit*floor2) {
		return 0, false
	}
	share := 0.0
	for _, g := range g2 {
		share += g
	}
	if !(share > s2*float64(len(g2))) {
		return 0, false
	}
	saved := sp.w
	res, err := sp.fullResiduals(x)
	sp.w = saved
	if err != nil || len(res) != len(g2) {
		return 0, false
	}
	z := make([]float64, len(res))
	for i, r := range res {
		z[i] = r / math.Sqrt(s2+g2[i])
	}
	rho, _ := lag1(z, 3)
	if !(rho > positionSerialMax) {
		return rho, false
	}
	// Smooth, but perhaps as displacements that wander along the
	// traverse leave it (positionAR1): kept when the filter's
	// innovations at the correlation found are no longer smooth and
	// no larger than the noise and the positions explain.
	if prho > 0 && len(innov) == len(res) {
		starts := []int{0}
		if len(pts)*3 == len(res) {
			starts = traverseStarts(pts)
		}
		ir, _ := lag1Within(innov, 3, starts)
		if ir <= positionSerialMax && sumSq(innov)/float64(len(innov)) <= positionRatioHigh*s2 {
			return rho, false
		}
	}
	return rho, true
}

// positionScale returns the variance scales tp and tu, each in [0, 1],
// of the position sigmas across the plan and in height, and the reading
// noise variance s2 in [s2lo, s2hi] (kept as given when known), that best
// explain the residuals res (rows of pp.nr parts) as Gaussian of variance
// s2 + the positions' share at those scales (pp): variance components by
// likelihood, minimising
//
//	sum_rows sum_parts r^2/V + (dof/n) log V
//
// (the factor dof/n, so that a common scale of V comes out where the
// weighted residuals count the degrees of freedom, not the readings: the
// fit has taken k of them), by golden sections on sqrt(tp), sqrt(tu) and
// log s2 in turn. Only the variances are matched, not the mean change,
// which the fit's parameters absorb alike. fitP, fitU say which sigmas
// were given (the other scale is left at 1, its terms being zero).
func positionScale(pp *positionParts, res []float64, dof int, s2 float64, known bool, s2lo, s2hi float64, fitP, fitU bool) (tp, tu, s2out float64) {
	nr := pp.nr
	n := len(res)
	m := n / nr
	// Per row: the squared residuals over its parts and the variance's
	// coefficients in tp, tu, tp^2, tu^2, tp tu (the mean over parts).
	rr := make([]float64, m)
	co := make([][5]float64, m)
	for i := range n {
		row := i / nr
		rr[row] += res[i] * res[i]
		g, h, x := pp.g[i], pp.h[i], pp.x[i]
		c := &co[row]
		c[0] += (g[0]*g[0] + g[1]*g[1]) / float64(nr)
		c[1] += g[2] * g[2] / float64(nr)
		c[2] += ((h[0]*h[0]+h[1]*h[1])/2 + x[0]*x[0]) / float64(nr)
		c[3] += h[2] * h[2] / 2 / float64(nr)
		c[4] += (x[1]*x[1] + x[2]*x[2]) / float64(nr)
	}
	cl := float64(dof) / float64(n) * float64(nr)
	nll := func(ap, au, ls float64) float64 {
		tp, tu, s2 := ap*ap, au*au, math.Exp(ls)
		t := 0.0
		for row, c := range co {
			v := s2 + c[0]*tp + c[1]*tu + c[2]*tp*tp + c[3]*tu*tu + c[4]*tp*tu
			t += rr[row]/v + cl*math.Log(v)
		}
		return t
	}
	// golden minimises g over [lo, hi], the ends included.
	golden := func(g func(float64) float64, lo, hi, tol float64) float64 {
		const r = 0.6180339887498949
		a, b := lo, hi
		x1, x2 := b-r*(b-a), a+r*(b-a)
		f1, f2 := g(x1), g(x2)
		for b-a > tol {
			if f1 < f2 {
				b, x2, f2 = x2, x1, f1
				x1 = b - r*(b-a)
				f1 = g(x1)
			} else {
				a, x1, f1 = x1, x2, f2
				x2 = a + r*(b-a)
				f2 = g(x2)
			}
		}
		best, fb := (a+b)/2, g((a+b)/2)
		for _, e := range []float64{lo, hi} {
			if fe := g(e); fe < fb {
				best, fb = e, fe
			}
		}
		return best
	}
	ap, au := 1.0, 1.0
	ls := math.Log(min(max(s2, s2lo), s2hi))
	if known {
		ls = math.Log(s2)
	}
	llo, lhi := math.Log(s2lo), math.Log(s2hi)
	for range 6 {
		p0, u0, l0 := ap, au, ls
		if fitP {
			ap = golden(func(a float64) float64 { return nll(a, au, ls) }, 0, 1, 1e-3)
		}
		if fitU {
			au = golden(func(a float64) float64 { return nll(ap, a, ls) }, 0, 1, 1e-3)
		}
		if !known && lhi > llo {
			ls = golden(func(l float64) float64 { return nll(ap, au, l) }, llo, lhi, 1e-3)
		}
		if math.Abs(ap-p0) < 2e-3 && math.Abs(au-u0) < 2e-3 && math.Abs(ls-l0) < 2e-3 {
			break
		}
	}
	return ap * ap, au * au, math.Exp(ls)
}

// noiseWithPositions returns the reading noise variance s2 that makes
// the residuals res (rows of nr parts) consistent with the variances
// s2 + g2[row]: the root of sum r^2/(s2 + g2) = dof, found by bisection on
// log s2 (the sum falls as s2 grows), and whether it lies below s2min, in
// which case s2min is returned (the residuals are smaller than the
// positions alone explain).
func noiseWithPositions(res, g2 []float64, nr, dof int, s2min float64) (s2 float64, floored bool) {
	sum := func(s2 float64) float64 {
		var t float64
		for row, g := range g2 {
			for k := range nr {
				r := res[row*nr+k]
				t += r * r / (s2 + g)
			}
		}
		return t
	}
	d := float64(dof)
	if sum(s2min) <= d {
		return s2min, true
	}
	hi := 0.0
	for _, r := range res {
		hi += r * r
	}
	hi /= d // sum(hi) <= dof: at s2 = RSS/dof without g2 the sum is dof
	if !(hi > s2min) {
		return s2min, true
	}
	lo := s2min
	for range 100 {
		mid := math.Sqrt(lo * hi)
		if sum(mid) > d {
			lo = mid
		} else {
			hi = mid
		}
		if hi/lo < 1+1e-6 {
			break
		}
	}
	return math.Sqrt(lo * hi), false
}

// positionTerms are what positionWeights leaves for the covariance: the
// reading noise variance s2, nT^2, and per row (and part) the gradient's
// shares grad and the curvature's variance curv (positionVariance).
type positionTerms struct {
	s2   float64
	grad [][3]float64
	curv []float64
	// rho is the lag-1 correlation of the displacements along a traverse
	// (positionAR1; 0 for independent ones), innov the filter's whitened
	// innovations at it (nT, 3 per reading), for the serial factor.
	rho   float64
	innov []float64
}

// positionSandwich returns the covariance of the parameters of a DC fit
// weighted by positionWeights (weights w, sqrt in the separable), taking
// the whole covariance of each reading's three axes, not only the
// variances the weights stand for: one position error moves all three
// axes of a reading together, by grad.d, which diagonal weights cannot
// express. With J the weighted Jacobian,
//
//	cov = A^-1 B A^-1,  A = J^T J,  B = J^T W^1/2 V W^1/2 J
//
// V block-diagonal by reading: s2 I + G G^T + diag(curv), G the 3 x 3
// gradient times the sigmas (the sandwich of a weighted least-squares fit
// whose weights are not the inverse of the data's covariance; the same
// form as huberCovariance and serialSandwich). In review a height scatter
// of 0.15 m over a line left depth pulls of RMS 1.47 with the diagonal
// variances alone, 1.06 with the sandwich (100 draws). a0 is A^-1 (the covariance
// from the weighted fit over its noise variance). nil when the fit is not
// DC or the sizes do not match.
func (f *fitter) positionSandwich(c *candidate, a0 *mat.SymDense) (*mat.SymDense, error) {
	sp, pt := c.sp, f.pos
	if pt == nil || sp.nrhs != 1 || sp.w == nil {
		return nil, nil
	}
	a, rows, k, err := sp.fullJacobianCols(c.x)
	if err != nil {
		return nil, err
	}
	if rows != sp.m || rows%3 != 0 || k != a0.SymmetricDim() || len(pt.grad) != rows {
		return nil, nil
	}
	w := sp.w
	// B = sum over readings of J_i^T W^1/2 (s2 I + diag(curv)) W^1/2 J_i,
	// J_i the reading's three rows, plus the displacements' part: with
	// a_ij = J_i^T W^1/2 G_i[:, j] (position axis j), sum over the pairs
	// of readings i, l of one traverse of rho^|i-l| a_ij a_lj^T, taken as
	// sum_i (a_i b_i^T + b_i a_i^T - a_i a_i^T) with b_i = a_i + rho b_(i-1)
	// (rho 0: each reading's own G G^T, independent displacements).
	b := mat.NewSymDense(k, nil)
	n := rows / 3
	starts := []int{0}
	if len(f.sv.pts) == n {
		starts = traverseStarts(f.sv.pts)
	}
	// av[(i*k+p)*3+j]: a_ij's element p for reading i.
	av := make([]float64, n*k*3)
	for i := range n {
		for p := range k {
			col := a[p*rows+3*i:]
			for j := range 3 {
				t := 0.0
				for r := range 3 {
					t += col[r] * w[3*i+r] * pt.grad[3*i+r][j]
				}
				av[(i*k+p)*3+j] = t
			}
		}
	}
	for t, s := range starts {
		e := n
		if t+1 < len(starts) {
			e = starts[t+1]
		}
		if pt.rho > 0 && e > s {
			// A displacement common to the whole traverse moves
			// the line with the readings, and the depths below the
			// logged sensors and the currents not at all: the
			// displacements are taken about their traverse's mean
			// (sum_i a_i (d_i - mean d) = sum_i (a_i - mean a) d_i).
			// Independent ones (rho 0) keep the whole, as before.
			for q := range k * 3 {
				m := 0.0
				for i := s; i < e; i++ {
					m += av[i*k*3+q]
				}
				m /= float64(e - s)
				for i := s; i < e; i++ {
					av[i*k*3+q] -= m
				}
			}
		}
		bij := make([]float64, k*3)
		for i := s; i < e; i++ {
			ai := av[i*k*3 : (i+1)*k*3]
			for q := range bij {
				bij[q] = ai[q] + pt.rho*bij[q]
			}
			for p := range k {
				col := a[p*rows+3*i:]
				for q := 0; q <= p; q++ {
					colq := a[q*rows+3*i:]
					v := 0.0
					for r := range 3 {
						v += col[r] * colq[r] * w[3*i+r] * w[3*i+r] * (pt.s2 + pt.curv[3*i+r])
					}
					for j := range 3 {
						v += ai[p*3+j]*bij[q*3+j] + bij[p*3+j]*ai[q*3+j] - ai[p*3+j]*ai[q*3+j]
					}
					b.SetSym(q, p, b.At(q, p)+v)
				}
			}
		}
	}
	var tmp, out mat.Dense
	tmp.Mul(a0, b)
	out.Mul(&tmp, a0)
	cov := mat.NewSymDense(k, nil)
	for p := range k {
		for q := p; q < k; q++ {
			cov.SetSym(p, q, (out.At(p, q)+out.At(q, p))/2)
		}
	}
	return cov, sp.evaluate(c.x)
}
