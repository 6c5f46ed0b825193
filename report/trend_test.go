package report

import (
	"bytes"
	"encoding/json"
	"math"
	"sort"
	"strings"
	"sync"
	"testing"

	"golang.org/x/net/html"

	"undercurrent/inverse/simulate"
)

var (
	seriesOnce sync.Once
	seriesDocs []*Document
	seriesScs  []*simulate.Scenario
)

// kestrelSeries is three walks of the Kestrel Moor spur (invented;
// testdata/scenarios/kestrel-moor-step.toml) with different noise (seeds
// 1, 2, 3): the first two with nothing changed, the third with a new
// defect letting 0.25 A go at 330 m. Fitted once for the tests that use
// them.
func kestrelSeries(t *testing.T) ([]*Document, []*simulate.Scenario) {
	t.Helper()
	if testing.Short() {
		t.Skip("fits 63 traverses")
	}
	seriesOnce.Do(func() {
		// The third walk: a new 0.25 A defect at the vertex at 330 m
		// (between T17 at 320 m and T18 at 340 m).
		for k, edit := range []func(*simulate.Scenario){nil, nil, leakFrom(17, 0.25)} {
			d, sc := kestrelDoc(t, int64(k+1), edit)
			seriesDocs, seriesScs = append(seriesDocs, d), append(seriesScs, sc)
		}
	})
	if len(seriesDocs) != 3 {
		t.Fatal("the series was not built")
	}
	return seriesDocs, seriesScs
}

// parsePage parses an HTML page as a browser would (golang.org/x/net/html,
// the HTML5 parsing algorithm) and fails on a parse error.
func parsePage(t *testing.T, b []byte) *html.Node {
	t.Helper()
	n, err := html.Parse(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("the page does not parse as HTML: %v", err)
	}
	return n
}

func nodeText(n *html.Node) string {
	var b strings.Builder
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return b.String()
}

func attr(n *html.Node, key string) string {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val
		}
	}
	return ""
}

// findAll returns the elements under n for which ok holds, in document
// order.
func findAll(n *html.Node, ok func(*html.Node) bool) []*html.Node {
	var out []*html.Node
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode && ok(n) {
			out = append(out, n)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return out
}

// checkPage checks a compare or trend page: it parses; its first section
// is the cautions box with the four cautions in order; the list of what
// changed holds each message of changes and comes after the cautions;
// and the wide figures include the plots labelled in plots, each an SVG
// with drawn paths.
func checkPage(t *testing.T, page []byte, head string, changes []string, plots []string) {
	t.Helper()
	if !bytes.HasPrefix(page, []byte(head)) {
		t.Errorf("the page begins %q, want %q", page[:min(len(page), 80)], head)
	}
	doc := parsePage(t, page)
	sections := findAll(doc, func(n *html.Node) bool { return n.Data == "section" })
	if len(sections) == 0 || attr(sections[0], "class") != "cautions" {
		t.Fatalf("the first section is not the cautions box")
	}
	items := findAll(sections[0], func(n *html.Node) bool { return n.Data == "li" })
	if len(items) != len(Cautions) {
		t.Errorf("%d cautions in the box, want %d", len(items), len(Cautions))
	}
	for i := range items {
		if i < len(Cautions) && strings.TrimSpace(nodeText(items[i])) != Cautions[i] {
			t.Errorf("caution %d is %q, want %q", i+1, nodeText(items[i]), Cautions[i])
		}
	}
	var list *html.Node
	for _, s := range sections {
		if attr(s, "id") == "changes" {
			list = s
		}
	}
	if list == nil {
		t.Fatal("no section of what changed")
	}
	rows := findAll(list, func(n *html.Node) bool { return n.Data == "tr" })
	if len(rows) != len(changes)+1 && !(len(changes) == 0 && len(rows) == 0) {
		t.Errorf("%d rows in the list of what changed, want %d and a head", len(rows), len(changes))
	}
	text := nodeText(list)
	for _, m := range changes {
		if !strings.Contains(text, m) {
			t.Errorf("the list of what changed lacks %q", m)
		}
	}
	svgs := map[string]*html.Node{}
	for _, f := range findAll(doc, func(n *html.Node) bool { return n.Data == "div" && attr(n, "class") == "fig-wide" }) {
		for _, s := range findAll(f, func(n *html.Node) bool { return n.Data == "svg" }) {
			svgs[attr(s, "aria-label")] = s
		}
	}
	for _, label := range plots {
		s := svgs[label]
		if s == nil {
			t.Errorf("no plot %q (plots: %v)", label, keysOf(svgs))
			continue
		}
		if n := len(findAll(s, func(n *html.Node) bool { return n.Data == "path" })); n < 10 {
			t.Errorf("plot %q draws %d paths", label, n)
		}
	}
}

func keysOf(m map[string]*html.Node) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}

// TestComparisonHTML: compare's page of surveys 2 and 3 of the series (the
// new defect at 330 m) holds the cautions first, every change compare
// lists, and the current and cover plots of both surveys along the route,
// the cover's with the minimum cover line when one is given.
func TestComparisonHTML(t *testing.T) {
	docs, _ := kestrelSeries(t)
	c, err := Compare(docs[1], docs[2], "summer/results.json", "winter/results.json", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Changes) == 0 {
		t.Fatal("the new defect changed nothing")
	}
	c.MinCoverM = ptr(1.2)
	var b bytes.Buffer
	if err := WriteComparisonHTML(&b, c); err != nil {
		t.Fatal(err)
	}
	var msgs []string
	for _, ch := range c.Changes {
		msgs = append(msgs, ch.Message)
	}
	checkPage(t, b.Bytes(), ComparisonHTMLHead, msgs, []string{"current along the route, each survey", "cover along the route, each survey"})
	if !strings.Contains(b.String(), "minimum cover 1.20 m") {
		t.Error("the cover plot has no minimum cover line")
	}
	if !strings.Contains(b.String(), "OLD, ±2σ") || !strings.Contains(b.String(), "NEW, ±2σ") {
		t.Error("the plots do not name OLD and NEW in their legends")
	}
}

// TestTrendFindsLeakInThirdSurvey: three walks of the spur, a new defect
// letting 0.25 A go at 330 m in the third alone. The trend must flag
// nothing between surveys 1 and 2; between 2 and 3 the current at every
// station past the defect (T18-T21, each change within 3 sigma of the
// scenario's -0.25 A) and the step of the ratio (or a new current step)
// at 320-340 m, and nothing else; no supply change; every survey's current
// at every station of survey 1.
func TestTrendFindsLeakInThirdSurvey(t *testing.T) {
	docs, scs := kestrelSeries(t)
	names := []string{"spring/results.json", "summer/results.json", "winter/results.json"}
	tr, err := CompareSeries(docs, names, CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(tr.Surveys) != 3 || len(tr.Intervals) != 2 {
		t.Fatalf("%d surveys, %d intervals", len(tr.Surveys), len(tr.Intervals))
	}
	for _, s := range tr.Surveys {
		if s.SupplyRatio == nil || s.SupplyChanged || math.Abs(*s.SupplyRatio-1) > 0.01 {
			t.Errorf("survey %d: supply ratio %v (changed %v), want 1: the supply did not change", s.Survey, s.SupplyRatio, s.SupplyChanged)
		}
	}
	if tr.Intervals[0].Changes != 0 {
		t.Errorf("%d changes between surveys 1 and 2, where nothing changed", tr.Intervals[0].Changes)
	}
	var curFlags []string
	ratioOrStep := false
	for _, ch := range tr.Changes {
		if ch.From != 2 || ch.To != 3 {
			t.Errorf("a change between surveys %d and %d: %s", ch.From, ch.To, ch.Message)
			continue
		}
		switch ch.Kind {
		case "current-change":
			curFlags = append(curFlags, ch.Groups[0])
		case "ratio-step", "step-new":
			ratioOrStep = true
			// Stations past a ratio step whose own flags restate it
			// are listed under it (compare groups them).
			curFlags = append(curFlags, ch.Stations...)
			if ch.Chainage == nil || *ch.Chainage < 320 || *ch.Chainage > 340 {
				t.Errorf("%s at chainage %v, the defect is at 330 m: %s", ch.Kind, ch.Chainage, ch.Message)
			}
		default:
			t.Errorf("unexpected change %s: %s", ch.Kind, ch.Message)
		}
	}
	sort.Strings(curFlags)
	if got := strings.Join(curFlags, " "); got != "T18 T19 T20 T21" {
		t.Errorf("current changes at %q, want every station past the defect, T18-T21", got)
	}
	if !ratioOrStep {
		t.Error("no ratio step or new current step at the defect")
	}
	// The table: every station of survey 1 with all three surveys'
	// currents; past the defect survey 3's is the scenario's 0.25 A less
	// than survey 2's, within 3 combined sigma.
	ot, nt := kestrelTruth(t, docs[1], scs[1]), kestrelTruth(t, docs[2], scs[2])
	if len(tr.Conductors) != 1 || len(tr.Conductors[0].Stations) != len(docs[0].Route.Stations) {
		t.Fatalf("the table holds %d conductors", len(tr.Conductors))
	}
	for _, st := range tr.Conductors[0].Stations {
		if len(st.Surveys) != 3 {
			t.Fatalf("%s: %d surveys", st.Key, len(st.Surveys))
		}
		a, b := st.Surveys[1], st.Surveys[2]
		if a.Current == nil || b.Current == nil || a.Cover == nil || b.Cover == nil {
			t.Errorf("%s: a survey's current or cover is missing: %+v", st.Key, st.Surveys)
			continue
		}
		d, sd := *b.Current-*a.Current, math.Hypot(*a.CurrentSigma, *b.CurrentSigma)
		want := nt[b.Key][0] - ot[a.Key][0]
		if math.Abs(d-want) > 3*sd {
			t.Errorf("%s: survey 3 - survey 2 = %.4f ± %.4f A, scenario %.4f A", st.Key, d, sd, want)
		}
	}
	// The outputs: text and JSON with the cautions, the page checked as
	// compare's, with one line a survey.
	var txt, js, page bytes.Buffer
	if err := WriteTrendText(&txt, tr); err != nil {
		t.Fatal(err)
	}
	for _, c := range Cautions {
		if !strings.Contains(txt.String(), c) {
			t.Errorf("the text lacks the caution %q", c)
		}
	}
	if err := WriteTrendJSON(&js, tr); err != nil {
		t.Fatal(err)
	}
	var back struct {
		Cautions []string `json:"cautions"`
		Kind     string   `json:"kind"`
		Surveys  []struct {
			Ratio *float64 `json:"supply_ratio"`
		} `json:"surveys"`
		Changes []struct {
			From int    `json:"from_survey"`
			Kind string `json:"kind"`
		} `json:"changes"`
	}
	if err := json.Unmarshal(js.Bytes(), &back); err != nil || back.Kind != "survey-trend" || len(back.Cautions) != len(Cautions) || len(back.Surveys) != 3 || back.Surveys[2].Ratio == nil || len(back.Changes) != len(tr.Changes) {
		t.Errorf("JSON: %v, %+v", err, back)
	}
	if err := WriteTrendHTML(&page, tr); err != nil {
		t.Fatal(err)
	}
	var msgs []string
	for _, ch := range tr.Changes {
		msgs = append(msgs, ch.Message)
	}
	checkPage(t, page.Bytes(), TrendHTMLHead, msgs, []string{"current along the route, each survey", "cover along the route, each survey"})
	for _, s := range []string{"survey 1, ±2σ", "survey 2, ±2σ", "survey 3, ±2σ"} {
		if !strings.Contains(page.String(), s) {
			t.Errorf("the plots' legends lack %q", s)
		}
	}
}
