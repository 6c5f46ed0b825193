package calibrate

import (
	"math"
	"sort"
)

// Spread summarises a set of field magnitudes |B| in nanotesla.
type Spread struct {
	N    int     `json:"n"`
	Mean float64 `json:"mean_nt"`
	Std  float64 `json:"std_nt"` // sample standard deviation (n-1)
	Min  float64 `json:"min_nt"`
	Max  float64 `json:"max_nt"`
}

// magnitudeSpread returns the spread of |v| over vs.
func magnitudeSpread(vs [][3]float64) Spread {
	mags := make([]float64, len(vs))
	for i, v := range vs {
		mags[i] = norm3(v)
	}
	return spreadOf(mags)
}

func spreadOf(x []float64) Spread {
	s := Spread{N: len(x)}
	if len(x) == 0 {
		return s
	}
	s.Min, s.Max = math.Inf(1), math.Inf(-1)
	var sum float64
	for _, v := range x {
		sum += v
		s.Min = math.Min(s.Min, v)
		s.Max = math.Max(s.Max, v)
	}
	s.Mean = sum / float64(len(x))
	if len(x) > 1 {
		var ss float64
		for _, v := range x {
			d := v - s.Mean
			ss += d * d
		}
		s.Std = math.Sqrt(ss / float64(len(x)-1))
	}
	return s
}

func norm3(v [3]float64) float64 { return math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2]) }

func dot3(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }

func matVec3(m [3][3]float64, v [3]float64) [3]float64 {
	return [3]float64{
		m[0][0]*v[0] + m[0][1]*v[1] + m[0][2]*v[2],
		m[1][0]*v[0] + m[1][1]*v[1] + m[1][2]*v[2],
		m[2][0]*v[0] + m[2][1]*v[1] + m[2][2]*v[2],
	}
}

func matMul3(a, b [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			c[i][j] = a[i][0]*b[0][j] + a[i][1]*b[1][j] + a[i][2]*b[2][j]
		}
	}
	return c
}

func identity3() [3][3]float64 { return [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}} }

// median returns the median of x, reordering scratch (which must have
// len(x) capacity); x is not modified.
func median(x, scratch []float64) float64 {
	scratch = append(scratch[:0], x...)
	sort.Float64s(scratch)
	n := len(scratch)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return scratch[n/2]
	}
	return 0.5 * (scratch[n/2-1] + scratch[n/2])
}
