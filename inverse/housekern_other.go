//go:build !amd64 || noasm || gccgo || safe

package inverse

// Where there is no amd64 assembly the Householder kernels (housekern.go) run the gonum
// calls: useAVX2 stays false and the AVX2 entry points below are never called.

// useAVX2 is false here: there are no AVX2 loops to select.
var useAVX2 = false

// houseKernelsBuilt reports whether this build has the AVX2 loops: not this one, so
// tests must not turn useAVX2 on whatever the processor has.
const houseKernelsBuilt = false

func noAVX2() { panic("inverse: AVX2 kernel called in a build without it") }

func dotAVX2(x, y []float64) (sum float64) {
	noAVX2()
	return
}

func dotPairAVX2(x, y, z []float64) (xy, xz float64) {
	noAVX2()
	return
}

func dotQuadAVX2(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64) {
	noAVX2()
	return
}

func addScaledAVX2(dst []float64, alpha float64, s []float64) {
	noAVX2()
}

func addScaled2AVX2(v []float64, a0, a1 float64, c0, c1 []float64) {
	noAVX2()
}

func addScaled4AVX2(v []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) {
	noAVX2()
}

func scaleAVX2(alpha float64, x []float64) {
	noAVX2()
}

func axpySelfDotAVX2(v []float64, a0 float64, c0 []float64) (d0 float64) {
	noAVX2()
	return
}

func axpyDot1AVX2(v, w []float64, a0 float64, c0 []float64) (d0 float64) {
	noAVX2()
	return
}

func axpyDot2AVX2(v, w []float64, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	noAVX2()
	return
}

func axpyDot4AVX2(v, w []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	noAVX2()
	return
}

func axpyDotScaled1AVX2(v, w []float64, ws, a0 float64, c0 []float64) (d0 float64) {
	noAVX2()
	return
}

func axpyDotScaled2AVX2(v, w []float64, ws, a0, a1 float64, c0, c1 []float64) (d0, d1 float64) {
	noAVX2()
	return
}

func axpyDotScaled4AVX2(v, w []float64, ws, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64) {
	noAVX2()
	return
}

func sub3AVX2(v []float64, s0, s1, s2 float64) {
	noAVX2()
}
