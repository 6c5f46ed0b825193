package inverse

import "gonum.org/v1/gonum/floats"

// The vector kernels of the Householder code (house.go). With AVX2 (useAVX2, on amd64:
// housekern_amd64.go) they run the 256-bit loops of housekern_amd64.s, whose results are
// bit for bit those of the gonum calls they stand for (same operations, same order of
// summation, no fused multiply-add); otherwise they are those gonum calls (and dotPair,
// dotQuad). Elsewhere the AVX2 entry points are stubs that are never called
// (housekern_other.go).

// houseDot returns floats.Dot(x, y[:len(x)]).
func houseDot(x, y []float64) float64 {
	y = y[:len(x)]
	if useAVX2 {
		return dotAVX2(x, y)
	}
	return floats.Dot(x, y)
}

// addScaled does floats.AddScaled(dst, alpha, s): dst[i] += alpha*s[i], len(dst) ==
// len(s).
func addScaled(dst []float64, alpha float64, s []float64) {
	if !useAVX2 {
		floats.AddScaled(dst, alpha, s)
		return
	}
	if len(dst) != len(s) {
		panic("inverse: addScaled lengths differ")
	}
	addScaledAVX2(dst, alpha, s)
}

// addScaled2 does floats.AddScaled(c0, a0, v) and floats.AddScaled(c1, a1, v) in one
// pass over v; the columns must be as long as v.
func addScaled2(v []float64, a0, a1 float64, c0, c1 []float64) {
	n := len(v)
	c0, c1 = c0[:n], c1[:n]
	if useAVX2 {
		addScaled2AVX2(v, a0, a1, c0, c1)
		return
	}
	floats.AddScaled(c0, a0, v)
	floats.AddScaled(c1, a1, v)
}

// addScaled4 does floats.AddScaled(ck, ak, v) for four columns in one pass over v; the
// columns must be as long as v.
func addScaled4(v []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) {
	n := len(v)
	c0, c1, c2, c3 = c0[:n], c1[:n], c2[:n], c3[:n]
	if useAVX2 {
		addScaled4AVX2(v, a0, a1, a2, a3, c0, c1, c2, c3)
		return
	}
	floats.AddScaled(c0, a0, v)
	floats.AddScaled(c1, a1, v)
	floats.AddScaled(c2, a2, v)
	floats.AddScaled(c3, a3, v)
}

// scaleVec does floats.Scale(alpha, x).
func scaleVec(alpha float64, x []float64) {
	if useAVX2 {
		scaleAVX2(alpha, x)
		return
	}
	floats.Scale(alpha, x)
}

// sub3 subtracts s0, s1 and s2 from the elements of v in turn: v[3i] -= s0, v[3i+1] -=
// s1, v[3i+2] -= s2 (len(v) a multiple of 3; the uniform background out of a column,
// separable.project). Where the AVX2 loop is in use it takes four readings a step, the
// same subtractions.
func sub3(v []float64, s0, s1, s2 float64) {
	if n := len(v) / 12 * 12; n > 0 && useAVX2 {
		sub3AVX2(v[:n], s0, s1, s2)
		v = v[n:]
	}
	for len(v) >= 3 {
		v[0] -= s0
		v[1] -= s1
		v[2] -= s2
		v = v[3:]
	}
}

// axpySelfDot does floats.AddScaled(c[:n], a, v), n = len(v), and returns the squared
// norm of the updated c[1:n] as floats.Dot(c[1:n], c[1:n]) sums it, in one pass.
func axpySelfDot(v []float64, a float64, c []float64) float64 {
	n := len(v)
	c = c[:n]
	if useAVX2 {
		return axpySelfDotAVX2(v, a, c)
	}
	floats.AddScaled(c, a, v)
	if n < 2 {
		return 0
	}
	return floats.Dot(c[1:], c[1:])
}

// axpyDot does floats.AddScaled(c[:n], a, v), n = len(v), and returns the updated
// c[1:n]'s inner product with w, floats.Dot(w[:n-1], c[1:n]), in one pass.
func axpyDot(v, w []float64, a float64, c []float64) float64 {
	n := len(v)
	c = c[:n]
	if n < 2 {
		addScaled(c, a, v)
		return 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDot1AVX2(v, w, a, c)
	}
	floats.AddScaled(c, a, v)
	return floats.Dot(w, c[1:])
}

// axpyDot2 is axpyDot on two columns in one pass.
func axpyDot2(v, w []float64, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	n := len(v)
	c0, c1 = c0[:n], c1[:n]
	if n < 2 {
		addScaled2(v, a0, a1, c0, c1)
		return 0, 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDot2AVX2(v, w, a0, a1, c0, c1)
	}
	addScaled2(v, a0, a1, c0, c1)
	return dotPair(w, c0[1:], c1[1:])
}

// axpyDot4 is axpyDot on four columns in one pass.
func axpyDot4(v, w []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	n := len(v)
	c0, c1, c2, c3 = c0[:n], c1[:n], c2[:n], c3[:n]
	if n < 2 {
		addScaled4(v, a0, a1, a2, a3, c0, c1, c2, c3)
		return 0, 0, 0, 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDot4AVX2(v, w, a0, a1, a2, a3, c0, c1, c2, c3)
	}
	addScaled4(v, a0, a1, a2, a3, c0, c1, c2, c3)
	return dotQuad(w, c0[1:], c1[1:], c2[1:], c3[1:])
}

// axpyDotScaled does floats.Scale(ws, w[:n-1]), n = len(v), and then axpyDot(v, w, a,
// c) with the scaled w, in one pass.
func axpyDotScaled(v, w []float64, ws, a float64, c []float64) float64 {
	n := len(v)
	c = c[:n]
	if n < 2 {
		addScaled(c, a, v)
		return 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDotScaled1AVX2(v, w, ws, a, c)
	}
	floats.Scale(ws, w)
	return axpyDot(v, w, a, c)
}

// axpyDotScaled2 is axpyDotScaled on two columns in one pass.
func axpyDotScaled2(v, w []float64, ws, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	n := len(v)
	c0, c1 = c0[:n], c1[:n]
	if n < 2 {
		addScaled2(v, a0, a1, c0, c1)
		return 0, 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDotScaled2AVX2(v, w, ws, a0, a1, c0, c1)
	}
	floats.Scale(ws, w)
	return axpyDot2(v, w, a0, a1, c0, c1)
}

// axpyDotScaled4 is axpyDotScaled on four columns in one pass.
func axpyDotScaled4(v, w []float64, ws, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	n := len(v)
	c0, c1, c2, c3 = c0[:n], c1[:n], c2[:n], c3[:n]
	if n < 2 {
		addScaled4(v, a0, a1, a2, a3, c0, c1, c2, c3)
		return 0, 0, 0, 0
	}
	w = w[:n-1]
	if useAVX2 {
		return axpyDotScaled4AVX2(v, w, ws, a0, a1, a2, a3, c0, c1, c2, c3)
	}
	floats.Scale(ws, w)
	return axpyDot4(v, w, a0, a1, a2, a3, c0, c1, c2, c3)
}
