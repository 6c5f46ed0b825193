package report

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestPrintedPagesCarryCaution: a printed report is split up (the page
// with the dig position goes to the excavation crew), and printed, the
// cautions stood on page 1 alone. Checked on the report's HTML:
//
//   - the page rule for print has a running footer, a bottom-left margin
//     box (CSS Paged Media Module Level 3, W3C: @page margin boxes, drawn
//     on every page) holding the title and the one-line caution, and
//     the page number;
//   - the one-line caution says what the cautions say most: not a
//     verified locate, confirm before any excavation, treat as live
//     (Cautions 1 to 3);
//   - the table of every group, which runs to many pages on a long
//     survey, repeats a caution row in its head (a table's thead repeats
//     on each printed page, CSS 2.1 section 17.2, table-header-group),
//     spanning all its columns;
//   - in print a poor fit's long explanation leaves the narrow Fit column
//     and is listed after the table (it made one row a third of a page);
//   - a title with quotes and "</style>" does not break out of the
//     style sheet.
func TestPrintedPagesCarryCaution(t *testing.T) {
	d := fenwickLane(true)
	d.Title = `Bell's "Yard" </style><b>x</b>`
	d.Groups[2].Problem = "chi-square per degree of freedom is 96.8, over the limit of 4"
	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	html := b.String()
	for _, want := range []string{"not a verified locate", "before any excavation", "live"} {
		if !strings.Contains(CautionShort, want) {
			t.Errorf("one-line caution %q does not say %q", CautionShort, want)
		}
	}
	style := html[strings.Index(html, "<style>"):strings.Index(html, "</style>")]
	if strings.Count(html, "</style>") != 1 {
		t.Fatal("the title broke out of the style sheet")
	}
	page := regexp.MustCompile(`(?s)@page\s*\{.*?@bottom-left\s*\{\s*content:\s*"([^"]*)"`).FindStringSubmatch(style)
	if page == nil {
		t.Fatal("no running footer (@page @bottom-left content) in the style sheet")
	}
	// The footer's string is CSS-escaped: undo the escapes of the
	// characters the caution and title hold.
	unesc := regexp.MustCompile(`\\([0-9a-fA-F]{1,6}) ?`).ReplaceAllStringFunc(page[1], func(s string) string {
		var r rune
		for _, c := range strings.TrimSpace(s[1:]) {
			r = r*16 + hexVal(c)
		}
		return string(r)
	})
	if !strings.Contains(unesc, CautionShort) || !strings.Contains(unesc, "Bell's") {
		t.Errorf("running footer reads %q, want the title and %q", unesc, CautionShort)
	}
	if !regexp.MustCompile(`@bottom-right\s*\{\s*content:[^;]*counter\(page\)`).MatchString(style) {
		t.Error("no page number in the running footer")
	}
	if !regexp.MustCompile(`@media print\s*\{[^@]*\.fit-detail\s*\{\s*display:\s*none`).MatchString(style) {
		t.Error("in print the fit's explanation is not taken out of the Fit column")
	}
	i := strings.Index(html, `<table class="groups">`)
	head := html[i : i+strings.Index(html[i:], "</thead>")]
	row := regexp.MustCompile(`<tr class="print-only"><th colspan="(\d+)">([^<]*)</th></tr>`).FindStringSubmatch(head)
	if row == nil {
		t.Fatal("the table of every group has no caution row in its head")
	}
	if !strings.Contains(row[2], "before any excavation") {
		t.Errorf("caution row reads %q", row[2])
	}
	if cols := strings.Count(head, "<th>") + strings.Count(head, `<th class="fit">`) + strings.Count(head, `<th class="stick`); row[1] != strconv.Itoa(cols) {
		t.Errorf("caution row spans %s columns, the table has %d", row[1], cols)
	}
	j := strings.Index(html, "Why fits failed or are poor")
	if j < 0 || !strings.Contains(html[j:], d.Groups[2].Key+": chi-square per degree of freedom is 96.8") {
		t.Error("the poor fit's explanation is not listed after the table for print")
	}
}

func hexVal(c rune) rune {
	switch {
	case c >= '0' && c <= '9':
		return c - '0'
	case c >= 'a' && c <= 'f':
		return c - 'a' + 10
	case c >= 'A' && c <= 'F':
		return c - 'A' + 10
	}
	return 0
}
