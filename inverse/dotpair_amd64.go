//go:build !noasm && !gccgo && !safe

package inverse

// dotPair returns floats.Dot(x, y) and floats.Dot(x, z), bit for bit, in one pass
// (AVX2 in housekern_amd64.s where the processor has it, else SSE2 in
// dotpair_amd64.s); len(y) and len(z) must be at least len(x).
func dotPair(x, y, z []float64) (xy, xz float64) {
	n := len(x)
	y, z = y[:n], z[:n]
	if useAVX2 {
		return dotPairAVX2(x, y, z)
	}
	return dotPairSSE2(x, y, z)
}

// dotQuad returns floats.Dot(x, y0) ... floats.Dot(x, y3), bit for bit, in one pass
// (as dotPair); each y must be at least as long as x.
func dotQuad(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64) {
	n := len(x)
	y0, y1, y2, y3 = y0[:n], y1[:n], y2[:n], y3[:n]
	if useAVX2 {
		return dotQuadAVX2(x, y0, y1, y2, y3)
	}
	return dotQuadSSE2(x, y0, y1, y2, y3)
}

//go:noescape
func dotPairSSE2(x, y, z []float64) (xy, xz float64)

//go:noescape
func dotQuadSSE2(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64)
