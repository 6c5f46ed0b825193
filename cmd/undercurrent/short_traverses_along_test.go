package main

import (
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// shortTraversesScenario is an invented fixture: 21 traverses of 3 m, 2 m
// apart, across a straight 40 m route over a 20 A DC cable 0.8 m down,
// 0.2 m north of the route (a traverse survey whose footprint is as long
// and narrow as an along-route cart's swath: 42 m by 0.88 m RMS).
func shortTraversesScenario(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "shortx.toml")
	body := `name = "shortx"
site = "yard (invented)"
seed = 3
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 21
spacing_m = 2.0
first_at_m = 0.0
length_m = 3.0
speed_m_s = 0.5
sample_spacing_m = 0.05
turn_s = 4.0
[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.2, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 20.0
`
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// dropLastColumn writes the log at path without its last column (the
// group column of a simulated log), as a logger that names no traverses.
func dropLastColumn(t *testing.T, path string) string {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, l := range strings.SplitAfter(string(raw), "\n") {
		if strings.HasPrefix(l, "#") || strings.TrimSpace(l) == "" {
			b.WriteString(l)
			continue
		}
		b.WriteString(l[:strings.LastIndex(l, ",")] + "\n")
	}
	out := filepath.Join(t.TempDir(), "nogroup.csv")
	if err := os.WriteFile(out, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return out
}

// TestShortTraversesNotCutIntoWindows: short traverses across a straight
// route, located without --group-by. Their footprint is as narrow against
// its length as a cart's swath, so the run cut them into along-route
// windows by itself ("cut into 5 windows of 8.4 m", four traverses each:
// steps placed to 8 m, not 2 m), then warned that "5 groups' readings lie
// in separate places side by side ... two traverses were given one name
// (a mislabel)" about its own windows, and the hint to fit each traverse
// with --group-by group was gone (found in review). Now a walk of
// traverses across it is not windowed: the hint names the column, and
// without a group column no windows are cut either. Windows the user
// asks for (--along-window 8) are not called mislabelled traverses.
func TestShortTraversesNotCutIntoWindows(t *testing.T) {
	log := filepath.Join(t.TempDir(), "shortx.csv")
	mustCLI(t, "simulate", shortTraversesScenario(t), "-o", log)
	windowed := func(doc *resultDoc) string {
		for _, n := range doc.Notes {
			if strings.Contains(n, "windows of") {
				return n
			}
		}
		return ""
	}
	mislabel := func(name string, doc *resultDoc) {
		for _, w := range doc.Warnings {
			if strings.Contains(w, "separate places side by side") {
				t.Errorf("%s: the run's own windows are called mislabelled traverses: %.200s", name, w)
			}
		}
	}
	doc := locateDoc(t, "--reference-z", "0", log)
	if n := windowed(doc); n != "" {
		t.Errorf("traverses across the route cut into along-route windows: %.200s", n)
	}
	mislabel("with a group column", doc)
	hint := false
	for _, w := range doc.Warnings {
		hint = hint || strings.Contains(w, `group column "group"`) && strings.Contains(w, "fit each traverse with --group-by group")
	}
	if !hint {
		t.Errorf("warnings %q: want the hint to fit each traverse with --group-by group", doc.Warnings)
	}
	bare := locateDoc(t, "--reference-z", "0", dropLastColumn(t, log))
	if n := windowed(bare); n != "" {
		t.Errorf("without a group column: traverses across the route cut into along-route windows: %.200s", n)
	}
	mislabel("without a group column", bare)
	asked := locateDoc(t, "--reference-z", "0", "--along-window", "8", log)
	if windowed(asked) == "" {
		t.Errorf("--along-window 8: notes %q, want the windows asked for", asked.Notes)
	}
	mislabel("--along-window 8", asked)
}

// TestWalkedAcross: the leg test that keeps traverses across a walk out
// of along-route windows, on invented walks 40 m long: 21 traverses of
// 3 m walked back and forth, or all the same way, are traverses; a cart
// of four sensors 0.5 m apart logged in turn, a zig-zag of legs 3 m
// across and 3 m along, and a straight walk with 5 cm of position scatter
// are not.
func TestWalkedAcross(t *testing.T) {
	traverses := func(sameWay bool) (x, y []float64) {
		for k := range 21 {
			for j := range 61 {
				c := -1.5 + 0.05*float64(j)
				if !sameWay && k%2 == 1 {
					c = -c
				}
				x, y = append(x, 2*float64(k)), append(y, c)
			}
		}
		return x, y
	}
	cart := func() (x, y []float64) {
		for k := range 401 {
			for j := range 4 {
				x, y = append(x, 0.1*float64(k)), append(y, -0.75+0.5*float64(j))
			}
		}
		return x, y
	}
	zigzag := func() (x, y []float64) {
		for i := range 801 {
			a := 0.05 * float64(i)
			ph := math.Mod(a, 6) / 3 // legs 3 m along, 3 m across
			c := -1.5 + 3*ph
			if ph > 1 {
				c = 1.5 - 3*(ph-1)
			}
			x, y = append(x, a), append(y, c)
		}
		return x, y
	}
	straight := func() (x, y []float64) {
		r := rand.New(rand.NewSource(1))
		for i := range 801 {
			x, y = append(x, 0.05*float64(i)), append(y, 0.05*r.NormFloat64())
		}
		return x, y
	}
	cases := []struct {
		name string
		walk func() ([]float64, []float64)
		want bool
	}{
		{"traverses back and forth", func() ([]float64, []float64) { return traverses(false) }, true},
		{"traverses the same way", func() ([]float64, []float64) { return traverses(true) }, true},
		{"cart of four sensors", cart, false},
		{"zig-zag", zigzag, false},
		{"straight walk", straight, false},
	}
	for _, c := range cases {
		x, y := c.walk()
		if got := walkedAcross(x, y, footprintOf(x, y)); got != c.want {
			t.Errorf("%s: walkedAcross = %v, want %v", c.name, got, c.want)
		}
	}
}
