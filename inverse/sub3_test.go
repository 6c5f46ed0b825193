package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestSub3MatchesLoop: sub3, which takes the uniform background out of a column in the
// background projection (separable.project), gives the plain loop's v[3i+j] - s_j bit
// for bit with the portable code and, where the processor has it, the AVX2 loop (four
// readings a step): for every length to 40 readings and some of the fits' column
// lengths, columns starting at every alignment and followed by unrelated data that
// must not change, values of both signs over twelve decades with zeros of either sign
// and subnormals (houseTestValue).
func TestSub3MatchesLoop(t *testing.T) {
	forEachHousePath(t, func(t *testing.T) {
		rng := rand.New(rand.NewPCG(17, 3))
		lengths := []int{127 * 3, 405 * 3, 500 * 3}
		for k := range 41 {
			lengths = append(lengths, 3*k)
		}
		for _, n := range lengths {
			for off := range 4 {
				buf := make([]float64, off+n+5)
				for i := range buf {
					buf[i] = houseTestValue(rng)
				}
				v := buf[off : off+n]
				s := [3]float64{houseTestValue(rng), houseTestValue(rng), houseTestValue(rng)}
				want := append([]float64(nil), buf...)
				for i := range n {
					want[off+i] -= s[i%3]
				}
				sub3(v, s[0], s[1], s[2])
				for i := range buf {
					if math.Float64bits(buf[i]) != math.Float64bits(want[i]) {
						t.Fatalf("%d elements at offset %d: element %d (of the buffer) is %v, want %v", n, off, i-off, buf[i], want[i])
					}
				}
			}
		}
	})
}
