package main

import (
	"fmt"
	"strings"

	"undercurrent/ingest"
)

// axisMap reads a field given in the wrong axes: the true field's
// component i (east, north, up) is sign[i] times the reading's component
// perm[i]. The 48 signed permutations cover the usual slips with a
// three-axis magnetometer's columns: a sensor turned on its mount by a
// quarter or half turn, mounted upside down, two columns swapped, one
// axis's sign reversed, a north, east, down field read as east, north, up.
type axisMap struct {
	perm [3]int
	sign [3]float64
}

// identityAxes reads the columns as they are.
var identityAxes = axisMap{perm: [3]int{0, 1, 2}, sign: [3]float64{1, 1, 1}}

func (m axisMap) apply(v [3]float64) [3]float64 {
	return [3]float64{m.sign[0] * v[m.perm[0]], m.sign[1] * v[m.perm[1]], m.sign[2] * v[m.perm[2]]}
}

// det is the map's determinant: +1 for a turn, -1 for a mirror image
// (two columns swapped, or one axis reversed), which no turn undoes.
func (m axisMap) det() float64 {
	d := m.sign[0] * m.sign[1] * m.sign[2]
	// The permutation's parity: count the inversions.
	p := m.perm
	for i := 0; i < 3; i++ {
		for j := i + 1; j < 3; j++ {
			if p[i] > p[j] {
				d = -d
			}
		}
	}
	return d
}

func (m axisMap) identity() bool { return m == identityAxes }

// axisLetters name a field column's contents: each of east, north, up and
// their opposites.
var axisLetters = [3][2]string{{"e", "w"}, {"n", "s"}, {"u", "d"}}

// flag returns the --field-axes value that reads the columns with m: what
// each of bx, by, bz holds.
func (m axisMap) flag() string {
	var out [3]string
	for i := range 3 {
		k := 0
		if m.sign[i] < 0 {
			k = 1
		}
		out[m.perm[i]] = axisLetters[i][k]
	}
	return strings.Join(out[:], ",")
}

// allAxisMaps returns the 48 signed permutations of three axes.
func allAxisMaps() []axisMap {
	perms := [][3]int{{0, 1, 2}, {0, 2, 1}, {1, 0, 2}, {1, 2, 0}, {2, 0, 1}, {2, 1, 0}}
	var out []axisMap
	for _, p := range perms {
		for s := range 8 {
			m := axisMap{perm: p}
			for i := range 3 {
				m.sign[i] = 1
				if s&(1<<i) != 0 {
					m.sign[i] = -1
				}
			}
			out = append(out, m)
		}
	}
	return out
}

// parseFieldAxes reads --field-axes: what the columns bx, by and bz hold,
// each one of e, n, u (east, north, up) or w, s, d (west, south, down),
// every axis once: "n,e,d" is a north, east, down field, "e,n,d" a z axis
// reversed, "e,s,d" a sensor upside down (turned over about its x axis).
func parseFieldAxes(text string) (axisMap, error) {
	parts := strings.Split(strings.ToLower(strings.ReplaceAll(text, " ", "")), ",")
	if len(parts) != 3 {
		return axisMap{}, fmt.Errorf("want three of e, n, u, w, s, d, one a column (bx, by, bz), as n,e,d")
	}
	var m axisMap
	seen := [3]bool{}
	for k, p := range parts {
		found := false
		for i := range 3 {
			for j, l := range axisLetters[i] {
				if p != l {
					continue
				}
				if seen[i] {
					return axisMap{}, fmt.Errorf("the %s axis is given twice: want each of east (e or w), north (n or s) and up (u or d) once", [3]string{"east", "north", "up"}[i])
				}
				seen[i], found = true, true
				m.perm[i] = k
				m.sign[i] = 1
				if j == 1 {
					m.sign[i] = -1
				}
			}
		}
		if !found {
			return axisMap{}, fmt.Errorf("%q: want one of e, n, u (east, north, up) or w, s, d (west, south, down)", p)
		}
	}
	return m, nil
}

// applyFieldAxes reads the field columns of s with m (east, north, up).
func applyFieldAxes(s *ingest.Samples, m axisMap) {
	for i := range s.Bx {
		v := m.apply([3]float64{s.Bx[i], s.By[i], s.Bz[i]})
		s.Bx[i], s.By[i], s.Bz[i] = v[0], v[1], v[2]
	}
}
