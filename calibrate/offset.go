package calibrate

import (
	"fmt"
	"math"
)

// OffsetResult is an offset estimate from the flip or zero-field method.
type OffsetResult struct {
	// Offset is the estimated sensor offset, nT; components not determined
	// by the method are zero.
	Offset [3]float64
	// Sigma is the standard error of each determined component, nT.
	Sigma [3]float64
	// Determined says which components the method fixes.
	Determined [3]bool
	// N is the number of readings used (for the flip method, per position).
	N [2]int
}

// FlipOffset estimates the offsets of the two axes perpendicular to axis
// (0 = x, 1 = y, 2 = z) from readings taken with the sensor at 0 and at 180
// degrees of rotation about that axis in a steady field (observatory
// practice for fluxgates, DOMAIN.md): those components change sign, so
//
//	offset = (mean(r0) + mean(r180)) / 2.
//
// The component along axis keeps its sign and is not determined.
func FlipOffset(r0, r180 [][3]float64, axis int) (*OffsetResult, error) {
	if axis < 0 || axis > 2 {
		return nil, fmt.Errorf("calibrate: flip: axis %d, want 0, 1 or 2", axis)
	}
	m0, s0, err := meanStd(r0, "0 degree")
	if err != nil {
		return nil, err
	}
	m1, s1, err := meanStd(r180, "180 degree")
	if err != nil {
		return nil, err
	}
	res := &OffsetResult{N: [2]int{len(r0), len(r180)}}
	for k := 0; k < 3; k++ {
		if k == axis {
			continue
		}
		res.Determined[k] = true
		res.Offset[k] = 0.5 * (m0[k] + m1[k])
		res.Sigma[k] = 0.5 * math.Sqrt(s0[k]*s0[k]/float64(len(r0))+s1[k]*s1[k]/float64(len(r180)))
	}
	return res, nil
}

// ZeroOffset estimates all three offsets as the mean of readings taken in
// zero field (inside a magnetic shield).
func ZeroOffset(r [][3]float64) (*OffsetResult, error) {
	m, s, err := meanStd(r, "zero-field")
	if err != nil {
		return nil, err
	}
	res := &OffsetResult{Offset: m, Determined: [3]bool{true, true, true}, N: [2]int{len(r), 0}}
	for k := 0; k < 3; k++ {
		res.Sigma[k] = s[k] / math.Sqrt(float64(len(r)))
	}
	return res, nil
}

func meanStd(r [][3]float64, what string) (m, s [3]float64, err error) {
	if len(r) == 0 {
		return m, s, fmt.Errorf("calibrate: %s log has no readings", what)
	}
	for i, v := range r {
		for k := 0; k < 3; k++ {
			if math.IsNaN(v[k]) || math.IsInf(v[k], 0) {
				return m, s, fmt.Errorf("calibrate: %s log: reading %d: component %d is %g", what, i, k, v[k])
			}
			m[k] += v[k]
		}
	}
	n := float64(len(r))
	for k := range m {
		m[k] /= n
	}
	if len(r) > 1 {
		for _, v := range r {
			for k := 0; k < 3; k++ {
				d := v[k] - m[k]
				s[k] += d * d
			}
		}
		for k := range s {
			s[k] = math.Sqrt(s[k] / (n - 1))
		}
	}
	return m, s, nil
}
