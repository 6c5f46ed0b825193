package inverse

import "math"

// Dipole is a point magnetic dipole at Pos, the far field of a small ferrous or magnetised
// object (a valve, a buried drum) that a line fit would otherwise mistake for a current:
//
//	B = (mu0 / 4 pi) (3 rhat (m . rhat) - m) / |r - Pos|^3,  rhat = (r - Pos)/|r - Pos|
//
// (the standard point-dipole field, e.g. Jackson, Classical Electrodynamics, eq. 5.56).
// Its strengths are the three moment components in A m^2. The field is not finite at Pos.
type Dipole struct {
	Pos [3]float64
}

// NumStrengths returns 3: the moment components (east, north, up).
func (d Dipole) NumStrengths() int { return 3 }

// Basis writes the field per unit moment along each axis at r. It panics if len(dst) != 3.
func (d Dipole) Basis(r [3]float64, dst [][3]float64) {
	if len(dst) != 3 {
		panic("inverse: Dipole.Basis: dst must have length 3")
	}
	// Field(r, e_c) componentwise: k4pi/r^3 (3 v_c v_j / r^2 - delta_cj), symmetric in c, j.
	v := sub(r, d.Pos)
	r2 := dot(v, v)
	inv2 := 1 / r2
	s := k4pi * inv2 / math.Sqrt(r2)
	t := 3 * inv2
	for c := range 3 {
		for j := range 3 {
			x := t * v[c] * v[j]
			if c == j {
				x--
			}
			dst[c][j] = s * x
		}
	}
}

// Field returns the field in tesla at r of moment m (A m^2).
func (d Dipole) Field(r [3]float64, m [3]float64) [3]float64 {
	v := sub(r, d.Pos)
	r2 := dot(v, v)
	rn := math.Sqrt(r2)
	r3 := r2 * rn
	return scale(sub(scale(v, 3*dot(m, v)/r2), m), k4pi/r3)
}

// FieldJac returns the field in tesla at r of moment m and its derivative with respect to
// the position: dPos[i][j] = dB_i/dPos_j.
func (d Dipole) FieldJac(r [3]float64, m [3]float64) (b [3]float64, dPos [3][3]float64) {
	v := sub(r, d.Pos)
	r2 := dot(v, v)
	rn := math.Sqrt(r2)
	r3 := r2 * rn
	r5 := r3 * r2
	mv := dot(m, v)
	b = scale(sub(scale(v, 3*mv/r2), m), k4pi/r3)
	// dB/dv = K [3 (m.v) I / r^5 + 3 v m^T / r^5 + 3 m v^T / r^5 - 15 (m.v) v v^T / r^7]
	var dv [3][3]float64
	for i := range 3 {
		for j := range 3 {
			x := 3*v[i]*m[j]/r5 + 3*m[i]*v[j]/r5 - 15*mv*v[i]*v[j]/(r5*r2)
			if i == j {
				x += 3 * mv / r5
			}
			dv[i][j] = k4pi * x
		}
	}
	return b, matScale(dv, -1)
}
