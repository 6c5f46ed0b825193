//go:build !noasm && !gccgo && !safe

package inverse

// dotPair returns floats.Dot(x, y) and floats.Dot(x, z), bit for bit, in one pass
// (dotpair_amd64.s); len(y) and len(z) must be at least len(x).
//
//go:noescape
func dotPair(x, y, z []float64) (xy, xz float64)

// dotQuad returns floats.Dot(x, y0) ... floats.Dot(x, y3), bit for bit, in one pass
// (dotpair_amd64.s); each y must be at least as long as x.
//
//go:noescape
func dotQuad(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64)
