package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html"
	"math"
	"math/rand/v2"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// groupsTable reads the crew report's table of every group: the heading
// of each column and, for each group, its cells, each split into its
// per-source entries.
func groupsTable(t *testing.T, page string) (heads []string, rows map[string][][]string) {
	t.Helper()
	m := regexp.MustCompile(`(?s)<table class="groups">(.*?)</table>`).FindStringSubmatch(page)
	if m == nil {
		t.Fatal("page has no table of groups")
	}
	cell := regexp.MustCompile(`(?s)<t[hd](?:\s[^>]*)?>(.*?)</t[hd]>`)
	// The head's print-only row (the caution repeated on each printed
	// page) is not a heading.
	head := regexp.MustCompile(`(?s)<tr class="print-only">.*?</tr>`).ReplaceAllString(regexp.MustCompile(`(?s)<thead>(.*?)</thead>`).FindString(m[1]), "")
	for _, c := range cell.FindAllStringSubmatch(head, -1) {
		heads = append(heads, html.UnescapeString(c[1]))
	}
	rows = map[string][][]string{}
	body := regexp.MustCompile(`(?s)<tbody>.*?</tbody>`).FindString(m[1])
	for _, tr := range regexp.MustCompile(`(?s)<tr[^>]*>(.*?)</tr>`).FindAllStringSubmatch(body, -1) {
		cs := cell.FindAllStringSubmatch(tr[1], -1)
		if len(cs) == 0 {
			continue
		}
		var row [][]string
		for _, c := range cs {
			row = append(row, strings.Split(html.UnescapeString(c[1]), "<br>"))
		}
		rows[row[0][0]] = row
	}
	return heads, rows
}

// cellPair reads "a, b" as two numbers.
func cellPair(t *testing.T, s string) (float64, float64) {
	t.Helper()
	a, b, ok := strings.Cut(s, ", ")
	x, err1 := strconv.ParseFloat(a, 64)
	y, err2 := strconv.ParseFloat(b, 64)
	if !ok || err1 != nil || err2 != nil {
		t.Fatalf("position %q is not two numbers", s)
	}
	return x, y
}

// TestGroupsTablePositions: the crew report's table of every group gives
// each conductor's position, as results.json (point_m) gives it, so that
// a crew can mark a station that no finding names: east and north in
// metres for a local survey, to the centimetre the column prints.
func TestGroupsTablePositions(t *testing.T) {
	d := fenwickLane(false)
	var js bytes.Buffer
	if err := WriteJSON(&js, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Groups []struct {
			Key     string `json:"key"`
			Sources []struct {
				Point [3]float64 `json:"point_m"`
			} `json:"sources"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	heads, rows := groupsTable(t, buf.String())
	col := slices.Index(heads, "E, N (m)")
	if col < 0 {
		t.Fatalf("table headings %q: no E, N (m) column", heads)
	}
	for _, g := range doc.Groups {
		row := rows[g.Key]
		if row == nil || len(row) <= col || len(row[col]) != len(g.Sources) {
			t.Fatalf("group %s: row %q, want %d positions", g.Key, row, len(g.Sources))
		}
		for i, s := range g.Sources {
			e, n := cellPair(t, row[col][i])
			if math.Abs(e-s.Point[0]) > 0.005+1e-9 || math.Abs(n-s.Point[1]) > 0.005+1e-9 {
				t.Errorf("group %s source %d: table %q, results.json point_m (%.4f, %.4f)", g.Key, i+1, row[col][i], s.Point[0], s.Point[1])
			}
		}
	}
}

// TestGroupsTableLatLon: when the survey is geo-referenced the table
// gives WGS84 latitude and longitude. Check values from DOMAIN.md
// ("WGS84", verified), as TestGeoJSONWGS84CheckValues uses them: about
// the origin (40.137 N, -105.236 E, 1682 m), (0, 111.066633, -0.000969) m
// ENU is +0.001 degree of latitude and (85.245398, 0.00048, -0.000569) m
// is +0.001 degree of longitude, to about 1e-8 degree, well inside the
// 1e-7 degree the column prints.
func TestGroupsTableLatLon(t *testing.T) {
	d := fenwickLane(true)
	d.Frame.Origin = &Origin{Lat: 40.137, Lon: -105.236, H: 1682}
	d.Groups[0].Sources[0].Point = [3]float64{0, 111.066633, -0.000969}
	d.Groups[1].Sources[0].Point = [3]float64{85.245398, 0.00048, -0.000569}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	heads, rows := groupsTable(t, buf.String())
	col := slices.Index(heads, "Lat, lon (°)")
	if col < 0 {
		t.Fatalf("table headings %q: no Lat, lon (°) column", heads)
	}
	for key, want := range map[string][2]float64{"T01": {40.138, -105.236}, "T02": {40.137, -105.235}} {
		row := rows[key]
		if row == nil || len(row) <= col {
			t.Fatalf("group %s: row %q", key, row)
		}
		lat, lon := cellPair(t, row[col][0])
		if math.Abs(lat-want[0]) > 6e-8 || math.Abs(lon-want[1]) > 6e-8 {
			t.Errorf("group %s: table %q, want lat, lon %v", key, row[col][0], want)
		}
	}
}

// planTexts are the texts drawn on an SVG figure.
func planTexts(t *testing.T, d *Document, side vg.Length) []string {
	t.Helper()
	p, err := planPlot(d, side)
	if err != nil {
		t.Fatal(err)
	}
	s, err := svg(p, side, side, "plan")
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, m := range regexp.MustCompile(`>([^<>]+)</text>`).FindAllStringSubmatch(string(s), -1) {
		out = append(out, html.UnescapeString(m[1]))
	}
	return out
}

// TestPlanNamesGroupsAndChainageZero: the plan view, wide and narrow,
// names the route's groups (the first beside the chainage-0 mark, then
// every Nth) and marks chainage 0 with its direction, named in the
// legend, so that a
// crew can tie the chainages and group names of the report to the ground.
func TestPlanNamesGroupsAndChainageZero(t *testing.T) {
	d := fenwickLane(false)
	index := map[string]int{}
	for i, s := range d.Route.Stations {
		index[s.Key] = i
	}
	for _, side := range []vg.Length{planSide, smallSide} {
		texts := planTexts(t, d, side)
		// "chainage 0" once, naming the first group where it has room.
		start := 0
		for _, s := range texts {
			if strings.HasSuffix(s, "chainage 0") {
				start++
			}
		}
		if start != 1 || !slices.Contains(texts, "chainage 0, increasing along the arrow") {
			t.Errorf("side %v: texts %q, want chainage 0 drawn once and in the legend", side, texts)
		}
		var named []int
		if slices.Contains(texts, "T01, chainage 0") {
			named = append(named, 0)
		}
		for _, s := range texts {
			if i, ok := index[s]; ok {
				named = append(named, i)
			}
		}
		if len(named) < 4 || named[0] != 0 || named[1] == 0 {
			t.Fatalf("side %v: groups named %v (station indices), want the first once and at least three more", side, named)
		}
		// Every Nth from the first, N one of labelSteps, with the last
		// station besides; a name left out where it has no room.
		step := named[1]
		if !slices.Contains(labelSteps, step) {
			t.Errorf("side %v: first step %d is not one of %v", side, step, labelSteps)
		}
		for _, i := range named {
			if i%step != 0 && i != len(d.Route.Stations)-1 {
				t.Errorf("side %v: station %d named, off the step of %d", side, i, step)
			}
		}
	}
}

// TestPlanLabelsClear: however findings crowd the route, no label of a
// group overlaps another label or any mark, and each lies inside the
// plot; "chainage 0" overlaps no finding's label or mark (fixture: the
// Fenwick Lane route with 0 to 24 findings at random along and beside it,
// at both plan sizes).
func TestPlanLabelsClear(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 2026))
	for trial := range 40 {
		d := fenwickLane(trial%2 == 1)
		d.Findings = nil
		r := d.Route.Stations
		for range rng.IntN(25) {
			s := r[rng.IntN(len(r))].Point
			d.Findings = append(d.Findings, Finding{Kind: "poor-fit", Severity: SeverityInfo, Message: "fixture",
				Position: [3]float64{s[0] + 6*rng.NormFloat64(), s[1] + 6*rng.NormFloat64(), 0}})
		}
		for _, side := range []vg.Length{planSide, smallSide} {
			p, err := planPlot(d, side)
			if err != nil {
				t.Fatal(err)
			}
			// The ranges planPlot laid its labels out on: squareUp keeps
			// their centre and widens the larger to the side shown.
			m := ((p.X.Max - p.X.Min) - 1) / 1.08
			cx, cy := (p.X.Min+p.X.Max)/2, (p.Y.Min+p.Y.Max)/2
			lay := layOutPlan(d, [2]float64{cx - m/2, cx + m/2}, [2]float64{cy - m/2, cy + m/2}, side, false)
			box := func(l markLabel) ptBox {
				x, y := l.x/lay.scale+float64(l.offset.X), l.y/lay.scale+float64(l.offset.Y)
				return ptBox{x, y, x + float64(lay.st.Width(l.text)), y + float64(lay.st.Height(l.text))}
			}
			var others []ptBox
			for _, l := range lay.findings {
				others = append(others, box(l))
			}
			for _, l := range lay.start {
				b := box(l)
				if hitsAny(b, others) || hitsAny(b, lay.marks) {
					t.Errorf("trial %d side %v: chainage 0 at %v overlaps a finding's label or a mark", trial, side, b)
				}
				others = append(others, b)
			}
			if len(lay.groups) == 0 {
				t.Errorf("trial %d side %v: no group named", trial, side)
			}
			for i, l := range lay.groups {
				b := box(l)
				if !b.within(lay.area) {
					t.Errorf("trial %d side %v: %s at %v leaves the plot %v", trial, side, l.text, b, lay.area)
				}
				if hitsAny(b, others) || hitsAny(b, lay.marks) {
					t.Errorf("trial %d side %v: %s at %v overlaps another label or a mark", trial, side, l.text, b)
				}
				for _, m := range lay.groups[:i] {
					if b.overlaps(box(m)) {
						t.Errorf("trial %d side %v: %s overlaps %s", trial, side, l.text, m.text)
					}
				}
			}
		}
	}
}

// TestChainageZeroSentence: the summary says where chainage 0 is, with
// its position in the local frame and in WGS84, and which way chainage
// runs. Check values from DOMAIN.md ("WGS84", verified): about the origin
// (40.137 N, -105.236 E, 1682 m), (0, 111.066633, -0.000969) m ENU lies at
// 40.138 N, 105.236 W. The next station, at (85.245398, 0.00048) m, lies
// at a bearing of atan2(85.245398, 0.00048 - 111.066633) = 142.5 degrees
// from north, south-east.
func TestChainageZeroSentence(t *testing.T) {
	d := fenwickLane(true)
	d.Frame.Origin = &Origin{Lat: 40.137, Lon: -105.236, H: 1682}
	d.Route.Stations[0].Point = [3]float64{0, 111.066633, -0.000969}
	d.Route.Stations[1].Point = [3]float64{85.245398, 0.00048, -0.000569}
	got := ChainageZero(d)
	bearing := math.Atan2(85.245398, 0.00048-111.066633) * 180 / math.Pi
	for _, want := range []string{
		"Chainage 0 is where the fitted conductor crosses the first traverse along the route, T01,",
		"E 0.0 m, N 111.1 m",
		"lat 40.138000° N, lon 105.236000° W",
		"towards T12",
		fmt.Sprintf("%.0f° from north (about south-east)", bearing),
		"not from the survey's pegs",
	} {
		if !strings.Contains(got, want) {
			t.Errorf("sentence %q lacks %q", got, want)
		}
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	summary := regexp.MustCompile(`(?s)<section class="summary">.*?</section>`).FindString(buf.String())
	if !strings.Contains(html.UnescapeString(summary), got) {
		t.Errorf("the summary lacks the sentence %q", got)
	}
	// Along the fixture's own route, 60 degrees east of north.
	if got := ChainageZero(fenwickLane(false)); !strings.Contains(got, "60° from north (about north-east)") || strings.Contains(got, "lat ") {
		t.Errorf("local survey: %q", got)
	}
	d.Route = nil
	if got := ChainageZero(d); got != "" {
		t.Errorf("without a route: %q, want nothing", got)
	}
}
