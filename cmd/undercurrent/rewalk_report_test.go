package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// auxTurnedUp is two-conductors-fault.toml's second walk with the
// auxiliary cable's source turned up by 10%: 22 A before its fault and
// 14.3 A past it (simulated truth; the feeder beside it stays at 30 A).
func auxTurnedUp(t *testing.T) func([]byte) []byte {
	return func(text []byte) []byte {
		out := bytes.Replace(text, []byte("currents_a = [20.0, 13.0]"), []byte("currents_a = [22.0, 14.3]"), 1)
		if bytes.Equal(out, text) {
			t.Fatal("two-conductors-fault.toml has no currents_a = [20.0, 13.0] line to change")
		}
		return out
	}
}

// auxFirstWalk is the auxiliary cable's current on the first walk at
// traverse key (T01..T12, or a repeat day2.csv:T07): 20 A up to T06, 13 A
// from T07 on (the fault lies between them; simulated truth).
func auxFirstWalk(t *testing.T, key string) float64 {
	t.Helper()
	m := regexp.MustCompile(`T(\d\d)$`).FindStringSubmatch(key)
	if m == nil {
		t.Fatalf("group %q is no traverse of the scenario", key)
	}
	n, _ := strconv.Atoi(m[1])
	if n <= 6 {
		return 20
	}
	return 13
}

// firstWalkTol is how far a station's current at the first walk's level
// may lie from the simulated truth: 3 sigma, and no less than 0.1 A, the
// straight-line model's error beside a fault 30 m away (the scenario's
// note puts the echo of the neighbour's fault at about 0.3 A at 10 m and
// below the feeder's uncertainty at 30 m).
func firstWalkTol(sigma float64) float64 { return math.Max(3*sigma, 0.1) }

// TestRewalkedConductor2ReportedAtFirstWalkLevel: the auxiliary cable of
// testdata/scenarios/two-conductors-fault.toml (conductor 2 beside a 30 A
// feeder; 20 A losing 7 A between T06 and T07) walked again a day later
// with its source turned up 10% (22 A and 14.3 A; simulated truth). The
// route brings the second walk to the first's level (route.first_walk),
// yet the crew report (found in review):
//   - said conductor 2 carried the first walk's 20 A at T01 and the second
//     walk's raw 14.3 A at day2.csv:T12, neither walk's loss;
//   - drew the current plot through both walks raw, and results.csv and
//     route.geojson had no current at the first walk's level;
//   - gave walks-differ levels whose difference was not the change it
//     printed (5.5 sigma apart), and listed the step's groups without the
//     repeats its message names.
//
// Now the summary sentence (terminal and report.html) gives both ends at
// the first walk's level, named by its stations, within tolerance of 20 A
// and 13 A; the plot draws the first walk's level and the later walk
// apart; every station row of the second walk in results.csv and
// route.geojson carries current_first_walk_a within tolerance of the
// first walk's truth; the levels printed differ by the change printed;
// and the step's groups hold the repeats of its stations.
func TestRewalkedConductor2ReportedAtFirstWalkLevel(t *testing.T) {
	dir := t.TempDir()
	args := walkTwice(t, dir, "two-conductors-fault.toml", 1, 2, auxTurnedUp(t), nil)
	out := filepath.Join(dir, "results")
	summary := mustCLI(t, append([]string{"locate", "--group-by", "group", "--reference-z", "0", "-o", out}, args...)...)
	data, err := os.ReadFile(filepath.Join(out, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Conductors []struct {
			Number int `json:"number"`
			Route  struct {
				FirstWalk string `json:"first_walk"`
			} `json:"route"`
		} `json:"conductors"`
		Findings []docFinding `json:"findings"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Conductors) != 1 || doc.Conductors[0].Route.FirstWalk != "day1.csv" {
		t.Fatalf("want conductor 2 followed with its walks brought to day1.csv's level: %+v", doc.Conductors)
	}

	// The summary sentence, on the terminal and in report.html.
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	ends := regexp.MustCompile(`current ([0-9.]+) ± ([0-9.]+) A at (\S+) and ([0-9.]+) ± ([0-9.]+) A at (\S+), both at the level of day1\.csv`)
	for where, text := range map[string]string{"terminal": summary, "report.html": string(html)} {
		m := ends.FindStringSubmatch(text)
		if m == nil {
			t.Errorf("%s: conductor 2's sentence does not give both ends at day1.csv's level:\n%s", where, conductorSentence(text))
			continue
		}
		for _, e := range [][3]string{{m[1], m[2], m[3]}, {m[4], m[5], m[6]}} {
			v, _ := strconv.ParseFloat(e[0], 64)
			s, _ := strconv.ParseFloat(e[1], 64)
			if strings.HasPrefix(e[2], "day2.csv:") {
				t.Errorf("%s: an end named by the second walk's station %s, not the first walk's", where, e[2])
			}
			if want := auxFirstWalk(t, e[2]); math.Abs(v-want) > firstWalkTol(s) {
				t.Errorf("%s: %.3f ± %.3f A at %s, want the first walk's %g A", where, v, s, e[2], want)
			}
		}
	}

	// The plot of conductor 2's current: the first walk's level, and the
	// later walk apart (its legend entries).
	for _, want := range []string{"at the level of day1.csv (the first walk)", "later walks as read (not joined)"} {
		if !bytes.Contains(html, []byte(want)) {
			t.Errorf("report.html: the current plots have no legend entry %q", want)
		}
	}

	// The line of conductor 2's current plot (the widest figure: the
	// first SVG so labelled; its solid line in the fit colour with the
	// most vertices) joins one point a traverse, flat on either side of
	// the fault: drawn through both walks raw it had 24 vertices and
	// saw-toothed by the 10% between the walks at every traverse.
	if line := plotLine(string(html), "current along conductor 2"); len(line) != 12 {
		t.Errorf("report.html: conductor 2's current line has %d vertices, want 12 (one a traverse, its walks pooled)", len(line))
	} else {
		step := math.Abs(line[6] - line[5])
		for _, half := range [][]float64{line[:6], line[6:]} {
			lo, hi := half[0], half[0]
			for _, y := range half {
				lo, hi = math.Min(lo, y), math.Max(hi, y)
			}
			if hi-lo > 0.1*step {
				t.Errorf("report.html: conductor 2's current line spreads by %.1f pt on one side of the fault, against the fault's %.1f pt: %v", hi-lo, step, line)
			}
		}
	}

	// results.csv: every row of conductor 2 with current_first_walk_a.
	rows := readCSVFile(t, filepath.Join(out, "results.csv"))
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	_, hasCol := col["current_first_walk_a"]
	if !hasCol {
		t.Errorf("results.csv has no current_first_walk_a column: %q", rows[0])
	}
	checked := 0
	for _, r := range rows[1:] {
		if !hasCol || r[col["conductor"]] != "2" || r[col["used"]] != "true" {
			continue
		}
		v, err1 := strconv.ParseFloat(r[col["current_first_walk_a"]], 64)
		s, err2 := strconv.ParseFloat(r[col["current_first_walk_sigma_a"]], 64)
		if err1 != nil || err2 != nil {
			t.Errorf("results.csv: %s has no current at the first walk's level: %q", r[col["group"]], r[col["current_first_walk_a"]])
			continue
		}
		if want := auxFirstWalk(t, r[col["group"]]); math.Abs(v-want) > firstWalkTol(s) {
			t.Errorf("results.csv: %s at the first walk's level %.4f ± %.4f A, want %g A", r[col["group"]], v, s, want)
		}
		checked++
	}
	if hasCol && checked != 24 {
		t.Errorf("results.csv: %d used rows of conductor 2 checked, want 24 (12 traverses walked twice)", checked)
	}

	// route.geojson: the same on every used Point of conductor 2.
	gj, err := os.ReadFile(filepath.Join(out, "route.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(gj, &fc); err != nil {
		t.Fatal(err)
	}
	checked = 0
	for _, f := range fc.Features {
		p := f.Properties
		if c, _ := p["conductor"].(float64); c != 2 || p["used"] != true {
			continue
		}
		key, _ := p["group"].(string)
		v, ok1 := p["current_first_walk_a"].(float64)
		s, ok2 := p["current_first_walk_sigma_a"].(float64)
		if !ok1 || !ok2 {
			t.Errorf("route.geojson: %s has no current at the first walk's level", key)
			continue
		}
		if want := auxFirstWalk(t, key); math.Abs(v-want) > firstWalkTol(s) {
			t.Errorf("route.geojson: %s at the first walk's level %.4f ± %.4f A, want %g A", key, v, s, want)
		}
		checked++
	}
	if checked != 24 {
		t.Errorf("route.geojson: %d used Points of conductor 2 checked, want 24", checked)
	}

	// The walks-differ caution: the levels printed differ by the change
	// printed, within the rounding of its four decimals.
	var walks, steps int
	for _, f := range doc.Findings {
		switch f.Kind {
		case "walks-differ":
			walks++
			v := map[string]float64{}
			for _, x := range f.Values {
				v[x.Name] = x.Value
			}
			l1, ok1 := v["level day1.csv"]
			l2, ok2 := v["level day2.csv"]
			ch, ok3 := v["change day2.csv"]
			if !ok1 || !ok2 || !ok3 {
				t.Errorf("walks-differ: want both levels and the change: %v", f.Values)
				continue
			}
			if math.Abs(l2-l1-ch) > 2e-4 {
				t.Errorf("walks-differ: levels %.4f and %.4f A differ by %.4f A, but the change given is %.4f A: %s", l1, l2, l2-l1, ch, f.Message)
			}
			// Truth: a 10% turn-up of 20 A (T01-T06) and 13 A (T07-T12).
			if ch < 1.3 || ch > 2.0 {
				t.Errorf("walks-differ: change %.4f A, want between 1.3 and 2.0 A (10%% of 13 to 20 A)", ch)
			}
		case "current-step":
			steps++
			if f.Conductor != 2 {
				continue
			}
			for _, want := range []string{"T06", "day2.csv:T06", "T07", "day2.csv:T07"} {
				found := false
				for _, g := range f.Groups {
					found = found || g == want
				}
				if !found {
					t.Errorf("the step's groups %q leave out %s, whose current it used: %s", f.Groups, want, f.Message)
				}
			}
		}
	}
	if walks != 1 || steps != 1 {
		t.Errorf("%d walks-differ findings and %d steps, want one each", walks, steps)
	}
}

// conductorSentence returns the lines of text that speak of conductor 2,
// for a failure message.
func conductorSentence(text string) string {
	var out []string
	for _, l := range strings.Split(text, "\n") {
		if strings.Contains(l, "Conductor 2 ") {
			out = append(out, l)
		}
	}
	return strings.Join(out, "\n")
}

// readCSVFile reads a CSV file written by the tool (a byte order mark
// before non-ASCII text), header first.
func readCSVFile(t *testing.T, path string) [][]string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, []byte("\ufeff")))).ReadAll()
	if err != nil || len(rows) == 0 {
		t.Fatalf("%s: %v (%d rows)", path, err, len(rows))
	}
	return rows
}

// plotLine returns the canvas heights of the vertices of the longest
// solid line in the fit colour (#1B6F8A) in the first SVG figure of html
// labelled label; nil when there is none.
func plotLine(html, label string) []float64 {
	i := strings.Index(html, `aria-label="`+label+`"`)
	if i < 0 {
		return nil
	}
	svg := html[i:]
	if j := strings.Index(svg, "</svg>"); j >= 0 {
		svg = svg[:j]
	}
	var best []float64
	for _, m := range regexp.MustCompile(`<path d="(M[^"]*)" style="fill:none;stroke:#1B6F8A"`).FindAllStringSubmatch(svg, -1) {
		var ys []float64
		for _, pt := range regexp.MustCompile(`[ML]([-0-9.]+),([-0-9.]+)`).FindAllStringSubmatch(m[1], -1) {
			y, _ := strconv.ParseFloat(pt[2], 64)
			ys = append(ys, y)
		}
		if len(ys) > len(best) {
			best = ys
		}
	}
	return best
}
