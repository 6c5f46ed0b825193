package inverse

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"testing"
)

// TestSurveySumsSameAsBefore: newSurveyIn sums the centroid and finds the lowest
// height and the extent in locals with the built-in min and max; they must be the
// numbers of the former loops (add into sv.centroid, math.Min, math.Max of
// math.Hypot) bit for bit: on the benchmark surveys, random positions, and heights
// that are signed zeros (math.Min's and the built-in min's rule for them: -0 is the
// smaller).
func TestSurveySumsSameAsBefore(t *testing.T) {
	ref := func(p *Problem) (centroid [3]float64, zmin, extent float64) {
		zmin = math.Inf(1)
		for _, r := range p.Points {
			centroid = add(centroid, r)
			zmin = math.Min(zmin, r[2])
		}
		centroid = scale(centroid, 1/float64(len(p.Points)))
		for _, r := range p.Points {
			de, dn := r[0]-centroid[0], r[1]-centroid[1]
			extent = math.Max(extent, math.Hypot(de, dn))
		}
		return centroid, zmin, extent
	}
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
	check := func(name string, p *Problem) {
		t.Helper()
		sv := newSurvey(p)
		c, zmin, ext := ref(p)
		for j := range 3 {
			if !same(sv.centroid[j], c[j]) {
				t.Errorf("%s: centroid[%d] %v, want %v", name, j, sv.centroid[j], c[j])
			}
		}
		if !same(sv.zmin, zmin) || !same(sv.extent, ext) {
			t.Errorf("%s: lowest height %v, extent %v; want %v, %v", name, sv.zmin, sv.extent, zmin, ext)
		}
	}
	for _, c := range benchCases {
		p, err := readBenchSurvey(filepath.Join("testdata", c.file))
		if err != nil {
			t.Fatal(err)
		}
		check(c.file, p)
	}
	rng := rand.New(rand.NewPCG(13, 17))
	for range 20 {
		n := 1 + rng.IntN(500)
		p := &Problem{Points: make([][3]float64, n), Fields: make([][3]float64, n)}
		for i := range p.Points {
			p.Points[i] = [3]float64{rng.NormFloat64() * 1e3, rng.NormFloat64() * 1e-3, rng.NormFloat64()}
		}
		check("random", p)
	}
	negZero := math.Copysign(0, -1)
	check("signed zeros", &Problem{Points: [][3]float64{{1, 0, 0}, {2, 0, negZero}, {3, 1, 0}}, Fields: make([][3]float64, 3)})
	check("signed zeros, -0 first", &Problem{Points: [][3]float64{{1, 0, negZero}, {2, 0, 0}}, Fields: make([][3]float64, 2)})
}
