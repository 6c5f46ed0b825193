package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// wickhamStaithe simulates a walk of eight traverses, 5 m apart along a
// bearing of 60°, over an 8 A cable 0.9 m below the sensors that ends
// before traverse endAt (0-based): from there on the readings hold the
// Earth's field and 2 nT of noise only, so that their fits find no current.
// The fields are the infinite line's (Biot-Savart, lineField).
func wickhamStaithe(t testing.TB, endAt int) []Fit {
	const noise = 2.0
	rng := rand.New(rand.NewPCG(60, 8))
	az := 60 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	earth := [3]float64{-150, 19200, -45100}
	var fits []Fit
	for i := range 8 {
		current := 8.0
		if i >= endAt {
			current = 0
		}
		p0 := [3]float64{5 * float64(i) * u[0], 5 * float64(i) * u[1], -0.9}
		prob := acrossLine(p0, u, current, earth, noise, rng)
		res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
		fits = append(fits, Fit{Key: fmt.Sprintf("W%d", i+1), Problem: &prob, Result: res, Err: err})
	}
	return fits
}

// wickhamDoc builds the document of wickhamStaithe's walk and checks that
// the traverses past the cable's end failed and the others did not.
func wickhamDoc(t *testing.T, endAt int) *Document {
	t.Helper()
	d, err := Build(Document{Title: "Wickham Staithe spur"}, wickhamStaithe(t, endAt), &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	for i, g := range d.Groups {
		if g.OK != (i < endAt) {
			t.Fatalf("%s: ok %v (%s); want a fit only over the cable (the first %d)", g.Key, g.OK, g.Problem, endAt)
		}
	}
	return d
}

// firstSVG returns the first inline SVG of the crew report with the given
// aria-label (the wide figure; the narrow one for a phone follows it).
func firstSVG(t *testing.T, html, label string) string {
	t.Helper()
	i := strings.Index(html, `aria-label="`+label+`"`)
	if i < 0 {
		t.Fatalf("no figure %q in the report", label)
	}
	start := strings.LastIndex(html[:i], "<svg")
	end := strings.Index(html[i:], "</svg>")
	return html[start : i+end]
}

var svgPath = regexp.MustCompile(`<path d="([^"]*)" style="([^"]*)"`)

// pathsStyled returns the vertex count of each path of svg whose style
// holds style.
func pathsStyled(svg, style string) []int {
	var out []int
	for _, m := range svgPath.FindAllStringSubmatch(svg, -1) {
		if strings.Contains(m[2], style) && !strings.Contains(m[2], "dasharray") {
			out = append(out, strings.Count(m[1], "L")+1)
		}
	}
	return out
}

func reportHTML(t *testing.T, d *Document) string {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	return buf.String()
}

// TestPlanDrawsRouteOnlyWhereFitsAreUsed: where a cable ends partway
// along a walk, the traverses past its end find no current, their fits
// failed, and route.geojson stops at the last used station. The plan view
// drew the thick "fitted route" on through every station to the end of
// the walk, and each failed fit's meaningless line as a "fitted
// conductor": a crew would take the cable to run on 15 m past its end.
// Where nothing at all was found it drew a route through all eight
// traverses and a caption promising "chainage 0 ringed". Now (checked in
// the SVG written) the route is one line through the five used stations,
// five fitted conductors are drawn (plus each line's legend sample), and
// with nothing found there is no route, no conductor and no chainage-0
// mark, and the caption says so.
func TestPlanDrawsRouteOnlyWhereFitsAreUsed(t *testing.T) {
	const fitStyle = "stroke:#1B6F8A;stroke-width:"
	for _, endAt := range []int{5, 0} {
		d := wickhamDoc(t, endAt)
		html := reportHTML(t, d)
		plan := firstSVG(t, html, "plan view of readings, fitted route and findings")
		var routeVerts []int
		legend := 0
		for _, n := range pathsStyled(plan, fitStyle+"2.2") {
			if n == 2 {
				legend++ // the legend's sample of the route line
				continue
			}
			routeVerts = append(routeVerts, n)
		}
		strokes := len(pathsStyled(plan, fitStyle+"1.2"))
		var geoRoute any
		for _, f := range geoFeatures(t, d) {
			if f.Properties["feature"] == "route" {
				geoRoute = f.Properties["stations"]
			}
		}
		cap := html[strings.Index(html, "<figcaption>Readings"):]
		cap = cap[:strings.Index(cap, "</figcaption>")]
		if endAt > 0 {
			// route.geojson is the reference the plan must agree with.
			if geoRoute != float64(endAt) {
				t.Fatalf("route.geojson's route has %v stations, want %d", geoRoute, endAt)
			}
			if len(routeVerts) != 1 || routeVerts[0] != endAt || legend != 1 {
				t.Errorf("plan: route lines of %v vertices and %d legend samples, want one line through the %d used stations", routeVerts, legend, endAt)
			}
			if strokes != endAt+1 {
				t.Errorf("plan: %d fitted-conductor strokes, want %d (one per used fit) and the legend's", strokes, endAt+1)
			}
			if !strings.Contains(cap, "No conductor is drawn at a group whose fit failed") {
				t.Errorf("plan caption does not say failed fits are not drawn: %q", cap)
			}
			continue
		}
		if geoRoute != nil {
			t.Errorf("route.geojson draws a route where nothing was found")
		}
		if len(routeVerts) != 0 || legend != 0 || strokes != 0 {
			t.Errorf("nothing found, yet the plan draws route lines of %v vertices (%d legend samples) and %d conductor strokes", routeVerts, legend, strokes)
		}
		if strings.Contains(cap, "chainage 0") || strings.Contains(cap, "route (blue)") || strings.Contains(cap, "fitted conductor") {
			t.Errorf("nothing found, yet the plan's caption names a route, a conductor or chainage 0: %q", cap)
		}
		if !strings.Contains(cap, "No conductor is drawn") {
			t.Errorf("plan caption does not say no conductor is drawn: %q", cap)
		}
	}
}

// TestFailedStationJSONMatchesGeoJSON: results.json's route station of a
// "no current found" fit carried current_a, depth_m and a depth_sigma_m of
// 0 (the fit held its depth), contrary to README ("a failed fit, whose
// station has no current_a, depth_m or their sigmas") and to
// route.geojson, which leaves a sigma the fit did not estimate out. Now
// such a station has none of them, a used station has them all with
// positive sigmas, and no station writes a sigma of 0.
func TestFailedStationJSONMatchesGeoJSON(t *testing.T) {
	d := wickhamDoc(t, 5)
	held := 0
	for _, s := range d.Route.Stations {
		if !s.Used && s.DepthSigma == 0 && s.CurrentSigma > 0 {
			held++
		}
	}
	if held == 0 {
		t.Fatal("no failed station holds its depth with a current sigma: the case is not exercised")
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Route struct {
			Stations []map[string]any `json:"stations"`
		} `json:"route"`
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	geo := map[string]map[string]any{}
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] == "conductor" {
			geo[f.Properties["group"].(string)] = f.Properties
		}
	}
	estimates := []string{"current_a", "current_sigma_a", "depth_m", "depth_sigma_m", "cover_m", "cover_sigma_m"}
	for _, st := range doc.Route.Stations {
		key, used := st["key"].(string), st["used"] == true
		for _, n := range estimates {
			v, has := st[n]
			if has != used {
				t.Errorf("results.json station %s (used %v): %s present %v", key, used, n, has)
			}
			if strings.HasSuffix(n, "sigma_a") || strings.HasSuffix(n, "sigma_m") {
				if f, _ := v.(float64); has && !(f > 0) {
					t.Errorf("results.json station %s: %s is %v", key, n, v)
				}
				if g := geo[key]; g != nil && !used {
					if _, gh := g[n]; gh && n == "depth_sigma_m" {
						t.Errorf("route.geojson gives failed station %s a %s; results.json does not", key, n)
					}
				}
			}
		}
	}
}

// TestAlongRoutePlotLabels: the route of a go-and-return pair (10 A out,
// 6 A back) follows its net current, about 4 A: the plot was titled
// "Current along the route" with the axis "current (A)", so on its own it
// said the cable carried 4 A. The legend of the stations left out said
// "poor fit", but a poor fit is used and drawn as an estimate; what is
// left out is a failed fit or an object. Checked in the SVG written.
func TestAlongRoutePlotLabels(t *testing.T) {
	pair, err := Build(Document{Title: "Wickham Staithe circuit"}, circuitFits(t, 1, 0.6, 1.2, 10, -6, 3), &BuildSettings{Noise: 3})
	if err != nil {
		t.Fatal(err)
	}
	if !pair.Route.PairNet {
		t.Fatal("the circuit's route does not follow the pair's net current")
	}
	cur := firstSVG(t, reportHTML(t, pair), "current along the route")
	for _, want := range []string{">Net current of the pair along the route<", ">net current (A)<"} {
		if !strings.Contains(cur, want) {
			t.Errorf("the pair's current plot lacks %q", want)
		}
	}
	if strings.Contains(cur, ">Current along the route<") {
		t.Error("the pair's current plot is titled as a core's current")
	}

	cable := wickhamDoc(t, 5)
	cur = firstSVG(t, reportHTML(t, cable), "current along the route")
	if !strings.Contains(cur, ">Current along the route<") || !strings.Contains(cur, ">current (A)<") {
		t.Error("control: a single cable's current plot is not titled current")
	}
	if !strings.Contains(cur, ">fit failed, no value (on the axis)<") || strings.Contains(cur, "poor fit") {
		t.Error("the legend of the stations left out does not name failed fits")
	}
}

// TestCSVTextCellsNotFormulas: group names come straight from the survey
// log. Traverses named "=1+2" and "-W8" were written as they are in
// results.csv and findings.csv, which a spreadsheet reads as formulas (3,
// and an error); a name such as =HYPERLINK(...) would run (OWASP "CSV
// Injection", CWE-1236). Now a text cell starting with = + - @ gets a
// leading apostrophe, and numbers, negative ones too, are untouched.
func TestCSVTextCellsNotFormulas(t *testing.T) {
	fits := wickhamStaithe(t, 5)
	fits[6].Key, fits[7].Key, fits[2].Key = "=1+2", "-W8", "@W3"
	d, err := Build(Document{Title: "Wickham Staithe spur"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	formula := func(s string) bool { return s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) }
	names := map[string]bool{}
	negative := 0
	for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
		for col, v := range row {
			if _, err := strconv.ParseFloat(v, 64); err == nil {
				if strings.HasPrefix(v, "-") {
					negative++
				}
				continue
			}
			if formula(v) {
				t.Errorf("results.csv %s %q starts like a formula", col, v)
			}
		}
		names[row["group"]] = true
	}
	for _, want := range []string{"'=1+2", "'-W8", "'@W3", "W1"} {
		if !names[want] {
			t.Errorf("results.csv has no group %q (groups %v)", want, names)
		}
	}
	if negative == 0 {
		t.Error("control: results.csv holds no negative number")
	}
	var buf bytes.Buffer
	if err := WriteFindingsCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(buf.Bytes(), []byte("\ufeff")))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	quoted := false
	for _, r := range recs[1:] {
		for i, v := range r {
			if _, err := strconv.ParseFloat(v, 64); err == nil {
				continue
			}
			if formula(v) {
				t.Errorf("findings.csv %s %q starts like a formula", recs[0][i], v)
			}
			quoted = quoted || strings.HasPrefix(v, "'=1+2") || strings.HasPrefix(v, "'-W8")
		}
	}
	if !quoted {
		t.Error("no finding names the failed groups first: the case is not exercised")
	}
}

// TestACProfileShowsQuadrature: an AC cable of two cores 0.3 m apart at
// 0.8 m carrying 60 A at 0° and 60 A at 120° (RMS), fitted as one line,
// misses much of the field in quadrature with the fitted line's phase.
// The profile plots showed the in-phase part alone, where the misfit is
// small, under a caption saying "a good fit runs through the markers".
// Now results.json's profile holds the quadrature part too, the report
// draws it in a figure of its own, and together the two parts account for
// the fit's whole residual (the group's rms_nt, over the complex
// residuals), which the in-phase part alone does not.
func TestACProfileShowsQuadrature(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 120))
	u := [3]float64{1, 0, 0}
	var fits []Fit
	for i := range 3 {
		var prob inverse.Problem
		for k := -16; k <= 16; k++ {
			r := [3]float64{6 * float64(i), 0.25 * float64(k), 0}
			var ph [3]complex128
			for _, c := range []struct{ y, deg float64 }{{-0.15, 0}, {0.15, 120}} {
				b := lineField([3]float64{0, c.y, -0.8}, u, r, 60)
				for a := range ph {
					ph[a] += complex(b[a]*1e9, 0) * cmplx.Rect(1, c.deg*math.Pi/180)
				}
			}
			for a := range ph {
				ph[a] += complex(rng.NormFloat64(), rng.NormFloat64())
			}
			prob.Points, prob.Phasors = append(prob.Points, r), append(prob.Phasors, ph)
		}
		prob.Sigma = 1
		res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("A%d", i+1), Problem: &prob, Result: res})
	}
	d, err := Build(Document{Title: "Wickham Staithe feeder", Signal: Signal{FrequencyHz: 50, WindowS: 0.2}}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Groups []struct {
			Key     string  `json:"key"`
			RMS     float64 `json:"rms_nt"`
			Profile struct {
				Component string       `json:"component"`
				Offset    []float64    `json:"offset_m"`
				M         [][3]float64 `json:"measured_nt"`
				P         [][3]float64 `json:"predicted_nt"`
				MQ        [][3]float64 `json:"measured_quadrature_nt"`
				PQ        [][3]float64 `json:"predicted_quadrature_nt"`
			} `json:"profile"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, g := range doc.Groups {
		pr := g.Profile
		n := len(pr.Offset)
		if pr.Component != ComponentACInPhase || n != 33 || len(pr.MQ) != n || len(pr.PQ) != n {
			t.Fatalf("%s: profile %s of %d readings, %d and %d quadrature", g.Key, pr.Component, n, len(pr.MQ), len(pr.PQ))
		}
		var in, quad float64
		for i := range n {
			for a := range 3 {
				in += (pr.M[i][a] - pr.P[i][a]) * (pr.M[i][a] - pr.P[i][a])
				quad += (pr.MQ[i][a] - pr.PQ[i][a]) * (pr.MQ[i][a] - pr.PQ[i][a])
			}
		}
		both := math.Sqrt((in + quad) / float64(3*n))
		if math.Abs(both-g.RMS) > 0.01*g.RMS {
			t.Errorf("%s: the two parts' residual %.4g nT RMS, the fit's %.4g nT", g.Key, both, g.RMS)
		}
		if !(quad > in) {
			t.Errorf("%s: quadrature residual %.3g nT² not above the in-phase %.3g: the case is not exercised", g.Key, quad, in)
		}
	}
	html := reportHTML(t, d)
	for _, g := range doc.Groups {
		if !strings.Contains(html, `aria-label="measured and fitted quadrature field, group `+g.Key+`"`) {
			continue
		}
		q := firstSVG(t, html, "measured and fitted quadrature field, group "+g.Key)
		if !strings.Contains(q, ">quadrature RMS field (nT)<") {
			t.Errorf("%s: the quadrature figure's axis is not labelled so", g.Key)
		}
		return
	}
	t.Error("the crew report draws no quadrature field")
}
