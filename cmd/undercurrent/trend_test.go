package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"undercurrent/report"
)

// pageChecks parses the page at path as a browser would (golang.org/x/net/
// html) and returns the text of its first section (the cautions box), of
// its list of what changed, and the aria-labels of its SVG plots.
func pageChecks(t *testing.T, path, head string) (cautions, changes string, plots []string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(string(b), head) {
		t.Errorf("%s begins %.60q, want %q", path, b, head)
	}
	doc, err := html.Parse(strings.NewReader(string(b)))
	if err != nil {
		t.Fatalf("%s does not parse as HTML: %v", path, err)
	}
	var text func(*html.Node) string
	text = func(n *html.Node) string {
		if n.Type == html.TextNode {
			return n.Data
		}
		var s strings.Builder
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			s.WriteString(text(c))
		}
		return s.String()
	}
	first := true
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			at := map[string]string{}
			for _, a := range n.Attr {
				at[a.Key] = a.Val
			}
			switch {
			case n.Data == "section" && first:
				first = false
				if at["class"] == "cautions" {
					cautions = text(n)
				}
			case n.Data == "section" && at["id"] == "changes":
				changes = text(n)
			case n.Data == "svg":
				plots = append(plots, at["aria-label"])
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	return cautions, changes, plots
}

// TestTrendCommand: the Kestrel Moor spur (testdata/scenarios/
// kestrel-moor-step.toml, invented) walked three times, with noise seeds
// 250, 7 and 9, the third with a new coating defect letting 0.25 A go at
// the vertex at 330 m (between T17 and T18: every segment past it 0.25 A
// less), each located as the README's walk-through does, with the
// sensors' height (0.25 m) and a minimum cover of 1.2 m.
//   - compare of the second and third with -o FILE.html writes a page that
//     parses as HTML, opens with the four cautions, lists the changes and
//     draws the current and cover of both; a .html file compare did not
//     write is not replaced, and another extension is refused.
//   - trend of the three flags nothing between 1 and 2, and between 2 and
//     3 the current at T18-T21 and the loss at 320-340 m only; its page
//     holds the cautions, the changes and one plot of each quantity.
//   - a trend that cannot be made (the third an AC result) exits 1 and
//     leaves no page; two results are refused (exit 2).
func TestTrendCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("locates three surveys")
	}
	_, path := scenario(t, "kestrel-moor-step.toml")
	dir := t.TempDir()
	p := func(n string) string { return filepath.Join(dir, n) }
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	const tail = "1.3884, 1.3817, 1.375, 1.3683, 1.3616, 1.35]"
	if !strings.Contains(string(src), tail) {
		t.Fatal("the scenario's currents are not as this test knows them")
	}
	leak := p("leak.toml")
	if err := os.WriteFile(leak, []byte(strings.Replace(string(src), tail, "1.3884, 1.1317, 1.125, 1.1183, 1.1116, 1.10]", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, w := range []struct{ scen, seed, out string }{{path, "250", "r1"}, {path, "7", "r2"}, {leak, "9", "r3"}} {
		mustCLI(t, "simulate", w.scen, "--seed", w.seed, "-o", p(w.out+".csv"), "--base-log", p(w.out+"-base.csv"))
		mustCLI(t, "locate", "--base", p(w.out+"-base.csv"), "--group-by", "group", "--sensor-height", "0.25", "--min-cover", "1.2", p(w.out+".csv"), "-o", p(w.out))
	}

	out := mustCLI(t, "compare", p("r2"), p("r3"), "-o", p("cmp.html"))
	cautions, changes, plots := pageChecks(t, p("cmp.html"), report.ComparisonHTMLHead)
	for _, c := range report.Cautions {
		if !strings.Contains(cautions, c) {
			t.Errorf("compare's page: the cautions box lacks %q", c)
		}
	}
	// The stations past the new loss are listed under the ratio step.
	if !strings.Contains(out, "T18") || !strings.Contains(changes, "T18") || !strings.Contains(changes, "ratio-step") {
		t.Errorf("compare's page does not list the change at T18:\n%s", changes)
	}
	if got := strings.Join(plots, "|"); !strings.Contains(got, "current along the route, each survey") || !strings.Contains(got, "cover along the route, each survey") {
		t.Errorf("compare's page plots %q", got)
	}
	if !strings.Contains(readFile(t, p("cmp.html")), "minimum cover 1.20 m") {
		t.Error("compare's cover plot has no minimum cover line")
	}
	mustCLI(t, "compare", p("r2"), p("r3"), "-o", p("cmp.html")) // over its own page
	if err := os.WriteFile(p("other.html"), []byte("<!DOCTYPE html>\n<p>notes</p>\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "compare", p("r2"), p("r3"), "-o", p("other.html")); code != 2 || !strings.Contains(errOut, "not replaced") {
		t.Errorf("-o over a page compare did not write: exit %d, %s", code, errOut)
	}
	if b, _ := os.ReadFile(p("other.html")); !strings.Contains(string(b), "notes") {
		t.Error("a page compare did not write was replaced")
	}
	if code, _, errOut := cli(t, "compare", p("r2"), p("r3"), "-o", p("cmp.txt")); code != 2 || !strings.Contains(errOut, ".csv or .html") {
		t.Errorf("-o cmp.txt: exit %d, %s", code, errOut)
	}

	js := mustCLI(t, "trend", "--json", p("r1"), p("r2"), p("r3"), "-o", p("trend.html"))
	var tr report.Trend
	if err := json.Unmarshal([]byte(js), &tr); err != nil {
		t.Fatal(err)
	}
	if tr.Kind != "survey-trend" || len(tr.Cautions) != len(report.Cautions) || len(tr.Surveys) != 3 || len(tr.Intervals) != 2 || tr.Intervals[0].Changes != 0 {
		t.Errorf("trend JSON: kind %q, %d cautions, %d surveys, intervals %+v", tr.Kind, len(tr.Cautions), len(tr.Surveys), tr.Intervals)
	}
	var flagged []string
	for _, ch := range tr.Changes {
		switch {
		case ch.From != 2:
			t.Errorf("a change between surveys %d and %d: %s", ch.From, ch.To, ch.Message)
		case ch.Kind == "current-change":
			flagged = append(flagged, ch.Groups[0])
		case ch.Kind == "ratio-step" || ch.Kind == "step-new":
			flagged = append(flagged, ch.Stations...)
			if ch.Chainage == nil || *ch.Chainage < 320 || *ch.Chainage > 340 {
				t.Errorf("%s at %v m, the defect is at 330 m", ch.Kind, ch.Chainage)
			}
		default:
			t.Errorf("unexpected change %s: %s", ch.Kind, ch.Message)
		}
	}
	sort.Strings(flagged)
	if got := strings.Join(flagged, " "); got != "T18 T19 T20 T21" {
		t.Errorf("trend flags the current at %q, want T18-T21", got)
	}
	cautions, changes, plots = pageChecks(t, p("trend.html"), report.TrendHTMLHead)
	for _, c := range report.Cautions {
		if !strings.Contains(cautions, c) {
			t.Errorf("trend's page: the cautions box lacks %q", c)
		}
	}
	for _, ch := range tr.Changes {
		if !strings.Contains(changes, ch.Message) {
			t.Errorf("trend's page lacks the change %q", ch.Message)
		}
	}
	if got := strings.Join(plots, "|"); !strings.Contains(got, "current along the route, each survey") || !strings.Contains(got, "cover along the route, each survey") {
		t.Errorf("trend's page plots %q", got)
	}
	txt := mustCLI(t, "trend", p("r1"), p("r2"), p("r3"))
	if !regexp.MustCompile(`(?m)^  1 -> 2[^\n]*: 0 changes$`).MatchString(txt) || !strings.Contains(txt, report.Cautions[0]) {
		t.Errorf("trend's text:\n%s", txt)
	}

	// An AC third result: refused, and no page written.
	var doc map[string]any
	if err := json.Unmarshal([]byte(readFile(t, filepath.Join(p("r3"), "results.json"))), &doc); err != nil {
		t.Fatal(err)
	}
	doc["signal"] = map[string]any{"mode": "ac", "frequency_hz": 50.0, "window_s": 0.1}
	b, _ := json.Marshal(doc)
	if err := os.WriteFile(p("ac.json"), b, 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "trend", p("r1"), p("r2"), p("ac.json"), "-o", p("t2.html")); code != 1 || !strings.Contains(errOut, "OLD is DC and NEW is AC") {
		t.Errorf("an AC third result: exit %d, %s", code, errOut)
	}
	if _, err := os.Stat(p("t2.html")); !os.IsNotExist(err) {
		t.Errorf("a trend that failed left %s (%v)", p("t2.html"), err)
	}
	if code, _, _ := cli(t, "trend", p("r1"), p("r2")); code != 2 {
		t.Errorf("two results: exit %d, want 2", code)
	}
}
