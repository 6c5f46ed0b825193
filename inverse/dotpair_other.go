//go:build !amd64 || noasm || gccgo || safe

package inverse

import "gonum.org/v1/gonum/floats"

// dotPair returns floats.Dot(x, y) and floats.Dot(x, z); len(y) and len(z) must be at
// least len(x). Where gonum has no amd64 kernel this is simply the two calls.
func dotPair(x, y, z []float64) (xy, xz float64) {
	return floats.Dot(x, y[:len(x)]), floats.Dot(x, z[:len(x)])
}

// dotQuad returns floats.Dot(x, y0) ... floats.Dot(x, y3); each y must be at least as
// long as x.
func dotQuad(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64) {
	n := len(x)
	return floats.Dot(x, y0[:n]), floats.Dot(x, y1[:n]), floats.Dot(x, y2[:n]), floats.Dot(x, y3[:n])
}
