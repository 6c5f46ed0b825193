package inverse

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// nT is the number of nanotesla in a tesla.
const nT = 1e9

// lineGeom is the geometry of one fitted line. The line crosses the vertical plane
// through anchor spanned by n0 (horizontal unit vector) and up at offset s along n0 and
// height z; its direction has azimuth az (radians clockwise from north) and dip (radians,
// positive descending along the direction).
type lineGeom struct {
	anchor, n0         [3]float64
	s, z, az, dip      float64
	holdAz, holdDip    bool
	sLo, sHi, zLo, zHi float64 // bounds
}

func dirOf(az, dip float64) [3]float64 {
	sa, ca := math.Sincos(az)
	sd, cd := math.Sincos(dip)
	return [3]float64{sa * cd, ca * cd, -sd}
}

func (g *lineGeom) line() Line {
	p := add(g.anchor, scale(g.n0, g.s))
	p[2] = g.z
	return Line{Point: p, Dir: dirOf(g.az, g.dip)}
}

func (g *lineGeom) nfree() int {
	n := 2
	if !g.holdAz {
		n++
	}
	if !g.holdDip {
		n++
	}
	return n
}

// separable is the variable-projection form of a K-line fit: for fixed geometry the
// strengths (currents, background) are the linear least-squares solution, and only the
// geometry is iterated (Golub & Pereyra 1973). The residual handed to the LM engine is
// Q2^T y, the component of the (weighted) data orthogonal to the basis, expressed in the
// Householder basis of its complement; the Jacobian is Kaufman's (BIT 15:49-57, 1975)
// -Q2^T (dPhi/dtheta) c, which gives the exact gradient of ||P_perp y||^2.
type separable struct {
	pts  [][3]float64
	m    int       // rows per right-hand side, 3 per point
	nrhs int       // 1 for DC, 2 for AC (real and imaginary parts)
	y    []float64 // m x nrhs row-major, unweighted
	w    []float64 // row weights (square roots of robust weights), nil for 1
	bg   BackgroundModel
	org  [3]float64 // background gradient origin
	geom []lineGeom
	dips []dipGeom
	q    int // basis columns: lines, then 3 per dipole, then background

	// workspace and cached state of the last evaluation
	phi, qty, coef, tau, work []float64
	dblk                      []float64
	at                        []float64 // x of the cached state
	ok                        bool
}

// dipGeom is the position of a fitted point dipole and its bounds.
type dipGeom struct {
	pos      [3]float64
	lim, zHi float64 // horizontal box half-width about the anchor, top bound
	anchor   [3]float64
	zLo      float64
}

func newSeparable(pts [][3]float64, y []float64, nrhs int, bg BackgroundModel, org [3]float64, geom []lineGeom, dips []dipGeom) *separable {
	m := 3 * len(pts)
	sp := &separable{pts: pts, m: m, nrhs: nrhs, y: y, bg: bg, org: org, geom: geom, dips: dips}
	sp.q = len(geom) + 3*len(dips) + bg.columns()
	return sp
}

// dipCol is the first basis column of dipole i; bgCol that of the background.
func (sp *separable) dipCol(i int) int { return len(sp.geom) + 3*i }
func (sp *separable) bgCol() int       { return len(sp.geom) + 3*len(sp.dips) }

func (sp *separable) nparams() int {
	n := 3 * len(sp.dips)
	for i := range sp.geom {
		n += sp.geom[i].nfree()
	}
	return n
}

// pack returns the free geometry parameters and their bounds.
func (sp *separable) pack() (x, lo, hi []float64) {
	for _, g := range sp.geom {
		x = append(x, g.s, g.z)
		lo = append(lo, g.sLo, g.zLo)
		hi = append(hi, g.sHi, g.zHi)
		if !g.holdAz {
			x = append(x, g.az)
			lo = append(lo, math.Inf(-1))
			hi = append(hi, math.Inf(1))
		}
		if !g.holdDip {
			x = append(x, g.dip)
			lo = append(lo, -80*math.Pi/180)
			hi = append(hi, 80*math.Pi/180)
		}
	}
	for _, d := range sp.dips {
		x = append(x, d.pos[0], d.pos[1], d.pos[2])
		lo = append(lo, d.anchor[0]-d.lim, d.anchor[1]-d.lim, d.zLo)
		hi = append(hi, d.anchor[0]+d.lim, d.anchor[1]+d.lim, d.zHi)
	}
	return x, lo, hi
}

func (sp *separable) unpack(x []float64) {
	k := 0
	for i := range sp.geom {
		g := &sp.geom[i]
		g.s, g.z = x[k], x[k+1]
		k += 2
		if !g.holdAz {
			g.az = x[k]
			k++
		}
		if !g.holdDip {
			g.dip = x[k]
			k++
		}
	}
	for i := range sp.dips {
		sp.dips[i].pos = [3]float64{x[k], x[k+1], x[k+2]}
		k += 3
	}
}

var errSingularBasis = errors.New("inverse: the sources' fields are linearly dependent for this geometry")

func (sp *separable) weight(row int) float64 {
	if sp.w == nil {
		return 1
	}
	return sp.w[row]
}

// buildPhi fills the weighted basis matrix (m x q, row-major, nT per A or per nT).
func (sp *separable) buildPhi(phi []float64) error {
	q := sp.q
	lines := make([]Line, len(sp.geom))
	for l := range sp.geom {
		lines[l] = sp.geom[l].line()
	}
	bgc := Background{Origin: sp.org, Gradient: sp.bg == BackgroundGradient}
	var basis [8][3]float64
	for i, r := range sp.pts {
		for l, ln := range lines {
			// Line.Field with the unit direction already in hand.
			d := sub(r, ln.Point)
			u := ln.Dir
			du := dot(d, u)
			rho := sub(d, scale(u, du))
			b := scale(cross(u, d), nT*k2pi/dot(rho, rho))
			for j := range 3 {
				phi[(3*i+j)*q+l] = b[j]
			}
		}
		for di, d := range sp.dips {
			Dipole{Pos: d.pos}.Basis(r, basis[:3])
			c0 := sp.dipCol(di)
			for k := range 3 {
				for j := range 3 {
					phi[(3*i+j)*q+c0+k] = nT * basis[k][j]
				}
			}
		}
		if nb := sp.bg.columns(); nb > 0 {
			bgc.Basis(r, basis[:nb])
			c0 := sp.bgCol()
			for k := range nb {
				for j := range 3 {
					phi[(3*i+j)*q+c0+k] = basis[k][j]
				}
			}
		}
	}
	for row := range sp.m {
		w := sp.weight(row)
		for k := range q {
			v := phi[row*q+k] * w
			if !finite(v) {
				return errors.New("inverse: a trial conductor passes through a sensor")
			}
			phi[row*q+k] = v
		}
	}
	return nil
}

// evaluate factors the basis at x and solves for the strengths.
func (sp *separable) evaluate(x []float64) error {
	if sp.ok && equal(sp.at, x) {
		return nil
	}
	sp.ok = false
	sp.unpack(x)
	m, q, nr := sp.m, sp.q, sp.nrhs
	if m <= q {
		return errors.New("inverse: too few readings for the number of sources")
	}
	sp.phi = grow(sp.phi, m*q)
	sp.qty = grow(sp.qty, m*nr)
	sp.coef = grow(sp.coef, q*nr)
	sp.tau = grow(sp.tau, q)
	if err := sp.buildPhi(sp.phi); err != nil {
		return err
	}
	for row := range m {
		w := sp.weight(row)
		for k := range nr {
			sp.qty[row*nr+k] = sp.y[row*nr+k] * w
		}
	}
	a := blas64.General{Rows: m, Cols: q, Stride: q, Data: sp.phi}
	sp.ensureWork(a, nr)
	lapack64.Geqrf(a, sp.tau, sp.work, len(sp.work))
	// Rank check on the diagonal of R.
	var rmax float64
	for k := range q {
		rmax = math.Max(rmax, math.Abs(sp.phi[k*q+k]))
	}
	for k := range q {
		if math.Abs(sp.phi[k*q+k]) <= 1e-11*rmax {
			return errSingularBasis
		}
	}
	c := blas64.General{Rows: m, Cols: nr, Stride: nr, Data: sp.qty}
	lapack64.Ormqr(blas.Left, blas.Trans, a, sp.tau, c, sp.work, len(sp.work))
	// Back substitution R coef = (Q^T y)[:q].
	for k := range nr {
		for i := q - 1; i >= 0; i-- {
			s := sp.qty[i*nr+k]
			for j := i + 1; j < q; j++ {
				s -= sp.phi[i*q+j] * sp.coef[j*nr+k]
			}
			sp.coef[i*nr+k] = s / sp.phi[i*q+i]
		}
	}
	sp.at = append(sp.at[:0], x...)
	sp.ok = true
	return nil
}

func (sp *separable) ensureWork(a blas64.General, ncols int) {
	// The unblocked Householder code needs only max(columns) of workspace; the blocked
	// code would ask for far more and gains nothing at these sizes.
	if need := max(a.Cols, ncols, 1); len(sp.work) < need {
		sp.work = make([]float64, need)
	}
}

// residLen is the length of the projected residual.
func (sp *separable) residLen() int { return (sp.m - sp.q) * sp.nrhs }

func (sp *separable) resid(x, r []float64) error {
	if err := sp.evaluate(x); err != nil {
		return err
	}
	mq := sp.m - sp.q
	for k := range sp.nrhs {
		for i := range mq {
			r[k*mq+i] = sp.qty[(sp.q+i)*sp.nrhs+k]
		}
	}
	return nil
}

// dPhiC writes, for every free parameter p and right-hand side k, the weighted vector
// (dPhi/dtheta_p) c_k into column p*nrhs+k of the m x (np*nrhs) row-major dst.
func (sp *separable) dPhiC(dst []float64, np int) {
	nr := sp.nrhs
	cols := np * nr
	for i := range dst {
		dst[i] = 0
	}
	p := 0
	for l := range sp.geom {
		g := &sp.geom[l]
		ln := g.line()
		u, p0 := ln.Dir, ln.Point
		sa, ca := math.Sincos(g.az)
		sd, cd := math.Sincos(g.dip)
		// Directions of the free parameters: dPoint/ds = n0, dPoint/dz = up, du/daz, du/ddip.
		var dirs [4][3]float64
		var isDir [4]bool // true: derivative along u; false: along the point
		dirs[0], dirs[1] = g.n0, [3]float64{0, 0, 1}
		nd := 2
		if !g.holdAz {
			dirs[nd], isDir[nd] = [3]float64{ca * cd, -sa * cd, 0}, true
			nd++
		}
		if !g.holdDip {
			dirs[nd], isDir[nd] = [3]float64{-sa * sd, -ca * sd, -cd}, true
			nd++
		}
		for i, r := range sp.pts {
			// B = K (u x d)/q, d = r - p0, q = |d|^2 - (d.u)^2, rho = d - (d.u) u.
			// dB/dp0 . v = -K (u x v / q - 2 (rho.v)(u x d)/q^2)
			// dB/du . w =  K (w x d / q + 2 (d.u)(d.w)(u x d)/q^2)
			d := sub(r, p0)
			du := dot(d, u)
			rho := sub(d, scale(u, du))
			q := dot(rho, rho)
			ux := cross(u, d)
			kq := nT * k2pi / q
			kq2 := 2 * kq / q
			var derivs [4][3]float64
			for k := range nd {
				v := dirs[k]
				if isDir[k] {
					derivs[k] = add(scale(cross(v, d), kq), scale(ux, kq2*du*dot(d, v)))
				} else {
					derivs[k] = add(scale(cross(u, v), -kq), scale(ux, kq2*dot(rho, v)))
				}
			}
			for j := range 3 {
				row := 3*i + j
				w := sp.weight(row)
				base := dst[row*cols:]
				for k := range nd {
					for h := range nr {
						base[(p+k)*nr+h] = derivs[k][j] * sp.coef[l*nr+h] * w
					}
				}
			}
		}
		p += g.nfree()
	}
	for di, dg := range sp.dips {
		dp := Dipole{Pos: dg.pos}
		c0 := sp.dipCol(di)
		for i, r := range sp.pts {
			for h := range nr {
				m := [3]float64{sp.coef[c0*nr+h], sp.coef[(c0+1)*nr+h], sp.coef[(c0+2)*nr+h]}
				_, dPos := dp.FieldJac(r, m)
				for j := range 3 {
					row := 3*i + j
					w := sp.weight(row) * nT
					base := dst[row*cols:]
					for k := range 3 {
						base[(p+k)*nr+h] = dPos[j][k] * w
					}
				}
			}
		}
		p += 3
	}
}

func (sp *separable) jac(x, _ []float64, J *mat.Dense) error {
	if err := sp.evaluate(x); err != nil {
		return err
	}
	np := sp.nparams()
	nr := sp.nrhs
	cols := np * nr
	sp.dblk = grow(sp.dblk, sp.m*cols)
	sp.dPhiC(sp.dblk, np)
	a := blas64.General{Rows: sp.m, Cols: sp.q, Stride: sp.q, Data: sp.phi}
	c := blas64.General{Rows: sp.m, Cols: cols, Stride: cols, Data: sp.dblk}
	sp.ensureWork(a, cols)
	lapack64.Ormqr(blas.Left, blas.Trans, a, sp.tau, c, sp.work, len(sp.work))
	mq := sp.m - sp.q
	jd := J.RawMatrix()
	for k := range nr {
		for i := range mq {
			row := jd.Data[(k*mq+i)*jd.Stride:]
			src := sp.dblk[(sp.q+i)*cols:]
			for p := range np {
				row[p] = -src[p*nr+k]
			}
		}
	}
	return nil
}

// problem wraps the separable model for the LM engine.
func (sp *separable) problem() (*lmProblem, []float64) {
	x, lo, hi := sp.pack()
	return &lmProblem{m: sp.residLen(), n: len(x), resid: sp.resid, jac: sp.jac, lower: lo, upper: hi}, x
}

// fullJacobian returns the weighted Jacobian of the full model with respect to all
// parameters, geometry then strengths (per right-hand side), in the original basis:
// rows k*m + row, the parameter ordering of ParamNames. Uncertainties come from it
// (DOMAIN.md: "from the full Jacobian at the solution, not from the reduced problem").
func (sp *separable) fullJacobian(x []float64) (*mat.Dense, error) {
	if err := sp.evaluate(x); err != nil {
		return nil, err
	}
	np := sp.nparams()
	nr, q, m := sp.nrhs, sp.q, sp.m
	cols := np * nr
	dblk := make([]float64, m*cols)
	sp.dPhiC(dblk, np)
	phi := make([]float64, m*q)
	if err := sp.buildPhi(phi); err != nil {
		return nil, err
	}
	J := mat.NewDense(m*nr, np+q*nr, nil)
	for k := range nr {
		for row := range m {
			for p := range np {
				J.Set(k*m+row, p, dblk[row*cols+p*nr+k])
			}
			for j := range q {
				J.Set(k*m+row, np+k*q+j, phi[row*q+j])
			}
		}
	}
	return J, nil
}

// fullResiduals returns the unweighted residuals y - Phi c, m x nrhs row-major.
func (sp *separable) fullResiduals(x []float64) ([]float64, error) {
	if err := sp.evaluate(x); err != nil {
		return nil, err
	}
	m, q, nr := sp.m, sp.q, sp.nrhs
	w := sp.w
	sp.w = nil
	phi := make([]float64, m*q)
	err := sp.buildPhi(phi)
	sp.w = w
	if err != nil {
		return nil, err
	}
	res := make([]float64, m*nr)
	for row := range m {
		for k := range nr {
			v := sp.y[row*nr+k]
			for j := range q {
				v -= phi[row*q+j] * sp.coef[j*nr+k]
			}
			res[row*nr+k] = v
		}
	}
	return res, nil
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func equal(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// atBound reports whether any geometry parameter of x lies on its bound.
func (sp *separable) atBound(x []float64) bool {
	_, lo, hi := sp.pack()
	for i, v := range x {
		if v <= lo[i] || v >= hi[i] {
			return true
		}
	}
	return false
}
