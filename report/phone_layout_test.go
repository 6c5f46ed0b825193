package report

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// phoneColumn is the width, CSS px, of the report's column on a phone 360
// px wide, once the page's margins on small screens are taken off.
const phoneColumn = 330

// TestPhoneLayout: read on a phone, the findings table does not widen the
// page (it stacks, inside a box that scrolls sideways if it must), and the
// figures drawn for small screens keep their text at least 9.5 CSS px high
// across the phone's column, where the wide figures, scaled down to it,
// gave 5 to 7 px. No published rule sets the size; 9-10 px is about the
// smallest a crew reads outdoors. Each figure is drawn wide and narrow,
// and the page's CSS shows the narrow ones on small screens only.
func TestPhoneLayout(t *testing.T) {
	d := fenwickLane(true)
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{
		"@media screen and (max-width: 40rem)",
		".fig-wide { display: none; }",
		`<div class="wide"><table class="findings">`,
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	wide := strings.Count(page, `<div class="fig-wide"><svg`)
	narrow := regexp.MustCompile(`(?s)<div class="fig-narrow">(<svg.*?</svg>)\s*</div>`).FindAllStringSubmatch(page, -1)
	if wide == 0 || len(narrow) != wide {
		t.Fatalf("%d wide figures, %d narrow ones; want one of each per figure", wide, len(narrow))
	}
	viewBox := regexp.MustCompile(`viewBox="0 0 ([0-9.]+) [0-9.]+"`)
	size := regexp.MustCompile(`font-size:([0-9.]+)px`)
	for i, m := range narrow {
		vb := viewBox.FindStringSubmatch(m[1])
		if vb == nil {
			t.Fatalf("narrow figure %d has no viewBox", i)
		}
		w, _ := strconv.ParseFloat(vb[1], 64)
		for _, f := range size.FindAllStringSubmatch(m[1], -1) {
			s, _ := strconv.ParseFloat(f[1], 64)
			// The SVG is drawn at most its own width in points (4/3 px
			// each), and at the column's width when that is narrower.
			px := s * min(phoneColumn, w*4/3) / w
			if px < 9.5 {
				t.Errorf("narrow figure %d: text of %g units, %.1f px high across a %d px column", i, s, px, phoneColumn)
				break
			}
		}
	}
}

// TestPhoneGroupsTable: on a phone the table of every group (about 1150
// px wide on the demo, in a 370 px column) keeps its Group and Chainage
// columns in view while it scrolls sideways (position: sticky, with a
// background so that the columns scrolled under them do not show
// through), and its Fit column gives a poor fit's status only, with the
// explanation in the list below the table, as print does. Before, once
// scrolled to Cover the row labels were gone and a poor fit's text, three
// words a line, made its row about 1000 px tall (found in review, Chromium
// at 390 px). The rules sit in the small-screen block alone, so that the
// wide screen's layout and print's are unchanged.
func TestPhoneGroupsTable(t *testing.T) {
	d := fenwickLane(true)
	const why = "the readings miss the fitted conductor by 12 times the noise, more than the 2 times allowed"
	d.Groups[3].Problem = why
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	const head = "@media screen and (max-width: 40rem) {"
	start := strings.Index(page, head)
	if start < 0 {
		t.Fatal("no small-screen block in the page's CSS")
	}
	end := strings.Index(page[start:], "\n}\n")
	if end < 0 {
		t.Fatal("the small-screen block does not end")
	}
	narrow := page[start : start+end]
	css := page[:strings.Index(page, "</style>")]
	outside := strings.Replace(css, narrow, "", 1)
	for _, want := range []string{
		"table.groups .stick { position: sticky; left: 0; z-index: 1; background: var(--paper);",
		"table.groups .stick2 { left: 4.5rem;",
		"table.groups thead th.stick { background: var(--band); }",
		"table.groups .fit-detail { display: none; }",
		"table.groups td.fit .print-only, div.fit-why { display: revert; }",
	} {
		if !strings.Contains(narrow, want) {
			t.Errorf("the small-screen CSS lacks %q", want)
		}
	}
	for _, no := range []string{"stick", "fit-why"} {
		if strings.Contains(outside, no) {
			t.Errorf("the CSS outside the small-screen block names %q: the wide and print layouts would change", no)
		}
	}
	table := regexp.MustCompile(`(?s)<table class="groups">.*?</table>`).FindString(page)
	if table == "" {
		t.Fatal("no table of every group")
	}
	body := regexp.MustCompile(`(?s)<tbody>.*?</tbody>`).FindString(table)
	rows := strings.Count(body, "<tr><th") + strings.Count(body, `<tr class="bad"><th`)
	labels := strings.Count(table, `<th scope="row" class="stick">`)
	chainages := strings.Count(table, `<td class="num stick stick2">`)
	if rows != len(d.Groups) || labels != rows || chainages != rows {
		t.Errorf("%d rows for %d groups, %d sticky group cells, %d sticky chainage cells; want one each per row", rows, len(d.Groups), labels, chainages)
	}
	if !strings.Contains(table, `<span class="fit-detail">poor or ambiguous, used with care: `+why+`</span>`) ||
		!strings.Contains(table, `<span class="print-only">poor or ambiguous, used with care (why: below the table)</span>`) {
		t.Error("the Fit cell does not give the long text (hidden on a phone) and the status with its pointer below the table")
	}
	below := regexp.MustCompile(`(?s)<div class="print-only fit-why"><h3>Why fits failed or are poor</h3>.*?</div>`).FindString(page[strings.Index(page, table)+len(table):])
	if !strings.Contains(below, "<li>"+d.Groups[3].Key+": "+why+"</li>") {
		t.Errorf("the list below the table, shown on a phone, does not give %s's explanation: %q", d.Groups[3].Key, below)
	}
}
