package inverse

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// summary is the uncertainty analysis of a candidate fit.
type summary struct {
	lines      []SourceEstimate
	cov        *mat.SymDense // scaled by sigma^2
	unresolved []bool
	pairs      []PairEstimate
	flip       []bool // lines whose Dir is reversed from their geometry (azimuth in [0, 180))
	names      []string
	v          []float64 // full parameter vector: free geometry, then strengths per rhs
	sigma      float64
	dof        int
	chi2       float64
	zref       float64
	refName    string
	// rho is the lag-1 autocorrelation of a DC fit's residuals along the
	// readings, and widen the variance factor the first line's current
	// took for it (serialSandwich; the greatest of the sources' parameters
	// when there is no line; 1 when not widened); widenLo and widenHi are
	// the least and greatest factors of the sources' resolved parameters.
	rho, widen, widenLo, widenHi float64
	// under holds each line's station point (where it crosses the traverse in
	// plan, or under the readings' centroid: stationAlong), its depth and the
	// depth's sigma, which report gives the Result in
	// place of the lines' Point, Depth and DepthSigma.
	under []underPoint
}

// underPoint is a line's station point: where it crosses the traverse in plan,
// or under the readings' centroid (see summary.under, stationAlong).
type underPoint struct {
	point             [3]float64
	depth, depthSigma float64
	// crossing is true when point is where the line crosses the traverse's
	// track in plan (survey.stationAlong), not under the centroid.
	crossing bool
}

// reorder sorts the candidate's lines by decreasing current magnitude so that results
// list the strongest first.
func (f *fitter) reorder(c *candidate) error {
	sp := c.sp
	if err := sp.evaluate(c.x); err != nil {
		return err
	}
	nl, nr := len(sp.geom), sp.nrhs
	var magBuf [8]float64 // on the stack for up to 8 lines
	var idxBuf [8]int
	mag, idx := magBuf[:0], idxBuf[:0]
	for l := range nl {
		var m float64
		for k := range nr {
			m += sp.coef[l*nr+k] * sp.coef[l*nr+k]
		}
		mag = append(mag, m)
		idx = append(idx, l)
	}
	byDecreasing(idx, mag)
	same := true
	for i, j := range idx {
		same = same && i == j
	}
	if same {
		return nil
	}
	return c.permute(idx)
}

// byDecreasing sorts the indices idx by decreasing mag[idx[i]], keeping the order of
// equal ones: the permutation sort.SliceStable gives (by insertion, as it sorts up to
// 20 elements), without its allocations.
func byDecreasing(idx []int, mag []float64) {
	for i := 1; i < len(idx); i++ {
		for j := i; j > 0 && mag[idx[j]] > mag[idx[j-1]]; j-- {
			idx[j], idx[j-1] = idx[j-1], idx[j]
		}
	}
}

// summarise computes the covariance from the full Jacobian at the solution and the
// reported quantities of every line with their one-sigma uncertainties (delta method).
// The lines are listed strongest first (reorder); a go-and-return pair the data do
// not separate (PairEstimate) among three or more lines is ranked as one conductor,
// by the field it makes (pairRank), its lines side by side.
//
// A fit is often summarised more than once (by the count's guard, the pair checks and
// the final report): the summary is kept with the candidate (summaryMemo) and a copy
// of it returned while the fit is unchanged.
func (f *fitter) summarise(c *candidate) (*summary, error) {
	if m := c.memo; m != nil && !summaryMemoOff && m.holds(f, c) {
		// The callers expect the separable evaluated at the fit, as reorder leaves it.
		if err := c.sp.evaluate(c.x); err != nil {
			return nil, err
		}
		return m.su.clone(), nil
	}
	c.memo = nil
	su, err := f.summariseOrdered(c)
	if err != nil {
		return nil, err
	}
	c.memo = &summaryMemo{x: slices.Clone(c.x), sp: c.sp, w: c.sp.w, noPairs: c.noPairs, splitting: f.splitting, su: su.clone()}
	return su, nil
}

// summariseFinal is summarise for a fit's last use, its report: the memo's summary is
// handed over rather than copied, and a summary made afresh is not kept.
func (f *fitter) summariseFinal(c *candidate) (*summary, error) {
	if m := c.memo; m != nil && !summaryMemoOff && m.holds(f, c) {
		if err := c.sp.evaluate(c.x); err != nil {
			return nil, err
		}
		c.memo = nil
		return m.su, nil
	}
	c.memo = nil
	return f.summariseOrdered(c)
}

// summariseOrdered is summarise without the memo.
func (f *fitter) summariseOrdered(c *candidate) (*summary, error) {
	if err := f.reorder(c); err != nil {
		return nil, err
	}
	su, err := f.summariseAsIs(c)
	if err != nil {
		return nil, err
	}
	if len(su.pairs) > 0 && len(su.lines) >= 3 {
		if idx := pairRank(su, f.sv.zmean); idx != nil {
			if err := c.permute(idx); err != nil {
				return nil, err
			}
			if su, err = f.summariseAsIs(c); err != nil {
				return nil, err
			}
		}
	}
	if idx := f.foundFirst(su, len(c.sp.geom)); len(idx) > 0 {
		if err := c.permute(idx); err != nil {
			return nil, err
		}
		return f.summariseAsIs(c)
	}
	return su, nil
}

// foundFirst returns the order that lists the nl lines whose current the data resolve
// (beyond the guard's currentK sigmas, or in a pair: see PairEstimate) before those
// whose current they do not, each in its present order, or nil when the first line's
// current is resolved or no line's is. The strongest line is the conductor the
// report follows, and a line whose current is not resolved can carry any current:
// two lines forced on one cable (Settings.Count) put one 33 m down with -54 ± 62 A,
// listed before the cable's 19.992 ± 0.050 A, and the traverse was reported as
// having no current.
func (f *fitter) foundFirst(su *summary, nl int) []int {
	if nl < 2 {
		return nil
	}
	inPair := make([]bool, len(su.lines))
	for _, pe := range su.pairs {
		inPair[pe.Lines[0]], inPair[pe.Lines[1]] = true, true
	}
	k := f.currentK()
	found := func(i int) bool {
		e := &su.lines[i]
		return e.Kind == "line" && (inPair[i] || e.Identifiable.Current && math.Abs(e.Current) > k*e.CurrentSigma)
	}
	if found(0) {
		return nil
	}
	var yes, no []int
	for i := range nl {
		if found(i) {
			yes = append(yes, i)
		} else {
			no = append(no, i)
		}
	}
	if len(yes) == 0 {
		return nil
	}
	return append(yes, no...)
}

// summaryMemoOff turns the memo off (for tests that compare fits with and without it).
var summaryMemoOff bool

// summaryMemo is a candidate's last summary and what it depends on besides the fitter's
// survey and settings: the parameters, the separable (its lines' order and bounds go
// with the parameters), the robust weights, whether pairs are looked for, and whether
// the fitter was taking a split pair's sigmas.
type summaryMemo struct {
	x                  []float64
	sp                 *separable
	w                  []float64
	noPairs, splitting bool
	su                 *summary
}

// holds reports whether the memo is the summary of c as it is now.
func (m *summaryMemo) holds(f *fitter, c *candidate) bool {
	return m.sp == c.sp && m.noPairs == c.noPairs && m.splitting == f.splitting &&
		len(m.w) == len(c.sp.w) && (len(m.w) == 0 || &m.w[0] == &c.sp.w[0]) &&
		slices.Equal(m.x, c.x)
}

// clone returns a copy of su that shares no memory with it.
func (su *summary) clone() *summary {
	out := *su
	if su.cov != nil {
		out.cov = mat.NewSymDense(su.cov.SymmetricDim(), nil)
		out.cov.CopySym(su.cov)
	}
	out.lines = slices.Clone(su.lines)
	for i := range out.lines {
		out.lines[i].Notes = slices.Clone(out.lines[i].Notes)
	}
	out.pairs = slices.Clone(su.pairs)
	for i := range out.pairs {
		out.pairs[i].Notes = slices.Clone(out.pairs[i].Notes)
	}
	out.unresolved = slices.Clone(su.unresolved)
	out.under = slices.Clone(su.under)
	out.flip = slices.Clone(su.flip)
	out.names = slices.Clone(su.names)
	out.v = slices.Clone(su.v)
	return &out
}

// pairRank returns the order in which the lines of su are to be listed when its
// unresolved pairs are ranked as conductors, or nil when that is their order already.
// A line ranks by its current; a pair by its net current plus its current times
// spacing over its centre's depth below the sensors (the line current whose field at
// that depth matches the pair's line dipole's), its lines together, the one with the
// larger current first. The lines of a pair fitted collapsed carry thousands of
// amperes each, and the magnitude order put such a pair first on some traverses and a
// 6 A cable beside it first on others, so the route's conductor changed from traverse
// to traverse.
func pairRank(su *summary, zSensors float64) []int {
	type unit struct {
		lines    []int
		strength float64
	}
	inPair := make([]int, len(su.lines))
	for i := range inPair {
		inPair[i] = -1
	}
	for p, pe := range su.pairs {
		inPair[pe.Lines[0]], inPair[pe.Lines[1]] = p, p
	}
	var units []unit
	for i, e := range su.lines {
		switch p := inPair[i]; {
		case p < 0:
			units = append(units, unit{[]int{i}, math.Abs(e.Current)})
		case su.pairs[p].Lines[0] == i: // Lines[0] < Lines[1]
			pe := su.pairs[p]
			a, b := pe.Lines[0], pe.Lines[1]
			if math.Abs(su.lines[b].Current) > math.Abs(su.lines[a].Current) {
				a, b = b, a
			}
			st := math.Abs(pe.NetCurrent)
			if h := zSensors - pe.Point[2]; h > 0 {
				st += pe.Moment / h
			}
			units = append(units, unit{[]int{a, b}, st})
		}
	}
	sort.SliceStable(units, func(a, b int) bool { return units[a].strength > units[b].strength })
	idx := make([]int, 0, len(su.lines))
	for _, u := range units {
		idx = append(idx, u.lines...)
	}
	for i, j := range idx {
		if i != j {
			return idx
		}
	}
	return nil
}

// permute lists the candidate's lines in the order idx (line i becomes line idx[i]'s).
func (c *candidate) permute(idx []int) error {
	sp := c.sp
	if err := sp.evaluate(c.x); err != nil {
		return err
	}
	g := make([]lineGeom, len(sp.geom))
	for i, j := range idx {
		g[i] = sp.geom[j]
	}
	sp.geom = g
	sp.ok = false
	c.x, _, _ = sp.pack()
	return sp.evaluate(c.x)
}

// summariseAsIs is summarise without reordering the lines.
func (f *fitter) summariseAsIs(c *candidate) (*summary, error) {
	sp := c.sp
	// The triangular factor of the full Jacobian, assembled from the factorisation the
	// variable projection holds (fullR; TestFullRCovariance checks it against the
	// explicitly formed Jacobian).
	R, nR, perm, err := sp.fullR(c.x)
	if err != nil {
		return nil, err
	}
	cov0, unres, err := covarianceFromR(R, nR, perm, sp.scr)
	if err != nil {
		return nil, err
	}
	n, k := c.counts()
	su := &summary{dof: n - k, unresolved: unres}
	switch {
	case f.prob.Sigma > 0:
		su.sigma = f.prob.Sigma
	case su.dof > 0:
		su.sigma = math.Sqrt(c.rss / float64(su.dof))
	default:
		return nil, fmt.Errorf("inverse: %d readings leave no degrees of freedom to estimate the noise for %d parameters; give Problem.Sigma", n, k)
	}
	su.chi2 = c.rss / (su.sigma * su.sigma)
	// Residuals correlated along the readings: the covariance under
	// independence gives way to the sandwich (report, serialFactor;
	// serialSandwich), each parameter's variance widened by its own factor.
	su.widen = 1
	var vf []float64 // per parameter: the sandwich's variance over the plain one
	if f.serialWiden > 1 {
		su.rho = f.serialRho
		h, err := f.serialSandwich(c, cov0, unres, f.serialRho)
		if err != nil {
			return nil, err
		}
		if h != nil {
			vf = make([]float64, len(unres))
			for j := range vf {
				vf[j] = 1
				if p := cov0.At(j, j); p > 0 && !unres[j] {
					vf[j] = h.At(j, j) / p
				}
			}
			su.widen, su.widenLo, su.widenHi = serialWidening(paramNames(sp), vf)
			cov0 = h
		} else {
			// No sandwich: every parameter by the AR(1) factor.
			su.widen, su.widenLo, su.widenHi = f.serialWiden, f.serialWiden, f.serialWiden
			vf = make([]float64, len(unres))
			for j := range vf {
				vf[j] = f.serialWiden
			}
			cov0.ScaleSym(f.serialWiden, cov0)
		}
	}
	if f.posWeighted {
		// The whole covariance of each reading's axes under the position
		// errors, in place of the weighted fit's s^2 A^-1 (positionSandwich);
		// widened as above for correlated residuals.
		a0 := mat.NewSymDense(cov0.SymmetricDim(), nil)
		a0.CopySym(cov0)
		if su.widen > 1 {
			a0.ScaleSym(1/f.serialWiden, a0)
		}
		pc, err := f.positionSandwich(c, a0)
		if err != nil {
			return nil, err
		}
		if pc != nil {
			if su.widen > 1 {
				pc.ScaleSym(f.serialWiden, pc)
			}
			// Given the noise, the variances stand as stated; estimated,
			// the weighted residuals scale them (su.sigma^2 over the noise
			// the weights took), as they scale any weighted fit's.
			cov0 = pc
			if f.prob.Sigma > 0 {
				cov0.ScaleSym(1/(su.sigma*su.sigma), cov0)
			} else {
				cov0.ScaleSym(1/f.pos.s2, cov0)
			}
		}
	}
	cov0.ScaleSym(su.sigma*su.sigma, cov0)
	if f.set.Robust && sp.w != nil && !(f.prob.Sigma > 0) {
		// Huber's asymptotic covariance in place of the weighted least-squares one,
		// which holds the weights fixed and takes the scale from the down-weighted
		// residuals (huberCovariance); widened as above for correlated residuals.
		hc, err := f.huberCovariance(c, k)
		if err != nil {
			return nil, err
		}
		if hc != nil {
			for i := range vf {
				for j := i; j < len(vf); j++ {
					hc.SetSym(i, j, hc.At(i, j)*math.Sqrt(vf[i]*vf[j]))
				}
			}
			cov0 = hc
		}
		if err := sp.evaluate(c.x); err != nil {
			return nil, err
		}
	}
	su.cov = cov0
	su.zref, su.refName = f.sv.zmean, "mean sensor height"
	if f.set.ReferenceZ != nil {
		su.zref, su.refName = *f.set.ReferenceZ, "ReferenceZ"
	}
	np := sp.nparams()
	nl, q, nr := len(sp.geom), sp.q, sp.nrhs
	su.v = make([]float64, 0, len(c.x)+q*nr)
	su.v = append(su.v, c.x...)
	for kk := range nr {
		for j := range q {
			su.v = append(su.v, sp.coef[j*nr+kk])
		}
	}
	su.names = paramNames(sp)

	// Orientation: azimuth of Dir in [0, 180); flipping reverses current and dip.
	flip := make([]bool, nl, 8) // on the stack for up to 8 lines
	for l, g := range sp.geom {
		a := math.Mod(g.az, 2*math.Pi)
		if a < 0 {
			a += 2 * math.Pi
		}
		flip[l] = a >= math.Pi
	}
	// One set of work buffers for the repeated evaluations of the derived quantities.
	var dgeom [8]lineGeom // on the stack for up to 8 lines
	var dcur [8]complex128
	dw := &deriveWork{geom: dgeom[:0], cur: dcur[:0]}
	nqAll := nl * nQuantities
	qbuf := sp.scr.zeros(3*nqAll + nqAll*len(su.v) + len(su.v))
	base, up, dn := qbuf[:nqAll], qbuf[nqAll:2*nqAll], qbuf[2*nqAll:3*nqAll]
	derive := func(v, out []float64) []float64 { return deriveQuantities(sp, f.sv, su.zref, flip, v, dw, out) }
	derive(su.v, base)
	nq := len(base) / nl
	// Gradients by central differences on the (smooth, cheap) map from parameters to
	// reported quantities, with steps well inside one sigma.
	gbuf := qbuf[3*nqAll : 3*nqAll+nqAll*len(su.v)]
	grad := func(i int) []float64 { return gbuf[i*len(su.v) : (i+1)*len(su.v)] }
	v := qbuf[3*nqAll+nqAll*len(su.v):]
	copy(v, su.v)
	for j := range su.v {
		if !derivedReads(sp, j) {
			continue // the reported line quantities do not depend on it: zero gradient
		}
		sd := math.Sqrt(math.Max(su.cov.At(j, j), 0))
		h := 1e-4 * sd
		if h == 0 || unres[j] {
			h = 1e-7 * (math.Abs(su.v[j]) + 1)
		}
		v[j] = su.v[j] + h
		derive(v, up)
		v[j] = su.v[j] - h
		derive(v, dn)
		v[j] = su.v[j]
		for i := range base {
			d := up[i] - dn[i]
			if per := quantityPeriod(i % nq); per > 0 {
				d = math.Remainder(d, per)
			}
			grad(i)[j] = d / (2 * h)
		}
	}
	sigmaOf := func(i int) float64 { return deltaSigma(grad(i), su.cov) }
	// Which parameters each line depends on (for identifiability).
	off := 0
	for l, g := range sp.geom {
		b := base[l*nq : (l+1)*nq]
		e := SourceEstimate{Kind: "line"}
		e.Point = add(f.sv.centroid, [3]float64{b[qPointE], b[qPointN], b[qPointU]})
		e.Dir = dirOf(b[qAzimuth]*math.Pi/180, b[qDip]*math.Pi/180)
		e.Current, e.CurrentSigma = b[qCurrent], sigmaOf(l*nq+qCurrent)
		e.Depth, e.DepthSigma = b[qDepth], sigmaOf(l*nq+qDepth)
		_, crossing := f.sv.stationAlong(sub(f.sv.centroid, e.Point), e.Dir)
		su.under = append(su.under, underPoint{point: add(f.sv.centroid, [3]float64{b[qUnderE], b[qUnderN], b[qUnderU]}),
			depth: b[qUnderDepth], depthSigma: sigmaOf(l*nq + qUnderDepth), crossing: crossing})
		if h := math.Hypot(e.Dir[0], e.Dir[1]); !crossing && f.sv.walked && f.sv.spread[0] > 0 && h >= 0.5 {
			// A walked traverse running nearly along the line (stationAlong).
			a := math.Asin(math.Min(1, math.Abs(e.Dir[0]*f.sv.t1[1]-e.Dir[1]*f.sv.t1[0])/h)) * 180 / math.Pi
			e.Notes = append(e.Notes, fmt.Sprintf("point under the readings' centre, not where the traverse crosses the line: the traverse runs %.0f degrees from the line, too near along it to place the crossing", a))
		}
		e.Offset, e.OffsetSigma = b[qOffset], sigmaOf(l*nq+qOffset)
		e.Azimuth, e.Dip = b[qAzimuth], b[qDip]
		geomUnres := unres[off] || unres[off+1]
		id := Identifiable{Current: true, Depth: !geomUnres, Offset: !geomUnres, Azimuth: !g.holdAz, Dip: !g.holdDip}
		j := off + 2
		if !g.holdAz {
			e.AzimuthSigma = sigmaOf(l*nq + qAzimuth)
			if unres[j] {
				id.Azimuth = false
				e.Notes = append(e.Notes, "azimuth not resolved by the data")
			} else if g.atAzBound() {
				id.Azimuth = false
				e.Notes = append(e.Notes, azimuthAtBoundNote())
			}
			j++
		} else if f.sv.single && f.set.Azimuth == nil {
			e.Notes = append(e.Notes, "azimuth not determined by this traverse: held perpendicular to it ("+deg1(e.Azimuth)+" deg)")
		} else {
			e.Notes = append(e.Notes, "azimuth held at "+deg1(e.Azimuth)+" deg")
		}
		if !g.holdDip {
			e.DipSigma = sigmaOf(l*nq + qDip)
			if unres[j] {
				id.Dip = false
				e.Notes = append(e.Notes, "dip not resolved by the data")
			} else if math.Abs(g.dip) >= dipBound-dipBoundMargin {
				e.Notes = append(e.Notes, DipAtBoundNote)
			}
		} else if f.sv.single && f.set.Dip == nil {
			e.Notes = append(e.Notes, "dip not determined by this traverse: held horizontal")
		} else {
			e.Notes = append(e.Notes, "dip held at "+deg1(e.Dip)+" deg")
		}
		for kk := range nr {
			if unres[np+kk*q+l] {
				id.Current = false
			}
		}
		if nr == 2 {
			e.Phase, e.PhaseSigma = b[qPhase], sigmaOf(l*nq+qPhase)
			e.RelativePhase, e.RelativePhaseSigma = b[qRelPhase], sigmaOf(l*nq+qRelPhase)
			id.Phase = id.Current
		}
		if geomUnres {
			e.Notes = append(e.Notes, "position not resolved by the data")
		}
		if !(math.Abs(e.Current) > 2*e.CurrentSigma) {
			e.Notes = append(e.Notes, "current not significantly different from zero: the position is not determined by the data")
			id.Depth, id.Offset, id.Azimuth, id.Dip, id.Phase = false, false, false, false, false
		}
		if g.above && g.atHeightBound() {
			e.Notes = append(e.Notes, "held at the least height above the sensors: the height is not determined")
			id.Depth = false
		} else if g.atHeightBound() {
			e.Notes = append(e.Notes, "held at the minimum depth below the sensors: the depth is not determined")
			id.Depth = false
		}
		if g.s <= g.sLo+1e-9 || g.s >= g.sHi-1e-9 {
			e.Notes = append(e.Notes, EdgeOfSearchNote)
		}
		if f.aboveSensors(&sp.geom[l]) {
			e.Notes = append(e.Notes, AboveSensorsNote)
		}
		if !id.Depth {
			e.DepthSigma = 0
		}
		if !id.Offset {
			e.OffsetSigma = 0
		}
		if !id.Azimuth {
			e.AzimuthSigma = 0
		}
		if !id.Dip {
			e.DipSigma = 0
		}
		if !id.Current {
			e.CurrentSigma = 0
		}
		if !id.Phase {
			e.PhaseSigma, e.RelativePhaseSigma = 0, 0
		}
		e.Identifiable = id
		su.lines = append(su.lines, e)
		off += g.nfree()
	}
	su.flip = flip
	// Go-and-return pairs among the lines, each line in one pair at most. Among three
	// or more lines, the closest pairs first, and only lines closer together than
	// their centre lies below the sensors (a pair the data do not separate is close
	// for its depth): a 6 A cable 1.6 m beside a pair's core whose current was not
	// resolved had been paired with that core, and the pair's other core left alone.
	type cand struct {
		pe PairEstimate
		d  float64
	}
	var cands []cand
	for i := range nl {
		for j := i + 1; j < nl && !(nl > 2 && (c.noPairs || len(sp.dips) > 0 || f.set.Dipoles > 0)); j++ {
			pe, ok := f.pairOf(c, su, i, j)
			if !ok {
				continue
			}
			d := norm(sub(su.lines[i].Point, su.lines[j].Point))
			if nl > 2 && !(d < f.sv.zmean-pe.Point[2]) {
				continue
			}
			cands = append(cands, cand{pe, d})
		}
	}
	sort.SliceStable(cands, func(a, b int) bool { return cands[a].d < cands[b].d })
	var paired [8]bool // on the stack for up to 8 lines
	for _, cd := range cands {
		pe := cd.pe
		if pe.Lines[1] >= len(paired) || paired[pe.Lines[0]] || paired[pe.Lines[1]] {
			continue
		}
		paired[pe.Lines[0]], paired[pe.Lines[1]] = true, true
		su.pairs = append(su.pairs, pe)
		for _, l := range pe.Lines {
			e := &su.lines[l]
			e.Identifiable.Current, e.Identifiable.Phase = false, false
			e.Identifiable.Depth, e.Identifiable.Offset = false, false
			e.CurrentSigma, e.PhaseSigma, e.RelativePhaseSigma = 0, 0, 0
			e.DepthSigma, e.OffsetSigma = 0, 0
			// The note on an insignificant current says the same of this line.
			e.Notes = slices.DeleteFunc(e.Notes, func(n string) bool { return strings.HasPrefix(n, "current not significantly different from zero") })
			e.Notes = append(e.Notes, "one of a go-and-return pair whose currents and spacing the data do not separate: its current and position are not determined; the pair's centre, depth and current times spacing are, and are reported for the pair")
		}
	}
	// A line far weaker than the strongest often absorbs departures from the model (a
	// finite or bending conductor, an induced return) rather than marking a conductor.
	for i := 1; i < len(su.lines); i++ {
		if r := math.Abs(su.lines[i].Current) / math.Abs(su.lines[0].Current); r < weakLine {
			su.lines[i].Notes = append(su.lines[i].Notes, fmt.Sprintf("weak line (%.1f%% of the strongest current): it may absorb departures from the straight-line model rather than mark a conductor", 100*r))
		}
	}
	for di, d := range sp.dips {
		e := SourceEstimate{Kind: "dipole", Point: d.pos}
		sd := func(j int) float64 { return math.Sqrt(math.Max(su.cov.At(j, j), 0)) }
		e.Offset, e.OffsetSigma = d.pos[0]-f.sv.centroid[0], sd(off)
		e.Depth, e.DepthSigma = su.zref-d.pos[2], sd(off+2)
		e.PointSigma = [3]float64{sd(off), sd(off + 1), sd(off + 2)}
		pu := unres[off] || unres[off+1] || unres[off+2]
		e.Identifiable = Identifiable{Depth: !pu, Offset: !pu}
		c0 := sp.dipCol(di)
		for k := range 3 {
			j := np + c0 + k
			if nr == 1 {
				e.Moment[k], e.MomentSigma[k] = su.v[j], sd(j)
			} else {
				e.Moment[k] = math.Hypot(su.v[j], su.v[j+q])
				e.MomentSigma[k] = math.Max(sd(j), sd(j+q))
			}
		}
		e.Notes = append(e.Notes, "a magnetised (ferrous) object, not a current (fitted as a point dipole)")
		if pu {
			e.Notes = append(e.Notes, "position not resolved by the data")
		}
		// As for a line with no current: a dipole whose moment the readings do not
		// set apart from zero has no position they determine (a spare dipole asked
		// for sits under a single reading, "located" to a centimetre).
		if !pu && !momentSignificant(su.cov, su.v, np+c0, q, nr) {
			e.Notes = append(e.Notes, DipoleMomentNotSignificantNote)
			pu = true
		}
		if pu {
			e.Identifiable.Depth, e.Identifiable.Offset = false, false
			e.DepthSigma, e.OffsetSigma, e.PointSigma = 0, 0, [3]float64{}
		}
		if f.set.ReferenceZ != nil && e.Depth < 0 {
			e.Notes = append(e.Notes, DipoleAboveReferenceNote)
		}
		su.lines = append(su.lines, e)
		off += 3
	}
	return su, nil
}

// DipoleMomentNotSignificantNote begins the note (SourceEstimate.Notes) of a dipole
// whose moment is not significantly different from zero (momentSignificant): its
// position is not determined by the readings (Identifiable.Depth and Offset false,
// no position sigmas), and it marks no object. FitLines then adds to Result.Notes a
// note beginning with UnsupportedCountNote.
const DipoleMomentNotSignificantNote = "moment not significantly different from zero: the position is not determined by the data"

// DipoleAboveReferenceNote is the note (SourceEstimate.Notes) of a dipole above the
// height given as Settings.ReferenceZ (a negative depth): not a buried object.
const DipoleAboveReferenceNote = "above Settings.ReferenceZ (negative depth): not a buried object"

// momentSignificant reports whether a dipole's moment, whose components (DC), or
// real then imaginary parts (AC, q columns apart), begin at column j0 of the
// parameter vector v with covariance cov, differs from zero: its chi-square,
// m' C^-1 m over its 3 (DC) or 6 (AC) components, beyond the point of the
// chi-square distribution with as many degrees of freedom at the level of a line's
// two-sigma current rule (95.45%). A covariance block that cannot be inverted
// (components the readings do not resolve) is taken as not significant.
func momentSignificant(cov mat.Symmetric, v []float64, j0, q, nr int) bool {
	idx := make([]int, 0, 6)
	for kk := range nr {
		for k := range 3 {
			idx = append(idx, j0+kk*q+k)
		}
	}
	n := len(idx)
	c := mat.NewSymDense(n, nil)
	m := mat.NewVecDense(n, nil)
	for a, ia := range idx {
		m.SetVec(a, v[ia])
		for b := a; b < n; b++ {
			c.SetSym(a, b, cov.At(ia, idx[b]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(c) {
		return false
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, m); err != nil {
		return false
	}
	chi2 := mat.Dot(m, &x)
	return chi2 > distuv.ChiSquared{K: float64(n)}.Quantile(math.Erf(2/math.Sqrt2))
}

// deg1 formats v as fmt's %.1f does (the notes' held angles), without fmt's cost.
func deg1(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }

// AboveSensorsNote is the note (SourceEstimate.Notes) of a line that passes above the
// sensors where its depth is reported (a steeply dipping line rising through the
// readings): it marks no buried conductor, and stands for field the other lines leave
// unexplained, often the noise of readings close to it.
const AboveSensorsNote = "the line passes above the sensors near the readings' centre (it dips steeply): not a buried conductor; it stands for field the other lines leave unexplained"

// AzimuthAtBoundNote begins the note (SourceEstimate.Notes) of a line fitted from a
// single traverse whose azimuth ended at the bound of the search about the traverse's
// perpendicular (singleAzimuthRange), or was held back by it: the readings would turn
// the line nearer the traverse's direction than a single traverse is fitted for, or
// the search ran astray; either way the azimuth is not given.
const AzimuthAtBoundNote = "azimuth stopped at the bound of the single-traverse search"

// azimuthAtBoundNote returns the note of a line at the azimuth bound (AzimuthAtBoundNote).
func azimuthAtBoundNote() string {
	b := singleAzimuthRange * 180 / math.Pi
	return fmt.Sprintf("%s, %.0f deg either side of square to the traverse: the readings would turn the line to cross the traverse at under %.0f deg, nearly along it, which one traverse is not fitted for", AzimuthAtBoundNote, b, 90-b)
}

// DipAtBoundNote is the note (SourceEstimate.Notes) of a line whose dip ended at the
// bound of the search (dipBound, 80 degrees): the readings would stand it up further,
// as the field of a vertical conductor (a riser or down-lead beside the traverse) or
// of one above the sensors does, and its position, depth and current are not those of
// a buried line. In review a riser 3 m from a traverse fitted as a line 0.045 m under
// the ground at 80.0 degrees, called sound, with a shallow-cover warning.
const DipAtBoundNote = "dip stopped at (within a degree of) the 80 deg bound of the search: the readings would stand the line up (a vertical conductor, such as a riser or down-lead near the readings, is not fitted), so its position, depth and current are not a buried line's"

// dipBound is the largest dip, radians, the fit gives a line, and dipBoundMargin how
// near it a line's dip must end for DipAtBoundNote: a riser 1 m past the traverses'
// ends left fits at 79.3 and 79.7 degrees, pressed to the bound and eased off it by
// the noise (found in review).
const (
	dipBound       = 80 * math.Pi / 180
	dipBoundMargin = 1 * math.Pi / 180
)

// EdgeOfSearchNote is the note (SourceEstimate.Notes) of a line that lies at the edge
// of the region searched across the readings (twice their extent plus 5 m from their
// centre): the readings would put it further out, and its position is not determined.
const EdgeOfSearchNote = "at the edge of the region searched (twice the readings' extent plus 5 m from their centre): the position is not determined"

// weakLine is the fraction of the strongest current below which a line gets a caution.
const weakLine = 0.02

// Indices of the reported quantities per line in deriveQuantities. The points
// (qPointE..qPointU, qUnderE..qUnderU) are about the readings' centroid
// (survey.centroid), not absolute.
const (
	qPointE = iota
	qPointN
	qPointU
	qDepth
	qOffset
	qAzimuth
	qDip
	qCurrent
	qPhase
	qRelPhase
	// The line's station point, where it crosses the traverse in plan or under
	// the readings' centroid, and its depth (stationAlong): the reported point
	// (Result.Sources); qPointE..qDepth, the point
	// nearest the centroid in space, serve the fit's own tests (the guard, pairs).
	qUnderE
	qUnderN
	qUnderU
	qUnderDepth
	nQuantities
)

// quantityPeriod returns the wrap-around period (degrees) of angle-valued quantities.
func quantityPeriod(i int) float64 {
	switch i {
	case qAzimuth:
		return 180
	case qPhase, qRelPhase:
		return 360
	}
	return 0
}

// derivedReads reports whether deriveQuantities reads element j of the full parameter
// vector: every line geometry parameter and line current, not the dipole positions nor
// the dipole and background strengths.
func derivedReads(sp *separable, j int) bool {
	np, q, nl := sp.nparams(), sp.q, len(sp.geom)
	off := 0
	for _, g := range sp.geom {
		off += g.nfree()
	}
	if j < np {
		return j < off
	}
	return (j-np)%q < nl
}

// deriveWork holds deriveQuantities' work buffers between calls.
type deriveWork struct {
	geom []lineGeom
	cur  []complex128
}

// deriveQuantities maps a full parameter vector to the reported quantities of every
// line (nQuantities each), written to out (allocated when short) and returned. w holds
// work buffers reused between calls, or is nil.
func deriveQuantities(sp *separable, sv *survey, zref float64, flip []bool, v []float64, w *deriveWork, out []float64) []float64 {
	np := sp.nparams()
	nl, q, nr := len(sp.geom), sp.q, sp.nrhs
	if w == nil {
		w = &deriveWork{}
	}
	geom := append(w.geom[:0], sp.geom...)
	k := 0
	for i := range geom {
		g := &geom[i]
		g.s, g.z = v[k], v[k+1]
		k += 2
		if !g.holdAz {
			g.az = v[k]
			k++
		}
		if !g.holdDip {
			g.dip = v[k]
			k++
		}
	}
	if cap(w.cur) < nl {
		w.cur = make([]complex128, nl)
	}
	cur := w.cur[:nl]
	for l := range nl {
		re := v[np+l]
		var im float64
		if nr == 2 {
			im = v[np+q+l]
		}
		cur[l] = complex(re, im)
		if flip[l] {
			cur[l] = -cur[l]
		}
	}
	if len(out) < nl*nQuantities {
		out = make([]float64, nl*nQuantities)
	}
	out = out[:nl*nQuantities]
	// Points are taken about the readings' centroid: the differences of
	// the gradients' steps (a ten-thousandth of a sigma, down to 1e-9 m)
	// are lost in absolute coordinates of 1e6-1e7 m (projected northings),
	// whose floats step by 1e-10-2e-9 m.
	zc := zref - sv.centroid[2]
	for l, g := range geom {
		// The line's point about the centroid: anchor less centroid is exact
		// for two nearby points, and the step along n0 is added to it.
		rel := add(sub(g.anchor, sv.centroid), scale(g.n0, g.s))
		rel[2] = g.z - sv.centroid[2]
		u := dirOf(g.az, g.dip)
		az, dip := g.az, g.dip
		if flip[l] {
			u = scale(u, -1)
			az, dip = az+math.Pi, -dip
		}
		pt := add(rel, scale(u, -dot(rel, u)))
		along, _ := sv.stationAlong(scale(rel, -1), u)
		under := add(rel, scale(u, along))
		right := [3]float64{math.Cos(az), -math.Sin(az), 0}
		o := out[l*nQuantities:]
		o[qPointE], o[qPointN], o[qPointU] = pt[0], pt[1], pt[2]
		o[qDepth] = zc - pt[2]
		o[qUnderE], o[qUnderN], o[qUnderU] = under[0], under[1], under[2]
		o[qUnderDepth] = zc - under[2]
		o[qOffset] = dot(pt, right)
		azd := math.Mod(az*180/math.Pi, 360)
		if azd < 0 {
			azd += 360
		}
		o[qAzimuth] = math.Mod(azd, 180)
		o[qDip] = dip*180/math.Pi + 0 // + 0 turns -0 into 0
		if nr == 1 {
			o[qCurrent] = real(cur[l]) + 0 // + 0 turns -0 into 0
		} else {
			o[qCurrent] = cmplx.Abs(cur[l])
			o[qPhase] = cmplx.Phase(cur[l]) * 180 / math.Pi
			o[qRelPhase] = cmplx.Phase(cur[l]/cur[0]) * 180 / math.Pi
		}
	}
	return out
}

// underCentroid returns su's sources with each line's point, depth and depth sigma
// taken at its station point (summary.under, stationAlong); a depth
// whose sigma su gives as 0 (not identifiable) keeps 0.
func underCentroid(su *summary) []SourceEstimate {
	out := slices.Clone(su.lines)
	for l := range min(len(su.under), len(out)) {
		e, u := &out[l], su.under[l]
		if e.Kind != "line" {
			continue
		}
		e.Point, e.Depth = u.point, u.depth
		if e.DepthSigma > 0 {
			e.DepthSigma = u.depthSigma
		}
		e.AtTrackCrossing = u.crossing
	}
	return out
}

// pointAlong returns how far along unit direction u from a line's point lies the
// line's point under the readings' centroid in plan (the reported point,
// SourceEstimate.Point, where stationAlong finds no traverse crossing), given d, the
// readings' centroid less the line's point: the point whose horizontal position is nearest the centroid's, so
// the line's point under the centroid in plan, where a traverse square to the line
// crosses it. The point nearest the centroid in space, reported before (and still the
// one the fit's guard and pairs measure lines by, so that what the fit accepts is as
// before), lies up the dip
// from there, (h + d) sin(dip) cos(dip) along the ground for a line h + d below the
// readings' mean height: the depth was that of a point off the traverse (a pipe
// dipping 26.6 degrees, 5 m under its traverse, read 3.9 m deep 2.1 m along the
// route, its stations' chainage 20% short), and on ground sloping along the line,
// where the sensors follow the ground, depth at that point less the sensor height at
// the traverse made the cover short by (h + d) sin²(dip) (0.11 m, 135 sigma, under a
// 30% slope). For a level line the two points are the same. A line steeper than 60
// degrees keeps the point nearest in space: its point under the centroid lies far
// down the line, where its depth's sigma grows as 1/cos(dip).
func pointAlong(d, u [3]float64) float64 {
	if h2 := u[0]*u[0] + u[1]*u[1]; h2 >= 0.25 {
		return (d[0]*u[0] + d[1]*u[1]) / h2
	}
	return dot(d, u)
}

// trackParallel is the angle in plan (radians) within which a traverse running
// along a line is taken as too near parallel to it to place the line's station
// where the traverse crosses it (stationAlong): there the crossing moves along the
// line by the traverse's distance from it over tan of the angle, and the readings'
// centroid stands in.
const trackParallel = 20 * math.Pi / 180

// stationAlong returns how far along unit direction u from a line's point lies the
// line's reported point (SourceEstimate.Point), given d, the readings' centroid less
// the line's point, and whether that point is where the line crosses the
// traverse's track in plan. When the readings lie along one walked traverse
// (survey.walked) the point is the line's point whose horizontal position lies on
// the traverse's principal axis through the centroid (survey.t1): where the walked
// line crosses the conductor, and the depth is the line's there. Before, it was
// always the point under the centroid in plan (pointAlong), which lies (the
// centroid's offset along the traverse) x cos(angle) along the line from the
// crossing on a traverse not square to the line: ten traverses at 40 degrees to a
// cable, each starting at the cable's side, read their chainages out of order, placed two
// traverses 4 m apart 0.2 m apart, and a leak between the wrong traverses; square
// traverses 15 degrees off a cable read every chainage 7% short. For a traverse
// square to the line the two points are the same. The point under the centroid
// (pointAlong) stays for readings that are not one walked traverse (a few fixed
// sensors, a compact group, an area), for a traverse within trackParallel of the line, and
// for a line steeper than 60 degrees.
func (sv *survey) stationAlong(d, u [3]float64) (float64, bool) {
	h2 := u[0]*u[0] + u[1]*u[1]
	if !sv.walked || !(sv.spread[0] > 0) || h2 < 0.25 {
		return pointAlong(d, u), false
	}
	t := sv.t1
	cr := u[0]*t[1] - u[1]*t[0] // u x t in plan
	if math.Abs(cr) < math.Sin(trackParallel)*math.Sqrt(h2) {
		return pointAlong(d, u), false
	}
	return (d[0]*t[1] - d[1]*t[0]) / cr, true
}

// paramNames names the parameters in the order of the covariance: geometry of each
// line and dipole, then the strengths (with .re and .im for phasors). The names of the
// first few sources are made once (sourceNames), so that a fit does not format them.
func paramNames(sp *separable) []string {
	nb := sp.bg.columns()
	n := len(sp.dips)*3 + sp.nrhs*(len(sp.geom)+3*len(sp.dips)+nb)
	for _, g := range sp.geom {
		n += g.nfree()
	}
	names := make([]string, 0, n)
	for l, g := range sp.geom {
		names = append(names, sourceName(lineSource, l, 0), sourceName(lineSource, l, 1))
		if !g.holdAz {
			names = append(names, sourceName(lineSource, l, 2))
		}
		if !g.holdDip {
			names = append(names, sourceName(lineSource, l, 3))
		}
	}
	for d := range sp.dips {
		for p := range 3 {
			names = append(names, sourceName(dipoleSource, d, p))
		}
	}
	bgn := [...]string{"bg.e", "bg.n", "bg.u", "grad.ee", "grad.en", "grad.eu", "grad.nn", "grad.nu"}
	for k := range sp.nrhs {
		// Strength names: plain for real strengths, then .re and .im for phasors.
		first := strengthNames + k*(1+3)
		if sp.nrhs == 2 {
			first += 1 + 3
		}
		for l := range sp.geom {
			names = append(names, sourceName(lineSource, l, first))
		}
		for d := range sp.dips {
			for ax := range 3 {
				names = append(names, sourceName(dipoleSource, d, first+1+ax))
			}
		}
		for j := range nb {
			b := bgn[j]
			if sp.bg == BackgroundAlong {
				b = alongNames[j]
			}
			names = append(names, b+[...]string{"", ".re", ".im"}[first/4-1])
		}
	}
	return names
}

// lineCurrents is the complex current of each line in the covariance's
// order, read from the parameter values v named by names (paramNames):
// lineK.current.re and lineK.current.im, until a line has neither.
func lineCurrents(names []string, v []float64) []complex128 {
	if len(names) != len(v) {
		return nil
	}
	at := make(map[string]int, len(names))
	for i, n := range names {
		at[n] = i
	}
	var out []complex128
	for l := 0; ; l++ {
		re, okRe := at[sourceName(lineSource, l, strengthNames+4)]
		im, okIm := at[sourceName(lineSource, l, strengthNames+8)]
		if !okRe || !okIm {
			return out
		}
		out = append(out, complex(v[re], v[im]))
	}
}

// Source kinds and parameter suffixes of the parameter names: for source kind k,
// sourceSuffix[k][p] is the name of parameter p after "line1.". From strengthNames
// on come the strengths: current (lines) or moment.e, .n, .u (dipoles), plain, .re
// and .im.
const (
	lineSource, dipoleSource = 0, 1
	strengthNames            = 4
)

var sourceSuffix = [2][16]string{
	{"offset", "height", "azimuth", "dip",
		"current", "", "", "", "current.re", "", "", "", "current.im"},
	{"east", "north", "up", "",
		"", "moment.e", "moment.n", "moment.u", "", "moment.e.re", "moment.n.re", "moment.u.re",
		"", "moment.e.im", "moment.n.im", "moment.u.im"},
}

// sourceNames[k][i][p] is the name of parameter p of the source i (from 0) of kind k,
// for the first few sources.
var sourceNames = func() (t [2][4][16]string) {
	for k, kind := range [2]string{"line", "dipole"} {
		for i := range t[k] {
			for p, sfx := range sourceSuffix[k] {
				if sfx != "" {
					t[k][i][p] = kind + strconv.Itoa(i+1) + "." + sfx
				}
			}
		}
	}
	return t
}()

// sourceName returns the name of parameter p of source i (from 0) of kind k, such as
// "line1.offset".
func sourceName(k, i, p int) string {
	if i < len(sourceNames[k]) {
		return sourceNames[k][i][p]
	}
	return [2]string{"line", "dipole"}[k] + strconv.Itoa(i+1) + "." + sourceSuffix[k][p]
}

// report builds the Result of the chosen candidate; it is the candidate's last use
// (summariseFinal).
func (f *fitter) report(c *candidate, scores []ModelScore) (*Result, error) {
	if c == nil {
		return nil, errors.New("inverse: no acceptable fit")
	}
	// The positions' uncertainty weighs the chosen fit's readings by their
	// whole variance (positionWeights) before it is summarised; the count
	// was chosen as without it.
	var posNote string
	if f.positioned() {
		if f.set.Robust {
			posNote = PositionSigmaRobustNote
		} else {
			var err error
			if posNote, err = f.positionWeights(c); err != nil {
				return nil, err
			}
			f.posWeighted = c.sp.w != nil
			defer func() { f.posWeighted, f.pos = false, nil }()
		}
	}
	// Residuals correlated along the readings widen the covariance taken
	// under independence (serialFactor). DC only: an AC fit's readings are
	// windows whose noise is measured from their own scatter.
	var rho, widen float64
	// An unweighted DC fit's residuals at c.x are the same numbers at every call (the
	// separable's evaluation there is deterministic), so the ones taken here for the
	// serial factor are kept for Result.Residuals and Predicted instead of being
	// computed again below (a weighted fit recomputes them there, as before).
	var kept []float64
	if c.sp.nrhs == 1 {
		res, err := c.sp.fullResiduals(c.x)
		if err != nil {
			return nil, err
		}
		if c.sp.w == nil {
			kept = f.sv.scr.take(len(res))
			copy(kept, res)
		}
		n, k := c.counts()
		if f.posWeighted {
			// Residuals whose sigmas differ from reading to reading (the
			// positions' share follows the gradient) are compared in units of
			// their own sigmas: raw, the flanks' larger ones read as
			// correlation.
			sr := make([]float64, len(res))
			for i, v := range res {
				sr[i] = v * c.sp.w[i]
			}
			if f.pos != nil && f.pos.rho > 0 && len(f.pos.innov) == len(res) {
				// Displacements correlated along the traverse are
				// in the covariance (positionSandwich): what is
				// left to judge is the filter's innovations.
				copy(sr, f.pos.innov)
			}
			res = sr
		}
		rho, widen = f.serialFactor(c, res, n-k)
	}
	var su *summary
	var err error
	if widen > 1 {
		f.serialRho, f.serialWiden = rho, widen
		su, err = f.summariseOrdered(c)
		f.serialRho, f.serialWiden = 0, 0
		c.memo = nil
	} else {
		su, err = f.summariseFinal(c)
	}
	if err != nil {
		return nil, err
	}
	su.rho = rho
	sp := c.sp
	r := &Result{
		Sources: underCentroid(su), Sigma: su.sigma, Chi2: su.chi2, DOF: su.dof,
		Status: c.res.status, Iterations: c.iters, Starts: f.starts, Criteria: scores,
		Covariance: su.cov, ParamNames: su.names, DepthReference: su.refName, ReferenceZ: su.zref,
		SingleTraverse: f.sv.single, Pairs: su.pairs, Opposed: f.opposedOf(c, su),
	}
	if len(r.Opposed) == 0 {
		r.SameWay = f.sameWayOf(c, su)
	}
	if sp.nrhs == 2 {
		r.LineCurrents = lineCurrents(su.names, su.v)
	}
	if c.keptGain > 0 {
		f.markKept(r, c.keptGain)
	}
	for _, pe := range r.SameWay {
		r.Notes = append(r.Notes, sameWayNote(su, pe, sp.nrhs == 2))
	}
	np := sp.nparams()
	bc, q, nr := sp.bgCol(), sp.q, sp.nrhs
	if nb := sp.bg.columns(); nb > 0 {
		for j := range 3 {
			re := su.v[np+bc+j]
			sre := math.Sqrt(su.cov.At(np+bc+j, np+bc+j))
			if nr == 1 {
				r.Background[j], r.BackgroundSigma[j] = re, sre
				continue
			}
			im := su.v[np+q+bc+j]
			sim := math.Sqrt(su.cov.At(np+q+bc+j, np+q+bc+j))
			r.BackgroundPhasor[j] = complex(re, im)
			mag := math.Hypot(re, im)
			r.Background[j] = mag
			if mag > 0 {
				r.BackgroundSigma[j] = math.Hypot(re*sre, im*sim) / mag
			} else {
				r.BackgroundSigma[j] = math.Max(sre, sim)
			}
		}
		if nb == 8 && nr == 1 {
			r.Gradient = append([]float64(nil), su.v[np+bc+3:np+bc+8]...)
		}
		if nb == 6 && nr == 1 {
			r.Along = append([]float64(nil), su.v[np+bc+3:np+bc+6]...)
			r.AlongSigma = make([]float64, 3)
			for j := range 3 {
				r.AlongSigma[j] = math.Sqrt(su.cov.At(np+bc+3+j, np+bc+3+j))
			}
			r.AlongAxis = alongAxis(sp.pts, sp.org)
		}
	}
	// Residuals and predictions, unweighted.
	res := kept
	if res == nil {
		saved := sp.w
		res, err = sp.fullResiduals(c.x)
		sp.w = saved
		if err != nil {
			return nil, err
		}
	}
	n := len(f.sv.pts)
	var ss float64
	if nr == 1 {
		pr := make([][3]float64, 2*n) // one allocation for both
		r.Predicted, r.Residuals = pr[:n:n], pr[n:]
		// Through locals, not reloaded through r and f.prob at every reading.
		pred, resid, fields, res := r.Predicted, r.Residuals[:n], f.prob.Fields[:n], res[:3*n]
		for i := range n {
			for j := range 3 {
				e := res[3*i+j]
				resid[i][j] = e
				pred[i][j] = fields[i][j] - e
				ss += e * e
			}
		}
	} else {
		pr := make([][3]complex128, 2*n)
		r.PredictedPhasors, r.ResidualPhasors = pr[:n:n], pr[n:]
		for i := range n {
			for j := range 3 {
				e := complex(res[(3*i+j)*2], res[(3*i+j)*2+1])
				r.ResidualPhasors[i][j] = e
				r.PredictedPhasors[i][j] = f.prob.Phasors[i][j] - e
				ss += real(e)*real(e) + imag(e)*imag(e)
			}
		}
	}
	r.RMS = math.Sqrt(ss / float64(3*n))
	if sp.w != nil {
		r.Weights = make([]float64, len(sp.w))
		for i, w := range sp.w {
			r.Weights[i] = w * w
		}
	}
	if n := statusNote(r.Status); n != "" {
		r.Notes = append(r.Notes, n)
	}
	if f.prob.Sigma > 0 && su.dof > 0 {
		// A chi-square far above its degrees of freedom says the model or the noise
		// level is wrong; the sigmas then understate the uncertainty.
		if z := (su.chi2 - float64(su.dof)) / math.Sqrt(2*float64(su.dof)); z > 5 {
			r.Notes = append(r.Notes, fmt.Sprintf("the model does not explain the readings to the stated noise (chi-square %.1f for %d degrees of freedom)", su.chi2, su.dof))
		}
	}
	if f.set.Robust {
		r.Notes = append(r.Notes, RobustNote)
	}
	if posNote != "" {
		// Residuals correlated along the readings under position sigmas:
		// what is left is not a scatter independent from reading to
		// reading, which is all the position sigmas describe (a traverse
		// shifted whole, a slow drift or a chainage that stretches leave
		// the readings' misfit smooth). Said, so that the position sigma
		// is not taken for the fault.
		if posNote != PositionSigmaRobustNote && sp.nrhs == 1 && su.widen > 1 {
			posNote += "; " + PositionSystematicNote
		}
		r.Notes = append(r.Notes, posNote)
	}
	if sp.nrhs == 1 {
		r.SerialCorrelation, r.SigmaWidening = su.rho, math.Sqrt(su.widen)
		if su.widen > 1 {
			r.Notes = append(r.Notes, serialNote(su.rho, su.widen, su.widenLo, su.widenHi))
		}
	}
	if n := unsupportedDipolesNote(r.Sources, f.set.Dipoles); n != "" {
		r.Notes = append(r.Notes, n)
	}
	return r, nil
}

// unsupportedDipolesNote returns the note (Result.Notes, beginning with
// UnsupportedCountNote) of a fit of asked dipoles (Settings.Dipoles) some of whose
// moments the readings do not set apart from zero, naming them, or "".
func unsupportedDipolesNote(sources []SourceEstimate, asked int) string {
	var which []string
	d := 0
	for i := range sources {
		e := &sources[i]
		if e.Kind != "dipole" {
			continue
		}
		d++
		if slices.Contains(e.Notes, DipoleMomentNotSignificantNote) {
			which = append(which, "dipole "+strconv.Itoa(d))
		}
	}
	if len(which) == 0 {
		return ""
	}
	verb := "is"
	if len(which) > 1 {
		verb = "are"
	}
	return fmt.Sprintf("%s: %d %s asked for, but the readings do not support them all (the moment of %s %s not significantly different from zero)",
		UnsupportedCountNote, asked, map[bool]string{true: "dipole was", false: "dipoles were"}[asked == 1], strings.Join(which, " and "), verb)
}

// UnresolvedKeptNote begins the note (SourceEstimate.Notes) of a line the automatic
// count kept although the readings do not resolve its current (keepsUnresolvedLine):
// the fit without it misses the readings' noise, with it comes near it. Its current,
// position and angles are not identifiable (the values are the fit's, with no
// sigma), and it marks no conductor; it is kept so that its field does not bias the
// other lines' estimates. The Result's notes begin with it too, with the count's
// figures.
const UnresolvedKeptNote = "a further line the readings need but do not fix"

// keptNote reports whether source e is a line kept although its current is not
// resolved (UnresolvedKeptNote).
func keptNote(e *SourceEstimate) bool {
	return slices.ContainsFunc(e.Notes, func(n string) bool { return strings.HasPrefix(n, UnresolvedKeptNote) })
}

// markKept marks in r the line of the fit whose current the readings
// do not resolve, kept by the automatic count for the fall gain of the criterion it
// gives (keepsUnresolvedLine): none of its quantities is identifiable, and notes on
// it and on the fit say why it is there (its other notes are dropped).
func (f *fitter) markKept(r *Result, gain float64) {
	inPair := make([]bool, len(r.Sources))
	for _, pe := range r.Pairs {
		inPair[pe.Lines[0]], inPair[pe.Lines[1]] = true, true
	}
	k := f.currentK()
	unit := "A"
	if f.sv.nrhs == 2 {
		unit = "A RMS"
	}
	for i := range r.Sources {
		e := &r.Sources[i]
		if e.Kind != "line" || inPair[i] || e.Identifiable.Current && math.Abs(e.Current) > k*e.CurrentSigma {
			continue
		}
		cur := fmt.Sprintf("%.3g %s", math.Abs(e.Current), unit)
		if e.Identifiable.Current {
			cur = fmt.Sprintf("%.3g ± %.2g %s, within %.3g times its uncertainty of zero", math.Abs(e.Current), e.CurrentSigma, unit, k)
		}
		// The line's other notes speak of quantities the readings do not
		// fix (its azimuth at the search bound, a weak current, its current
		// near zero): beside this note they read as if those were given
		// ("azimuth stopped at the bound" beside "none of them is
		// determined"), so this note replaces them.
		e.Notes = []string{fmt.Sprintf("%s: its current (%s) and its position trade against each other (a conductor seen only by its gradient, as beyond the traverse's ends), so none of them is determined and it marks no conductor; it is kept so that its field does not bias the other lines", UnresolvedKeptNote, cur)}
		e.Identifiable = Identifiable{}
		e.CurrentSigma, e.PhaseSigma, e.RelativePhaseSigma = 0, 0, 0
		e.DepthSigma, e.OffsetSigma, e.AzimuthSigma, e.DipSigma = 0, 0, 0, 0
		r.Notes = append(r.Notes, fmt.Sprintf("%s (line %d): without it the fit misses the readings' noise, and with it the fit comes near the noise (information criterion lower by %.3g)", UnresolvedKeptNote, i+1, gain))
	}
}

// statusNote is the note a fit's stopping status calls for, or "" for a
// fit that converged. A stalled fit, where no step reduces the sum of
// squares further in floating point, is at its minimum to machine
// precision and its estimates are used like those of any converged fit
// (report.Group.OK), so its note does not call it unconverged.
func statusNote(s Status) string {
	switch {
	case s == Stalled:
		return "the fit converged to machine precision: no step reduces the sum of squares further in floating point"
	case !s.Converged():
		return "the fit did not converge: " + s.String()
	}
	return ""
}

// PairEstimate is a go-and-return pair: two parallel lines carrying opposite currents
// so close together, against their distance from the sensors, that the data do not
// separate the current from the spacing. Far from a pair of currents I and -I spaced d
// the field is that of a line dipole of moment I d per unit length, B = mu0 I d /
// (2 pi r^2) (Biot-Savart for the two lines, expanded in d/r); the pair's centre and
// the product I d are determined where I and d are not, and a fit of the two lines
// slides along the valley I d = constant (in review: 8000 A at 0.6 mm for 10 A at
// 0.3 m under 1.8 m of distance). The lines themselves are then reported with their
// current and position not identifiable.
type PairEstimate struct {
	// Lines are the indices of the two lines in Result.Sources.
	Lines [2]int
	// Point is the pair's centre, midway between the two lines' points nearest the
	// centroid of the readings (m ENU); Dir its direction (azimuth in [0, 180)).
	Point, Dir [3]float64
	// Depth of the centre below the depth reference, Offset of the centre from the
	// centroid (positive to the right of Dir), and Azimuth of Dir, with one-sigma
	// uncertainties (m, m, degrees).
	Depth, DepthSigma     float64
	Offset, OffsetSigma   float64
	Azimuth, AzimuthSigma float64
	// Moment is the pair's current times its spacing, |I1 - I2|/2 times the distance
	// between the lines (A m; RMS for AC), with its one-sigma uncertainty: for
	// currents I and -I spaced d it is I d.
	Moment, MomentSigma float64
	// NetCurrent is the sum of the two currents along Dir (DC, signed) or its RMS
	// (AC), A, with its one-sigma uncertainty: the current that does not return
	// through the pair. For AC, NetCurrentPhase is the phase of that sum flowing
	// along Dir, degrees in [-180, 180] (referenced like SourceEstimate.Phase), with
	// its one-sigma uncertainty (large when the net current is within its noise).
	NetCurrent, NetCurrentSigma           float64
	NetCurrentPhase, NetCurrentPhaseSigma float64
	// Spacing is the distance between the two lines, m, with its one-sigma
	// uncertainty, for a resolved pair (Result.Opposed); zero for an unresolved
	// one, whose spacing is not determined.
	Spacing, SpacingSigma float64
	// Notes explain what is not determined.
	Notes []string
}

// opposedMaxAngle is the largest angle between two lines, degrees, for them to be
// taken as running side by side (a pair): as pairOf.
const opposedMaxAngle = 10

// opposedOf returns the strongest line of the summarised candidate c paired with
// each line the fit resolved that runs within opposedMaxAngle of it carrying an
// opposite current (a current whose phasor makes more than 90 degrees with the
// strongest's once both are turned the same way; for DC, of the other sign),
// nearest first: the two cores of a go-and-return circuit seen apart. Each is
// described as an unresolved pair is (pairOf), with the spacing; the lines keep
// their own currents. None when an unresolved pair holds the strongest line.
func (f *fitter) opposedOf(c *candidate, su *summary) []PairEstimate {
	var out []PairEstimate
	f.linesBeside(c, su, opposedMaxAngle, func(j int, base, sg []float64) {
		// |I0 + Ij| < |I0 - Ij| when Re(I0 conj(Ij)) < 0: opposite currents.
		if math.Abs(base[pqNet]) < 2*base[pqCurrentI] {
			out = append(out, resolvedPair(c.sp, j, base, sg))
		}
	})
	sort.SliceStable(out, func(a, b int) bool { return out[a].Spacing < out[b].Spacing })
	return out
}

// linesBeside calls visit for each line j of the summarised candidate c that runs
// within maxAngle degrees of its strongest line, when that line may be paired
// (strongestLinePairable), with the quantities of the two as a pair (derivePair,
// folded) and their sigmas.
func (f *fitter) linesBeside(c *candidate, su *summary, maxAngle float64, visit func(j int, base, sg []float64)) {
	if !strongestLinePairable(su) {
		return
	}
	for j := 1; j < len(su.lines); j++ {
		b := &su.lines[j]
		if b.Kind != "line" || !(math.Abs(math.Remainder(su.lines[0].Azimuth-b.Azimuth, 180)) <= maxAngle) {
			continue
		}
		base, sg := f.pairQuantities(c.sp, su, 0, j)
		foldPair(base, c.sp.nrhs == 2)
		visit(j, base, sg)
	}
}

// sameWayMaxAngle is the largest angle between two lines, degrees, for them to be
// taken as one conductor split in two (Result.SameWay). A conductor that bends in
// depth under a traverse was fitted as two lines 20 degrees apart.
const sameWayMaxAngle = 60

// sameWaySplit is the largest ratio of the sigma of two lines' summed current to
// the smaller of their own current sigmas for the shares to count as not parted:
// about a correlation of -0.875 between the two currents when their sigmas are
// equal. Two cables resolved by the readings have a ratio near or above 1.
const sameWaySplit = 0.5

// sameWayNearSpacing bounds the spacing, in distances of the deeper line below the
// mean sensor height, of two lines taken as one conductor split in two on the sum's
// sigma alone (sameWaySplit). How well the readings part two lines goes with their
// spacing over their distance from the sensors, whatever the depths are reported
// from: taken in depths below Settings.ReferenceZ, the same log split two cables
// 1.5 m apart, 1.3 and 1.6 m below the sensors 0.3 m up (1.53 m in the
// cross-section), with the mean sensor height as datum and parted them with the
// ground as datum, and the route lost the change of current on one (review). Cables
// 0.7-0.9 m apart there (0.44-0.68 of the deeper one's distance, the traverse at the
// change the farthest) are a split at nearly every traverse, 1.2 m apart (0.77) at
// few; 0.7 is the ground datum's bound, the deeper line's depth, for lines 1.0 m
// below sensors 0.3 m up, where most of the tests' scenarios lie.
const sameWayNearSpacing = 0.7

// sameWayFarSpacing bounds the spacing, in distances of the deeper line below the
// mean sensor height, of two lines
// taken as one conductor split in two when the weaker line's current is not resolved
// (its sigma over pairRelSigma of itself). On a steel main with girth welds every 12
// m (dipoles of 20-60 nT at the sensor, the pipe 70-130 nT), the fits took the pipe
// as two lines crossing under the traverse at 40-50 degrees, 1.5-2.6 m apart at
// 0.9-1.5 m, in shares such as 0.58 ± 0.05 + 0.20 ± 0.05 A of 0.79 A with the sum
// known to 6 mA; nearer than the depth only, the route followed one share, 30-65%
// low (found in review). Two cables 1.5 m apart at 1.3 and 1.5 m carrying 8 and 3 A
// are resolved (TestTwoConductorsSameWay) though their sum is known several times
// better than either, so the sum's sigma alone does not part them.
const sameWayFarSpacing = 3

// sameWayOf returns the strongest line of the summarised candidate c paired with
// the nearest line the fit found beside it carrying current the same way in shares
// the readings do not part: within sameWayMaxAngle of it, its current's phasor
// within 90 degrees of the strongest's once both are turned the same way (for DC,
// of the same sign), and the sum of the two currents known to under sameWaySplit
// of the smaller sigma of the two; the lines nearer each other than
// sameWayNearSpacing of the deeper line's distance below the mean sensor height,
// or up to sameWayFarSpacing such distances apart when the weaker line's current
// is not resolved (its sigma over pairRelSigma of itself). None
// when an unresolved pair holds the strongest line or it has an opposite partner
// (Opposed): the route then follows the pair.
//
// Such a split follows one conductor diving under a road: at the traverses near
// the bends in its depth the fits took two lines carrying 1.26 ± 0.21 and 0.67 ±
// 0.21 A for the 2 A cable, and the route, following the stronger line alone,
// read a current 0.7 A low there ("below both neighbours", or a step).
func (f *fitter) sameWayOf(c *candidate, su *summary) []PairEstimate {
	var best *PairEstimate
	f.linesBeside(c, su, sameWayMaxAngle, func(j int, base, sg []float64) {
		a, b := &su.lines[0], &su.lines[j]
		// The deeper line's distance below the sensors, not its reported depth.
		h := f.sv.zmean - math.Min(a.Point[2], b.Point[2])
		switch {
		case !(a.CurrentSigma > 0) || !(b.CurrentSigma > 0):
		// |I0 + Ij| > |I0 - Ij| when Re(I0 conj(Ij)) > 0: the same way.
		case !(math.Abs(base[pqNet]) > 2*base[pqCurrentI]):
		case !(base[pqSpacing] < sameWayFarSpacing*h):
		case !(sg[pqNet] < sameWaySplit*math.Min(a.CurrentSigma, b.CurrentSigma)):
		case !(base[pqSpacing] < sameWayNearSpacing*h) &&
			!(b.CurrentSigma > pairRelSigma*math.Abs(b.Current)):
		case best != nil && best.Spacing <= base[pqSpacing]:
		default:
			pe := resolvedPair(c.sp, j, base, sg)
			best = &pe
		}
	})
	if best == nil {
		return nil
	}
	return []PairEstimate{*best}
}

// SameWayNote begins the note (Result.Notes) of a fit whose strongest line is split
// in two same-way lines whose shares are not parted (Result.SameWay).
const SameWayNote = "two lines carry current the same way in shares the readings do not part"

// sameWayNote words the note of the split pe.
func sameWayNote(su *summary, pe PairEstimate, ac bool) string {
	a, b := su.lines[pe.Lines[0]], su.lines[pe.Lines[1]]
	unit := "A"
	if ac {
		unit = "A RMS"
	}
	return fmt.Sprintf("%s: lines %d and %d, %.2g m apart, carry %.3g ± %.2g and %.3g ± %.2g %s; their sum, %.4g ± %.2g %s, is known far better than either (one conductor bending under the readings, or cables laid together)",
		SameWayNote, pe.Lines[0]+1, pe.Lines[1]+1, pe.Spacing, math.Abs(a.Current), a.CurrentSigma, math.Abs(b.Current), b.CurrentSigma, unit,
		math.Abs(pe.NetCurrent), pe.NetCurrentSigma, unit)
}

// strongestLinePairable reports whether the strongest line of su may be paired
// with another line it resolved: it is a line, there is another source, and no
// unresolved pair holds it.
func strongestLinePairable(su *summary) bool {
	if len(su.lines) < 2 || su.lines[0].Kind != "line" {
		return false
	}
	for _, pe := range su.pairs {
		if pe.Lines[0] == 0 || pe.Lines[1] == 0 {
			return false
		}
	}
	return true
}

// resolvedPair describes lines 0 and j of sp as a pair from the quantities of
// derivePair (folded) and their sigmas, with the spacing (opposedOf, sameWayOf).
func resolvedPair(sp *separable, j int, base, sg []float64) PairEstimate {
	pe := pairEstimate(sp, 0, j, base, sg)
	pe.Spacing, pe.SpacingSigma = base[pqSpacing], sg[pqSpacing]
	return pe
}

// pairEstimate describes lines i and j of sp as a pair from the quantities of
// derivePair (folded) and their sigmas, without the spacing; the azimuth's sigma
// is left 0 when either line's azimuth is held.
func pairEstimate(sp *separable, i, j int, base, sg []float64) PairEstimate {
	pe := PairEstimate{Lines: [2]int{i, j},
		Point: [3]float64{base[pqPointE], base[pqPointN], base[pqPointU]},
		Dir:   dirOf(base[pqAzimuth]*math.Pi/180, base[pqDip]*math.Pi/180),
		Depth: base[pqDepth], DepthSigma: sg[pqDepth],
		Offset: base[pqOffset], OffsetSigma: sg[pqOffset],
		Azimuth: base[pqAzimuth], Moment: base[pqMoment], MomentSigma: sg[pqMoment],
		NetCurrent: base[pqNet], NetCurrentSigma: sg[pqNet],
	}
	if sp.nrhs == 2 {
		pe.NetCurrentPhase, pe.NetCurrentPhaseSigma = base[pqNetPhase], sg[pqNetPhase]
	}
	if !sp.geom[i].holdAz && !sp.geom[j].holdAz {
		pe.AzimuthSigma = sg[pqAzimuth]
	}
	return pe
}

// Indices of the quantities derivePair reports.
const (
	pqPointE = iota
	pqPointN
	pqPointU
	pqDepth
	pqOffset
	pqAzimuth
	pqDip
	pqMoment
	pqNet
	pqNetPhase // AC: phase of the net current, degrees
	pqCurrentI // |I1 - I2|/2, RMS for AC
	pqSpacing
	nPairQuantities
)

// derivePair maps a full parameter vector to the quantities of the pair of lines i
// and j (nPairQuantities, indexed by the pq constants), written to out. The pair's
// direction is the mean of line i's and of line j's turned the same way; its azimuth
// is not folded (it lies in [-45, 225) degrees) so that the net current, signed (DC)
// or phased (AC) along line i, stays along it; foldPair turns the quantities to an
// azimuth in [0, 180).
func derivePair(sp *separable, sv *survey, zref float64, flip []bool, v []float64, i, j int, w *deriveWork, out []float64) {
	q := deriveQuantities(sp, sv, zref, flip, v, w, nil)
	a, b := q[i*nQuantities:(i+1)*nQuantities], q[j*nQuantities:(j+1)*nQuantities]
	np, nq, nr := sp.nparams(), sp.q, sp.nrhs
	cur := func(l int) complex128 {
		re := v[np+l]
		var im float64
		if nr == 2 {
			im = v[np+nq+l]
		}
		c := complex(re, im)
		if flip[l] {
			c = -c
		}
		return c
	}
	ci, cj := cur(i), cur(j)
	// Both currents along line i's direction: a line whose azimuth lies more than 90
	// degrees from it (179 against 1) is oriented the other way.
	dAz := math.Remainder(b[qAzimuth]-a[qAzimuth], 180)
	dipJ := b[qDip]
	if math.Abs(b[qAzimuth]-a[qAzimuth]) > 90 {
		cj, dipJ = -cj, -dipJ
	}
	az := a[qAzimuth] + dAz/2
	dip := (a[qDip] + dipJ) / 2
	// The lines' points about the readings' centroid (deriveQuantities).
	pi := [3]float64{a[qPointE], a[qPointN], a[qPointU]}
	pj := [3]float64{b[qPointE], b[qPointN], b[qPointU]}
	pc := scale(add(pi, pj), 0.5)
	azr := az * math.Pi / 180
	right := [3]float64{math.Cos(azr), -math.Sin(azr), 0}
	s := (ci - cj) / 2
	d := norm(sub(pi, pj))
	abs := add(sv.centroid, pc)
	out[pqPointE], out[pqPointN], out[pqPointU] = abs[0], abs[1], abs[2]
	out[pqDepth] = (zref - sv.centroid[2]) - pc[2]
	out[pqOffset] = dot(pc, right)
	out[pqAzimuth], out[pqDip] = az, dip
	out[pqMoment] = cmplx.Abs(s) * d
	if nr == 1 {
		out[pqNet] = real(ci + cj)
	} else {
		out[pqNet] = cmplx.Abs(ci + cj)
		out[pqNetPhase] = cmplx.Phase(ci+cj) * 180 / math.Pi
	}
	out[pqCurrentI], out[pqSpacing] = cmplx.Abs(s), d
}

// foldPair turns the pair quantities of derivePair to the opposite direction when
// their azimuth lies outside [0, 180), as the lines' own are reported: the dip, the
// offset (to the right of the direction) and the DC net current change sign, the AC
// net current's phase turns by 180 degrees. The sigmas are unchanged. Before, the
// mean azimuth was folded and the net current left signed along line i, so a pair
// whose lines straddled north (359.9 and 0.1 degrees) read its net current reversed.
func foldPair(q []float64, ac bool) {
	if q[pqAzimuth] >= 0 && q[pqAzimuth] < 180 {
		return
	}
	q[pqAzimuth] = math.Mod(q[pqAzimuth]+360, 180)
	q[pqDip], q[pqOffset] = -q[pqDip]+0, -q[pqOffset]+0
	if ac {
		q[pqNetPhase] = math.Remainder(q[pqNetPhase]+180, 360)
	} else {
		q[pqNet] = -q[pqNet] + 0
	}
}

// pairRelSigma is the largest relative sigma of the currents of two opposite lines
// taken as resolved. Along the valley of equal current times spacing I = p/d, and a
// linearised sigma describes I only while d is known to a small fraction of itself:
// at 24% (5.0 ± 1.2 A, from a pair of 10 A 0.3 m apart fitted as 5 A 0.6 m apart, 4.3
// sigma from the truth) the 3-sigma range of d maps to I from 0.6 to 3.5 times the
// estimate. At 10% the curvature skews the range by under 0.1 sigma.
const pairRelSigma = 0.1

// pairDipoleShare is the least ratio of a pair's line-dipole field to its net
// current's at the sensors, I d / (net h), for two opposite lines to be reported as
// a pair (see pairOf). It was 0.5, which refused a pair 0.3 m apart at 1.5 m
// carrying 10 A out and 7 A back (a ratio of 0.47: 8.5 A x 0.3 m against 3 A x
// 1.8 m); its traverses were reported as one 2.7 A line 0.4 m too shallow or two
// wrong lines, and a 3 A loss on the go core as 1.5 A 5 m downstream. The phase
// ramp the test guards against fitted a ratio of 0.2.
const pairDipoleShare = 0.3

// pairOf returns the pair estimate of lines i and j of the summarised candidate c when
// they form a go-and-return pair the data do not resolve and the pair's centre and
// current times spacing are determined; ok is false otherwise (the lines are then
// reported as fitted). The pair is unresolved when either current is not
// identifiable, not significant (within phasorK sigma of zero for AC, 3 for DC) or
// not known to pairRelSigma of itself, or the lines coincide within their uncertainty (as the guard judges them). It is
// determined when its moment exceeds the same number of sigmas and its centre's
// depth and offset sigmas are positive and under half the centre's distance below
// the mean sensor height, whatever the depths are reported from.
//
// When the lines have collapsed onto one another (spacing under 2% of their depth
// below the sensors: the least squares prefer the line-dipole limit, or the fit
// stopped there), the spacing enters the field only through its square, the
// covariance there holds it at zero and the sigmas would leave out what the
// unknown spacing adds. The sigmas are then taken from the same fit with the lines
// split across the centre by a tenth of that depth (splitSigmas), where the spacing
// is a parameter like the others; the values are the fit's own.
func (f *fitter) pairOf(c *candidate, su *summary, i, j int) (PairEstimate, bool) {
	a, b := &su.lines[i], &su.lines[j]
	if a.Kind != "line" || b.Kind != "line" {
		return PairEstimate{}, false
	}
	sp := c.sp
	k := 3.0
	if sp.nrhs == 2 {
		k = phasorK
	}
	sig := func(e *SourceEstimate) bool {
		return e.Identifiable.Current && math.Abs(e.Current) > k*e.CurrentSigma && e.CurrentSigma < pairRelSigma*math.Abs(e.Current)
	}
	dist := norm(sub(a.Point, b.Point))
	sa, sb := math.Hypot(a.DepthSigma, a.OffsetSigma), math.Hypot(b.DepthSigma, b.OffsetSigma)
	coincide := dist < math.Max(0.01, 3*math.Hypot(sa, sb)) || !a.Identifiable.Offset || !b.Identifiable.Offset
	if sig(a) && sig(b) && !coincide {
		return PairEstimate{}, false // resolved: two lines
	}
	if math.Abs(math.Remainder(a.Azimuth-b.Azimuth, 180)) > 10 {
		return PairEstimate{}, false
	}
	base, sg := f.pairQuantities(sp, su, i, j)
	foldPair(base, sp.nrhs == 2)
	// Opposite currents (a go and a return).
	if base[pqCurrentI] == 0 || math.Abs(base[pqNet]) >= base[pqCurrentI] {
		return PairEstimate{}, false
	}
	h := f.sv.zmean - base[pqPointU]
	// The pair's own field must be a fair part of the net current's: at the
	// sensors the pair's line dipole gives mu0 I d / (2 pi h^2) against the
	// net current's mu0 net / (2 pi h), so I d / (net h) is their ratio, and
	// it must reach pairDipoleShare. A weaker "pair" is a small departure of
	// one line's field from the model, which two coincident lines absorb: in
	// review, a 20 A cable read with the phase turning along each traverse
	// (the frequency off) was fitted as a pair of 1290 A lines 3 mm apart
	// with I d = 4.4 A m and 19.3 A net (a ratio of 0.2), and the phase ramp
	// went unnoticed.
	if !(base[pqMoment] >= pairDipoleShare*math.Abs(base[pqNet])*h) {
		return PairEstimate{}, false
	}
	if base[pqSpacing] < 0.02*h && !f.splitting {
		s2, ok := f.splitSigmas(c, base, h, i, j)
		if !ok {
			return PairEstimate{}, false
		}
		sg = s2
	}
	pe := pairEstimate(sp, i, j, base, sg)
	// The centre's sigmas against its distance below the sensors (h), not its
	// reported depth, so that the datum (Settings.ReferenceZ) changes only the
	// depth reported: against the depth below a ground 0.3 m under the sensors,
	// a twin cable 0.2 m down read along one traverse with 50 nT of noise (offset
	// sigma 0.16 m, 0.5 m below the sensors) was a pair without a datum and one
	// line with the ground as datum (TestPairAnyDatum).
	if !(pe.Moment > k*pe.MomentSigma) || !(pe.DepthSigma > 0) || !(pe.OffsetSigma > 0) ||
		!(pe.DepthSigma < 0.5*h) || !(pe.OffsetSigma < 0.5*h) {
		return PairEstimate{}, false
	}
	pe.Notes = append(pe.Notes, "go-and-return pair: the current and the spacing are not separately determined, only their product; the centre, its depth, the azimuth and current times spacing are")
	return pe, true
}

// pairQuantities returns the quantities of the pair of lines i and j (derivePair) and
// their one-sigma uncertainties from the summary's covariance (delta method, central
// differences as in summarise).
func (f *fitter) pairQuantities(sp *separable, su *summary, i, j int) (base, sg []float64) {
	n := len(su.v)
	dw := &deriveWork{geom: make([]lineGeom, len(sp.geom)), cur: make([]complex128, len(sp.geom))}
	base = make([]float64, nPairQuantities)
	derivePair(sp, f.sv, su.zref, su.flip, su.v, i, j, dw, base)
	grad := make([][]float64, nPairQuantities)
	for qi := range grad {
		grad[qi] = make([]float64, n)
	}
	up, dn := make([]float64, nPairQuantities), make([]float64, nPairQuantities)
	v := append([]float64(nil), su.v...)
	for p := range n {
		if !derivedReads(sp, p) {
			continue
		}
		sd := math.Sqrt(math.Max(su.cov.At(p, p), 0))
		h := 1e-4 * sd
		if h == 0 || su.unresolved[p] {
			h = 1e-7 * (math.Abs(su.v[p]) + 1)
		}
		v[p] = su.v[p] + h
		derivePair(sp, f.sv, su.zref, su.flip, v, i, j, dw, up)
		v[p] = su.v[p] - h
		derivePair(sp, f.sv, su.zref, su.flip, v, i, j, dw, dn)
		v[p] = su.v[p]
		for qi := range nPairQuantities {
			d := up[qi] - dn[qi]
			switch qi {
			case pqAzimuth:
				d = math.Remainder(d, 180)
			case pqNetPhase:
				d = math.Remainder(d, 360)
			}
			grad[qi][p] = d / (2 * h)
		}
	}
	sg = make([]float64, nPairQuantities)
	for qi, g := range grad {
		sg[qi] = deltaSigma(g, su.cov)
	}
	return base, sg
}

// splitSigmas returns the sigmas of the pair quantities of lines i and j of candidate
// c, which have collapsed onto one another at the pair's centre (base), evaluated with
// the lines split across the centre by h/10 (h the centre's depth below the sensors)
// along the line joining them (horizontally when they coincide), the other sources kept
// and the currents and background solved again for that geometry (see pairOf).
func (f *fitter) splitSigmas(c *candidate, base []float64, h float64, i, j int) ([]float64, bool) {
	sp := c.sp
	g0, g1 := sp.geom[i], sp.geom[j]
	// Positions across the lines in line i's frame: offset along its n0, and height.
	s0 := dot(sub(add(g0.anchor, scale(g0.n0, g0.s)), g0.anchor), g0.n0)
	s1 := dot(sub(add(g1.anchor, scale(g1.n0, g1.s)), g0.anchor), g0.n0)
	us, uz := s1-s0, g1.z-g0.z
	if l := math.Hypot(us, uz); l > 0 {
		us, uz = us/l, uz/l
	} else {
		us, uz = 1, 0
	}
	sc, zc, dl := (s0+s1)/2, (g0.z+g1.z)/2, 0.05*h
	a, b := g0, g1
	a.anchor, a.n0, b.anchor, b.n0 = g0.anchor, g0.n0, g0.anchor, g0.n0
	a.s, a.z = sc-dl*us, zc-dl*uz
	b.s, b.z = sc+dl*us, zc+dl*uz
	if a.z > a.zHi || b.z > b.zHi {
		return nil, false
	}
	geom := append([]lineGeom(nil), sp.geom...)
	geom[i], geom[j] = a, b
	var dips []dipGeom
	if len(sp.dips) > 0 {
		dips = append(dips, sp.dips...)
	}
	sp2 := newSeparableIn(f.scr, f.sv.pts, f.sv.y, f.sv.nrhs, f.set.Background, f.sv.centroid, geom, dips)
	sp2.ptsLo, sp2.ptsHi = f.sv.lo, f.sv.hi
	sp2.scale = f.sv.scale
	sp2.lmWork, sp2.scr, sp2.pd = &f.scr.lm, f.scr, &f.sv.proj
	sp2.w = sp.w
	x, _, _ := sp2.packInto(f.scr.take(3 * sp2.nparams()))
	res, err := sp2.fullResiduals(x)
	if err != nil {
		return nil, false
	}
	cs := &candidate{sp: sp2, x: x, res: c.res, rss: sumSq(res), iters: c.iters}
	f.splitting = true
	su2, err := f.summariseAsIs(cs)
	f.splitting = false
	if err != nil {
		return nil, false
	}
	_, sg := f.pairQuantities(cs.sp, su2, i, j)
	return sg, true
}

// deltaSigma is the one-sigma of a quantity whose gradient with respect to the
// parameters is g, for their covariance cov (the delta method: sqrt(g' cov g)).
func deltaSigma(g []float64, cov mat.Symmetric) float64 {
	var s float64
	for a, ga := range g {
		if ga == 0 {
			continue
		}
		for b, gb := range g {
			s += ga * cov.At(a, b) * gb
		}
	}
	return math.Sqrt(math.Max(s, 0))
}
