package inverse

import (
	"math/rand/v2"
	"sort"
	"testing"
)

// TestMedianAgainstSort checks the selection-based median against the definition on a
// sorted copy (sort.Float64s from the standard library).
func TestMedianAgainstSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, n := range []int{1, 2, 3, 4, 5, 10, 41, 117, 1000} {
		for _, dup := range []bool{false, true} {
			v := make([]float64, n)
			for i := range v {
				v[i] = rng.NormFloat64()
				if dup {
					v[i] = float64(rng.IntN(4)) // many ties
				}
			}
			s := append([]float64(nil), v...)
			sort.Float64s(s)
			want := s[n/2]
			if n%2 == 0 {
				want = 0.5 * (s[n/2-1] + s[n/2])
			}
			orig := append([]float64(nil), v...)
			if got := median(v); got != want {
				t.Errorf("n=%d ties=%v: median %v, want %v", n, dup, got, want)
			}
			for i := range v {
				if v[i] != orig[i] {
					t.Fatalf("n=%d: median modified its argument", n)
				}
			}
		}
	}
}
