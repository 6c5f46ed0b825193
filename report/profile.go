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
// offset and thinned evenly to at most max readings (all when max <= 0).
// positions, measured and predicted must have equal lengths; NewProfile
// panics otherwise, which is a programming mistake. It returns an error when
// dir has no horizontal part or a value is not finite.
func NewProfile(positions, measured, predicted [][3]float64, point, dir [3]float64, component string, max int) (*Profile, error) {
	n := len(positions)
	if len(measured) != n || len(predicted) != n {
		panic(fmt.Sprintf("report: NewProfile: %d positions, %d measured, %d predicted", n, len(measured), len(predicted)))
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
		keep = make([]int, max)
		for k := range keep {
			keep[k] = idx[int(math.Round(float64(k)*float64(n-1)/float64(max-1)))]
		}
	}
	p := &Profile{Component: component}
	for _, i := range keep {
		p.Positions = append(p.Positions, positions[i])
		p.Offset = append(p.Offset, off[i])
		p.Measured = append(p.Measured, measured[i])
		p.Predicted = append(p.Predicted, predicted[i])
	}
	return p, nil
}
