package report

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"undercurrent/inverse/simulate"
)

// walkedFrom walks only part of the spur: count traverses from chainage
// first on (a re-survey of the far stretch).
func walkedFrom(t *testing.T, first float64, count int) func(*simulate.Scenario) {
	return func(sc *simulate.Scenario) {
		sc.Survey.FirstAt, sc.Survey.Count = first, count
		if err := sc.Validate(); err != nil { // lays the traverses out again
			t.Fatal(err)
		}
	}
}

// TestComparePartialResurvey: OLD walked the whole spur (0-400 m, the
// coating defect's 0.31 A step between T13 and T14); NEW walked only
// 260-400 m after the defect grew by 0.2 A, the rectifier as it was. NEW
// never walked the defect's bracket, and the stations it walked all lie
// past the grown loss, so they read about 0.86 of OLD's current (the
// scenario's own currents give the truth). Before, compare called the
// defect's step "gone" and the lower level "a rectifier or transmitter set
// differently": a crew could read "leak repaired, rectifier turned down".
// Now the step must be not covered by NEW (no step-gone change, a note
// saying so), the level worded as a supply change or a change of loss
// before NEW's first station, a caution naming the stretch both walked,
// and trend's supply ratio carrying the same doubt.
func TestComparePartialResurvey(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 29 traverses")
	}
	old, oldSc := kestrelDoc(t, 1, nil)
	newDoc, newSc := kestrelDoc(t, 2, edits(leakFrom(13, 0.2), walkedFrom(t, 260, 8)))
	cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	cc := cmp.Conductors[0]
	// The truth: NEW's current over OLD's at the matched stations.
	ot, nt := kestrelTruth(t, old, oldSc), kestrelTruth(t, newDoc, newSc)
	var truth float64
	for _, s := range cc.Stations {
		truth += nt[s.NewKey][0] / ot[s.OldKey][0]
	}
	truth /= float64(len(cc.Stations))
	if r := cc.Ratio; r == nil || !r.LevelApplied || !(math.Abs(r.Level-truth) <= 3*r.LevelSigma+0.003) {
		t.Fatalf("ratio %+v, want a level of %.4f (the scenario's), applied", r, truth)
	}
	p := cc.Partial
	if p == nil || !(p.NewFrom > 250 && p.OldFrom < 10 && p.BothFrom > 250) || !strings.Contains(p.LevelDoubt, "before NEW's first station at 259.8 m") {
		t.Fatalf("partial coverage %+v, want NEW from 259.8 m and the doubt before it", p)
	}
	var covered bool
	for _, sp := range cmp.Steps {
		if sp.Status == "gone" || sp.Status == "new" {
			t.Errorf("step at %.1f-%.1f m %s, want not covered", sp.ChainageFrom, sp.ChainageTo, sp.Status)
		}
		if sp.Status == "not-covered-by-new" && sp.ChainageFrom < 250 && 250 < sp.ChainageTo {
			covered = true
		}
	}
	if !covered {
		t.Errorf("steps %+v, want the defect's not covered by NEW", cmp.Steps)
	}
	var level *Change
	for i, ch := range cmp.Changes {
		switch ch.Kind {
		case "step-gone", "step-new":
			t.Errorf("listed as changed: %s", ch.Message)
		case "level-change":
			level = &cmp.Changes[i]
		}
	}
	if level == nil || !strings.Contains(level.Message, "a supply change") || !strings.Contains(level.Message, "a change of loss before NEW's first station at 259.8 m") {
		t.Errorf("level-change %+v, want a supply change or a loss before NEW's first station", level)
	}
	if !strings.Contains(strings.Join(cmp.Notes, "\n"), "is not covered by NEW") {
		t.Errorf("notes %q, want the step not covered by NEW", cmp.Notes)
	}
	if len(cmp.Cautions) != len(Cautions)+1 || !strings.Contains(cmp.Cautions[len(Cautions)], "compared on 259.8-399.8 m only") {
		t.Errorf("cautions %q, want one on the stretch both walked", cmp.Cautions)
	}
	var txt bytes.Buffer
	if err := WriteComparisonText(&txt, cmp); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(txt.String(), "not covered by NEW") || strings.Contains(txt.String(), "(steps): \n") {
		t.Errorf("text steps:\n%s", txt.String())
	}
	// trend inherits it.
	tr, err := CompareSeries([]*Document{old, newDoc}, []string{"old", "new"}, CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if sv := tr.Surveys[1]; !sv.SupplyChanged || !strings.Contains(sv.SupplyDoubt, "before NEW's first station") {
		t.Errorf("trend survey 2 %+v, want the supply ratio's doubt", sv)
	}
	if len(tr.Cautions) != len(Cautions)+1 {
		t.Errorf("trend cautions %q, want the comparison's", tr.Cautions)
	}
	// A refusal names the survey numbers.
	ac := *old
	ac.Signal = Signal{Mode: SignalAC, FrequencyHz: 50}
	_, err = CompareSeries([]*Document{old, old, &ac}, []string{"a", "b", "c"}, CompareSettings{})
	var ce *CompareError
	if !errors.As(err, &ce) || !strings.HasPrefix(ce.Msg, "survey 1 (OLD) against survey 3 (NEW): ") {
		t.Errorf("trend refusal %v, want the survey numbers", err)
	}
}

// summaryText is the text of a compare page's summary section.
func summaryText(t *testing.T, page []byte) string {
	t.Helper()
	for _, s := range findAll(parsePage(t, page), func(n *html.Node) bool { return n.Data == "section" }) {
		if attr(s, "class") == "summary" {
			return nodeText(s)
		}
	}
	t.Fatal("no summary section")
	return ""
}

// TestComparisonHTMLLevelFrom: the page's summary says what compare's
// list of changes says. The spur walked again after the rectifier was set
// 30% higher and a 0.4 A leak opened at 70 m, and NEW's depths 0.15 m
// greater (a sensor height entered differently). On DC the supply's factor
// is read upstream of the leak (1.30); read as AC magnitudes neither side
// is taken. Before, the page said on both that the whole route's current
// changed by one factor "weighted over the N stations that agree with the
// median ratio", and its station table gave the change of current beyond
// the level and the change of depth before the offset under plain
// headings.
func TestComparisonHTMLLevelFrom(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 42 traverses")
	}
	old, _ := kestrelDoc(t, 1, noDefect)
	newDoc, _ := kestrelDoc(t, 2, edits(noDefect, scaleCurrents(1.3), leakFrom(4, 0.4)))
	for i := range newDoc.Route.Stations {
		if c := newDoc.Route.Stations[i].Cover; c != nil {
			v := *c + 0.15
			newDoc.Route.Stations[i].Cover = &v
		}
	}
	page := func(c *Comparison) []byte {
		var b bytes.Buffer
		if err := WriteComparisonHTML(&b, c); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	c, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	r := c.Conductors[0].Ratio
	if r == nil || r.LevelFrom != "upstream" || c.Conductors[0].DepthOffset == nil || !c.Conductors[0].DepthOffset.Applied {
		t.Fatalf("ratio %+v, depth offset %+v: want the level from upstream and an offset", r, c.Conductors[0].DepthOffset)
	}
	dc := page(c)
	sum := summaryText(t, dc)
	for _, bad := range []string{"weighted over", "whole route's current changed by one factor"} {
		if strings.Contains(sum, bad) {
			t.Errorf("DC summary says %q:\n%s", bad, sum)
		}
	}
	if want := "side the current flows from, before chainage"; !strings.Contains(sum, want) || !strings.Contains(sum, pm(r.Level, r.LevelSigma)) {
		t.Errorf("DC summary lacks %q and the level %s:\n%s", want, pm(r.Level, r.LevelSigma), sum)
	}
	doc := parsePage(t, dc)
	var heads []string
	for _, th := range findAll(doc, func(n *html.Node) bool { return n.Data == "th" }) {
		heads = append(heads, strings.TrimSpace(nodeText(th)))
	}
	hs := strings.Join(heads, "|")
	if !strings.Contains(hs, "Change beyond level, NEW − "+fix(r.Level, 4)+" × OLD (A)") || !strings.Contains(hs, "Change beyond the common +0.150 m (m)") {
		t.Errorf("station table heads %q, want the changes beyond the level and the offset", hs)
	}
	// The depth column holds the change beyond the offset: each within
	// 0.1 m of zero, where the raw change is about +0.15.
	n := 0
	for _, tb := range findAll(doc, func(n *html.Node) bool { return n.Data == "tbody" }) {
		for _, tr := range findAll(tb, func(n *html.Node) bool { return n.Data == "tr" }) {
			tds := findAll(tr, func(n *html.Node) bool { return n.Data == "td" })
			if len(tds) != 8 {
				continue
			}
			n++
			cell := strings.Fields(nodeText(tds[7]))
			if v := parseSigned(cell[0]); !(math.Abs(v) < 0.1) {
				t.Errorf("depth change %q in the table, want the change beyond the +0.15 m offset", nodeText(tds[7]))
			}
		}
	}
	if n != len(c.Conductors[0].Stations) {
		t.Errorf("%d depth changes in the table, want %d", n, len(c.Conductors[0].Stations))
	}
	// Where: a step's bracket, not its midpoint alone.
	for _, ch := range c.Changes {
		if ch.Kind == "ratio-step" && !strings.Contains(string(dc), changeWhere(ch)) || ch.Kind == "ratio-step" && !strings.Contains(changeWhere(ch), "–") {
			t.Errorf("ratio step's Where %q, want its bracket", changeWhere(ch))
		}
	}
	// AC: neither side taken.
	for _, d := range []*Document{old, newDoc} {
		d.Signal = Signal{Mode: SignalAC, FrequencyHz: 50}
	}
	if c, err = Compare(old, newDoc, "old", "new", CompareSettings{}); err != nil {
		t.Fatal(err)
	}
	if c.Conductors[0].Ratio == nil || c.Conductors[0].Ratio.LevelFrom != "unknown" {
		t.Fatalf("AC ratio %+v, want the level from neither side", c.Conductors[0].Ratio)
	}
	sum = summaryText(t, page(c))
	for _, bad := range []string{"weighted over", "changed by one factor", "The current now is"} {
		if strings.Contains(sum, bad) {
			t.Errorf("AC summary says %q:\n%s", bad, sum)
		}
	}
	if !strings.Contains(sum, "neither side is taken as the factor") {
		t.Errorf("AC summary does not say neither side is taken:\n%s", sum)
	}
}

// parseSigned reads a table's signed number (a minus sign or a hyphen).
func parseSigned(s string) float64 {
	s = strings.Replace(s, "−", "-", 1)
	v, err := strconv.ParseFloat(strings.TrimPrefix(s, "+"), 64)
	if err != nil {
		return math.NaN()
	}
	return v
}
