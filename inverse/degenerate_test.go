package inverse

import (
	"math/rand/v2"
	"testing"
)

// TestFitLinesDegenerate: data that cannot locate a line give an error, never a panic
// or NaN results.
func TestFitLinesDegenerate(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	same := make([][3]float64, 20)
	for i := range same {
		same[i] = [3]float64{1, 2, 0}
	}
	flat := traverse(20, -1, 1, 0, 0)
	constant := make([][3]float64, 20)
	for i := range constant {
		constant[i] = [3]float64{100, 200, 300}
	}
	noise := make([][3]float64, 20)
	for i := range noise {
		noise[i] = [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
	}
	vertical := make([][3]float64, 20)
	for i := range vertical {
		vertical[i] = [3]float64{0, 0, float64(i) * 0.1}
	}
	line := Line{Point: [3]float64{0.5, 0, -1}, Dir: [3]float64{0, 1, 0}}
	tests := []struct {
		name   string
		p      *Problem
		errors bool
	}{
		{"one position", &Problem{Points: same, Fields: simulate(same, []Line{line}, []float64{5}, [3]float64{}, 1, rng)}, true},
		{"constant field", &Problem{Points: flat, Fields: constant}, true},
		{"noise only", &Problem{Points: flat, Fields: noise}, false},
		{"vertical profile", &Problem{Points: vertical, Fields: simulate(vertical, []Line{line}, []float64{5}, [3]float64{}, 1, rng)}, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := FitLines(tc.p, nil)
			if err != nil {
				t.Log(err)
				if !tc.errors {
					t.Errorf("unexpected error %v", err)
				}
				return
			}
			if tc.errors {
				t.Errorf("no error; result %+v", res.Sources)
			}
			for _, e := range res.Sources {
				for _, v := range []float64{e.Current, e.CurrentSigma, e.Depth, e.DepthSigma, e.Offset, e.OffsetSigma, e.Azimuth, e.Dip} {
					if !finite(v) {
						t.Errorf("non-finite value in %+v", e)
					}
				}
			}
			t.Logf("%d sources; notes %v", len(res.Sources), res.Sources[0].Notes)
		})
	}
}
