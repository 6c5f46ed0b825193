package inverse

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
)

// TestDotPairMatchesGonum checks that dotPair and dotQuad return exactly (bit for bit)
// the inner products of gonum's floats.Dot, which the Householder kernels relied on before: for
// every length from 0 to 67 (all remainders of the four-element blocks) and a long one,
// on values spread over many orders of magnitude and of both signs, where a different
// order of summation would show in the last bits. Both the SSE2 loops and, where the
// processor has AVX2, the AVX2 ones are checked.
func TestDotPairMatchesGonum(t *testing.T) {
	forEachHousePath(t, testDotPairMatchesGonum)
}

func testDotPairMatchesGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	val := func() float64 { return rng.NormFloat64() * math.Pow(10, 8*rng.Float64()-4) }
	lengths := []int{1215}
	for n := range 68 {
		lengths = append(lengths, n)
	}
	for _, n := range lengths {
		for range 5 {
			x, y, z := make([]float64, n), make([]float64, n+3), make([]float64, n+1)
			for i := range x {
				x[i] = val()
			}
			for i := range y {
				y[i] = val()
			}
			for i := range z {
				z[i] = val()
			}
			gy, gz := dotPair(x, y, z)
			wy, wz := floats.Dot(x, y[:n]), floats.Dot(x, z[:n])
			if math.Float64bits(gy) != math.Float64bits(wy) || math.Float64bits(gz) != math.Float64bits(wz) {
				t.Fatalf("n=%d: dotPair %v %v, floats.Dot %v %v", n, gy, gz, wy, wz)
			}
			// dotQuad, with the columns in an order that puts each in every slot.
			q0, q1, q2, q3 := dotQuad(x, z, y, y[1:], z)
			w1 := floats.Dot(x, y[1:n+1])
			for i, pair := range [][2]float64{{q0, wz}, {q1, wy}, {q2, w1}, {q3, wz}} {
				if math.Float64bits(pair[0]) != math.Float64bits(pair[1]) {
					t.Fatalf("n=%d: dotQuad product %d is %v, floats.Dot %v", n, i, pair[0], pair[1])
				}
			}
		}
	}
}

// BenchmarkDotPair compares dotPair with two floats.Dot calls, and dotQuad with two
// dotPair calls, at the length of a nine-traverse survey's columns.
func BenchmarkDotPair(b *testing.B) {
	rng := rand.New(rand.NewPCG(23, 24))
	x, y, z := make([]float64, 1215), make([]float64, 1215), make([]float64, 1215)
	for i := range x {
		x[i], y[i], z[i] = rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()
	}
	var s float64
	b.Run("dotPair", func(b *testing.B) {
		for b.Loop() {
			a, c := dotPair(x, y, z)
			s += a + c
		}
	})
	b.Run("floats.Dot twice", func(b *testing.B) {
		for b.Loop() {
			s += floats.Dot(x, y) + floats.Dot(x, z)
		}
	})
	y2, z2 := append([]float64(nil), z...), append([]float64(nil), y...)
	b.Run("dotQuad", func(b *testing.B) {
		for b.Loop() {
			a, c, d, e := dotQuad(x, y, z, y2, z2)
			s += a + c + d + e
		}
	})
	b.Run("dotPair twice", func(b *testing.B) {
		for b.Loop() {
			a, c := dotPair(x, y, z)
			d, e := dotPair(x, y2, z2)
			s += a + c + d + e
		}
	})
	_ = s
}
