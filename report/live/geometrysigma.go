package live

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// A commissioned geometry is itself an estimate, fitted to the mean
// readings of the first minutes, and every later window's currents are
// solved with it held: its error moves every window's currents alike. Its
// covariance is found once, when it is fitted (geometryCovariance), and
// carried into each window's current and phase sigmas by the delta method
// (geometryShifts, processor.geometrySigmas): the currents solved with the
// geometry moved one sigma either way along each principal axis of that
// covariance give, by central differences, the currents' derivatives
// along the axis, and sum(lambda_j (dI/dv_j)^2) is the variance the
// geometry adds (Gauss's law of error propagation; the first-order,
// delta-method covariance J C J^T). It is added to the window's noise
// variance and also given apart (ConductorEstimate.CurrentSigmaGeometry):
// it is common to all windows, so it does not average away over windows,
// and a difference between windows (a step, a trend) should not count it.

// geometryUncertainty is the covariance of a commissioned geometry's
// parameters, stored with it in uc_state.
type geometryUncertainty struct {
	// Groups are the conductors (indices into the stored conductors)
	// fitted as one: a line of its own (one index; 4 parameters: its
	// shift across its direction and the tilt of its direction, each
	// along two axes across it) or a go-and-return pair held at the
	// spacing of the site file's points (two indices; 5 parameters: those
	// of its centre line and the turn of the axis through its cores about
	// it); see fitGroup.at.
	Groups [][]int `json:"groups"`
	// Covariance is that of the groups' parameters, in their order, m and
	// radians: (J' W J)^-1 of the commissioning fit, J the derivatives of
	// its weighted residuals with every current and the background fitted
	// again (variable projection, Golub & Pereyra 1973), multiplied by
	// Scale.
	Covariance [][]float64 `json:"covariance"`
	// Scale is the commissioning fit's reduced chi-square when above 1
	// (or when the readings' noise was not given), else 1: a fit that
	// misses its readings by more than their noise has its geometry known
	// that much less well.
	Scale float64 `json:"scale"`
}

// conductorGroups groups the commissioned conductors as they were
// fitted: each pair held at its spacing (ConductorConfig.heldPair) is one
// group, every other line a group of its own. Segments are refused: a
// commissioned geometry is of lines.
func conductorGroups(conds []ConductorConfig) ([][]int, error) {
	var groups [][]int
	pair := map[int]int{} // heldPair -> group
	for i, c := range conds {
		if c.Kind != "" && c.Kind != "line" {
			return nil, fmt.Errorf("conductor %q is a %s, not a line", c.Name, c.Kind)
		}
		if c.heldPair > 0 {
			if g, ok := pair[c.heldPair]; ok {
				groups[g] = append(groups[g], i)
				continue
			}
			pair[c.heldPair] = len(groups)
		}
		groups = append(groups, []int{i})
	}
	for _, g := range groups {
		if conds[g[0]].heldPair > 0 && len(g) != 2 {
			return nil, fmt.Errorf("conductor %q: a held pair of %d conductors", conds[g[0]].Name, len(g))
		}
	}
	return groups, nil
}

// groupGeometry returns the groups of conds as fitGroups: a line through
// its point along its direction; a pair's centre, the first core's
// direction, the axis from the second core to the first and their
// spacing. sign[i] is +1 when conductor i points along its group's
// direction, else -1.
func groupGeometry(conds []ConductorConfig, groups [][]int) ([]fitGroup, []float64, error) {
	out := make([]fitGroup, len(groups))
	sign := make([]float64, len(conds))
	for gi, g := range groups {
		a := conds[g[0]]
		d := unit(a.Direction)
		if norm(d) == 0 {
			return nil, nil, fmt.Errorf("conductor %q has no direction", a.Name)
		}
		if len(g) == 1 {
			out[gi] = fitGroup{c: a.Point, d: d}
		} else {
			b := conds[g[1]]
			u := perp(sub(a.Point, b.Point), d)
			sp := norm(u)
			if sp < 1e-6 {
				return nil, nil, fmt.Errorf("conductors %q and %q coincide", a.Name, b.Name)
			}
			out[gi] = fitGroup{c: scale(add(a.Point, b.Point), 0.5), d: d, u: unit(u), sp: sp}
		}
		for _, i := range g {
			sign[i] = 1
			if dot(conds[i].Direction, d) < 0 {
				sign[i] = -1
			}
		}
	}
	return out, sign, nil
}

// shiftGeometry returns conds with their groups moved by the parameters x
// (fitGroup.at, the groups' parameters in order).
func shiftGeometry(conds []ConductorConfig, groups [][]int, base []fitGroup, sign []float64, x []float64) []ConductorConfig {
	out := append([]ConductorConfig(nil), conds...)
	o := 0
	for gi, g := range groups {
		np := base[gi].nparam()
		m := base[gi].at(x[o : o+np])
		o += np
		if len(g) == 1 {
			out[g[0]].Point, out[g[0]].Direction = m.c, scale(m.d, sign[g[0]])
			continue
		}
		out[g[0]].Point, out[g[0]].Direction = add(m.c, scale(m.u, m.sp/2)), scale(m.d, sign[g[0]])
		out[g[1]].Point, out[g[1]].Direction = add(m.c, scale(m.u, -m.sp/2)), scale(m.d, sign[g[1]])
	}
	return out
}

// geometryCovariance is the covariance of the commissioned conductors'
// geometry fitted to the commissioning readings in: the inverse of the
// Fisher information J' W J, J the derivatives (central differences, 1e-6
// m and rad) of the readings' residuals divided by their sigmas, with
// every current and the background fitted again at each step (the
// covariance of the nonlinear parameters of a separable least-squares
// problem; Golub & Pereyra 1973), scaled by the fit's reduced chi-square
// when that is above 1 (or when in gives no sigma). The fit is taken to be
// at its least squares: the conductors are those fitted to in.
func geometryCovariance(in *SolveInput, conds []ConductorConfig) (*geometryUncertainty, error) {
	groups, err := conductorGroups(conds)
	if err != nil {
		return nil, err
	}
	base, sign, err := groupGeometry(conds, groups)
	if err != nil {
		return nil, err
	}
	n := len(in.Points)
	sig := in.Sigmas
	known := len(sig) == n && n > 0
	if !known {
		s := in.Sigma
		known = s > 0
		if !known {
			s = 1
		}
		sig = make([]float64, n)
		for i := range sig {
			sig[i] = s
		}
	}
	np := 0
	for _, g := range base {
		np += g.nparam()
	}
	nlin := 0 // currents and background, each part
	resid := func(x []float64) ([]float64, error) {
		est, err := NewInverseEstimator("", shiftGeometry(conds, groups, base, sign, x))
		if err != nil {
			return nil, err
		}
		A, Y, _, err := est.(*inverseEstimator).weightedSystem(in, sig)
		if err != nil {
			return nil, err
		}
		var qr mat.QR
		qr.Factorize(A)
		var coef, pred mat.Dense
		if err := qr.SolveTo(&coef, false, Y); err != nil {
			return nil, fmt.Errorf("the currents cannot be separated with these readings: %w", err)
		}
		pred.Mul(A, &coef)
		m, nr := Y.Dims()
		_, q := A.Dims()
		nlin = q * nr
		r := make([]float64, 0, m*nr)
		for i := range m {
			for k := range nr {
				r = append(r, Y.At(i, k)-pred.At(i, k))
			}
		}
		return r, nil
	}
	x := make([]float64, np)
	r0, err := resid(x)
	if err != nil {
		return nil, err
	}
	const h = 1e-6 // m and rad
	J := mat.NewDense(len(r0), np, nil)
	for j := range np {
		x[j] = h
		rp, err := resid(x)
		if err != nil {
			return nil, err
		}
		x[j] = -h
		rm, err := resid(x)
		if err != nil {
			return nil, err
		}
		x[j] = 0
		for i := range r0 {
			J.Set(i, j, (rp[i]-rm[i])/(2*h))
		}
	}
	dof := len(r0) - nlin - np
	if dof <= 0 {
		return nil, fmt.Errorf("%d readings for %d unknowns", len(r0), nlin+np)
	}
	var info mat.SymDense
	info.SymOuterK(1, J.T())
	var ch mat.Cholesky
	if !ch.Factorize(&info) {
		return nil, fmt.Errorf("the readings do not determine the geometry (its information matrix is singular)")
	}
	var cov mat.SymDense
	if err := ch.InverseTo(&cov); err != nil {
		return nil, err
	}
	scaleBy := 1.0
	if red := dot2(r0) / float64(dof); red > 1 || !known {
		scaleBy = red
	}
	u := &geometryUncertainty{Groups: groups, Scale: scaleBy}
	for i := range np {
		row := make([]float64, np)
		for j := range np {
			row[j] = cov.At(i, j) * scaleBy
		}
		u.Covariance = append(u.Covariance, row)
	}
	return u, nil
}

// geometryShift is one principal axis of a geometry's covariance: the
// estimators of the geometry moved step along it and back, and f, the
// axis's one sigma over twice step, which turns the difference of their
// currents into the currents' change over one sigma.
type geometryShift struct {
	plus, minus Estimator
	f           float64
}

// maxShiftStep is the largest step (m and rad) geometryShifts moves the
// geometry by: the currents' derivatives are taken over one sigma, or
// over this where the sigma is larger (a geometry known that poorly is
// well beyond the first-order propagation anyway).
const maxShiftStep = 1e-3

// geometryShifts returns the principal axes of u's covariance as
// estimators of conds moved along them (newEst builds them, for mode).
func geometryShifts(newEst NewEstimatorFunc, mode string, conds []ConductorConfig, u *geometryUncertainty) ([]geometryShift, error) {
	if u == nil {
		return nil, nil
	}
	base, sign, err := groupGeometry(conds, u.Groups)
	if err != nil {
		return nil, err
	}
	np := 0
	for _, g := range u.Groups {
		for _, i := range g {
			if i < 0 || i >= len(conds) {
				return nil, fmt.Errorf("stored geometry uncertainty names conductor %d of %d", i+1, len(conds))
			}
		}
	}
	for _, g := range base {
		np += g.nparam()
	}
	if len(u.Covariance) != np {
		return nil, fmt.Errorf("stored geometry uncertainty has %d parameters, the geometry %d", len(u.Covariance), np)
	}
	c := mat.NewSymDense(np, nil)
	for i, row := range u.Covariance {
		if len(row) != np {
			return nil, fmt.Errorf("stored geometry uncertainty: row %d has %d values, want %d", i+1, len(row), np)
		}
		for j := i; j < np; j++ {
			c.SetSym(i, j, (row[j]+u.Covariance[j][i])/2)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(c, true) {
		return nil, fmt.Errorf("stored geometry uncertainty: no eigen-decomposition")
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	var out []geometryShift
	for j, l := range vals {
		if !(l > 0) || math.IsInf(l, 0) {
			continue
		}
		s := math.Sqrt(l)
		step := math.Min(s, maxShiftStep)
		x := make([]float64, np)
		for i := range np {
			x[i] = step * vecs.At(i, j)
		}
		plus, err := newEst(mode, shiftGeometry(conds, u.Groups, base, sign, x))
		if err != nil {
			return nil, err
		}
		for i := range x {
			x[i] = -x[i]
		}
		minus, err := newEst(mode, shiftGeometry(conds, u.Groups, base, sign, x))
		if err != nil {
			return nil, err
		}
		out = append(out, geometryShift{plus: plus, minus: minus, f: s / (2 * step)})
	}
	return out, nil
}

// geometrySigmas returns, for the window's readings in, each conductor's
// current sigma (A) and, for AC, phase sigma (degrees) from the error of
// the held geometry: sqrt(sum over the principal axes of the squared
// change of the current over one sigma along the axis); and the
// currents' covariance from it, A^2 (the sum over the axes of the
// products of two conductors' changes: one axis moves every current at
// once). It returns nils when no shifts are set or a shifted solve
// fails.
func (p *processor) geometrySigmas(in *SolveInput, n int) (cur, phase []float64, cov [][]float64) {
	if len(p.shifts) == 0 {
		return nil, nil, nil
	}
	cur = make([]float64, n)
	cov = make([][]float64, n)
	for i := range cov {
		cov[i] = make([]float64, n)
	}
	d := make([]float64, n)
	for _, s := range p.shifts {
		a, err := s.plus.Solve(in)
		if err != nil || len(a.Current) != n {
			return nil, nil, nil
		}
		b, err := s.minus.Solve(in)
		if err != nil || len(b.Current) != n {
			return nil, nil, nil
		}
		ac := len(a.Phase) == n && len(b.Phase) == n
		if ac && phase == nil {
			phase = make([]float64, n)
		}
		for i := range n {
			d[i] = s.f * (a.Current[i] - b.Current[i])
		}
		for i := range n {
			cur[i] += d[i] * d[i]
			for j := range n {
				cov[i][j] += d[i] * d[j]
			}
			if ac {
				dp := math.Remainder(a.Phase[i]-b.Phase[i], 360) * s.f
				phase[i] += dp * dp
			}
		}
	}
	for i := range cur {
		cur[i] = math.Sqrt(cur[i])
		if phase != nil {
			phase[i] = math.Sqrt(phase[i])
		}
	}
	return cur, phase, cov
}
