package inverse

import "math"

// Mu0 is the magnetic constant (vacuum permeability) in N/A^2, the CODATA 2022
// recommended value published by NIST. It is defined once here; every field in the
// package is computed with it.
const Mu0 = 1.25663706127e-6

const (
	k2pi = Mu0 / (2 * math.Pi) // Biot-Savart prefactor for an infinite line
	k4pi = Mu0 / (4 * math.Pi) // Biot-Savart prefactor for segments and dipoles
)

// Source is a field model that is linear in its strengths: the field at r is
//
//	B(r) = sum_k Basis_k(r) * c_k
//
// where c_k are the strengths (currents in A, moment components in A m^2, background
// components in T). Line, Segment, Polyline, Dipole and Background implement it.
// FitStrengths uses it to estimate strengths with the geometry held.
type Source interface {
	// NumStrengths reports how many linear strengths the source has.
	NumStrengths() int
	// Basis writes into dst[k] the field in tesla at r per unit of strength k.
	// It panics if len(dst) != NumStrengths().
	Basis(r [3]float64, dst [][3]float64)
}

// Fields evaluates src at every point with the given strengths and returns the fields in
// tesla. dst is reused when it has the right length. It panics if len(strengths) !=
// src.NumStrengths(). A nil src has no strengths and no field (zeros).
func Fields(src Source, points [][3]float64, strengths []float64, dst [][3]float64) [][3]float64 {
	if src == nil {
		if len(strengths) != 0 {
			panic("inverse: Fields: wrong number of strengths")
		}
		if len(dst) != len(points) {
			return make([][3]float64, len(points))
		}
		clear(dst)
		return dst
	}
	k := src.NumStrengths()
	if len(strengths) != k {
		panic("inverse: Fields: wrong number of strengths")
	}
	if len(dst) != len(points) {
		dst = make([][3]float64, len(points))
	}
	basis := make([][3]float64, k)
	for i, r := range points {
		src.Basis(r, basis)
		var b [3]float64
		for j, c := range strengths {
			b[0] += basis[j][0] * c
			b[1] += basis[j][1] * c
			b[2] += basis[j][2] * c
		}
		dst[i] = b
	}
	return dst
}

// small vector helpers (value semantics keep them inlinable and allocation free)

func sub(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func add(a, b [3]float64) [3]float64 { return [3]float64{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func scale(a [3]float64, s float64) [3]float64 {
	return [3]float64{a[0] * s, a[1] * s, a[2] * s}
}
func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func norm(a [3]float64) float64 { return math.Sqrt(dot(a, a)) }

// skew returns the matrix [a]x with [a]x v = a x v.
func skew(a [3]float64) [3][3]float64 {
	return [3][3]float64{{0, -a[2], a[1]}, {a[2], 0, -a[0]}, {-a[1], a[0], 0}}
}

// outer returns a b^T.
func outer(a, b [3]float64) [3][3]float64 {
	var m [3][3]float64
	for i := range 3 {
		for j := range 3 {
			m[i][j] = a[i] * b[j]
		}
	}
	return m
}

func matScale(m [3][3]float64, s float64) [3][3]float64 {
	for i := range 3 {
		for j := range 3 {
			m[i][j] *= s
		}
	}
	return m
}

func matAdd(a, b [3][3]float64) [3][3]float64 {
	for i := range 3 {
		for j := range 3 {
			a[i][j] += b[i][j]
		}
	}
	return a
}
