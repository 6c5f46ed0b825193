package report

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/route"
)

// TestShortPlanUnchanged: the plan view of a short route, whose traverses
// show at the overview's scale (the Fenwick Lane fixture, 165 m of route
// and traverses 10 m long, with findings at three places, two of them
// sharing a label), is the same SVG, wide and for a phone, as before the
// zoomed insets of long routes came in: the golden files were written by
// the code before them. It has no insets.
func TestShortPlanUnchanged(t *testing.T) {
	d := fenwickLane(false)
	d.Findings = []Finding{
		{Kind: "shallow-cover", Severity: SeverityWarning, Position: d.Route.Stations[3].Point, Message: "fixture warning"},
		{Kind: "current-step", Severity: SeverityCaution, Position: d.Route.Stations[7].Point, Message: "fixture step"},
		{Kind: "poor-fit", Severity: SeverityInfo, Position: d.Route.Stations[3].Point, Message: "fixture note"},
		{Kind: "poor-fit", Severity: SeverityInfo, Position: d.Route.Stations[3].Point, Message: "fixture note"},
		{Kind: "dipole-anomaly", Severity: SeverityInfo, Position: d.Route.Stations[10].Point, Message: "fixture object"},
	}
	for _, small := range []bool{false, true} {
		side, name := planSide, "plan-fenwick-wide.svg"
		if small {
			side, name = smallSide, "plan-fenwick-narrow.svg"
		}
		p, err := planPlot(d, side)
		if err != nil {
			t.Fatal(err)
		}
		s, err := svg(p, side, side, "plan view of readings, fitted route and findings")
		if err != nil {
			t.Fatal(err)
		}
		golden(t, name, []byte(s))
	}
}

// longRoute builds an invented result document for a long route: the
// fictional Saltney Drove feeder, 40 A DC 0.9 m below the sensors along
// a bent route 2 km long (east 0 to 2000 m, turning at 700 and 1300 m),
// read along 350 traverses 5.7 m apart, each 12 m long and read every
// 0.5 m. It has 20 findings: 1 to 3 (warnings) at one place, 4 (a
// caution), 5 (a steady fall of the whole route's current, which has no
// place), and 6 to 20 (notes) each at a place of its own: 16 places,
// 120 m apart along the route. Readings are the field of an infinite line
// (DOMAIN.md) along each traverse's stretch of the route. It is fixture
// data, not a check value.
func longRoute(t *testing.T) *Document {
	t.Helper()
	const (
		n       = 350
		spacing = 5.7
		half    = 6.0
		depth   = 0.9
		current = 40.0
	)
	bends := [][2]float64{{0, 0}, {700, 40}, {1300, 300}, {2000, 320}}
	// at is the point and unit direction chainage c along the bends.
	at := func(c float64) ([3]float64, [3]float64) {
		for k := 1; k < len(bends); k++ {
			a, b := bends[k-1], bends[k]
			l := math.Hypot(b[0]-a[0], b[1]-a[1])
			u := [3]float64{(b[0] - a[0]) / l, (b[1] - a[1]) / l, 0}
			if c <= l || k == len(bends)-1 {
				return [3]float64{a[0] + c*u[0], a[1] + c*u[1], -depth}, u
			}
			c -= l
		}
		panic("unreachable")
	}
	d := fenwickLane(false)
	d.Title, d.Site = "Saltney Drove feeder", "Saltney Drove"
	d.Groups, d.Route, d.Findings = nil, nil, nil
	var stations []route.Station
	for i := 0; i < n; i++ {
		key := fmt.Sprintf("T%03d", i+1)
		p0, u := at(float64(i) * spacing)
		right := [3]float64{u[1], -u[0], 0}
		var pos, meas [][3]float64
		for k := -12; k <= 12; k++ {
			off := half * float64(k) / 12
			r := [3]float64{p0[0] + off*right[0], p0[1] + off*right[1], 0}
			b := lineField(p0, u, r, current)
			pos, meas = append(pos, r), append(meas, [3]float64{b[0] * 1e9, b[1] * 1e9, b[2] * 1e9})
		}
		prof, err := NewProfile(pos, meas, meas, p0, u, ComponentDC, 0)
		if err != nil {
			t.Fatal(err)
		}
		src := Source{Kind: KindLine, Point: p0, Direction: u, Current: current, CurrentSigma: 0.1, Depth: depth, DepthSigma: 0.01, Span: [2]float64{-0.2, 0.2}}
		d.Groups = append(d.Groups, Group{Key: key, Points: len(pos), Centroid: p0, RMS: 2, OK: true, Status: "converged", Sources: []Source{src}, Profile: prof})
		stations = append(stations, route.Station{Key: key, Point: p0, Dir: u, Current: current, CurrentSigma: 0.1, Depth: depth, DepthSigma: 0.01, RMS: 2, OK: true})
	}
	r, err := route.Build(stations, &route.Settings{MinCover: 0.6, CoverCode: "NEC Table 300.5", SensorHeight: 0.25})
	if err != nil {
		t.Fatal(err)
	}
	d.SetRoute(r)
	place := func(k int) [3]float64 { return d.Route.Stations[10+21*k].Point }
	near := place(7)
	d.Findings = []Finding{
		{Kind: "shallow-cover", Severity: SeverityWarning, Position: near, Message: "fixture warning"},
		{Kind: "shallow-cover", Severity: SeverityWarning, Position: [3]float64{near[0] + 2, near[1]}, Message: "fixture warning"},
		{Kind: "current-step", Severity: SeverityWarning, Position: [3]float64{near[0], near[1] - 1.5}, Message: "fixture warning"},
		{Kind: "current-anomaly", Severity: SeverityCaution, Position: place(2), Message: "fixture caution"},
		{Kind: "attenuation", Severity: SeverityInfo, Position: place(8), Message: "fixture fall along the whole route"},
	}
	for k := 0; k < 16; k++ {
		if k != 7 {
			d.Findings = append(d.Findings, Finding{Kind: "poor-fit", Severity: SeverityInfo, Position: place(k), Message: "fixture note"})
		}
	}
	return d
}

// TestLongRoutePlanInsets: on a route 2 km long whose traverses are 12 m
// long (longRoute), the plan view draws each traverse about 2 pt long, so
// the report draws the places with findings again at a larger scale:
//
//   - one inset a place, at most maxInsets (16 places: 12 insets, those
//     with the most pressing findings, and a line naming the 4 places
//     more and their findings, which the findings table lists);
//   - each inset's frame a few tens of metres across, at least three
//     traverses, holding every finding it lists and listing every finding
//     in it, each of them labelled in the inset and no other;
//   - insets in order along the route, captioned with their findings and
//     the chainage of the stations in them;
//   - the finding about the whole route's current (5) in none;
//   - on the overview, findings 1 to 3, a few metres apart, share one
//     label that lists them as a run, "1–3" (they read "1,2,3", and on
//     the reviewed route "1,2,3,5,6,11,12,13,14").
func TestLongRoutePlanInsets(t *testing.T) {
	d := longRoute(t)
	if !planZoomed(d) {
		t.Fatal("planZoomed false on a 2 km route of 12 m traverses")
	}
	trav := planTraverse(d)
	if math.Abs(trav-12) > 0.01 {
		t.Errorf("planTraverse %.3f m, want 12", trav)
	}
	ins, morePlaces, more := planInsets(d)
	if len(ins) != maxInsets || morePlaces != 4 {
		t.Fatalf("%d insets and %d places more, want %d and 4", len(ins), morePlaces, maxInsets)
	}
	// The least pressing places are left out: the notes at places 12 to
	// 15, findings 17 to 20.
	if got := numberRuns(more); got != "17–20" {
		t.Errorf("findings in no inset %q, want 17–20", got)
	}
	seen := map[int]bool{}
	for k, in := range ins {
		f := in.frame
		if f.side < 3*trav || f.side > 60 {
			t.Errorf("inset %d: frame %.1f m across, want 3 traverses (%.0f m) to 60 m", k, f.side, 3*trav)
		}
		if k > 0 && in.chainage[0] <= ins[k-1].chainage[0] {
			t.Errorf("inset %d at chainage %.0f m after inset %d at %.0f m", k, in.chainage[0], k-1, ins[k-1].chainage[0])
		}
		listed := map[int]bool{}
		for _, i := range in.findings {
			listed[i] = true
			seen[i] = true
			if p := d.Findings[i].Position; !f.has(p[0], p[1]) {
				t.Errorf("inset %d: finding %d at (%.1f, %.1f) outside its frame from (%.1f, %.1f), %.0f m", k, i+1, p[0], p[1], f.x0, f.y0, f.side)
			}
		}
		for i := range d.Findings {
			if p := d.Findings[i].Position; onPlan(&d.Findings[i]) && f.has(p[0], p[1]) && !listed[i] {
				t.Errorf("inset %d: finding %d lies in it but is not listed", k, i+1)
			}
		}
		if !in.ok {
			t.Errorf("inset %d: no chainage", k)
		}
		for _, st := range d.Route.Stations {
			if f.has(st.Point[0], st.Point[1]) && (st.Chainage < in.chainage[0] || st.Chainage > in.chainage[1]) {
				t.Errorf("inset %d: station %s at chainage %.1f m outside its range %.1f–%.1f m", k, st.Key, st.Chainage, in.chainage[0], in.chainage[1])
			}
		}
		// Its labels name exactly its findings, each at a place in it.
		var labelled []int
		for _, l := range f.layOut(d).findings {
			if !f.has(l.x, l.y) {
				t.Errorf("inset %d: label %q at (%.1f, %.1f) outside the frame", k, l.text, l.x, l.y)
			}
			labelled = append(labelled, expandRuns(t, l.text)...)
		}
		slices.Sort(labelled)
		var want []int
		for _, i := range in.findings {
			want = append(want, i+1)
		}
		if !slices.Equal(labelled, want) {
			t.Errorf("inset %d: labels name findings %v, want %v", k, labelled, want)
		}
	}
	if seen[4] {
		t.Error("the whole route's fall in current (finding 5) has an inset")
	}
	for i := range d.Findings {
		if onPlan(&d.Findings[i]) && !seen[i] && !slices.Contains(more, i) {
			t.Errorf("finding %d is neither in an inset nor named as one more", i+1)
		}
	}

	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	if got := strings.Count(page, `<figure class="inset">`); got != maxInsets {
		t.Errorf("%d inset figures in report.html, want %d", got, maxInsets)
	}
	for _, want := range []string{
		"Findings 1–3 · chainage ",
		"4 more places with findings (findings 17–20) are not drawn at a larger scale: the findings table above lists every finding with its chainage.",
		"At this scale the traverses, about 12 m long, are too short to see",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	p, err := planPlot(d, planSide)
	if err != nil {
		t.Fatal(err)
	}
	s, err := svg(p, planSide, planSide, "plan")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(s), ">1–3</text>") {
		t.Error(`the overview does not label findings 1 to 3 "1–3"`)
	}
}

// expandRuns reads a label of findings' numbers, "1–3, 5", as 1, 2, 3, 5.
func expandRuns(t *testing.T, s string) []int {
	t.Helper()
	var out []int
	for _, part := range strings.Split(s, ", ") {
		lo, hi, ok := strings.Cut(part, "–")
		if !ok {
			hi = lo
		}
		a, err1 := strconv.Atoi(lo)
		b, err2 := strconv.Atoi(hi)
		if err1 != nil || err2 != nil || b < a {
			t.Fatalf("label %q: %q is not a number or a run", s, part)
		}
		for v := a; v <= b; v++ {
			out = append(out, v)
		}
	}
	return out
}
