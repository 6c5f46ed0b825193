package report

import (
	"math/rand/v2"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
)

// TestPlanWarningsOnTop: on the plan view a warning's triangle is drawn
// after the notes' at the same place, so that it is painted over them (SVG
// 1.1 section 3.3, rendering order: elements later in the document are
// painted on top), and findings at one place share one label ("1,2")
// rather than printing their numbers over each other. The demo's shallow
// cover warning at T13 was hidden under a poor-fit note's grey triangle,
// and its "1" overprinted by "8".
func TestPlanWarningsOnTop(t *testing.T) {
	d := fenwickLane(false)
	at := d.Route.Stations[3].Point
	d.Findings = []Finding{
		{Kind: "shallow-cover", Severity: SeverityWarning, Position: at, Message: "fixture warning"},
		{Kind: "poor-fit", Severity: SeverityInfo, Position: at, Message: "fixture note"},
	}
	p, err := planPlot(d, planSide)
	if err != nil {
		t.Fatal(err)
	}
	s, err := svg(p, planSide, planSide, "plan")
	if err != nil {
		t.Fatal(err)
	}
	page := string(s)
	warn := strings.LastIndex(page, "stroke:#B3261E")
	note := strings.LastIndex(page, "stroke:#5F6B7A")
	if warn < 0 || note < 0 || warn < note {
		t.Errorf("warning triangle at %d, note's at %d in the SVG: the warning must come later", warn, note)
	}
	labels := regexp.MustCompile(`>([0-9]+(,[0-9]+)*)</text>`).FindAllStringSubmatch(page, -1)
	var found []string
	for _, l := range labels {
		if strings.Contains(l[1], ",") {
			found = append(found, l[1])
		}
	}
	if !slices.Equal(found, []string{"1,2"}) {
		t.Errorf("shared labels %v, want [1,2]", found)
	}
}

// TestFindingLabelsApart: however the findings crowd together, every
// finding's number appears in exactly one label, and no label overlaps
// another label or any finding's mark (fixture: 40 findings at random in
// a 30 m square at 0.1 m per point).
func TestFindingLabelsApart(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 2026))
	var fs []Finding
	for range 40 {
		fs = append(fs, Finding{Position: [3]float64{30 * rng.Float64(), 30 * rng.Float64(), 0}})
	}
	const scale = 0.1
	st := text.Style{Font: font.Font{Variant: "Sans", Size: vg.Points(9)}, Handler: plot.DefaultTextHandler}
	ls := findingLabels(fs, scale, st)
	seen := map[int]int{}
	type box struct{ x0, y0, x1, y1 float64 }
	var boxes []box
	for _, l := range ls {
		for _, n := range strings.Split(l.text, ",") {
			k, err := strconv.Atoi(n)
			if err != nil {
				t.Fatalf("label %q", l.text)
			}
			seen[k]++
		}
		x, y := l.x/scale+float64(l.offset.X), l.y/scale+float64(l.offset.Y)
		boxes = append(boxes, box{x, y, x + float64(st.Width(l.text)), y + float64(st.Height(l.text))})
	}
	for k := 1; k <= len(fs); k++ {
		if seen[k] != 1 {
			t.Errorf("finding %d is in %d labels, want 1", k, seen[k])
		}
	}
	over := func(a, b box) bool { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1 }
	for i, a := range boxes {
		for j := i + 1; j < len(boxes); j++ {
			if over(a, boxes[j]) {
				t.Errorf("labels %q and %q overlap", ls[i].text, ls[j].text)
			}
		}
		for k, f := range fs {
			mx, my := f.Position[0]/scale, f.Position[1]/scale
			if over(a, box{mx - markRadius, my - markRadius, mx + markRadius, my + markRadius}) {
				t.Errorf("label %q covers the mark of finding %d", ls[i].text, k+1)
			}
		}
	}
}
