package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
)

// The vector kernels of the Householder code are checked against the gonum calls they
// stand for (floats.Dot, floats.AddScaled, floats.Scale) and the whole QR against the
// portable path (useAVX2 off), bit for bit: the AVX2 loops must change no result.

// forEachHousePath runs f with the portable kernels and, where the processor has AVX2, again
// with the AVX2 ones, restoring the switch afterwards.
func forEachHousePath(t *testing.T, f func(t *testing.T)) {
	saved := useAVX2
	t.Cleanup(func() { useAVX2 = saved })
	paths := []bool{false}
	if haveAVX2 && houseKernelsBuilt {
		paths = append(paths, true)
	} else {
		t.Log("no AVX2 here: only the portable kernels are checked")
	}
	for _, avx := range paths {
		useAVX2 = avx
		t.Run(fmt.Sprintf("avx2=%v", avx), f)
	}
	useAVX2 = saved
}

// houseTestValue draws a value for the kernel tests: both signs, twelve decades, and now
// and then an exact zero of either sign or a subnormal, where a different order of
// summation or rounding would show in the last bits.
func houseTestValue(rng *rand.Rand) float64 {
	switch rng.IntN(40) {
	case 0:
		return 0
	case 1:
		return math.Copysign(0, -1)
	case 2:
		return rng.NormFloat64() * 1e-310
	}
	return rng.NormFloat64() * math.Pow(10, 12*rng.Float64()-6)
}

// houseTestLengths are the vector lengths of the kernel tests: every length to 40 (all
// remainders of the four- and eight-element blocks) and some of the fits' column
// lengths.
func houseTestLengths() []int {
	n := []int{127, 400, 1215, 1501}
	for k := range 41 {
		n = append(n, k)
	}
	return n
}

func firstBitDiff(a, b []float64) int {
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return i
		}
	}
	return -1
}

// TestHouseKernelsMatchGonum checks houseDot, dotPair, dotQuad, addScaled, addScaled2,
// addScaled4, scaleVec and the fused kernels (axpyDot, axpyDotScaled, axpySelfDot and
// their two- and four-column forms) against gonum's floats.Dot, floats.AddScaled and
// floats.Scale, bit for bit, on vectors that start at every offset from an allocation
// (so at every alignment modulo 32 bytes) and are followed by unrelated data.
func TestHouseKernelsMatchGonum(t *testing.T) {
	forEachHousePath(t, func(t *testing.T) {
		rng := rand.New(rand.NewPCG(31, 32))
		vec := func(n, off int) []float64 {
			buf := make([]float64, n+off+5)
			for i := range buf {
				buf[i] = houseTestValue(rng)
			}
			return buf[off : off+n]
		}
		for _, n := range houseTestLengths() {
			for off := range 4 {
				x := vec(n, off)
				ys := [4][]float64{vec(n, (off+1)%4), vec(n+2, (off+2)%4), vec(n, (off+3)%4), vec(n+1, off)}
				want := [4]float64{}
				for k, y := range ys {
					want[k] = floats.Dot(x, y[:n])
				}
				bits := func(name string, got []float64) {
					t.Helper()
					if i := firstBitDiff(got, want[:len(got)]); i >= 0 {
						t.Fatalf("n=%d off=%d: %s product %d is %v, floats.Dot %v", n, off, name, i, got[i], want[i])
					}
				}
				bits("houseDot", []float64{houseDot(x, ys[0])})
				p0, p1 := dotPair(x, ys[0], ys[1])
				bits("dotPair", []float64{p0, p1})
				q0, q1, q2, q3 := dotQuad(x, ys[0], ys[1], ys[2], ys[3])
				bits("dotQuad", []float64{q0, q1, q2, q3})
				if got, w := houseDot(x, x), floats.Dot(x, x); math.Float64bits(got) != math.Float64bits(w) {
					t.Fatalf("n=%d off=%d: houseDot(x, x) %v, floats.Dot %v", n, off, got, w)
				}

				// The updates, on copies of the columns: alpha of both signs and
				// magnitudes.
				var alpha [4]float64
				for k := range alpha {
					alpha[k] = houseTestValue(rng)
				}
				got, ref := [4][]float64{}, [4][]float64{}
				reset := func() {
					for k := range ys {
						got[k] = append([]float64(nil), ys[k][:n]...)
						ref[k] = append([]float64(nil), ys[k][:n]...)
						floats.AddScaled(ref[k], alpha[k], x)
					}
				}
				check := func(name string, cols int) {
					t.Helper()
					for k := range cols {
						if i := firstBitDiff(got[k], ref[k]); i >= 0 {
							t.Fatalf("n=%d off=%d: %s column %d element %d is %v, floats.AddScaled %v", n, off, name, k, i, got[k][i], ref[k][i])
						}
					}
				}
				reset()
				addScaled(got[0], alpha[0], x)
				check("addScaled", 1)
				reset()
				addScaled2(x, alpha[0], alpha[1], got[0], got[1])
				check("addScaled2", 2)
				reset()
				addScaled4(x, alpha[0], alpha[1], alpha[2], alpha[3], got[0], got[1], got[2], got[3])
				check("addScaled4", 4)

				// The fused update-and-inner-product kernels, with the next
				// reflector w one element shorter than the columns.
				if n >= 1 {
					w := vec(n-1, (off+2)%4)
					dw := [4]float64{}
					reset()
					for k := range ref {
						if n >= 2 {
							dw[k] = floats.Dot(w, ref[k][1:])
						}
					}
					var d [4]float64
					d[0] = axpyDot(x, w, alpha[0], got[0])
					check("axpyDot", 1)
					if math.Float64bits(d[0]) != math.Float64bits(dw[0]) {
						t.Fatalf("n=%d off=%d: axpyDot %v, floats.Dot %v", n, off, d[0], dw[0])
					}
					reset()
					d[0], d[1] = axpyDot2(x, w, alpha[0], alpha[1], got[0], got[1])
					check("axpyDot2", 2)
					if i := firstBitDiff(d[:2], dw[:2]); i >= 0 {
						t.Fatalf("n=%d off=%d: axpyDot2 product %d is %v, floats.Dot %v", n, off, i, d[i], dw[i])
					}
					reset()
					d[0], d[1], d[2], d[3] = axpyDot4(x, w, alpha[0], alpha[1], alpha[2], alpha[3], got[0], got[1], got[2], got[3])
					check("axpyDot4", 4)
					if i := firstBitDiff(d[:], dw[:]); i >= 0 {
						t.Fatalf("n=%d off=%d: axpyDot4 product %d is %v, floats.Dot %v", n, off, i, d[i], dw[i])
					}
					// The same with w scaled first, on a copy of w.
					ws := houseTestValue(rng)
					sw := append([]float64(nil), w...)
					floats.Scale(ws, sw)
					reset()
					for k := range ref {
						if n >= 2 {
							dw[k] = floats.Dot(sw, ref[k][1:])
						}
					}
					checkW := func(name string, got []float64) {
						t.Helper()
						if i := firstBitDiff(got, sw); i >= 0 {
							t.Fatalf("n=%d off=%d: %s scaled w[%d] to %v, floats.Scale %v", n, off, name, i, got[i], sw[i])
						}
					}
					w1 := append([]float64(nil), w...)
					d[0] = axpyDotScaled(x, w1, ws, alpha[0], got[0])
					check("axpyDotScaled", 1)
					checkW("axpyDotScaled", w1)
					if math.Float64bits(d[0]) != math.Float64bits(dw[0]) {
						t.Fatalf("n=%d off=%d: axpyDotScaled %v, floats.Dot %v", n, off, d[0], dw[0])
					}
					reset()
					w1 = append(w1[:0], w...)
					d[0], d[1] = axpyDotScaled2(x, w1, ws, alpha[0], alpha[1], got[0], got[1])
					check("axpyDotScaled2", 2)
					checkW("axpyDotScaled2", w1)
					if i := firstBitDiff(d[:2], dw[:2]); i >= 0 {
						t.Fatalf("n=%d off=%d: axpyDotScaled2 product %d is %v, floats.Dot %v", n, off, i, d[i], dw[i])
					}
					reset()
					w1 = append(w1[:0], w...)
					d[0], d[1], d[2], d[3] = axpyDotScaled4(x, w1, ws, alpha[0], alpha[1], alpha[2], alpha[3], got[0], got[1], got[2], got[3])
					check("axpyDotScaled4", 4)
					checkW("axpyDotScaled4", w1)
					if i := firstBitDiff(d[:], dw[:]); i >= 0 {
						t.Fatalf("n=%d off=%d: axpyDotScaled4 product %d is %v, floats.Dot %v", n, off, i, d[i], dw[i])
					}

					reset()
					sq := axpySelfDot(x, alpha[0], got[0])
					check("axpySelfDot", 1)
					var want float64
					if n >= 2 {
						want = floats.Dot(ref[0][1:], ref[0][1:])
					}
					if math.Float64bits(sq) != math.Float64bits(want) {
						t.Fatalf("n=%d off=%d: axpySelfDot %v, floats.Dot %v", n, off, sq, want)
					}
				}

				sx, rx := append([]float64(nil), x...), append([]float64(nil), x...)
				scaleVec(alpha[0], sx)
				floats.Scale(alpha[0], rx)
				if i := firstBitDiff(sx, rx); i >= 0 {
					t.Fatalf("n=%d off=%d: scaleVec element %d is %v, floats.Scale %v", n, off, i, sx[i], rx[i])
				}
			}
		}
	})
}

// TestHouseKernelsStayInBounds checks that the updates, the fused kernels and the
// scaling write nothing outside the vectors they are given (the assembly loops work in blocks of four and eight).
func TestHouseKernelsStayInBounds(t *testing.T) {
	forEachHousePath(t, func(t *testing.T) {
		for _, n := range houseTestLengths() {
			buf := make([]float64, 6*(n+8))
			for i := range buf {
				buf[i] = 7
			}
			col := func(k int) []float64 { return buf[k*(n+8)+1 : k*(n+8)+1+n] }
			v := col(0)
			for i := range v {
				v[i] = 1
			}
			addScaled(col(1), 2, v)
			addScaled2(v, 2, 2, col(2), col(3))
			addScaled4(v, 2, 2, 2, 2, col(1), col(2), col(4), col(5))
			scaleVec(3, col(5))
			if n >= 1 {
				w := v[:n-1]
				axpySelfDot(v, 2, col(1))
				axpyDot(v, w, 2, col(2))
				axpyDot2(v, w, 2, 2, col(3), col(4))
				axpyDot4(v, w, 2, 2, 2, 2, col(1), col(2), col(4), col(5))
				axpyDotScaled(v, col(1)[:n-1], 1, 2, col(2))
				axpyDotScaled2(v, col(1)[:n-1], 1, 2, 2, col(3), col(4))
				axpyDotScaled4(v, col(1)[:n-1], 1, 2, 2, 2, 2, col(2), col(3), col(4), col(5))
			}
			for k := range 6 {
				if g := buf[k*(n+8)]; g != 7 {
					t.Fatalf("n=%d: element before column %d changed to %v", n, k, g)
				}
				for i := k*(n+8) + 1 + n; i < (k+1)*(n+8); i++ {
					if buf[i] != 7 {
						t.Fatalf("n=%d: element %d past column %d changed to %v", n, i-k*(n+8)-1, k, buf[i])
					}
				}
			}
		}
	})
}

// TestHouseQRAheadMatchesPlain checks that houseQRAhead and houseApplyQTAhead (the
// reordered steps, with the portable kernels and, where the processor has them, the
// AVX2 ones) give the factors and the Q^T c of the plain houseQR and houseApplyQT on
// gonum's floats calls bit for bit: on tall and square matrices of graded columns, for
// one to seven right-hand columns (the four-, two- and one-column paths), dense and
// with columns that leave some reflectors empty (tau = 0, the steps that cannot look
// ahead).
func TestHouseQRAheadMatchesPlain(t *testing.T) {
	saved := useAVX2
	defer func() { useAVX2 = saved }()
	paths := []bool{false}
	if haveAVX2 && houseKernelsBuilt {
		paths = append(paths, true)
	}
	rng := rand.New(rand.NewPCG(33, 34))
	for _, sz := range [][2]int{{1, 1}, {2, 2}, {5, 5}, {9, 9}, {40, 1}, {41, 3}, {37, 7}, {64, 8}, {123, 4}, {400, 6}, {1215, 5}, {1500, 9}, {1501, 13}} {
		m, n := sz[0], sz[1]
		for _, sparse := range []bool{false, true} {
			_, a := testMatrix(rng, m, n, 6)
			if sparse {
				// Columns 0 and 1 zero below row 1: reflector 0 touches rows 0 and 1
				// only, and reflector 1 has nothing below its diagonal. The last
				// column is zero, and stays so, leaving its reflector empty too.
				for col := range min(2, n) {
					for i := 2; i < m; i++ {
						a[col*m+i] = 0
					}
				}
				for i := range m {
					a[(n-1)*m+i] = 0
				}
			}
			for k := 1; k <= 7; k++ {
				c := make([]float64, m*k)
				for i := range c {
					c[i] = houseTestValue(rng)
				}
				run := func(avx, ahead bool) []float64 {
					useAVX2 = avx
					aa, cc := append([]float64(nil), a...), append([]float64(nil), c...)
					tau := make([]float64, n)
					if ahead {
						houseQRAhead(aa, m, n, tau)
						houseApplyQTAhead(aa, m, n, tau, cc, k)
					} else {
						houseQR(aa, m, n, tau)
						houseApplyQT(aa, m, n, tau, cc, k)
					}
					return append(append(aa, tau...), cc...)
				}
				want := run(false, false)
				for _, avx := range paths {
					got := run(avx, true)
					if i := firstBitDiff(got, want); i >= 0 {
						t.Fatalf("%dx%d sparse=%v, %d columns, avx2=%v: value %d of [a tau c] is %v, plain %v", m, n, sparse, k, avx, i, got[i], want[i])
					}
				}
				if haveAVX2 && houseKernelsBuilt {
					// And houseQR itself, which takes the AVX2 path here.
					if i := firstBitDiff(run(true, false), want); i >= 0 {
						t.Fatalf("%dx%d sparse=%v, %d columns: houseQR with AVX2 differs at value %d", m, n, sparse, k, i)
					}
				}
			}
		}
	}
}

// BenchmarkHouseKernels times the kernels at a survey's column length, with AVX2 (if
// present) and without.
func BenchmarkHouseKernels(b *testing.B) {
	saved := useAVX2
	defer func() { useAVX2 = saved }()
	rng := rand.New(rand.NewPCG(35, 36))
	const n = 1215
	x := make([]float64, n)
	var c [5][]float64
	for k := range c {
		c[k] = make([]float64, n)
	}
	for i := range x {
		x[i] = rng.NormFloat64()
		for k := range c {
			c[k][i] = rng.NormFloat64()
		}
	}
	var s float64
	for _, avx := range []bool{false, true} {
		if avx && !(haveAVX2 && houseKernelsBuilt) {
			continue
		}
		useAVX2 = avx
		pre := map[bool]string{false: "portable/", true: "avx2/"}[avx]
		b.Run(pre+"dot", func(b *testing.B) {
			for b.Loop() {
				s += houseDot(x, c[0])
			}
		})
		b.Run(pre+"dotPair", func(b *testing.B) {
			for b.Loop() {
				p, q := dotPair(x, c[0], c[1])
				s += p + q
			}
		})
		b.Run(pre+"dotQuad", func(b *testing.B) {
			for b.Loop() {
				p, q, r, u := dotQuad(x, c[0], c[1], c[2], c[3])
				s += p + q + r + u
			}
		})
		// The updates alternate signs so that the columns stay bounded.
		b.Run(pre+"addScaled", func(b *testing.B) {
			a := 1e-3
			for b.Loop() {
				addScaled(c[0], a, x)
				a = -a
			}
		})
		b.Run(pre+"addScaled2", func(b *testing.B) {
			a := 1e-3
			for b.Loop() {
				addScaled2(x, a, a, c[0], c[1])
				a = -a
			}
		})
		b.Run(pre+"addScaled4", func(b *testing.B) {
			a := 1e-3
			for b.Loop() {
				addScaled4(x, a, a, a, a, c[0], c[1], c[2], c[3])
				a = -a
			}
		})
		b.Run(pre+"axpyDot", func(b *testing.B) {
			a := 1e-3
			for b.Loop() {
				s += axpyDot(x, c[4], a, c[0])
				a = -a
			}
		})
		b.Run(pre+"axpyDot4", func(b *testing.B) {
			a := 1e-3
			for b.Loop() {
				p, q, r, u := axpyDot4(x, c[4], a, a, a, a, c[0], c[1], c[2], c[3])
				s += p + q + r + u
				a = -a
			}
		})
		b.Run(pre+"scale", func(b *testing.B) {
			a := 1.5
			for b.Loop() {
				scaleVec(a, c[0])
				a = 1 / a
			}
		})
	}
	_ = s
}
