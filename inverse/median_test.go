package inverse

import (
	"math"
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

// TestSelectKthOrders checks selectKth's contract (s[k] is the k-th smallest, no larger
// value before it, no smaller after, and s a permutation of its input) against sorted
// copies (sort.Float64s) on random, tied, sorted, reversed and organ-pipe inputs, the
// orders that defeat naive pivot choices, for every k on short inputs and for a spread
// of k on long ones; odd k take the fallback that sorts after one partitioning pass.
func TestSelectKthOrders(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	kinds := []string{"random", "ties", "sorted", "reversed", "organ", "constant", "quantised"}
	for _, n := range []int{1, 2, 3, 16, 17, 18, 40, 127, 128, 129, 1000, 1209, 5000} {
		for _, kind := range kinds {
			v := make([]float64, n)
			for i := range v {
				switch kind {
				case "random":
					v[i] = rng.NormFloat64()
				case "ties":
					v[i] = float64(rng.IntN(3))
				case "sorted":
					v[i] = float64(i)
				case "reversed":
					v[i] = float64(n - i)
				case "organ":
					v[i] = float64(min(i, n-1-i))
				case "constant":
					v[i] = 2.5
				case "quantised":
					v[i] = math.Round(rng.NormFloat64()*30) / 10
				}
			}
			want := append([]float64(nil), v...)
			sort.Float64s(want)
			ks := []int{0, n / 4, n / 2, n - 1, (n - 1) / 2}
			if n <= 40 {
				ks = ks[:0]
				for k := range n {
					ks = append(ks, k)
				}
			}
			for _, k := range ks {
				s := append([]float64(nil), v...)
				var got float64
				if k%2 == 1 {
					got = selectKthWithin(s, k, 1) // the sorting fallback after one pass
				} else {
					got = selectKth(s, k)
				}
				if got != want[k] || s[k] != want[k] {
					t.Fatalf("%s n=%d k=%d: got %v (s[k] %v), want %v", kind, n, k, got, s[k], want[k])
				}
				for i, x := range s {
					if i < k && x > got || i > k && x < got {
						t.Fatalf("%s n=%d k=%d: s[%d] = %v on the wrong side of %v", kind, n, k, i, x, got)
					}
				}
				sorted := append([]float64(nil), s...)
				sort.Float64s(sorted)
				for i := range sorted {
					if sorted[i] != want[i] {
						t.Fatalf("%s n=%d k=%d: selectKth lost or changed elements", kind, n, k)
					}
				}
			}
		}
	}
}

// BenchmarkMedian1209 is the median of the noise-floor estimate of a 405-reading
// survey (1209 second differences of normally distributed readings). It cycles through
// 64 different inputs: on one input repeated, the branch predictor learns the
// comparisons' outcomes and flatters a branching selection several times over.
func BenchmarkMedian1209(b *testing.B) {
	rng := rand.New(rand.NewPCG(11, 12))
	const inputs = 64
	v := make([][]float64, inputs)
	for j := range v {
		v[j] = make([]float64, 1209)
		for i := range v[j] {
			v[j][i] = rng.NormFloat64()
		}
	}
	s := make([]float64, 1209)
	j := 0
	for b.Loop() {
		copy(s, v[j%inputs])
		medianInPlace(s)
		j++
	}
}
