package main

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestRewalkWithPositionOffset: testdata/scenarios/single-line.toml
// (simulated truth: a straight conductor at 60° from north, traverses
// across it at a given spacing) walked on one day (seed 31) and again the
// next (seed 32), both days in one log, the second day's positions moved
// along the route (the direction from T01's readings to the last
// traverse's, taken from the simulated positions) as an uncorrected GNSS
// offset between days moves them (commonly 0.5-2 m; from memory of field
// practice). A whole day shifted alike is the survey walked again: 0.6 m
// on traverses 2 m apart was called a mislabel traverse by traverse, "T01
// (line 2)" ... with eleven warnings saying two traverses were given one
// name (found in review); now each later walk is "(walk 2)", with one
// warning naming the common shift. Two traverses alone shifted alike are
// not told from mislabels: "(line 2)", in one warning, where the nearest
// other traverse is the first day's spacing (2 m; the readings of both
// days pooled gave 1.7 m). A whole set named one traverse over (shifted
// by the 4 m spacing) stays a set of mislabels, in one warning.
func TestRewalkWithPositionOffset(t *testing.T) {
	dir := t.TempDir()
	days := map[string][2]string{} // each grid's two days' logs
	for _, c := range []struct {
		name     string
		count    int
		spacing  float64 // m
		shift    float64 // m along the route
		walked   []string
		later    string // the suffix of the later runs' names
		say      string // in the one warning
		notSay   string
		walkNums int // walks numbered 2
	}{
		{"day again 0.6 m on, 2 m spacing", 11, 2, 0.6, nil, "(walk 2)", "lie 0.6 m across their first walks' lines", "mislabel", 11},
		{"day again 0.6 m back, 1 m spacing", 11, 1, -0.6, nil, "(walk 2)", "lie 0.6 m across their first walks' lines", "mislabel", 11},
		{"day again 1 m on, 3 m spacing", 11, 3, 1.0, nil, "(walk 2)", "lie 1 m across their first walks' lines", "mislabel", 11},
		{"T03 and T04 again 0.6 m on, 2 m spacing", 11, 2, 0.6, []string{"T03", "T04"}, "(line 2)", "where the nearest other traverses lie 2 m across them", "walked again, and", 0},
		{"the set one over, 4 m spacing", 7, 4, 4.0, nil, "(line 2)", "(mislabels)", "walked again, and", 0},
	} {
		tag := fmt.Sprintf("s%d-%g", c.count, c.spacing)
		grid := []string{"count = 7", fmt.Sprintf("count = %d", c.count), "spacing_m = 4.0", fmt.Sprintf("spacing_m = %g", c.spacing)}
		if _, ok := days[tag]; !ok {
			days[tag] = [2]string{
				scenarioVariant(t, dir, tag+"-day1", append(grid, "seed = 11", "seed = 31")...),
				scenarioVariant(t, dir, tag+"-day2", append(grid, "seed = 11", "seed = 32",
					`start = "2026-02-02T14:00:00Z"`, `start = "2026-02-03T14:00:00Z"`)...),
			}
		}
		d1, err := ingest.ReadSamples(days[tag][0])
		if err != nil {
			t.Fatal(err)
		}
		d2, err := ingest.ReadSamples(days[tag][1])
		if err != nil {
			t.Fatal(err)
		}
		// The route's direction: from the first traverse's readings to
		// the last's.
		last := fmt.Sprintf("T%02d", c.count)
		a, b := rowsOf(d1, inRange("T01", "T01"), nil), rowsOf(d1, inRange(last, last), nil)
		if a.Len() < 20 || b.Len() < 20 {
			t.Fatalf("%s: T01 has %d readings, %s %d", c.name, a.Len(), last, b.Len())
		}
		ax, ay := meanOf(a.X), meanOf(a.Y)
		ux, uy := meanOf(b.X)-ax, meanOf(b.Y)-ay
		if l := math.Hypot(ux, uy); math.Abs(l-c.spacing*float64(c.count-1)) > 0.05 {
			t.Fatalf("%s: T01 to %s is %.3f m, the scenario says %g", c.name, last, l, c.spacing*float64(c.count-1))
		} else {
			ux, uy = ux/l, uy/l
		}
		keep := func(g string) bool { return true }
		if c.walked != nil {
			keep = func(g string) bool {
				for _, w := range c.walked {
					if g == w {
						return true
					}
				}
				return false
			}
		}
		log := rowsOf(d1, func(string) bool { return true }, nil) // the first day's
		n1 := log.Len()
		again := rowsOf(d2, keep, nil) // the second day's rows, moved
		for i := range again.Time {
			log.Time = append(log.Time, again.Time[i])
			log.X, log.Y = append(log.X, again.X[i]+c.shift*ux), append(log.Y, again.Y[i]+c.shift*uy)
			log.Z = append(log.Z, again.Z[i])
			log.Bx, log.By, log.Bz = append(log.Bx, again.Bx[i]), append(log.By, again.By[i]), append(log.Bz, again.Bz[i])
			log.Group = append(log.Group, again.Group[i])
		}
		if log.Len() == n1 {
			t.Fatalf("%s: nothing walked again", c.name)
		}
		warns, walks := splitRewalkedGroups([]string{"t.csv"}, []*ingest.Samples{log})
		bad := 0
		for i, g := range log.Group {
			if i < n1 && strings.Contains(g, "(") || i >= n1 && g != again.Group[i-n1]+" "+c.later {
				bad++
			}
		}
		if bad > 0 {
			t.Errorf("%s: %d of %d rows not named as want (the second day's %q)", c.name, bad, log.Len(), c.later)
		}
		if len(warns) != 1 {
			t.Errorf("%s: %d warnings, want one: %q", c.name, len(warns), warns)
			continue
		}
		if w := warns[0]; !strings.Contains(w, c.say) || strings.Contains(w, c.notSay) {
			t.Errorf("%s: the warning does not say %q (or says %q): %q", c.name, c.say, c.notSay, w)
		}
		if len(walks) != c.walkNums {
			t.Errorf("%s: %d walks numbered, want %d: %v", c.name, len(walks), c.walkNums, walks)
		}
	}
}

// meanOf returns the mean of v.
func meanOf(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}
