package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"testing"
)

// TestByDecreasingIsSliceStable: the allocation-free sort that lists a fit's lines
// strongest first (reorder) gives the permutation of sort.SliceStable (the standard
// library, which it replaced) on random magnitudes with many ties, NaN among them.
func TestByDecreasingIsSliceStable(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 8))
	for trial := range 2000 {
		n := 1 + rng.IntN(12)
		mag := make([]float64, n)
		for i := range mag {
			mag[i] = float64(rng.IntN(4))
			if trial%7 == 0 && rng.IntN(5) == 0 {
				mag[i] = math.NaN()
			}
		}
		got, want := make([]int, n), make([]int, n)
		for i := range got {
			got[i], want[i] = i, i
		}
		byDecreasing(got, mag)
		sort.SliceStable(want, func(a, b int) bool { return mag[want[a]] > mag[want[b]] })
		if !slices.Equal(got, want) {
			t.Fatalf("magnitudes %v: order %v, sort.SliceStable gives %v", mag, got, want)
		}
	}
}

// TestDeg1IsPercentPoint1f: the held angles' notes format their degrees as fmt's %.1f
// did, for ordinary values, halves, negative zero and the non-finite.
func TestDeg1IsPercentPoint1f(t *testing.T) {
	for _, v := range []float64{0, math.Copysign(0, -1), 90, 89.95, 0.05, 0.25, -0.05, 179.96, 1e21, 123.456, math.NaN(), math.Inf(1), math.Inf(-1)} {
		if got, want := deg1(v), fmt.Sprintf("%.1f", v); got != want {
			t.Errorf("deg1(%v) = %q, fmt gives %q", v, got, want)
		}
	}
}
