package main

import (
	"strconv"
	"strings"
	"testing"
)

// cableEndScenario is a 10 A DC cable 1.0 m down (1.3 m below the
// sensors) along north under eleven 8 m traverses 5 m apart, from north 2 m
// (T01) to 52 m (T11), read with 5 nT noise: an invented Harrow Fen
// substation survey. VERTICES is replaced by the cable's path.
const cableEndScenario = `name = "cable-end"
site = "Harrow Fen substation (invented)"
seed = SEED
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 5
[survey]
route = [[0.0, 0.0], [0.0, 60.0]]
count = 11
spacing_m = 5
first_at_m = 2.0
length_m = 8
speed_m_s = 0.5
turn_s = 10.0
sample_spacing_m = 0.2
[[conductor]]
name = "cable"
kind = "polyline"
vertices = VERTICES
current_a = 10
`

// endsReported simulates the cable's path over seeds 1..n and returns the
// seeds on which locate reports that the conductor ends.
func endsReported(t *testing.T, vertices string, n int) []int {
	t.Helper()
	dir := t.TempDir()
	var out []int
	for seed := 1; seed <= n; seed++ {
		text := strings.NewReplacer("SEED", strconv.Itoa(seed), "VERTICES", vertices).Replace(cableEndScenario)
		log := simulateText(t, dir, "end"+strconv.Itoa(seed), text, ".csv")
		doc := locateDoc(t, "--group-by", "group", log)
		for _, f := range doc.Findings {
			if strings.Contains(f.Message, "appears to end") {
				out = append(out, seed)
				break
			}
		}
	}
	return out
}

// TestLocateCableEndBetweenTraverses: the cable ends at north 40 m,
// between T08 (37 m) and T09 (42 m). T09 sees only the field of its end,
// which one line fits 4.4 to 5.2 m deep with 64 to 82% of the current
// (the half-line's field, Biot-Savart); T10 and T11 find no current. Its
// depth rules out a loss and its shortfall of current a dive, which keeps
// its current (Kirchhoff's current law). The end must be reported on every
// one of 40 seeds; before, it was not on 7 of them (T09 reading 7.5 to
// 8.1 A, over 75% of the 9.9 A before it).
func TestLocateCableEndBetweenTraverses(t *testing.T) {
	got := endsReported(t, "[[0.0, -300.0, -1.0], [0.0, 40.0, -1.0]]", 40)
	if len(got) != 40 {
		missed := map[int]bool{}
		for s := 1; s <= 40; s++ {
			missed[s] = true
		}
		for _, s := range got {
			delete(missed, s)
		}
		t.Errorf("the end reported on %d of 40 seeds; missed on %v", len(got), missed)
	}
}

// TestLocateDiveOrThroughIsNoEnd: the same cable diving from 1.0 m to
// 4.7 m down between north 36 and 46 m (a bore under a ditch) keeps its
// 10 A, and one that runs on at 1.0 m has nothing past any end: neither
// may be reported as ending, on 20 seeds each.
func TestLocateDiveOrThroughIsNoEnd(t *testing.T) {
	for name, v := range map[string]string{
		"dive":    "[[0.0, -300.0, -1.0], [0.0, 36.0, -1.0], [0.0, 46.0, -4.7], [0.0, 300.0, -4.7]]",
		"through": "[[0.0, -300.0, -1.0], [0.0, 300.0, -1.0]]",
	} {
		if got := endsReported(t, v, 20); len(got) > 0 {
			t.Errorf("%s: an end reported on seeds %v of 20", name, got)
		}
	}
}
