package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// scenarioVariant writes testdata/scenarios/single-line.toml with each
// old text replaced by its new one (all must be found) to dir/name and
// simulates it into dir/name.csv, whose path it returns.
func scenarioVariant(t *testing.T, dir, name string, repl ...string) string {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(raw)
	for i := 0; i+1 < len(repl); i += 2 {
		if !strings.Contains(text, repl[i]) {
			t.Fatalf("single-line.toml has no %q", repl[i])
		}
		text = strings.Replace(text, repl[i], repl[i+1], 1)
	}
	toml := filepath.Join(dir, name+".toml")
	if err := os.WriteFile(toml, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, name+".csv")
	mustCLI(t, "simulate", toml, "-o", log)
	return log
}

// locateCurrents runs locate --json with args and returns each group's
// first current and its sigma, by group key.
func locateCurrents(t *testing.T, args ...string) map[string][2]float64 {
	t.Helper()
	doc := locateDoc(t, args...)
	got := map[string][2]float64{}
	for _, g := range doc.Groups {
		if len(g.Sources) > 0 {
			got[g.Key] = [2]float64{g.Sources[0].Current, g.Sources[0].CurrentSigma}
		}
	}
	return got
}

// TestLocateReadsSurveyLogsOfOtherPlaces: the field of a long straight
// conductor depends only on the distance from it, B = mu0 I / (2 pi r)
// (Biot-Savart; Jackson, Classical Electrodynamics, 3rd ed., eq. 5.10),
// so two sensors of one cart, 0.5 m apart along the Harrow Fen cable's
// traverses and logging at the same times, read the same field within the
// fluxgate's 0.3 nT noise; so, in a flat field, do two traverses logged in
// files of their own with the logger's clock restarting at 0. The copy
// check took them for one log's readings given twice and refused them. It
// compares positions too now: both are fitted, each current within kSigma
// of the scenario's, and a log's Parquet conversion beside it is still
// refused, saying how many readings matched and the first one's time.
func TestLocateReadsSurveyLogsOfOtherPlaces(t *testing.T) {
	dir := t.TempDir()
	cart := func(name, seed, first string) string {
		return scenarioVariant(t, dir, name, "seed = 11", "seed = "+seed, "noise_nt = 2.0", "noise_nt = 0.3",
			"count = 7", "count = 2", "spacing_m = 4.0", "spacing_m = 10.0", "first_at_m = 2.0", "first_at_m = "+first,
			"length_m = 8.0", "length_m = 30.0", "current_a = 25.0", "current_a = 2.0")
	}
	s1, s2 := cart("cart-s1", "11", "2.0"), cart("cart-s2", "13", "2.5")
	got := locateCurrents(t, "--group-by", "group", s1, s2)
	if len(got) != 2 {
		t.Fatalf("a two-sensor cart: %d groups fitted, want 2", len(got))
	}
	for k, c := range got {
		if math.Abs(c[0]-2) > kSigma*c[1] {
			t.Errorf("a two-sensor cart, %s: %g ± %g A, want 2 A", k, c[0], c[1])
		}
	}

	// One file per traverse, times from each file's start.
	whole := scenarioVariant(t, dir, "traverses", "noise_nt = 2.0", "noise_nt = 0.3")
	var header string
	rows := map[string][]string{}
	for _, l := range strings.Split(strings.TrimSpace(readText(t, whole)), "\n") {
		c := strings.Split(l, ",")
		switch {
		case strings.HasPrefix(l, "#"):
		case c[0] == "time":
			header = l
		default:
			rows[c[7]] = append(rows[c[7]], l)
		}
	}
	var logs []string
	for _, g := range []string{"T01", "T02", "T03"} {
		var b strings.Builder
		b.WriteString(header + "\n")
		t0 := -1.0
		for _, l := range rows[g] {
			c := strings.SplitN(l, ",", 2)
			v, err := strconv.ParseFloat(c[0], 64)
			if err != nil {
				t.Fatal(err)
			}
			if t0 < 0 {
				t0 = v
			}
			b.WriteString(strconv.FormatFloat(v-t0, 'f', 3, 64) + "," + c[1] + "\n")
		}
		p := filepath.Join(dir, "rel-"+g+".csv")
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		logs = append(logs, p)
	}
	got = locateCurrents(t, append([]string{"--group-by", "group"}, logs...)...)
	if len(got) != 3 {
		t.Fatalf("one file per traverse, the clock restarting at 0: %d groups fitted, want 3", len(got))
	}
	for k, c := range got {
		if math.Abs(c[0]-25) > kSigma*c[1] {
			t.Errorf("one file per traverse, %s: %g ± %g A, want 25 A", k, c[0], c[1])
		}
	}

	// The same readings at the same places are still refused.
	pq := filepath.Join(dir, "traverses.parquet")
	mustCLI(t, "convert", whole, pq)
	code, _, errOut := cli(t, "locate", "--group-by", "group", whole, pq)
	want := regexp.MustCompile(regexp.QuoteMeta(pq+" holds the readings of the survey log "+whole+": 567 of the 567 readings of "+whole+" are readings of "+pq) +
		` \(the same time, position within 1 cm on x, y and z, and field within 0\.5 nT on all three axes, the first at 2026-02-02T14:00:00\.000Z\)`)
	if code != 1 || !want.MatchString(errOut) {
		t.Errorf("a log beside its Parquet conversion: exit %d, want 1 and a refusal matching %q:\n%s", code, want, errOut)
	}
}
