package report

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestSummaryLeadsWithWarnings: the summary's first paragraph gives the
// count of findings by severity and names the most pressing one (its
// number, kind, chainage and first value), ahead of the long figures; the
// findings table has a heading of its own that the summary links to; the
// page has a main landmark and the cautions' title is a heading. Before,
// the count came last in the summary and the first warning of the demo
// began 2.1 phone screens down, with no heading a screen reader could
// jump to.
func TestSummaryLeadsWithWarnings(t *testing.T) {
	d := fenwickLane(true)
	first := -1
	for i, f := range d.Findings {
		if f.Severity == SeverityWarning {
			first = i
			break
		}
	}
	if first < 0 {
		t.Fatal("fixture has no warning")
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	loc := regexp.MustCompile(`<h2[^>]*>Summary</h2>`).FindStringIndex(page)
	if loc == nil {
		t.Fatal("no Summary heading")
	}
	para := regexp.MustCompile(`(?s)<p[^>]*>(.*?)</p>`).FindStringSubmatch(page[loc[1]:])
	if para == nil {
		t.Fatal("no paragraph after the Summary heading")
	}
	lead := para[1]
	f := d.Findings[first]
	for _, want := range []string{
		"warning",
		"Most pressing: finding " + strconv.Itoa(first+1) + ", a warning, " + kindLabel(f.Kind),
		"chainage ",
		valueText(f.Values[0]),
		`<a href="#findings">`,
	} {
		if !strings.Contains(lead, want) {
			t.Errorf("summary's first paragraph lacks %q:\n%s", want, lead)
		}
	}
	fh := strings.Index(page, `<section id="findings">
<h2>Findings</h2>`) + len(`<section id="findings">
<h2>Findings</h2>`)
	tab := strings.Index(page, `<table class="findings">`)
	if fh < len(`<h2>Findings</h2>`) || tab < fh || strings.Contains(page[fh:tab], "<h2") || strings.Contains(page[fh:tab], "<h3") {
		t.Errorf("no Findings heading right before the findings table (heading at %d, table at %d)", fh, tab)
	}
	main, cau := strings.Index(page, "<main>"), strings.Index(page, `<section class="cautions"`)
	if main < 0 || cau < main || !strings.Contains(page, "</main>") {
		t.Error("no main landmark around the report's body")
	}
	if !regexp.MustCompile(`<section class="cautions"[^>]*>\s*<h2[^>]*>Read before acting on this report</h2>`).MatchString(page) {
		t.Error("the cautions' title is not a heading")
	}
}

// TestGroupsTableRowsHeaded: in the table of every group each row is
// headed by its group (a th with scope="row", so that a screen reader
// names the group with each number), the cover, the figure a crew acts on,
// comes right after the conductor's number (it was the sixth column,
// off a phone's screen), and a hint, shown on narrow screens only, says
// that the table scrolls sideways.
func TestGroupsTableRowsHeaded(t *testing.T) {
	d := fenwickLane(true)
	d.Conductors = []Track{{Number: 2}}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	table := regexp.MustCompile(`(?s)<table class="groups">.*?</table>`).FindString(page)
	head := regexp.MustCompile(`(?s)<thead>.*?</thead>`).FindString(table)
	cond, cover, cur := strings.Index(head, "<th>Conductor</th>"), strings.Index(head, "<th>Cover (m)</th>"), strings.Index(head, "<th>Current (A)</th>")
	if cond < 0 || cover < cond || cur < cover || strings.Contains(head[cond:cover], "<th>Current") {
		t.Errorf("columns Conductor at %d, Cover at %d, Current at %d: want Cover right after Conductor\n%s", cond, cover, cur, head)
	}
	rows := regexp.MustCompile(`<tr[^>]*>(<t[dh][^>]*>)`).FindAllStringSubmatch(regexp.MustCompile(`(?s)<tbody>.*?</tbody>`).FindString(table), -1)
	if len(rows) != len(d.Groups) {
		t.Fatalf("%d rows for %d groups", len(rows), len(d.Groups))
	}
	for _, r := range rows {
		if r[1] != `<th scope="row" class="stick">` {
			t.Errorf("a row begins with %s, not a row header", r[1])
			break
		}
	}
	hint := strings.Index(page, `<p class="scroll-hint"`)
	hidden, shown := strings.Index(page, ".scroll-hint { display: none;"), strings.Index(page, ".scroll-hint { display: block; }")
	narrow := strings.Index(page, "@media screen and (max-width: 40rem)")
	if hint < 0 || hint > strings.Index(page, `<table class="groups">`) || shown < narrow || hidden < 0 || hidden > narrow {
		t.Error("no hint before the table that it scrolls sideways, shown on a narrow screen only (hidden before the small-screen rules, shown in them)")
	}
}
