package main

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// jitterBySigma writes a copy of the simulated CSV log src (of the
// single-line scenario, whose conductor is line) whose readings are the
// field at a true place that scatters about the logged one by each
// reading's own sigma, the sigma carried in two columns as a receiver
// logs its accuracy: hacc_mm (the plan's, in millimetres) and vacc (the
// height's, m). The first half of each group's readings are at sd (plan,
// up) first, the rest at second (RTK fixed, then float). The logged
// positions stay; each reading gains the line's field at the true place
// less that at the logged one (the scatter the fit's mean correction
// assumes: the true place about the logged one).
func jitterBySigma(t *testing.T, src, dst string, line inverse.Line, current float64, first, second [2]float64, seed uint64) {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	const gcol = 7
	hi := -1
	count := map[string]int{}
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if hi < 0 {
			if l != "time,x,y,z,bx,by,bz,group" {
				t.Fatalf("unexpected columns %q", l)
			}
			hi = i
			continue
		}
		count[strings.Split(l, ",")[gcol]]++
	}
	num := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	rng := rand.New(rand.NewPCG(seed, 27))
	seen := map[string]int{}
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if i == hi {
			lines[i] = l + ",hacc_mm,vacc"
			continue
		}
		c := strings.Split(l, ",")
		g := c[gcol]
		sd := first
		if seen[g] >= count[g]/2 {
			sd = second
		}
		seen[g]++
		logged := [3]float64{num(c[1]), num(c[2]), num(c[3])}
		truth := [3]float64{logged[0] + sd[0]*rng.NormFloat64(), logged[1] + sd[0]*rng.NormFloat64(), logged[2] + sd[1]*rng.NormFloat64()}
		// Checked against the simulated log: the scenario's line field at
		// the first reading is the reading less the earth's field within
		// the noise and drift (195, -338, 1114 nT against 189, -339, 1117).
		bt, bl := line.Field(truth, current), line.Field(logged, current)
		for k := range 3 {
			c[4+k] = strconv.FormatFloat(num(c[4+k])+(bt[k]-bl[k])*1e9, 'g', -1, 64) // T to nT
		}
		c = append(c, strconv.FormatFloat(sd[0]*1000, 'g', -1, 64), strconv.FormatFloat(sd[1], 'g', -1, 64))
		lines[i] = strings.Join(c, ",")
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// singleLine is the conductor of testdata/scenarios/single-line.toml.
var singleLine = inverse.Line{Point: [3]float64{0, 0, -1.1}, Dir: [3]float64{0.8660254037844386, 0.5, 0}}

// TestPositionSigmaColumnsPulls checks a log's own per-reading position
// sigmas (hacc_mm and vacc, read as sigma_plan and sigma_up) against the
// simulated truth: the single-line scenario (25 A, 1.1 m below the
// ground) logged by a receiver at RTK fixed (0.02 m) over the first half
// of each traverse and float (0.4 m across the plan, 0.2 m in height)
// over the second, the true places scattered about the logged ones by
// that (jitterBySigma). With the
// columns the depth and current pulls (fit - truth)/sigma have RMS
// within 0.6-1.5, every group's notes say the sigmas came from the log's
// columns, and the depth and current sigmas are smaller than with
// --position-sigma 0.4,0.2 (the worst value for the whole run, the
// columns turned off), which throws the fixed half's precision away.
// Before, the columns were not read (an unread column, and the pulls
// took the positions as exact).
func TestPositionSigmaColumnsPulls(t *testing.T) {
	dir := t.TempDir()
	seeds := 3
	if testing.Short() {
		seeds = 1
	}
	type doc struct {
		Groups []struct {
			Key     string `json:"key"`
			Sources []struct {
				Current      float64 `json:"current_a"`
				CurrentSigma float64 `json:"current_sigma_a"`
				Depth        float64 `json:"depth_m"`
				DepthSigma   float64 `json:"depth_sigma_m"`
			} `json:"sources"`
			Notes []string `json:"notes"`
		} `json:"groups"`
		PositionSigma *struct {
			Columns bool `json:"from_log_columns"`
		} `json:"position_sigma"`
	}
	const trueDepth, trueCurrent = 1.1, 25.0 // testdata/scenarios/single-line.toml
	var pd, pi []float64
	var sdCol, siCol, sdFlag, siFlag float64
	for s := 1; s <= seeds; s++ {
		clean := filepath.Join(dir, "line"+strconv.Itoa(s)+".csv")
		mustCLI(t, "simulate", "--seed", strconv.Itoa(s), filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", clean)
		log := filepath.Join(dir, "rtk"+strconv.Itoa(s)+".csv")
		jitterBySigma(t, clean, log, singleLine, trueCurrent, [2]float64{0.02, 0.02}, [2]float64{0.4, 0.2}, uint64(200+s))
		for _, cols := range []bool{true, false} {
			args := []string{"--group-by", "group", "--reference-z", "0", "--count", "1", log}
			if !cols {
				args = append([]string{"--position-sigma", "0.4,0.2", "--position-sigma-columns", "off"}, args...)
			}
			d := locateInto[doc](t, args...)
			if d.PositionSigma == nil || d.PositionSigma.Columns != cols {
				t.Errorf("seed %d, columns %v: position_sigma %+v", s, cols, d.PositionSigma)
			}
			for _, g := range d.Groups {
				if len(g.Sources) != 1 || !(g.Sources[0].DepthSigma > 0) || !(g.Sources[0].CurrentSigma > 0) {
					t.Fatalf("seed %d group %s: sources %+v", s, g.Key, g.Sources)
				}
				e := g.Sources[0]
				noted := false
				for _, n := range g.Notes {
					noted = noted || (strings.HasPrefix(n, inverse.PositionSigmaNote) && strings.Contains(n, "from the log's position sigma columns") == cols)
				}
				if !noted {
					t.Errorf("seed %d group %s, columns %v: notes %q", s, g.Key, cols, g.Notes)
				}
				if cols {
					pd = append(pd, (e.Depth-trueDepth)/e.DepthSigma)
					pi = append(pi, (math.Abs(e.Current)-trueCurrent)/e.CurrentSigma)
					sdCol += e.DepthSigma
					siCol += e.CurrentSigma
				} else {
					sdFlag += e.DepthSigma
					siFlag += e.CurrentSigma
				}
			}
		}
	}
	rms := func(v []float64) float64 {
		var s float64
		for _, x := range v {
			s += x * x
		}
		return math.Sqrt(s / float64(len(v)))
	}
	n := float64(len(pd))
	t.Logf("%d fits: with the columns depth pulls RMS %.2f, current %.2f; mean sigmas columns %.4f m %.3f A, flag at the worst %.4f m %.3f A",
		len(pd), rms(pd), rms(pi), sdCol/n, siCol/n, sdFlag/n, siFlag/n)
	if r := rms(pd); !(r >= 0.6 && r <= 1.5) {
		t.Errorf("with the columns: depth pulls RMS %.2f, want 0.6-1.5", r)
	}
	if r := rms(pi); !(r >= 0.6 && r <= 1.5) {
		t.Errorf("with the columns: current pulls RMS %.2f, want 0.6-1.5", r)
	}
	if !(sdCol < sdFlag) || !(siCol < siFlag) {
		t.Errorf("with the columns: mean sigmas %.4f m, %.3f A, want both below the flag's at the worst value (%.4f m, %.3f A)", sdCol/n, siCol/n, sdFlag/n, siFlag/n)
	}
}

// TestPositionSigmaColumnBadValue checks that a negative or non-numeric
// value in a position sigma column is refused naming the file, the line
// and the column, as a bad value in any other column is.
func TestPositionSigmaColumnBadValue(t *testing.T) {
	dir := t.TempDir()
	clean := filepath.Join(dir, "line.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", clean)
	log := filepath.Join(dir, "rtk.csv")
	jitterBySigma(t, clean, log, singleLine, 25, [2]float64{0.02, 0.02}, [2]float64{0.4, 0.2}, 7)
	raw, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	// The 20th data line (after the header and any comment lines).
	at, data := -1, -1
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if data++; data == 20 {
			at = i
			break
		}
	}
	for _, c := range []struct{ value, col, want string }{
		{"-20", "hacc_mm", "negative"},
		{"fixed", "vacc", "not a number"},
	} {
		mod := slices.Clone(lines)
		f := strings.Split(mod[at], ",")
		k := len(f) - 2
		if c.col == "vacc" {
			k = len(f) - 1
		}
		f[k] = c.value
		mod[at] = strings.Join(f, ",")
		bad := filepath.Join(dir, "bad-"+c.col+".csv")
		if err := os.WriteFile(bad, []byte(strings.Join(mod, "\n")), 0o644); err != nil {
			t.Fatal(err)
		}
		code, _, stderr := cli(t, "locate", "--group-by", "group", bad)
		where := bad + ":" + strconv.Itoa(at+1)
		if code == 0 || !strings.Contains(stderr, where) || !strings.Contains(stderr, c.col) || !strings.Contains(stderr, c.want) {
			t.Errorf("%s = %s: exit %d, stderr %q; want one naming %s, column %s, %q", c.col, c.value, code, stderr, where, c.col, c.want)
		}
	}
}
