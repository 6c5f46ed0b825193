//go:build !amd64 || noasm || gccgo || safe

package inverse

import "gonum.org/v1/gonum/floats"

// dotPair returns floats.Dot(x, y) and floats.Dot(x, z); len(y) and len(z) must be at
// least len(x). Where gonum has no amd64 kernel this is simply the two calls.
func dotPair(x, y, z []float64) (xy, xz float64) {
	return floats.Dot(x, y[:len(x)]), floats.Dot(x, z[:len(x)])
}
