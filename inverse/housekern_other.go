//go:build !amd64 || noasm || gccgo || safe

package inverse

import "gonum.org/v1/gonum/floats"

// The vector kernels of the Householder code (house.go) where there is no amd64
// assembly: the gonum calls themselves (see housekern_amd64.go).

// useAVX2 is false here: there are no AVX2 loops to select.
var useAVX2 = false

// houseDot returns floats.Dot(x, y[:len(x)]).
func houseDot(x, y []float64) float64 {
	return floats.Dot(x, y[:len(x)])
}

// addScaled does floats.AddScaled(dst, alpha, s).
func addScaled(dst []float64, alpha float64, s []float64) {
	floats.AddScaled(dst, alpha, s)
}

// addScaled2 does floats.AddScaled(c0, a0, v) and floats.AddScaled(c1, a1, v); the
// columns must be as long as v.
func addScaled2(v []float64, a0, a1 float64, c0, c1 []float64) {
	n := len(v)
	floats.AddScaled(c0[:n], a0, v)
	floats.AddScaled(c1[:n], a1, v)
}

// addScaled4 does floats.AddScaled(ck, ak, v) for four columns; they must be as long
// as v.
func addScaled4(v []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) {
	n := len(v)
	floats.AddScaled(c0[:n], a0, v)
	floats.AddScaled(c1[:n], a1, v)
	floats.AddScaled(c2[:n], a2, v)
	floats.AddScaled(c3[:n], a3, v)
}

// scaleVec does floats.Scale(alpha, x).
func scaleVec(alpha float64, x []float64) {
	floats.Scale(alpha, x)
}

// axpySelfDot does floats.AddScaled(c[:n], a, v), n = len(v), and returns
// floats.Dot(c[1:n], c[1:n]) of the updated c.
func axpySelfDot(v []float64, a float64, c []float64) float64 {
	n := len(v)
	c = c[:n]
	floats.AddScaled(c, a, v)
	if n < 2 {
		return 0
	}
	return floats.Dot(c[1:], c[1:])
}

// axpyDot does floats.AddScaled(c[:n], a, v), n = len(v), and returns
// floats.Dot(w[:n-1], c[1:n]) of the updated c.
func axpyDot(v, w []float64, a float64, c []float64) float64 {
	n := len(v)
	c = c[:n]
	floats.AddScaled(c, a, v)
	if n < 2 {
		return 0
	}
	return floats.Dot(w[:n-1], c[1:])
}

// axpyDot2 is axpyDot on two columns.
func axpyDot2(v, w []float64, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	return axpyDot(v, w, a0, c0), axpyDot(v, w, a1, c1)
}

// axpyDot4 is axpyDot on four columns.
func axpyDot4(v, w []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	return axpyDot(v, w, a0, c0), axpyDot(v, w, a1, c1), axpyDot(v, w, a2, c2), axpyDot(v, w, a3, c3)
}

// axpyDotScaled does floats.Scale(ws, w[:n-1]), n = len(v), and then axpyDot(v, w, a,
// c) with the scaled w.
func axpyDotScaled(v, w []float64, ws, a float64, c []float64) float64 {
	if len(v) > 1 {
		floats.Scale(ws, w[:len(v)-1])
	}
	return axpyDot(v, w, a, c)
}

// axpyDotScaled2 is axpyDotScaled on two columns.
func axpyDotScaled2(v, w []float64, ws, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	if len(v) > 1 {
		floats.Scale(ws, w[:len(v)-1])
	}
	return axpyDot2(v, w, a0, a1, c0, c1)
}

// axpyDotScaled4 is axpyDotScaled on four columns.
func axpyDotScaled4(v, w []float64, ws, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	if len(v) > 1 {
		floats.Scale(ws, w[:len(v)-1])
	}
	return axpyDot4(v, w, a0, a1, a2, a3, c0, c1, c2, c3)
}
