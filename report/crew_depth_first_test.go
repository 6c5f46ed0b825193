package report

import (
	"bytes"
	"html"
	"math"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// crewPage writes d's crew report and returns it with its entities
// decoded, and its summary (from the summary's heading to the findings
// table or the plan view).
func crewPage(t *testing.T, d *Document) (page, summary string) {
	t.Helper()
	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	page = html.UnescapeString(b.String())
	summary = page[strings.Index(page, "<h2>Summary</h2>"):strings.Index(page, "<h2>Plan view</h2>")]
	if i := strings.Index(summary, `<table class="findings">`); i >= 0 {
		summary = summary[:i]
	}
	return page, summary
}

// groupRowOf returns the row of group key in the crew report's table of
// every group, its cells' text joined by " | ", without the last, the Fit
// column (whose words on a failed fit quote its numbers to say why they
// mean nothing).
func groupRowOf(t *testing.T, page, key string) string {
	t.Helper()
	table := page[strings.Index(page, `<table class="groups">`):]
	table = table[:strings.Index(table, "</table>")]
	cell := regexp.MustCompile(`(?s)<t[dh][^>]*>(.*?)</t[dh]>`)
	tag := regexp.MustCompile(`<[^>]+>`)
	for _, row := range regexp.MustCompile(`(?s)<tr[^>]*>.*?</tr>`).FindAllString(table, -1) {
		cs := cell.FindAllStringSubmatch(row, -1)
		if len(cs) == 0 || tag.ReplaceAllString(cs[0][1], "") != key {
			continue
		}
		var out []string
		for _, c := range cs[:len(cs)-1] {
			out = append(out, tag.ReplaceAllString(c[1], " "))
		}
		return strings.Join(out, " | ")
	}
	t.Fatalf("no row of %s in the table of every group", key)
	return ""
}

// TestCrewReportCoverFirst: where the ground is known the crew report
// gives the cover first and names the other depth "below the sensors"
// every time: in the table's headings, in the summary's first depth
// figure and on the depth plot's axis. Cover is the depth below the
// ground (DOMAIN.md, minimum cover; NEC Table 300.5 states cover as the
// depth below grade), here the depth below the sensors less the fixture's
// 0.25 m sensor height. Before, the table's heading was "Depth (m)" and
// the summary opened "depth below the sensors is 0.70 to 1.29 m" where
// the demo's cover is 0.40 m at its shallowest: a crew reading the bare
// depth was 0.30 m wrong on the unsafe side (review rv18a, finding 1).
// Without the sensor height the depths are below the sensors and the
// report says plainly that the cover is less than them.
func TestCrewReportCoverFirst(t *testing.T) {
	d := fenwickLane(false)
	h := d.DepthReference.SensorHeight
	page, sum := crewPage(t, d)
	if !strings.Contains(page, "<th>Cover (m)</th><th>Depth below sensors (m)</th>") {
		t.Errorf("table of every group: want the cover column first and the depth headed as below the sensors")
	}
	if strings.Contains(page, "<th>Depth (m)</th>") {
		t.Error(`a depth column headed "Depth (m)", naming no reference`)
	}
	// The summary's first depth figure is conductor 1's least cover:
	// the shallowest used station's depth below the sensors less h.
	lo := math.Inf(1)
	for _, s := range d.Route.Stations {
		if s.Used {
			lo = math.Min(lo, s.Depth)
		}
	}
	m := regexp.MustCompile(`[Cc]over \(depth below ground\) is (-?[0-9.]+)`).FindStringSubmatch(sum)
	if m == nil {
		t.Fatalf("the summary gives no cover range:\n%s", sum)
	}
	first := strings.Index(sum, m[0])
	if i := strings.Index(sum, "below the sensors"); i >= 0 && i < first {
		t.Errorf("the summary gives a depth below the sensors before the cover:\n%s", sum)
	}
	// span writes the range to three decimals under 1 m: half a
	// millimetre of rounding.
	if v, _ := strconv.ParseFloat(m[1], 64); math.Abs(v-(lo-h)) > 5e-4 {
		t.Errorf("summary's least cover %s m, want the shallowest depth %.4f m less %.2f m", m[1], lo, h)
	}
	if !strings.Contains(page, "cover: depth below ground (m)") || strings.Contains(page, "depth below sensors (m)</text>") {
		t.Error("the depth plot's axis is not the cover below the ground")
	}

	// The depths measured from the ground given: one column, the cover.
	g := fenwickLane(false)
	g.DepthReference = DepthReference{Kind: DepthBelowGround}
	page, _ = crewPage(t, g)
	if !strings.Contains(page, "<th>Cover: depth below ground (m)</th>") || strings.Contains(page, "<th>Depth below sensors (m)</th>") {
		t.Error("depths below the ground given: want one column, the cover below the ground")
	}

	// No sensor height: depths below the sensors, and the summary says
	// the cover is less by their height.
	n := fenwickLane(false)
	n.DepthReference.SensorHeight = 0
	n.MinCover = nil
	page, sum = crewPage(t, n)
	if !strings.Contains(page, "<th>Cover (m)*</th><th>Depth below sensors (m)</th>") {
		t.Error("no sensor height: want the cover column marked n/a and the depth headed as below the sensors")
	}
	if !strings.Contains(sum, NoCoverSentence) {
		t.Errorf("no sensor height: the summary does not say the cover is less than the depths:\n%s", sum)
	}
	if !strings.Contains(page, "depth below the sensors (m)") {
		t.Error("no sensor height: the depth plot's axis does not name the sensors")
	}
}

// TestCrewReportFailedFitNoValues: a fit that found no current has no
// current, depth or cover to give; its problem says its numbers "mean
// nothing here". The crew report's table printed them anyway (126 ± 182
// A, 47.2 m of cover; 0.636 m of cover 14 m past a cable's end; review
// rv18a, finding 4). Its row stays, its numbers do not. The readings are
// the end-past-traverse scenario's (testdata/scenarios/open, a 10 A line
// 1.0 m down that ends at N 32 m), where the traverses past the end find
// no current.
func TestCrewReportFailedFitNoValues(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 12 simulated traverses")
	}
	d := scenarioDoc(t, filepath.Join("open", "end-past-traverse.toml"), 1)
	page, _ := crewPage(t, d)
	failed := 0
	for i := range d.Groups {
		g := &d.Groups[i]
		row := groupRowOf(t, page, g.Key)
		if g.OK {
			if len(g.Sources) > 0 && g.Sources[0].Kind == KindLine && !strings.Contains(row, PlusMinus(g.Sources[0].Current, g.Sources[0].CurrentSigma)) {
				t.Errorf("%s: a sound fit's row lost its current: %s", g.Key, row)
			}
			continue
		}
		if len(g.Sources) == 0 {
			continue
		}
		failed++
		s := g.Sources[0]
		if !strings.Contains(row, "fit failed, no value") {
			t.Errorf("%s: a failed fit's row does not say it has no value: %s", g.Key, row)
		}
		if c := PlusMinus(s.Current, s.CurrentSigma); strings.Contains(row, c) {
			t.Errorf("%s: a failed fit's row gives its current %s: %s", g.Key, c, row)
		}
		if c, _ := d.cover(s.Depth); strings.Contains(row, num(c)) || strings.Contains(row, fix(c, 3)) {
			t.Errorf("%s: a failed fit's row gives its cover %.3f m: %s", g.Key, c, row)
		}
	}
	if failed == 0 {
		t.Fatal("no fit failed with a source: the case this test is for did not arise")
	}
}

// TestCrewSummaryOneConductorCaveats: a single conductor's summary gives
// the least cover with the doubts the terminal gives (LeastCover), and its
// current at the route's end as the end's warning gives it. Before, it
// said "least cover 0.846 ± 0.013 m" bare, from a poor fit by the
// conductor's end, and "9.996 A at chainage 0 m and 7.800 A at 28 m",
// a 2.2 A loss, beside a warning that the conductor carries 10.04 A up to
// its end (review rv18a, finding 3). The scenario's truth
// (testdata/scenarios/open/end-past-traverse.toml): 10 A at 1.0 m up to
// the end. The current the summary gives up to the end must agree with
// it within four of its sigmas and a centiampere (the scenario's noise
// leaves a few hundredths of an ampere), and the summary must not give a
// current at the last station that falls short of it by more.
func TestCrewSummaryOneConductorCaveats(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 12 simulated traverses")
	}
	const truth = 10.0 // A, the scenario's current up to its end
	d := scenarioDoc(t, filepath.Join("open", "end-past-traverse.toml"), 1)
	if len(d.Conductors) > 0 {
		t.Fatalf("%d further conductors: the case is a single conductor", len(d.Conductors))
	}
	_, sum := crewPage(t, d)
	lc := LeastCover(d)
	if lc == "" || !strings.Contains(sum, lc) {
		t.Errorf("the summary lacks the least-cover sentence %q:\n%s", lc, sum)
	}
	if strings.Contains(sum, "; least cover ") {
		t.Errorf("the summary gives a bare least cover beside the sentence:\n%s", sum)
	}
	m := regexp.MustCompile(`(-?[0-9.]+) ± ([0-9.]+) A up to the conductor's end past chainage`).FindStringSubmatch(sum)
	if m == nil {
		t.Fatalf("the summary gives no current up to the conductor's end:\n%s", sum)
	}
	v, _ := strconv.ParseFloat(m[1], 64)
	s, _ := strconv.ParseFloat(m[2], 64)
	if math.Abs(math.Abs(v)-truth) > 4*s+0.01 {
		t.Errorf("current up to the end %s ± %s A, true %.0f A", m[1], m[2], truth)
	}
	cur := regexp.MustCompile(`Current is (-?[0-9.]+) ± [0-9.]+ A at chainage 0 m and `).FindStringSubmatch(sum)
	if cur == nil {
		t.Errorf("the summary's current sentence does not start at chainage 0:\n%s", sum)
	}
}

// TestCrewSummaryLeastCoverDoubtOneConductor: a steel object right over a
// single 20 A cable 1.0 m down makes its traverse's fit poor and its cover
// too shallow (testdata/scenarios/open/object-over-cable.toml). The
// summary said "least cover 0.899 ± 0.014 m", 7 sigma off the scenario's
// 1.0 m, with none of the caveat the terminal printed, because it gave
// LeastCover's sentence only with further conductors (review rv18a,
// finding 3). It must carry the sentence, doubt and all.
func TestCrewSummaryLeastCoverDoubtOneConductor(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 simulated traverses with the object search")
	}
	d := scenarioDoc(t, filepath.Join("open", "object-over-cable.toml"), 1)
	lc := LeastCover(d)
	if !strings.Contains(lc, "from a fit that may not describe the conductor there") {
		t.Fatalf("least cover %q carries no doubt: the case this test is for did not arise", lc)
	}
	_, sum := crewPage(t, d)
	if !strings.Contains(sum, lc) {
		t.Errorf("the summary lacks the doubted least cover %q:\n%s", lc, sum)
	}
}

// TestCrewFindingsSlightMisfitsGathered: the notes on fits that miss
// their readings slightly (poor-fit findings of severity info) are one
// row, the last of the findings table, numbered as the plan view marks
// them: the demo listed 12 of them one by one among its 18 findings, and
// the note on a magnetised object was lost among them (review rv18a,
// finding 6). The notes' words stay in the row, those of one kind merged
// into one item with their numbers and groups (mergeNotes).
func TestCrewFindingsSlightMisfitsGathered(t *testing.T) {
	d := fenwickLane(false)
	base := len(d.Findings)
	note := func(key string, at, res, sig float64) Finding {
		return Finding{
			Kind: "poor-fit", Severity: SeverityInfo, ChainageFrom: at, ChainageTo: at, Groups: []string{key},
			Message: "fit at " + key + " misses a little more than the noise allows",
			Values:  []Value{{Name: "rms residual", Value: res, Unit: "nT"}, {Name: "rms signal", Value: sig, Unit: "nT"}},
		}
	}
	d.Findings = append(d.Findings, note("T03", 30, 4, 1000), note("T05", 60, 9, 1000), note("T06", 75, 2, 1000))
	page, _ := crewPage(t, d)
	table := page[strings.Index(page, `<table class="findings">`):]
	table = table[:strings.Index(table, "</table>")]
	rows := regexp.MustCompile(`(?s)<tr>.*?</tr>`).FindAllString(table, -1)
	if want := base + 2; len(rows) != want { // the head, the others, one gathered row
		t.Errorf("%d rows in the findings table, want %d (the three notes in one)", len(rows), want)
	}
	last := rows[len(rows)-1]
	nums := strconv.Itoa(base+1) + "–" + strconv.Itoa(base+3)
	for _, want := range []string{">" + nums + "<", "3 fits miss their readings", "at most 0.90% of the signal", "groups T03, T05, T06", nums + " (3 notes; groups T03, T05, T06): fit at each group misses"} {
		if !strings.Contains(last, want) {
			t.Errorf("the last findings row lacks %q: %s", want, last)
		}
	}
}

// TestCrewCurrentPlotMarks: the current plot names the step's dashed
// line and band in its legend, and draws a used station whose fit is
// poor (used with care) apart from the sound ones, so that a poor fit's
// high current at a bend does not read as a rise (review rv18a, finding
// 6: the demo's T19, 43.68 A against a true 42 A, drawn as every other
// station).
func TestCrewCurrentPlotMarks(t *testing.T) {
	d := fenwickLane(false)
	steps := 0
	for _, f := range d.Findings {
		if f.Kind == "current-step" && f.Conductor == 0 {
			steps++
		}
	}
	if steps == 0 {
		t.Fatal("the fixture has no current step: the case this test is for did not arise")
	}
	var poor string
	for i := range d.Groups {
		if g := &d.Groups[i]; g.OK && g.Problem == "" && d.groupUsed(g) {
			g.Problem = "chi-square per degree of freedom is 40, over the limit of 4"
			poor = g.Key
			break
		}
	}
	if poor == "" {
		t.Fatal("no sound used group to mark poor")
	}
	page, _ := crewPage(t, d)
	for _, want := range []string{">step in current (a finding): likely chainage, ±1σ shaded<", ">poor fit, used with care, ±2σ<", "is an amber square"} {
		if !strings.Contains(page, want) {
			t.Errorf("the crew report lacks %q", want)
		}
	}
	// Without a poor fit there is nothing to name.
	page, _ = crewPage(t, fenwickLane(false))
	if strings.Contains(page, ">poor fit, used with care, ±2σ<") {
		t.Error("a legend entry for poor fits where there is none")
	}
}
