//go:build !noasm && !gccgo && !safe

package inverse

// The AVX2 loops of the Householder kernels (housekern.go), in housekern_amd64.s.

// useAVX2 selects the AVX2 loops. It is haveAVX2; tests turn it off to compare the two
// paths.
var useAVX2 = haveAVX2

// houseKernelsBuilt reports whether this build has the AVX2 loops (see
// housekern_other.go).
const houseKernelsBuilt = true

//go:noescape
func dotAVX2(x, y []float64) (sum float64)

//go:noescape
func dotPairAVX2(x, y, z []float64) (xy, xz float64)

//go:noescape
func dotQuadAVX2(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64)

//go:noescape
func addScaledAVX2(dst []float64, alpha float64, s []float64)

//go:noescape
func addScaled2AVX2(v []float64, a0, a1 float64, c0, c1 []float64)

//go:noescape
func addScaled4AVX2(v []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64)

//go:noescape
func scaleAVX2(alpha float64, x []float64)

//go:noescape
func axpySelfDotAVX2(v []float64, a0 float64, c0 []float64) (d0 float64)

//go:noescape
func axpyDot1AVX2(v, w []float64, a0 float64, c0 []float64) (d0 float64)

//go:noescape
func axpyDot2AVX2(v, w []float64, a0, a1 float64, c0, c1 []float64) (d0, d1 float64)

//go:noescape
func axpyDot4AVX2(v, w []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64)

//go:noescape
func axpyDotScaled1AVX2(v, w []float64, ws, a0 float64, c0 []float64) (d0 float64)

//go:noescape
func axpyDotScaled2AVX2(v, w []float64, ws, a0, a1 float64, c0, c1 []float64) (d0, d1 float64)

//go:noescape
func axpyDotScaled4AVX2(v, w []float64, ws, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64)

//go:noescape
func sub3AVX2(v []float64, s0, s1, s2 float64)
