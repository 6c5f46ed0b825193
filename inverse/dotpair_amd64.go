//go:build !noasm && !gccgo && !safe

package inverse

// dotPair returns floats.Dot(x, y) and floats.Dot(x, z), bit for bit, in one pass
// (dotpair_amd64.s); len(y) and len(z) must be at least len(x).
//
//go:noescape
func dotPair(x, y, z []float64) (xy, xz float64)
