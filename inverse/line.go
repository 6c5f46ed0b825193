package inverse

// Line is an infinite straight filament through Point with direction Dir (need not be
// unit length, must not be zero). Positive current flows along Dir.
//
// The field follows from the Biot-Savart law (Ampere's law for the infinite case):
//
//	rho = (r - p0) - ((r - p0).u) u
//	B   = (mu0 I / 2 pi) (u x rho) / |rho|^2
//
// with u = Dir/|Dir|. The field is not finite on the line itself.
type Line struct {
	Point, Dir [3]float64
}

// NumStrengths returns 1: the current.
func (l Line) NumStrengths() int { return 1 }

// Basis writes the field per ampere at r. It panics if len(dst) != 1.
func (l Line) Basis(r [3]float64, dst [][3]float64) {
	if len(dst) != 1 {
		panic("inverse: Line.Basis: dst must have length 1")
	}
	dst[0] = l.Field(r, 1)
}

// Field returns the field in tesla at r for the given current in amperes.
func (l Line) Field(r [3]float64, current float64) [3]float64 {
	u := scale(l.Dir, 1/norm(l.Dir))
	d := sub(r, l.Point)
	du := dot(d, u)
	rho := sub(d, scale(u, du))
	q := dot(rho, rho)
	return scale(cross(u, rho), k2pi*current/q)
}

// FieldJac returns the field per ampere at r together with its derivatives with respect to
// the line's geometry: dPoint[i][j] = dB_i/dPoint_j and dDir[i][j] = dB_i/du_j, where u is
// the unit direction (the derivative treats u as a free vector; chain it with a unit-vector
// parametrisation such as azimuth and dip).
func (l Line) FieldJac(r [3]float64) (b [3]float64, dPoint, dDir [3][3]float64) {
	u := scale(l.Dir, 1/norm(l.Dir))
	d := sub(r, l.Point)
	du := dot(d, u)
	rho := sub(d, scale(u, du))
	q := dot(rho, rho)
	ux := cross(u, d) // equals u x rho
	b = scale(ux, k2pi/q)
	// dB/dd = K ([u]x / q - (u x d)(2 rho)^T / q^2); dB/dPoint = -dB/dd.
	dd := matAdd(matScale(skew(u), k2pi/q), matScale(outer(ux, rho), -2*k2pi/(q*q)))
	dPoint = matScale(dd, -1)
	// dB/du = K (-[d]x / q + (u x d)(2 (d.u) d)^T / q^2).
	dDir = matAdd(matScale(skew(d), -k2pi/q), matScale(outer(ux, d), 2*du*k2pi/(q*q)))
	return b, dPoint, dDir
}
