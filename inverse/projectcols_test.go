package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestProjectColsMatchesProject checks that projectCols, which sums the background
// projection of two or four columns in one pass, leaves every column and coefficient
// bit for bit as project does column by column, with and without row weights, for
// every count of columns up to 9 (groups of four, two and one) and on survey sizes of
// the benchmarks and the tests.
func TestProjectColsMatchesProject(t *testing.T) {
	forEachHousePath(t, func(t *testing.T) {
		rng := rand.New(rand.NewPCG(24, 1))
		for _, n := range []int{1, 2, 3, 7, 41, 127, 405, 500} {
			m := 3 * n
			for _, weighted := range []bool{false, true} {
				sp := &separable{m: m}
				if weighted {
					sp.w = make([]float64, m)
					for i := range sp.w {
						sp.w[i] = math.Abs(houseTestValue(rng)) + 0.1
					}
				}
				for a := range 3 {
					// Unequal per axis (an unweighted fit has n on each), so that an
					// axis taken for another shows.
					sp.bn2[a] = float64(n) + 0.25*float64(a)
					if weighted {
						sp.bn2[a] = 0
						for i := a; i < m; i += 3 {
							sp.bn2[a] += sp.w[i] * sp.w[i]
						}
					}
				}
				for cols := 1; cols <= 9; cols++ {
					got := make([]float64, m*cols)
					for i := range got {
						got[i] = houseTestValue(rng)
					}
					want := append([]float64(nil), got...)
					wantBar := make([][3]float64, cols)
					for c := range cols {
						wantBar[c] = sp.project(want[c*m : (c+1)*m])
					}
					bar := make([][3]float64, cols)
					sp.projectCols(got, cols, bar)
					for c := range cols {
						for a := range 3 {
							if math.Float64bits(bar[c][a]) != math.Float64bits(wantBar[c][a]) {
								t.Fatalf("n %d weighted %v, %d columns: coefficient %d of column %d is %v, want %v", n, weighted, cols, a, c, bar[c][a], wantBar[c][a])
							}
						}
					}
					for i := range got {
						if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
							t.Fatalf("n %d weighted %v, %d columns: element %d is %v, want %v", n, weighted, cols, i, got[i], want[i])
						}
					}
					// Without the coefficients, the same columns.
					again := append([]float64(nil), want...)
					copy(got, want)
					for c := range cols {
						sp.project(again[c*m : (c+1)*m])
					}
					sp.projectCols(got, cols, nil)
					for i := range got {
						if math.Float64bits(got[i]) != math.Float64bits(again[i]) {
							t.Fatalf("n %d weighted %v, %d columns, no coefficients: element %d is %v, want %v", n, weighted, cols, i, got[i], again[i])
						}
					}
				}
			}
		}
	})
}
