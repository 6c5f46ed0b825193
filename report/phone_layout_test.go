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
