package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// appendRows appends the rows of b to a, their times moved by dt s, their
// plan positions by move (nil: kept) and their group set to g.
func appendRows(a, b *ingest.Samples, dt float64, g string, move func(x, y float64) (float64, float64)) {
	for i := range b.Time {
		x, y := b.X[i], b.Y[i]
		if move != nil {
			x, y = move(x, y)
		}
		a.Time = append(a.Time, b.Time[i]+dt)
		a.X, a.Y, a.Z = append(a.X, x), append(a.Y, y), append(a.Z, b.Z[i])
		a.Bx, a.By, a.Bz = append(a.Bx, b.Bx[i]), append(a.By, b.By[i]), append(a.Bz, b.Bz[i])
		a.Group = append(a.Group, g)
	}
}

// TestRewalkNeedsSameStation: a group's readings after a pause that cover
// the same ground again are the traverse walked again only where they lie
// on the first walk's line, at its station. Positions from
// testdata/scenarios/single-line.toml (simulated: seven traverses 4 m
// apart across the conductor). T05 logged as T04 a minute and more after
// T04 (the crew forgot to change the name) lies 4 m across T04's line,
// the spacing: it was taken for "T04 (walk 2)" (found in review); it is
// another traverse, fitted apart as "T04 (line 2)" with the mislabel
// warning, with or without other traverses in the log to set the spacing,
// and so is T04 walked again 2 m (half the spacing) to the side. T04
// walked again on its own line, 0.3 m to the side (a GNSS position's
// scatter) or turned 5° about its middle, is still a walk again.
func TestRewalkNeedsSameStation(t *testing.T) {
	s := singleLineSeed1(t)
	t04 := rowsOf(s, inRange("T04", "T04"), nil)
	t05 := rowsOf(s, inRange("T05", "T05"), nil)
	n := t04.Len()
	if n < 20 || t05.Len() < 20 {
		t.Fatalf("T04 has %d readings, T05 %d", n, t05.Len())
	}
	// T04's line: its direction and a unit normal, from its ends.
	ux, uy := t04.X[n-1]-t04.X[0], t04.Y[n-1]-t04.Y[0]
	l := math.Hypot(ux, uy)
	ux, uy = ux/l, uy/l
	mx, my := 0.5*(t04.X[0]+t04.X[n-1]), 0.5*(t04.Y[0]+t04.Y[n-1])
	// T05 lies 4 m across T04's line (the scenario's spacing).
	if d := math.Abs(-(t05.X[0]-mx)*uy + (t05.Y[0]-my)*ux); math.Abs(d-4) > 0.05 {
		t.Fatalf("T05 lies %.3f m across T04's line, the scenario says 4 m", d)
	}
	after := func(o *ingest.Samples) float64 { return o.Time[len(o.Time)-1] - t05.Time[0] + 70 }
	side := func(d float64) func(x, y float64) (float64, float64) {
		return func(x, y float64) (float64, float64) { return x - d*uy, y + d*ux }
	}
	turn := func(deg float64) func(x, y float64) (float64, float64) {
		c, sn := math.Cos(deg*math.Pi/180), math.Sin(deg*math.Pi/180)
		return func(x, y float64) (float64, float64) {
			return mx + c*(x-mx) - sn*(y-my), my + sn*(x-mx) + c*(y-my)
		}
	}
	// again returns T01-T04 (or T04 alone) and then T04's readings again
	// 90 s after the last, moved by move.
	again := func(from string, move func(x, y float64) (float64, float64)) *ingest.Samples {
		o := rowsOf(s, inRange(from, "T04"), nil)
		appendRows(o, t04, o.Time[len(o.Time)-1]-t04.Time[0]+90, "T04", move)
		return o
	}
	// nextAsT04 returns T01-T04 (or T04 alone) and then T05 named T04,
	// 70 s after the last reading.
	nextAsT04 := func(from string) *ingest.Samples {
		o := rowsOf(s, inRange(from, "T04"), nil)
		appendRows(o, t05, after(o), "T04", nil)
		return o
	}
	for _, c := range []struct {
		name  string
		s     *ingest.Samples
		later string // the name the later run's rows take
	}{
		{"T05 logged as T04 after T01-T04", nextAsT04("T01"), "T04 (line 2)"},
		{"T05 logged as T04 after T04 alone", nextAsT04("T04"), "T04 (line 2)"},
		{"T04 walked again 2 m to the side", again("T01", side(2)), "T04 (line 2)"},
		{"T04 walked again on its line", again("T01", nil), "T04 (walk 2)"},
		{"T04 walked again 0.3 m to the side", again("T01", side(0.3)), "T04 (walk 2)"},
		{"T04 walked again turned 5 degrees", again("T01", turn(5)), "T04 (walk 2)"},
		{"T04 alone walked again 0.3 m to the side", again("T04", side(0.3)), "T04 (walk 2)"},
	} {
		first := 0 // the later run's first row: after the pause
		for i := 1; i < len(c.s.Time); i++ {
			if c.s.Time[i]-c.s.Time[i-1] > reusedApartS {
				first = i
			}
		}
		warns, walks := splitRewalkedGroups([]string{"t.csv"}, []*ingest.Samples{c.s})
		bad := 0
		for i, g := range c.s.Group {
			if (i >= first) != (g == c.later) {
				bad++
			}
		}
		if bad > 0 {
			t.Errorf("%s: %d rows not named as want (the later run %q, the rest as before)", c.name, bad, c.later)
		}
		if len(warns) != 1 {
			t.Errorf("%s: %d warnings, want one: %q", c.name, len(warns), warns)
			continue
		}
		w := warns[0]
		if strings.HasSuffix(c.later, "(line 2)") {
			if !strings.Contains(w, "two traverses were given one name (a mislabel)") || !strings.Contains(w, c.later) || strings.Contains(w, "walked again, and") {
				t.Errorf("%s: the warning does not name the mislabel: %q", c.name, w)
			}
			if len(walks) != 0 {
				t.Errorf("%s: walks numbered %v, want none", c.name, walks)
			}
		} else {
			if !strings.Contains(w, "covers the same ground again") || strings.Contains(w, "mislabel") {
				t.Errorf("%s: the warning does not name the walk again: %q", c.name, w)
			}
			if walks[rewalkKey("t.csv", c.later)] != 2 {
				t.Errorf("%s: walks numbered %v, want %s as walk 2", c.name, walks, c.later)
			}
		}
	}
}

// TestLocateMislabelNotRewalk: testdata/scenarios/single-line.toml walked
// at 25 A over T01-T04 and, 5 minutes later at 30 A (simulated truth; the
// same route, seed 2), its next traverse T05 logged under the name T04.
// It was fitted as "T04 (walk 2)", said to lie at T04's station and be
// compared with it, while the table put it 4 m on, and a 5 A "current
// joining" step was read between T04 and its own walk (found in review).
// Now it is another traverse, "T04 (line 2)", fitted apart at its own
// station 4 m (the spacing) past T04 and reading its own current (the
// ratio within 1% of the truth's 1.2; the uncalibrated sensor's bias is
// common to both), with the mislabel warning and no walk named or
// compared.
func TestLocateMislabelNotRewalk(t *testing.T) {
	dir := t.TempDir()
	_, path := scenario(t, "single-line.toml")
	text, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	later := bytes.Replace(text, []byte(`start = "2026-02-02T14:00:00Z"`), []byte(`start = "2026-02-02T14:05:00Z"`), 1)
	later = bytes.Replace(later, []byte("current_a = 25.0"), []byte("current_a = 30.0"), 1)
	if bytes.Count(later, []byte("current_a = 30.0")) != 1 || !bytes.Contains(later, []byte("14:05:00Z")) {
		t.Fatal("single-line.toml has not the start and current lines the test changes")
	}
	second := filepath.Join(dir, "later.toml")
	if err := os.WriteFile(second, later, 0o644); err != nil {
		t.Fatal(err)
	}
	a, ab := filepath.Join(dir, "first.csv"), filepath.Join(dir, "first-base.csv")
	b, bb := filepath.Join(dir, "second.csv"), filepath.Join(dir, "second-base.csv")
	mustCLI(t, "simulate", "--seed", "1", path, "-o", a, "--base-log", ab)
	mustCLI(t, "simulate", "--seed", "2", second, "-o", b, "--base-log", bb)
	s1, err := ingest.ReadSamples(a)
	if err != nil {
		t.Fatal(err)
	}
	s2, err := ingest.ReadSamples(b)
	if err != nil {
		t.Fatal(err)
	}
	all := rowsOf(s1, inRange("T01", "T04"), nil)
	more := rowsOf(s2, inRange("T05", "T05"), map[string]string{"T05": "T04"})
	if more.Len() == 0 || more.Time[0]-all.Time[len(all.Time)-1] <= reusedApartS {
		t.Fatal("the later T05 does not start more than a minute after T04")
	}
	appendRows(all, more, 0, "T04", nil)
	log := writeSplitLog(t, dir, "harrow-fen.csv", all)
	doc := decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", "--base", ab, "--base", bb, log))
	cur, at := map[string]float64{}, map[string]float64{}
	for _, g := range doc.Groups {
		if strings.Contains(g.Key, "(walk") {
			t.Errorf("group %q: T05 under T04's name is taken for a walk again", g.Key)
		}
		if len(g.Sources) > 0 && g.Chainage != nil {
			cur[g.Key], at[g.Key] = g.Sources[0].Current, *g.Chainage
		}
	}
	c1, ok1 := cur["T04"]
	c2, ok2 := cur["T04 (line 2)"]
	if !ok1 || !ok2 {
		t.Fatalf("no fits of T04 and T04 (line 2) on the route: %v", cur)
	}
	if r := c2 / c1; math.Abs(r-1.2) > 0.012 {
		t.Errorf("T04 reads %.4f A and the next traverse %.4f A, a ratio of %.4f, want 1.2 within 1%%", c1, c2, r)
	}
	if d := at["T04 (line 2)"] - at["T04"]; math.Abs(math.Abs(d)-4) > 0.2 {
		t.Errorf("T04 (line 2) lies %.3f m along the route from T04, want the spacing, 4 m", d)
	}
	warned := false
	for _, w := range doc.Warnings {
		if strings.Contains(w, "covers the same ground again") {
			t.Errorf("a warning takes the next traverse for T04 walked again: %q", w)
		}
		if strings.Contains(w, "two traverses were given one name (a mislabel)") && strings.Contains(w, "T04 (line 2)") {
			warned = true
		}
	}
	if !warned {
		t.Errorf("no warning names the mislabel: %q", doc.Warnings)
	}
	if fs := walksDifferFindings(doc); len(fs) != 0 {
		t.Errorf("walks-differ compares T04 with the next traverse: %v", fs)
	}
}

// singleLineSeed1 is testdata/scenarios/single-line.toml simulated with
// seed 1 (seven traverses 4 m apart across the conductor), read back.
func singleLineSeed1(t *testing.T) *ingest.Samples {
	t.Helper()
	_, path := scenario(t, "single-line.toml")
	a := filepath.Join(t.TempDir(), "first.csv")
	mustCLI(t, "simulate", "--seed", "1", path, "-o", a)
	s, err := ingest.ReadSamples(a)
	if err != nil {
		t.Fatal(err)
	}
	return s
}
