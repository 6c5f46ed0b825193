package calibrate

import (
	"math/rand/v2"
	"sort"
	"testing"
)

// SelectKth gives what the standard library's sort puts at index k, for
// every k of random arrays with ties and of sorted and reversed ones.
func TestSelectKthMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{1, 2, 3, 10, 101, 1000} {
		base := make([]float64, n)
		for i := range base {
			base[i] = float64(rng.IntN(n/2 + 1)) // ties
		}
		sorted := append([]float64(nil), base...)
		sort.Float64s(sorted)
		rev := append([]float64(nil), sorted...)
		for i, j := 0, len(rev)-1; i < j; i, j = i+1, j-1 {
			rev[i], rev[j] = rev[j], rev[i]
		}
		for _, src := range [][]float64{base, sorted, rev} {
			for k := 0; k < n; k++ {
				a := append([]float64(nil), src...)
				if got := SelectKth(a, k); got != sorted[k] {
					t.Fatalf("n %d, k %d: %v, want %v", n, k, got, sorted[k])
				}
			}
		}
	}
}
