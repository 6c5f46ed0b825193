package report

import (
	"fmt"
	"math"
	"sort"
)

// Profile components.
const (
	ComponentDC        = "dc"
	ComponentACInPhase = "ac-in-phase"
)

// NewProfile makes a compact Profile of a group's readings for plotting:
// each reading's horizontal offset across the conductor through point with
// direction dir (positive to the right looking along dir), sorted by
// offset and thinned to at most max readings (all when max <= 0).
//
// Thinning keeps every n-th reading in order of offset and, beside them,
// the readings that show what the fit did not explain: those with the
// largest misfit |measured - predicted| and the peaks (the least and
// greatest measured value of each component). A stride alone dropped a
// short spike (three glitched readings of 1601) from a poor fit's plot, so
// that the only plot offered for a "poor fit" finding showed a clean one.
// Up to a fifth of the kept readings are these; when max is below 5 the
// stride alone chooses.
//
// It returns an error when positions, measured and predicted differ in
// length, dir has no horizontal part or a value is not finite.
func NewProfile(positions, measured, predicted [][3]float64, point, dir [3]float64, component string, max int) (*Profile, error) {
	return newProfile(positions, point, dir, component, max, measured, predicted, nil, nil)
}

// newProfile is NewProfile with, for AC, the quadrature parts mq and pq of
// the same readings (nil for DC). The readings kept are chosen once, from
// the misfits and peaks of both parts, so that the in-phase and quadrature
// parts line up reading by reading.
func newProfile(positions [][3]float64, point, dir [3]float64, component string, max int, measured, predicted, mq, pq [][3]float64) (*Profile, error) {
	n := len(positions)
	if len(measured) != n || len(predicted) != n {
		return nil, fmt.Errorf("report: NewProfile: %d positions, %d measured, %d predicted: want one of each per reading", n, len(measured), len(predicted))
	}
	quad := mq != nil || pq != nil
	if quad && (len(mq) != n || len(pq) != n) {
		return nil, fmt.Errorf("report: NewProfile: %d positions, %d measured and %d predicted quadrature: want one of each per reading", n, len(mq), len(pq))
	}
	h := math.Hypot(dir[0], dir[1])
	if h == 0 || math.IsNaN(h) || math.IsInf(h, 0) {
		return nil, fmt.Errorf("report: profile: direction %v has no horizontal part", dir)
	}
	// Right-hand normal of the horizontal direction (e, n) is (n, -e).
	rx, ry := dir[1]/h, -dir[0]/h
	idx := make([]int, n)
	off := make([]float64, n)
	for i, p := range positions {
		idx[i] = i
		off[i] = (p[0]-point[0])*rx + (p[1]-point[1])*ry
		if math.IsNaN(off[i]) || math.IsInf(off[i], 0) {
			return nil, fmt.Errorf("report: profile: reading %d: position %v is not finite", i, p)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return off[idx[a]] < off[idx[b]] })
	keep := idx
	if max == 1 && n > 1 {
		keep = idx[n/2 : n/2+1]
	} else if max > 1 && n > max {
		parts := [][2][][3]float64{{measured, predicted}}
		if quad {
			parts = append(parts, [2][][3]float64{mq, pq})
		}
		keep = thinProfile(idx, parts, max)
	}
	p := &Profile{Component: component}
	for _, i := range keep {
		p.Positions = append(p.Positions, positions[i])
		p.Offset = append(p.Offset, off[i])
		p.Measured = append(p.Measured, measured[i])
		p.Predicted = append(p.Predicted, predicted[i])
		if quad {
			p.MeasuredQuadrature = append(p.MeasuredQuadrature, mq[i])
			p.PredictedQuadrature = append(p.PredictedQuadrature, pq[i])
		}
	}
	return p, nil
}

// thinProfile chooses at most max of the readings idx (sorted by offset,
// len(idx) > max > 1) and returns them in the same order: the peaks of
// each part's measured components and the largest misfits, up to max/5 of
// them, then every n-th reading (the first and last included) to fill the
// rest.
func thinProfile(idx []int, parts [][2][][3]float64, max int) []int {
	n := len(idx)
	chosen := make(map[int]bool, max)
	budget := max / 5
	if budget > 0 {
		// The peaks: where the measured field is least and greatest.
		for _, pt := range parts {
			m := pt[0]
			for a := range 3 {
				lo, hi := idx[0], idx[0]
				for _, i := range idx {
					if m[i][a] < m[lo][a] {
						lo = i
					}
					if m[i][a] > m[hi][a] {
						hi = i
					}
				}
				for _, i := range []int{lo, hi} {
					if len(chosen) < budget {
						chosen[i] = true
					}
				}
			}
		}
		// The largest misfits, summed over components and parts.
		misfit := make([]float64, len(parts[0][0]))
		byMisfit := make([]int, 0, n)
		for _, i := range idx {
			for _, pt := range parts {
				for a := range 3 {
					r := pt[0][i][a] - pt[1][i][a]
					misfit[i] += r * r
				}
			}
			byMisfit = append(byMisfit, i)
		}
		sort.SliceStable(byMisfit, func(a, b int) bool { return misfit[byMisfit[a]] > misfit[byMisfit[b]] })
		for _, i := range byMisfit {
			if len(chosen) >= budget {
				break
			}
			chosen[i] = true
		}
	}
	// Every n-th reading fills the rest: the ends first, so that the plot
	// spans all the offsets.
	m := max - len(chosen)
	if m < 2 {
		m = 2
	}
	for k := 0; k < m; k++ {
		chosen[idx[int(math.Round(float64(k)*float64(n-1)/float64(m-1)))]] = true
	}
	keep := make([]int, 0, len(chosen))
	for _, i := range idx {
		if chosen[i] {
			keep = append(keep, i)
		}
	}
	return keep
}
