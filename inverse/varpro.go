package inverse

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/floats"
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
	// azLo, azHi bound a fitted azimuth when azHi > azLo (a single traverse: within
	// singleAzimuthRange of its perpendicular); otherwise it is free.
	azLo, azHi float64
	// azPressed says that the bound held the fitted azimuth back: the fit repeated
	// with a wider bound turned the line beyond it and fitted the readings better
	// (see fitter.pressedByBound).
	azPressed bool
	// above says the line is bounded above the sensors (Settings.Above): zLo
	// is then Settings.MinDepth above the highest sensor and zHi far above,
	// the bound of a line below flipped; its height bound is zLo.
	above bool
}

// atHeightBound reports whether the line sits at the bound of its height
// nearest the sensors: zHi for a line below them, zLo for one above.
func (g *lineGeom) atHeightBound() bool {
	if g.above {
		return g.z <= g.zLo+1e-9
	}
	return g.z >= g.zHi-1e-9
}

// azBounds returns the bounds of a fitted azimuth.
func (g *lineGeom) azBounds() (lo, hi float64) {
	if g.azHi > g.azLo {
		return g.azLo, g.azHi
	}
	return math.Inf(-1), math.Inf(1)
}

// atAzBound reports whether a fitted azimuth sits at its bound, or was held back by it
// (azPressed).
func (g *lineGeom) atAzBound() bool {
	return !g.holdAz && g.azHi > g.azLo && (g.azPressed || g.az <= g.azLo+1e-9 || g.az >= g.azHi-1e-9)
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
// Q2^T P_B y, the component of the (weighted) data orthogonal to the basis, expressed in
// the Householder basis of its complement (P_B removes the uniform background, see
// evaluate); the Jacobian is Kaufman's (BIT 15:49-57, 1975) -Q2^T P_B (dPhi/dtheta) c,
// which gives the exact gradient of ||P_perp y||^2.
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

	// workspace and cached state of the last evaluation. The uniform background columns
	// are projected out analytically (see evaluate); a holds the other g = q - 3 columns
	// (or all q without a uniform background), weighted, projected and factored by
	// houseQR, column-major; qty holds Q^T of the projected weighted data, m x nrhs
	// column-major.
	a, qty, coef, tau []float64
	pos               []int        // physical column of each basis column in a; -1 for uniform background
	g                 int          // columns of a
	bn2               [3]float64   // squared norms of the weighted uniform background columns
	bbar              [][3]float64 // per column of a: its projection coefficients on them
	dblk, full        []float64    // derivative columns; unweighted basis for residuals
	pd                *projData    // the survey's projected data, shared by its separables, or nil
	rbuf              []float64    // the residuals of fullResiduals
	lmWork            *[]float64   // the LM engine's workspace (shared within a fit), or nil
	scr               *scratch     // lends the work buffers above, or nil to allocate them
	// Path-averaged readings (Problem.Travel): ptsLo and ptsHi are the outer
	// Gauss-Legendre nodes of each reading's path, nil for point readings; tlo and
	// thi are workspace for the basis and derivatives evaluated there.
	ptsLo, ptsHi [][3]float64
	tlo, thi     []float64
	// scale is the conductors' factor per reading (Problem.Scale), nil for 1: it
	// multiplies the rows of every line column and of their derivatives, not the
	// dipoles' (a magnetised object's field does not follow the current) nor the
	// background's.
	scale []float64
	at    []float64 // x of the cached state
	ok    bool
	// lmp is problem's wrapper for the LM engine, kept by a scratch's separable when it
	// is lent again (its method values are bound to this separable).
	lmp *lmProblem
}

// projData holds the unweighted data of a survey with the uniform background projected
// out (P_B y, m x nrhs column-major, as evaluate leaves it in qty before the
// Householder reflections) and the projection coefficients. They do not depend on the
// geometry, so the first unweighted evaluation on the survey forms them and every other
// separable on it copies them (a weighted one forms its own).
type projData struct {
	ok  bool
	qty []float64
	bar [2][3]float64
}

// dipGeom is the position of a fitted point dipole and its bounds.
type dipGeom struct {
	pos      [3]float64
	lim, zHi float64 // horizontal box half-width about the anchor, top bound
	anchor   [3]float64
	zLo      float64
}

func newSeparable(pts [][3]float64, y []float64, nrhs int, bg BackgroundModel, org [3]float64, geom []lineGeom, dips []dipGeom) *separable {
	return newSeparableIn(nil, pts, y, nrhs, bg, org, geom, dips)
}

// newSeparableIn is newSeparable with the separable itself lent by scr (nil to allocate
// it); its work buffers are set by the caller as before.
func newSeparableIn(scr *scratch, pts [][3]float64, y []float64, nrhs int, bg BackgroundModel, org [3]float64, geom []lineGeom, dips []dipGeom) *separable {
	m := 3 * len(pts)
	sp := scr.separable()
	// A lent separable keeps its LM wrapper and its column layout's memory (see
	// scratch.separable).
	*sp = separable{pts: pts, m: m, nrhs: nrhs, y: y, bg: bg, org: org, geom: geom, dips: dips, lmp: sp.lmp, pos: sp.pos}
	sp.q = len(geom) + 3*len(dips) + bg.columns()
	// Layout of a: lines, dipoles, gradient terms; the uniform background is implicit.
	if cap(sp.pos) >= sp.q {
		sp.pos = sp.pos[:sp.q]
	} else {
		sp.pos = make([]int, sp.q)
	}
	bc := sp.bgCol()
	for c := range sp.pos {
		switch {
		case c < bc:
			sp.pos[c] = c
		case c < bc+3:
			sp.pos[c] = -1
		default:
			sp.pos[c] = c - 3
		}
	}
	sp.g = sp.q
	if bg.columns() >= 3 {
		sp.g = sp.q - 3
	}
	return sp
}

// uniform reports whether the basis has the three uniform background columns.
func (sp *separable) uniform() bool { return sp.g < sp.q }

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
func (sp *separable) pack() (x, lo, hi []float64) { return sp.packInto(nil) }

// packInto is pack with the three vectors in buf when it holds them (3 nparams).
func (sp *separable) packInto(buf []float64) (x, lo, hi []float64) {
	n := sp.nparams()
	if len(buf) < 3*n {
		buf = make([]float64, 3*n)
	}
	x, lo, hi = buf[:0:n], buf[n:n:2*n], buf[2*n:2*n:3*n]
	for _, g := range sp.geom {
		x = append(x, g.s, g.z)
		lo = append(lo, g.sLo, g.zLo)
		hi = append(hi, g.sHi, g.zHi)
		if !g.holdAz {
			x = append(x, g.az)
			alo, ahi := g.azBounds()
			lo = append(lo, alo)
			hi = append(hi, ahi)
		}
		if !g.holdDip {
			x = append(x, g.dip)
			lo = append(lo, -dipBound)
			hi = append(hi, dipBound)
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
	return sp.fillPhi(phi, sp.q, 1, nil)
}

// fillPhi writes the weighted basis: element (row, column c) goes to phi[row*rs +
// pos[c]*cs], or phi[row*rs + c*cs] when pos is nil; columns with pos[c] < 0 are skipped.
func (sp *separable) fillPhi(phi []float64, rs, cs int, pos []int) error {
	finite := sp.fillRaw(phi, rs, cs, pos, sp.pts)
	col := func(c int) int {
		if pos == nil {
			return c
		}
		return pos[c]
	}
	if sp.ptsLo != nil {
		// Path average by three-point Gauss-Legendre quadrature (pathMean), element by
		// element over the written entries.
		sp.tlo = sp.scr.grow(sp.tlo, len(phi))
		sp.thi = sp.scr.grow(sp.thi, len(phi))
		sp.fillRaw(sp.tlo, rs, cs, pos, sp.ptsLo)
		sp.fillRaw(sp.thi, rs, cs, pos, sp.ptsHi)
		finite = 0 // the path means are checked afresh
		for c := range sp.q {
			pc := col(c)
			if pc < 0 {
				continue
			}
			for row := range sp.m {
				k := row*rs + pc*cs
				phi[k] = pathMean(sp.tlo[k], phi[k], sp.thi[k])
			}
		}
	}
	if sp.scale != nil {
		for c := range len(sp.geom) {
			pc := col(c)
			if pc < 0 {
				continue
			}
			for row := range sp.m {
				phi[row*rs+pc*cs] *= sp.scale[row/3]
			}
		}
	}
	return sp.weightCheck(phi, rs, cs, col, finite)
}

// fillRaw writes the unweighted basis at the points pts in the layout of fillPhi. Bit
// pc of the result is set for a physical column pc (below 64) that the line kernel
// wrote and found finite throughout (lineColumn).
func (sp *separable) fillRaw(phi []float64, rs, cs int, pos []int, pts [][3]float64) (finite uint64) {
	col := func(c int) int {
		if pos == nil {
			return c
		}
		return pos[c]
	}
	var basis [8][3]float64
	for l := range sp.geom {
		ln := sp.geom[l].line()
		u, p0, off := ln.Dir, ln.Point, col(l)*cs
		if rs == 1 {
			if lineColumn(phi[off:off+3*len(pts)], u, p0, pts) && col(l) < 64 {
				finite |= 1 << col(l)
			}
			continue
		}
		for i, r := range pts {
			// Line.Field with the unit direction already in hand.
			d0, d1, d2 := r[0]-p0[0], r[1]-p0[1], r[2]-p0[2]
			du := d0*u[0] + d1*u[1] + d2*u[2]
			r0, r1, r2 := d0-du*u[0], d1-du*u[1], d2-du*u[2]
			k := nT * k2pi / (r0*r0 + r1*r1 + r2*r2)
			row := 3*i*rs + off
			phi[row] = k * (u[1]*d2 - u[2]*d1)
			phi[row+rs] = k * (u[2]*d0 - u[0]*d2)
			phi[row+2*rs] = k * (u[0]*d1 - u[1]*d0)
		}
	}
	for di, d := range sp.dips {
		c0 := sp.dipCol(di)
		dp := Dipole{Pos: d.pos}
		for i, r := range pts {
			dp.Basis(r, basis[:3])
			for k := range 3 {
				for j := range 3 {
					phi[(3*i+j)*rs+col(c0+k)*cs] = nT * basis[k][j]
				}
			}
		}
	}
	if nb := sp.bg.columns(); nb == 3 && pos == nil {
		// Uniform background: the basis is the identity per axis (Background.Basis).
		c0 := sp.bgCol()
		for row := range sp.m {
			for k := range 3 {
				v := 0.0
				if row%3 == k {
					v = 1
				}
				phi[row*rs+(c0+k)*cs] = v
			}
		}
	} else if nb > 0 && (pos == nil || nb > 3) {
		bgc := Background{Origin: sp.org, Gradient: sp.bg == BackgroundGradient}
		if sp.bg == BackgroundAlong {
			// Formed here, not kept in the separable: the direction is only needed
			// for this background, and a larger separable slowed every fit.
			bgc.Along = alongAxis(sp.pts, sp.org)
		}
		c0 := sp.bgCol()
		for i, r := range pts {
			bgc.Basis(r, basis[:nb])
			for k := range nb {
				if c := col(c0 + k); c >= 0 {
					for j := range 3 {
						phi[(3*i+j)*rs+c*cs] = basis[k][j]
					}
				}
			}
		}
	}
	return finite
}

// lineColumn writes the unweighted basis column of the line through p0 along the unit
// vector u at the points pts (3 rows each) into col: the loop of fillRaw for a contiguous
// column, with the vectors in scalars and no bounds checks in the loop. Where the
// assembly kernel is in use it takes the readings four at a time (same values bit for
// bit) and the loop does the last len(pts) mod 4. It reports whether every value it
// wrote is finite (the OR of the bits of v - v, +0 for a finite v and a NaN
// otherwise), which spares weightCheck a pass over the column.
func lineColumn(col []float64, u, p0 [3]float64, pts [][3]float64) (finite bool) {
	u0, u1, u2 := u[0], u[1], u[2]
	p00, p01, p02 := p0[0], p0[1], p0[2]
	finite = true
	if n := min(len(pts), len(col)/3) &^ 3; n > 0 && useLineKern {
		finite = lineColumnAVX2(&col[0], &pts[0][0], n, u0, u1, u2, p00, p01, p02, nT*k2pi)
		col, pts = col[3*n:], pts[n:]
	}
	var bad uint64
	for i := range pts {
		if len(col) < 3 {
			break
		}
		r := &pts[i]
		d0, d1, d2 := r[0]-p00, r[1]-p01, r[2]-p02
		du := d0*u0 + d1*u1 + d2*u2
		r0, r1, r2 := d0-du*u0, d1-du*u1, d2-du*u2
		k := nT * k2pi / (r0*r0 + r1*r1 + r2*r2)
		c0, c1, c2 := k*(u1*d2-u2*d1), k*(u2*d0-u0*d2), k*(u0*d1-u1*d0)
		col[0], col[1], col[2] = c0, c1, c2
		bad |= math.Float64bits(c0-c0) | math.Float64bits(c1-c1) | math.Float64bits(c2-c2)
		col = col[3:]
	}
	return finite && bad == 0
}

// weightCheck applies the row weights to the written entries of phi and reports a
// basis that is not finite (a trial conductor through a sensor or its path).
func (sp *separable) weightCheck(phi []float64, rs, cs int, col func(int) int, finite uint64) error {
	for c := range sp.q {
		pc := col(c)
		if pc < 0 {
			continue
		}
		if rs == 1 {
			// Contiguous column.
			v := phi[pc*cs : pc*cs+sp.m]
			if sp.w == nil {
				if pc < 64 && finite&(1<<pc) != 0 {
					continue // written finite by lineColumn
				}
				// The sum of squares is finite only if every entry is: then there is
				// nothing to find (otherwise the loop below decides, as an overflow of
				// the sum alone is no error).
				if s := floats.Dot(v, v); s-s == 0 {
					continue
				}
			}
			var bad float64
			if sp.w != nil {
				w := sp.w[:len(v)]
				for i := range v {
					v[i] *= w[i]
					bad += v[i] - v[i]
				}
			} else {
				for _, x := range v {
					bad += x - x
				}
			}
			if bad != 0 || bad != bad { // NaN or infinite somewhere
				return errors.New("inverse: a trial conductor passes through a sensor")
			}
			continue
		}
		for row := range sp.m {
			v := phi[row*rs+pc*cs]
			if sp.w != nil {
				v *= sp.w[row]
			}
			if v-v != 0 { // NaN or infinite
				return errors.New("inverse: a trial conductor passes through a sensor")
			}
			phi[row*rs+pc*cs] = v
		}
	}
	return nil
}

// project removes from the m-vector v (weighted rows) its component in the span of the
// weighted uniform background columns b_e, b_n, b_u (disjoint supports: every third
// row), v <- v - sum_a b_a (b_a.v)/(b_a.b_a), and returns the coefficients (b_a.v)/(b_a.b_a).
func (sp *separable) project(v []float64) [3]float64 {
	n := sp.m / 3
	v = v[:3*n]
	var s0, s1, s2 float64
	w := sp.w
	if w == nil {
		// Two readings per step; each sum still takes the rows in order.
		t := v
		for len(t) >= 6 {
			s0 += t[0]
			s1 += t[1]
			s2 += t[2]
			s0 += t[3]
			s1 += t[4]
			s2 += t[5]
			t = t[6:]
		}
		if len(t) >= 3 {
			s0 += t[0]
			s1 += t[1]
			s2 += t[2]
		}
		s0, s1, s2 = s0/sp.bn2[0], s1/sp.bn2[1], s2/sp.bn2[2]
		sub3(v, s0, s1, s2)
		return [3]float64{s0, s1, s2}
	}
	w = w[:3*n]
	for i := range n {
		t, u := v[3*i:3*i+3:3*i+3], w[3*i:3*i+3:3*i+3]
		s0 += u[0] * t[0]
		s1 += u[1] * t[1]
		s2 += u[2] * t[2]
	}
	s0, s1, s2 = s0/sp.bn2[0], s1/sp.bn2[1], s2/sp.bn2[2]
	for i := range n {
		t, u := v[3*i:3*i+3:3*i+3], w[3*i:3*i+3:3*i+3]
		t[0] -= u[0] * s0
		t[1] -= u[1] * s1
		t[2] -= u[2] * s2
	}
	return [3]float64{s0, s1, s2}
}

// projectCols is project on each of the cols m-row columns of the column-major a
// (column c at a[c*m:(c+1)*m]), storing column c's coefficients in bar[c] when bar is
// not nil. Without weights it sums two columns in one pass over the rows: each sum
// still takes its column's rows in order, as project does (the same numbers bit for
// bit), but the two columns' six sums are independent chains of additions where one
// column's three had to wait on each other's latency.
func (sp *separable) projectCols(a []float64, cols int, bar [][3]float64) {
	m := sp.m
	c := 0
	if sp.w == nil {
		n3 := 3 * (m / 3)
		for ; c+4 <= cols; c += 4 {
			col := [4][]float64{a[c*m : (c+1)*m], a[(c+1)*m : (c+2)*m], a[(c+2)*m : (c+3)*m], a[(c+3)*m : (c+4)*m]}
			s := sp.sums4(col[0], col[1], col[2], col[3])
			for k := range 4 {
				sub3(col[k][:n3], s[k][0], s[k][1], s[k][2])
				if bar != nil {
					bar[c+k] = s[k]
				}
			}
		}
		for ; c+2 <= cols; c += 2 {
			u, v := a[c*m:(c+1)*m], a[(c+1)*m:(c+2)*m]
			su, sv := sp.sums2(u, v)
			sub3(u[:3*(m/3)], su[0], su[1], su[2])
			sub3(v[:3*(m/3)], sv[0], sv[1], sv[2])
			if bar != nil {
				bar[c], bar[c+1] = su, sv
			}
		}
	}
	for ; c < cols; c++ {
		cb := sp.project(a[c*m : (c+1)*m])
		if bar != nil {
			bar[c] = cb
		}
	}
}

// sums2 returns project's unweighted coefficients of the columns u and v (each sum
// over the rows in order, then divided by bn2).
func (sp *separable) sums2(u, v []float64) (su, sv [3]float64) {
	n3 := 3 * (sp.m / 3)
	u, v = u[:n3:n3], v[:n3:n3]
	var u0, u1, u2, v0, v1, v2 float64
	for i := 0; i+2 < len(u) && i+2 < len(v); i += 3 {
		u0 += u[i]
		u1 += u[i+1]
		u2 += u[i+2]
		v0 += v[i]
		v1 += v[i+1]
		v2 += v[i+2]
	}
	b := sp.bn2
	return [3]float64{u0 / b[0], u1 / b[1], u2 / b[2]}, [3]float64{v0 / b[0], v1 / b[1], v2 / b[2]}
}

// sums4 is sums2 for four columns.
func (sp *separable) sums4(u, v, w, x []float64) (s [4][3]float64) {
	n3 := 3 * (sp.m / 3)
	u, v, w, x = u[:n3:n3], v[:n3:n3], w[:n3:n3], x[:n3:n3]
	var u0, u1, u2, v0, v1, v2, w0, w1, w2, x0, x1, x2 float64
	for i := 0; i+2 < len(u) && i+2 < len(v) && i+2 < len(w) && i+2 < len(x); i += 3 {
		u0 += u[i]
		u1 += u[i+1]
		u2 += u[i+2]
		v0 += v[i]
		v1 += v[i+1]
		v2 += v[i+2]
		w0 += w[i]
		w1 += w[i+1]
		w2 += w[i+2]
		x0 += x[i]
		x1 += x[i+1]
		x2 += x[i+2]
	}
	b := sp.bn2
	return [4][3]float64{
		{u0 / b[0], u1 / b[1], u2 / b[2]}, {v0 / b[0], v1 / b[1], v2 / b[2]},
		{w0 / b[0], w1 / b[1], w2 / b[2]}, {x0 / b[0], x1 / b[1], x2 / b[2]},
	}
}

// evaluate factors the basis at x and solves for the strengths.
//
// With a uniform background Phi = [L, B], B holding the three weighted per-axis
// constant columns, the projection factors as P_perp = P_perp(P_B L) P_perp(B): B is
// removed from every other column and from the data analytically (a weighted mean per
// axis, exact because the columns of B have disjoint supports), and only the projected
// columns P_B L are factored by Householder QR. The background strengths follow by back
// substitution, c_B = (B^T y - B^T L c_L)/diag(B^T B).
func (sp *separable) evaluate(x []float64) error {
	if sp.ok && equal(sp.at, x) {
		return nil
	}
	sp.ok = false
	sp.unpack(x)
	m, q, nr, g := sp.m, sp.q, sp.nrhs, sp.g
	if m <= q {
		return errors.New("inverse: too few readings for the number of sources")
	}
	sp.a = sp.scr.grow(sp.a, m*max(g, 1))
	sp.qty = sp.scr.grow(sp.qty, m*nr)
	sp.coef = sp.scr.grow(sp.coef, q*nr)
	sp.tau = sp.scr.grow(sp.tau, max(g, 1))
	if err := sp.fillPhi(sp.a, 1, m, sp.pos); err != nil {
		return err
	}
	// The projected unweighted data do not depend on the geometry: once a separable on
	// the survey has formed them, the others copy them.
	pd := sp.pd
	if !sp.uniform() || sp.w != nil {
		pd = nil
	}
	if pd != nil && pd.ok {
		copy(sp.qty, pd.qty)
	} else if nr == 1 && sp.w == nil {
		copy(sp.qty, sp.y)
	} else {
		for row := range m {
			w := sp.weight(row)
			for k := range nr {
				sp.qty[k*m+row] = sp.y[row*nr+k] * w
			}
		}
	}
	var rmax float64
	var ybar [2][3]float64
	if sp.uniform() {
		n := float64(m / 3)
		sp.bn2 = [3]float64{n, n, n}
		if w := sp.w; w != nil {
			sp.bn2 = [3]float64{}
			for i := 0; i+2 < m; i += 3 {
				sp.bn2[0] += w[i] * w[i]
				sp.bn2[1] += w[i+1] * w[i+1]
				sp.bn2[2] += w[i+2] * w[i+2]
			}
		}
		for a := range 3 {
			if !(sp.bn2[a] > 0) {
				return errSingularBasis
			}
			rmax = math.Max(rmax, math.Sqrt(sp.bn2[a]))
		}
		if cap(sp.bbar) < g {
			sp.bbar = make([][3]float64, g)
		}
		sp.bbar = sp.bbar[:g]
		sp.projectCols(sp.a, g, sp.bbar)
		if pd != nil && pd.ok {
			ybar = pd.bar
		} else {
			for k := range nr {
				ybar[k] = sp.project(sp.qty[k*m : (k+1)*m])
			}
			if pd != nil {
				pd.qty = sp.scr.take(m * nr)
				copy(pd.qty, sp.qty)
				pd.bar, pd.ok = ybar, true
			}
		}
	}
	houseQR(sp.a, m, g, sp.tau)
	// Rank check on the diagonal of R.
	for k := range g {
		rmax = math.Max(rmax, math.Abs(sp.a[k*m+k]))
	}
	for k := range g {
		if math.Abs(sp.a[k*m+k]) <= 1e-11*rmax {
			return errSingularBasis
		}
	}
	houseApplyQT(sp.a, m, g, sp.tau, sp.qty, nr)
	// Back substitution R c = (Q^T y)[:g] for the factored columns, then the uniform
	// background.
	var cg [64]float64
	for k := range nr {
		for i := g - 1; i >= 0; i-- {
			s := sp.qty[k*m+i]
			for j := i + 1; j < g; j++ {
				s -= sp.a[j*m+i] * cg[j]
			}
			cg[i] = s / sp.a[i*m+i]
		}
		for c := range q {
			if p := sp.pos[c]; p >= 0 {
				sp.coef[c*nr+k] = cg[p]
			}
		}
		if sp.uniform() {
			bc := sp.bgCol()
			for a := range 3 {
				v := ybar[k][a]
				for j := range g {
					v -= sp.bbar[j][a] * cg[j]
				}
				sp.coef[(bc+a)*nr+k] = v
			}
		}
	}
	sp.at = sp.scr.grow(sp.at, len(x))
	copy(sp.at, x)
	sp.ok = true
	return nil
}

// residLen is the length of the projected residual.
func (sp *separable) residLen() int { return (sp.m - sp.g) * sp.nrhs }

func (sp *separable) resid(x, r []float64) error {
	if err := sp.evaluate(x); err != nil {
		return err
	}
	m, g := sp.m, sp.g
	for k := range sp.nrhs {
		copy(r[k*(m-g):(k+1)*(m-g)], sp.qty[k*m+g:(k+1)*m])
	}
	return nil
}

// dPhiC writes, for every free parameter p and right-hand side k, the weighted vector
// (dPhi/dtheta_p) c_k into column p*nrhs+k of the m x (np*nrhs) column-major dst.
//
// With path-averaged readings every column is the quadrature average (pathMean) of the
// derivatives at the nodes of each reading's path (the path does not depend on the
// geometry, so the derivative of the average is the average of the derivatives).
func (sp *separable) dPhiC(dst []float64, np int) {
	sp.dPhiCAt(dst, np, sp.pts)
	defer sp.scaleRows(dst[:sp.m*sp.lineParams()*sp.nrhs])
	if sp.ptsLo == nil {
		return
	}
	n := sp.m * np * sp.nrhs
	sp.tlo = sp.scr.grow(sp.tlo, n)
	sp.thi = sp.scr.grow(sp.thi, n)
	sp.dPhiCAt(sp.tlo, np, sp.ptsLo)
	sp.dPhiCAt(sp.thi, np, sp.ptsHi)
	lo, hi := sp.tlo[:n], sp.thi[:n]
	for k, v := range dst[:n] {
		dst[k] = pathMean(lo[k], v, hi[k])
	}
}

// lineParams is the number of the lines' free parameters, which come first.
func (sp *separable) lineParams() int {
	n := 0
	for i := range sp.geom {
		n += sp.geom[i].nfree()
	}
	return n
}

// scaleRows multiplies the rows of the column-major m-row columns in dst by the
// conductors' factor of their reading (sp.scale), when there is one: dPhiC hands it
// the lines' derivative columns, whose field the factor scales.
func (sp *separable) scaleRows(dst []float64) {
	if sp.scale == nil {
		return
	}
	m := sp.m
	for c := 0; c+m <= len(dst); c += m {
		v := dst[c : c+m]
		for row := range v {
			v[row] *= sp.scale[row/3]
		}
	}
}

// dPhiCAt is dPhiC at the points pts (one per reading).
func (sp *separable) dPhiCAt(dst []float64, np int, pts [][3]float64) {
	nr, m := sp.nrhs, sp.m
	dst = dst[:m*np*nr]
	p := 0
	w := sp.w
	for l := range sp.geom {
		g := &sp.geom[l]
		ln := g.line()
		u, p0 := ln.Dir, ln.Point
		sa, ca := math.Sincos(g.az)
		sd, cd := math.Sincos(g.dip)
		// Directions of the free parameters: dPoint/ds = n0, dPoint/dz = up, du/daz,
		// du/ddip; for the point parameters u x v is the same at every reading.
		var dirs, uxv [4][3]float64
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
		for k := range nd {
			uxv[k] = cross(u, dirs[k])
		}
		// Output columns per parameter and right-hand side, and the strengths.
		var out [4][2][]float64
		var cl [2]float64
		for h := range nr {
			cl[h] = sp.coef[l*nr+h]
			for k := range nd {
				out[k][h] = dst[((p+k)*nr+h)*m : ((p+k)*nr+h+1)*m]
			}
		}
		if nr == 1 && w == nil {
			sp.dLineFast(out[:nd], dirs[:nd], uxv[:nd], isDir[:nd], u, p0, cl[0], pts)
			p += g.nfree()
			continue
		}
		for i := range pts {
			r := &pts[i]
			// B = K (u x d)/q, d = r - p0, q = |d|^2 - (d.u)^2, rho = d - (d.u) u.
			// dB/dp0 . v = -K (u x v / q - 2 (rho.v)(u x d)/q^2)
			// dB/du . w =  K (w x d / q + 2 (d.u)(d.w)(u x d)/q^2)
			d0, d1, d2 := r[0]-p0[0], r[1]-p0[1], r[2]-p0[2]
			du := d0*u[0] + d1*u[1] + d2*u[2]
			r0, r1, r2 := d0-du*u[0], d1-du*u[1], d2-du*u[2]
			q := r0*r0 + r1*r1 + r2*r2
			x0, x1, x2 := u[1]*d2-u[2]*d1, u[2]*d0-u[0]*d2, u[0]*d1-u[1]*d0
			kq := nT * k2pi / q
			kq2 := 2 * kq / q
			row := 3 * i
			w0, w1, w2 := 1.0, 1.0, 1.0
			if w != nil {
				w0, w1, w2 = w[row], w[row+1], w[row+2]
			}
			for k := range nd {
				v := &dirs[k]
				var b0, b1, b2 float64
				if isDir[k] {
					t := kq2 * du * (d0*v[0] + d1*v[1] + d2*v[2])
					b0 = kq*(v[1]*d2-v[2]*d1) + t*x0
					b1 = kq*(v[2]*d0-v[0]*d2) + t*x1
					b2 = kq*(v[0]*d1-v[1]*d0) + t*x2
				} else {
					t := kq2 * (r0*v[0] + r1*v[1] + r2*v[2])
					c := &uxv[k]
					b0 = t*x0 - kq*c[0]
					b1 = t*x1 - kq*c[1]
					b2 = t*x2 - kq*c[2]
				}
				for h := range nr {
					o := out[k][h][row : row+3]
					s := cl[h]
					o[0] = b0 * s * w0
					o[1] = b1 * s * w1
					o[2] = b2 * s * w2
				}
			}
		}
		p += g.nfree()
	}
	for di, dg := range sp.dips {
		dp := Dipole{Pos: dg.pos}
		c0 := sp.dipCol(di)
		for i, r := range pts {
			for h := range nr {
				mom := [3]float64{sp.coef[c0*nr+h], sp.coef[(c0+1)*nr+h], sp.coef[(c0+2)*nr+h]}
				_, dPos := dp.FieldJac(r, mom)
				for j := range 3 {
					row := 3*i + j
					w := sp.weight(row) * nT
					for k := range 3 {
						dst[((p+k)*nr+h)*m+row] = dPos[j][k] * w
					}
				}
			}
		}
		p += 3
	}
}

// dLineFast is the line part of dPhiCAt for one right-hand side without weights: column k
// of out receives c dB/dtheta_k at every point of pts, the point parameters first (their
// u x v precomputed in uxv), then the direction parameters.
func (sp *separable) dLineFast(out [][2][]float64, dirs, uxv [][3]float64, isDir []bool, u, p0 [3]float64, c float64, pts [][3]float64) {
	nd := len(dirs)
	if nd >= 2 && !isDir[0] && !isDir[1] && dirs[0][2] == 0 && dirs[1] == [3]float64{0, 0, 1} &&
		(nd < 3 || isDir[2] && dirs[2][2] == 0) && (nd < 4 || isDir[3]) {
		sp.dLineLevel(out, dirs, uxv, u, p0, c, pts)
		return
	}
	var cols [4][]float64
	for k := range nd {
		cols[k] = out[k][0][:3*len(pts)]
	}
	// The two point parameters always come first; the direction ones follow.
	np0 := 0
	for np0 < nd && !isDir[np0] {
		np0++
	}
	kc := c * nT * k2pi
	for i := range pts {
		r := &pts[i]
		d0, d1, d2 := r[0]-p0[0], r[1]-p0[1], r[2]-p0[2]
		du := d0*u[0] + d1*u[1] + d2*u[2]
		r0, r1, r2 := d0-du*u[0], d1-du*u[1], d2-du*u[2]
		iq := 1 / (r0*r0 + r1*r1 + r2*r2)
		kq := kc * iq
		kq2 := 2 * kq * iq
		x0, x1, x2 := u[1]*d2-u[2]*d1, u[2]*d0-u[0]*d2, u[0]*d1-u[1]*d0
		row := 3 * i
		for k := 0; k < np0; k++ {
			v, cu := &dirs[k], &uxv[k]
			t := kq2 * (r0*v[0] + r1*v[1] + r2*v[2])
			o := cols[k][row : row+3 : row+3]
			o[0] = t*x0 - kq*cu[0]
			o[1] = t*x1 - kq*cu[1]
			o[2] = t*x2 - kq*cu[2]
		}
		for k := np0; k < nd; k++ {
			v := &dirs[k]
			t := kq2 * du * (d0*v[0] + d1*v[1] + d2*v[2])
			o := cols[k][row : row+3 : row+3]
			o[0] = kq*(v[1]*d2-v[2]*d1) + t*x0
			o[1] = kq*(v[2]*d0-v[0]*d2) + t*x1
			o[2] = kq*(v[0]*d1-v[1]*d0) + t*x2
		}
	}
}

// dLineLevel is dLineFast for the parameter layout of every fitted line: offset along a
// horizontal n0, height (direction up), then optionally the azimuth (its direction
// derivative horizontal) and the dip. It drops the products with the known zero and
// unit components of those directions from dLineFast's expressions (x*0 + y = y, so
// the values are the same) and keeps the loop-invariant vectors in scalars. Where the
// assembly kernel is in use it takes the readings four at a time (same values bit for
// bit) and the loop does the last len(pts) mod 4.
func (sp *separable) dLineLevel(out [][2][]float64, dirs, uxv [][3]float64, u, p0 [3]float64, c float64, pts [][3]float64) {
	nd := len(dirs)
	n3 := 3 * len(pts)
	cs, cz := out[0][0][:n3:n3], out[1][0][:n3:n3]
	var ca, cd []float64
	var va, vd [3]float64
	if nd > 2 {
		ca, va = out[2][0][:n3:n3], dirs[2]
	}
	if nd > 3 {
		cd, vd = out[3][0][:n3:n3], dirs[3]
	}
	u0, u1, u2 := u[0], u[1], u[2]
	p00, p01, p02 := p0[0], p0[1], p0[2]
	n00, n01 := dirs[0][0], dirs[0][1]
	cs0, cs1, cs2 := uxv[0][0], uxv[0][1], uxv[0][2]
	cz0, cz1, cz2 := uxv[1][0], uxv[1][1], uxv[1][2]
	kc := c * nT * k2pi
	i0 := 0
	if n := len(pts) &^ 3; n > 0 && useLineKern {
		var pa, pd *float64
		if ca != nil {
			pa = &ca[0]
		}
		if cd != nil {
			pd = &cd[0]
		}
		dLineLevelAVX2(&cs[0], &cz[0], pa, pd, &pts[0][0], n, nd, u0, u1, u2, p00, p01, p02,
			n00, n01, cs0, cs1, cs2, cz0, cz1, cz2, va[0], va[1], vd[0], vd[1], vd[2], kc)
		i0 = n
	}
	for i := i0; i < len(pts); i++ {
		r := &pts[i]
		d0, d1, d2 := r[0]-p00, r[1]-p01, r[2]-p02
		du := d0*u0 + d1*u1 + d2*u2
		r0, r1, r2 := d0-du*u0, d1-du*u1, d2-du*u2
		iq := 1 / (r0*r0 + r1*r1 + r2*r2)
		kq := kc * iq
		kq2 := 2 * kq * iq
		x0, x1, x2 := u1*d2-u2*d1, u2*d0-u0*d2, u0*d1-u1*d0
		row := 3 * i
		// Offset: v = n0, horizontal.
		t := kq2 * (r0*n00 + r1*n01)
		o := cs[row : row+3 : row+3]
		o[0] = t*x0 - kq*cs0
		o[1] = t*x1 - kq*cs1
		o[2] = t*x2 - kq*cs2
		// Height: v = up.
		t = kq2 * r2
		o = cz[row : row+3 : row+3]
		o[0] = t*x0 - kq*cz0
		o[1] = t*x1 - kq*cz1
		o[2] = t*x2 - kq*cz2
		if ca != nil {
			// Azimuth: v = du/daz, horizontal.
			t = kq2 * du * (d0*va[0] + d1*va[1])
			o = ca[row : row+3 : row+3]
			o[0] = kq*(va[1]*d2) + t*x0
			o[1] = kq*(-(va[0] * d2)) + t*x1
			o[2] = kq*(va[0]*d1-va[1]*d0) + t*x2
		}
		if cd != nil {
			t = kq2 * du * (d0*vd[0] + d1*vd[1] + d2*vd[2])
			o = cd[row : row+3 : row+3]
			o[0] = kq*(vd[1]*d2-vd[2]*d1) + t*x0
			o[1] = kq*(vd[2]*d0-vd[0]*d2) + t*x1
			o[2] = kq*(vd[0]*d1-vd[1]*d0) + t*x2
		}
	}
}

func (sp *separable) jac(x, _ []float64, J *mat.Dense) error {
	np := sp.nparams()
	jc := make([]float64, sp.residLen()*np)
	if err := sp.jacCols(x, nil, jc); err != nil {
		return err
	}
	rows := sp.residLen()
	raw := J.RawMatrix()
	for p := range np {
		for i, v := range jc[p*rows : (p+1)*rows] {
			raw.Data[i*raw.Stride+p] = v
		}
	}
	return nil
}

// jacCols writes Kaufman's Jacobian of the projected residual, column-major: column p
// is jc[p*L:(p+1)*L], L = residLen().
func (sp *separable) jacCols(x, _ []float64, jc []float64) error {
	if err := sp.evaluate(x); err != nil {
		return err
	}
	np := sp.nparams()
	m, g, nr := sp.m, sp.g, sp.nrhs
	cols := np * nr
	sp.dblk = sp.scr.grow(sp.dblk, m*cols)
	sp.dPhiC(sp.dblk, np)
	if sp.uniform() {
		sp.projectCols(sp.dblk, cols, nil)
	}
	houseApplyQT(sp.a, m, g, sp.tau, sp.dblk, cols)
	mg := m - g
	rows := mg * nr
	for k := range nr {
		for p := range np {
			// -1*v is -v exactly.
			floats.ScaleTo(jc[p*rows+k*mg:p*rows+(k+1)*mg], -1, sp.dblk[(p*nr+k)*m+g:(p*nr+k+1)*m])
		}
	}
	return nil
}

// jacView is jacCols without its last copy, for DC fits: Kaufman's Jacobian negated
// lies in the derivative block after the reflections, column p at
// dblk[p*m+g:(p+1)*m], which the LM engine reads in place (lmProblem.jacView). For AC
// fits, whose two right-hand sides jacCols stacks, it returns nil and the engine calls
// jacCols.
func (sp *separable) jacView(x, _ []float64) (v []float64, stride int, neg bool, err error) {
	if sp.nrhs != 1 {
		return nil, 0, false, nil
	}
	if err := sp.evaluate(x); err != nil {
		return nil, 0, false, err
	}
	np, m, g := sp.nparams(), sp.m, sp.g
	sp.dblk = sp.scr.grow(sp.dblk, m*np)
	sp.dPhiC(sp.dblk, np)
	if sp.uniform() {
		sp.projectCols(sp.dblk, np, nil)
	}
	houseApplyQT(sp.a, m, g, sp.tau, sp.dblk, np)
	return sp.dblk[g : np*m], m, true, nil
}

// problem wraps the separable model for the LM engine. A separable lent by a scratch
// keeps its wrapper (and the method values in it, bound to the same separable) from fit
// to fit, and its vectors come from the scratch.
func (sp *separable) problem() (*lmProblem, []float64) {
	var x, lo, hi []float64
	if sp.scr != nil {
		x, lo, hi = sp.packInto(sp.scr.take(3 * sp.nparams()))
	} else {
		x, lo, hi = sp.pack()
	}
	p := sp.lmp
	if p == nil || sp.scr == nil {
		p = &lmProblem{resid: sp.resid, jac: sp.jac, jacCols: sp.jacCols, jacView: sp.jacView}
		sp.lmp = p
	}
	p.m, p.n, p.lower, p.upper, p.work = sp.residLen(), len(x), lo, hi, sp.lmWork
	return p, x
}

// fullJacobian returns the weighted Jacobian of the full model with respect to all
// parameters, geometry then strengths (per right-hand side), in the original basis:
// rows k*m + row, the parameter ordering of ParamNames. Uncertainties come from it
// (DOMAIN.md: "from the full Jacobian at the solution, not from the reduced problem").
func (sp *separable) fullJacobian(x []float64) (*mat.Dense, error) {
	a, rows, cols, err := sp.fullJacobianCols(x)
	if err != nil {
		return nil, err
	}
	J := mat.NewDense(rows, cols, nil)
	raw := J.RawMatrix()
	for j := range cols {
		for i, v := range a[j*rows : (j+1)*rows] {
			raw.Data[i*raw.Stride+j] = v
		}
	}
	return J, nil
}

// fullJacobianCols is fullJacobian in column-major storage: column j is
// a[j*rows:(j+1)*rows].
func (sp *separable) fullJacobianCols(x []float64) (a []float64, rows, cols int, err error) {
	if err := sp.evaluate(x); err != nil {
		return nil, 0, 0, err
	}
	np := sp.nparams()
	nr, q, m := sp.nrhs, sp.q, sp.m
	rows, cols = m*nr, np+q*nr
	a = make([]float64, rows*cols)
	if nr == 1 {
		// The layouts coincide: derivative columns, then the basis.
		sp.dPhiC(a[:m*np], np)
		if err := sp.fillPhi(a[m*np:], 1, m, nil); err != nil {
			return nil, 0, 0, err
		}
		return a, rows, cols, nil
	}
	sp.full = sp.scr.grow(sp.full, m*np*nr+m*q)
	dblk := sp.full
	sp.dPhiC(dblk, np)
	phi := dblk[m*np*nr:]
	if err := sp.fillPhi(phi, 1, m, nil); err != nil {
		return nil, 0, 0, err
	}
	for k := range nr {
		for p := range np {
			copy(a[p*rows+k*m:p*rows+(k+1)*m], dblk[(p*nr+k)*m:(p*nr+k+1)*m])
		}
		for j := range q {
			copy(a[(np+k*q+j)*rows+k*m:(np+k*q+j)*rows+(k+1)*m], phi[j*m:(j+1)*m])
		}
	}
	return a, rows, cols, nil
}

// fullResiduals returns the unweighted residuals y - Phi c, m x nrhs row-major, in a
// buffer of the separable that the next call overwrites.
func (sp *separable) fullResiduals(x []float64) ([]float64, error) {
	if err := sp.evaluate(x); err != nil {
		return nil, err
	}
	m, q, g, nr := sp.m, sp.q, sp.g, sp.nrhs
	w := sp.w
	sp.w = nil
	sp.full = sp.scr.grow(sp.full, m*max(g, 1))
	phi := sp.full // column-major, in the layout of sp.a (uniform background implicit)
	err := sp.fillPhi(phi, 1, m, sp.pos)
	sp.w = w
	if err != nil {
		return nil, err
	}
	sp.rbuf = sp.scr.grow(sp.rbuf, len(sp.y))
	res := sp.rbuf
	copy(res, sp.y)
	for k := range nr {
		for c := range q {
			p := sp.pos[c]
			if p < 0 {
				continue
			}
			cc := sp.coef[c*nr+k]
			if nr == 1 {
				// res + (-cc) v is res - v cc exactly.
				floats.AddScaled(res[:m], -cc, phi[p*m:(p+1)*m])
				continue
			}
			for row, v := range phi[p*m : (p+1)*m] {
				res[row*nr+k] -= v * cc
			}
		}
		if sp.uniform() {
			bc := sp.bgCol()
			b := [3]float64{sp.coef[bc*nr+k], sp.coef[(bc+1)*nr+k], sp.coef[(bc+2)*nr+k]}
			for row := 0; row+2 < m; row += 3 {
				res[row*nr+k] -= b[0]
				res[(row+1)*nr+k] -= b[1]
				res[(row+2)*nr+k] -= b[2]
			}
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
	var buf [96]float64
	_, lo, hi := sp.packInto(buf[:])
	for i, v := range x {
		if v <= lo[i] || v >= hi[i] {
			return true
		}
	}
	return false
}
