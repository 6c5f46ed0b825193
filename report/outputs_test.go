package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// readCSV writes d as CSV and reads it back as maps from column name to
// value, one per row.
func readCSV(t *testing.T, d *Document) []map[string]string {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// geoFeatures writes d as GeoJSON and returns its features.
func geoFeatures(t *testing.T, d *Document) []struct {
	ID         string
	Geometry   struct{ Type string }
	Properties map[string]any
} {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			ID         string
			Geometry   struct{ Type string }
			Properties map[string]any
		}
	}
	if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
		t.Fatal(err)
	}
	return fc.Features
}

// TestPoorGroupAgreesWithFindings: a group whose chi-square against the
// survey's noise is far above the route's limit (twoCables: G03 misfits
// with chi-square 50 per degree of freedom at the 2 nT given) is called
// poor by a finding, and every output says so: the group's problem (JSON),
// the CSV problem column, the GeoJSON property and the HTML table.
func TestPoorGroupAgreesWithFindings(t *testing.T) {
	d, err := Build(Document{Title: "Harrow Fen substation feeders"}, twoCables(true), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	poor := map[string]bool{}
	for _, f := range d.Findings {
		if f.Kind == string(route.KindPoorFit) && f.Severity != SeverityInfo && f.Conductor == 0 {
			for _, k := range f.Groups {
				poor[k] = true
			}
		}
	}
	if !poor["G03"] {
		t.Fatalf("the fixture's misfit G03 is not called poor: %+v", d.Findings)
	}
	for _, g := range d.Groups {
		if poor[g.Key] != (g.Problem != "") {
			t.Errorf("%s: called poor by a finding %v, but problem %q", g.Key, poor[g.Key], g.Problem)
		}
		if g.ReferenceNoise != 2 || g.Noise != 2 || math.Abs(g.ReferenceChi2-g.Chi2) > 1e-9*g.Chi2 {
			t.Errorf("%s: noise %g, reference noise %g, reference chi2 %g against chi2 %g; want 2, 2 and equal (the noise was given)",
				g.Key, g.Noise, g.ReferenceNoise, g.ReferenceChi2, g.Chi2)
		}
	}
	// Its reduced chi-square is 2900/58 = 50; the misfit in units of the
	// noise is its square root, 7.07, against sqrt(4) = 2.
	g := d.Groups[2]
	if g.Key != "G03" || !g.OK || !strings.Contains(g.Problem, "by 7.07 times the survey's reference noise of 2 nT, more than the 2 times allowed") ||
		!strings.Contains(g.Problem, "(reduced chi-square 50, limit 4)") {
		t.Errorf("%s: ok %v, problem %q; want ok (it converged) with the chi-square reason", g.Key, g.OK, g.Problem)
	}
	for _, row := range readCSV(t, d) {
		if row["group"] == "G03" && (row["problem"] != g.Problem || row["ok"] != "true" || row["reference_chi2"] != "2900" || row["dof"] != "58") {
			t.Errorf("CSV row of G03: problem %q ok %s reference_chi2 %s dof %s", row["problem"], row["ok"], row["reference_chi2"], row["dof"])
		}
	}
	var seen bool
	for _, f := range geoFeatures(t, d) {
		if f.Properties["group"] == "G03" {
			seen = true
			if f.Properties["problem"] != g.Problem {
				t.Errorf("GeoJSON feature of G03 has problem %v", f.Properties["problem"])
			}
		}
	}
	if !seen {
		t.Error("no GeoJSON feature for G03")
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), `<tr class="bad"><th scope="row" class="stick">G03</th>`) || !strings.Contains(buf.String(), "poor or ambiguous, used with care: the readings miss the fitted conductors by 7.07 times") {
		t.Error("the HTML table does not show G03 as a poor fit")
	}
	if !strings.Contains(buf.String(), "fitted in 10 of 10 groups, 9 of them soundly") {
		t.Error("the HTML headline does not count the poor fit out of the sound ones")
	}
}

// TestReferenceChi2Estimated: with the noise estimated from each fit's
// residuals, a fit's own chi-square equals its degrees of freedom; the
// group carries the chi-square against the median noise of the groups,
// Chi2 (sigma_own / sigma_ref)^2.
func TestReferenceChi2Estimated(t *testing.T) {
	fits := twoCables(false)
	for i := range fits {
		r := *fits[i].Result
		r.Sigma, r.Chi2 = 2, float64(r.DOF)
		if i == 4 {
			r.Sigma = 20 // ten times the others' noise
		}
		fits[i].Result = &r
	}
	d, err := Build(Document{}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range d.Groups {
		want := float64(g.DOF)
		if g.Key == "G05" {
			want *= 100
		}
		if g.ReferenceNoise != 2 || math.Abs(g.ReferenceChi2-want) > 1e-9*want {
			t.Errorf("%s: reference noise %g nT, reference chi2 %g; want 2 nT, %g", g.Key, g.ReferenceNoise, g.ReferenceChi2, want)
		}
		if (g.Key == "G05") != (g.Problem != "") {
			t.Errorf("%s: problem %q", g.Key, g.Problem)
		}
	}
}

// TestStationScatter checks the between-station scatter on stations with
// a known answer: currents alternating 10.0 and 10.3 A, depths 1.00 and
// 1.02 m, 5 m apart, so every station departs from the line through its
// neighbours by 0.3 A and 0.02 m, and the scatter is 1.4826 * 0.3 /
// sqrt(1.5) A and 1.4826 * 0.02 / sqrt(1.5) m (the departure's standard
// deviation at even spacing is sqrt(1 + 1/4 + 1/4) station sigmas,
// Gasser, Sroka & Jennen-Steinmetz, Biometrika 73(3), 1986; 1.4826 the
// normal-consistent MAD of Rousseeuw & Croux, 1993). A current step (+5 A
// between the 6th and 7th station) and a station not used (wild values)
// must not enter it; the triples across the gap it leaves are unevenly
// spaced.
func TestStationScatter(t *testing.T) {
	var r Route
	for i := range 12 {
		s := Station{Key: strconv.Itoa(i), Chainage: 5 * float64(i), Current: 10, Depth: 1, Used: true}
		if i%2 == 1 {
			s.Current, s.Depth = 10.3, 1.02
		}
		if i >= 6 {
			s.Current += 5
		}
		if i == 9 {
			s.Current, s.Depth, s.Used = 80, 4, false
		}
		r.Stations = append(r.Stations, s)
	}
	// Triples: 0-1-2 ... 3-4-5, (4-5-6 and 5-6-7 straddle the step),
	// 6-7-8, and across unused 9: 7-8-10 (35, 40, 50 m: 8 departs by
	// -0.2 A from 2/3 of 7's 15.3 and 1/3 of 10's 15.0, scaled by
	// sqrt(1 + 4/9 + 1/9)) and 8-10-11 likewise.
	r.setScatter([][2]float64{{25, 30}}, nil)
	if r.StationScatterCurrent == nil || r.StationScatterDepth == nil {
		t.Fatal("no scatter")
	}
	if r.StationScatterTriples != 7 {
		t.Errorf("%d triples, want 7", r.StationScatterTriples)
	}
	// Median of five 0.3/sqrt(1.5) = 0.245 A departures and two
	// 0.2/sqrt(14/9) = 0.160 A ones: 0.245 A.
	wantI, wantD := 1.4826*0.3/math.Sqrt(1.5), 1.4826*0.02/math.Sqrt(1.5)
	if math.Abs(*r.StationScatterCurrent-wantI) > 1e-4*wantI || math.Abs(*r.StationScatterDepth-wantD) > 1e-4*wantD {
		t.Errorf("scatter %.6f A, %.6f m; want %.6f A, %.6f m", *r.StationScatterCurrent, *r.StationScatterDepth, wantI, wantD)
	}
	// Too few stations: no scatter; just enough: the scatter. Stations
	// 0-5 alternate and are 5 m apart (the step is at 6).
	r.Stations = r.Stations[:MinScatterStations-1]
	r.setScatter(nil, nil)
	if r.StationScatterCurrent != nil || r.StationScatterTriples != 0 {
		t.Errorf("scatter from %d stations, want none below %d", MinScatterStations-1, MinScatterStations)
	}
	r.Stations = append(r.Stations, Station{Key: "last", Chainage: 5 * float64(len(r.Stations)), Current: 10.3, Depth: 1.02, Used: true})
	r.setScatter(nil, nil)
	if r.StationScatterCurrent == nil || r.StationScatterTriples != MinScatterStations-2 {
		t.Errorf("scatter %v from %d triples, want one from %d", r.StationScatterCurrent, r.StationScatterTriples, MinScatterStations-2)
	}
}

// TestStationScatterBesideStep: nine stations 10 m apart whose currents
// alternate 0.00 and 0.03 A, then, from the sixth, 3.00 and 3.03 A, with a
// step bracketed by the third and sixth stations (20-50 m), as
// open/pair-beside-cable-loss.toml's go-and-return pair gives it: the
// triples either side of the step are three, T1-T3 and T6-T8, T7-T9, fewer
// than the four an unbroken run of six stations gives. Before, such a
// route gave no spread; each side's departures are valid, and the route
// has as many stations as asked (MinScatterStations), so they are pooled:
// 1.4826 * 0.03 / sqrt(1.5) A.
func TestStationScatterBesideStep(t *testing.T) {
	var r Route
	for i := range 9 {
		c := 0.03 * float64(i%2)
		if i >= 5 {
			c += 3
		}
		r.Stations = append(r.Stations, Station{Key: strconv.Itoa(i + 1), Chainage: 10 * float64(i), Current: c, Depth: 0.8, Used: true})
	}
	r.setScatter([][2]float64{{20, 50}}, nil)
	want := madScale * 0.03 / math.Sqrt(1.5)
	if r.StationScatterTriples != 3 || r.StationScatterCurrent == nil || math.Abs(*r.StationScatterCurrent-want) > 1e-9 {
		t.Errorf("spread %s, want %.6f A from 3 triples", scatterText(&r), want)
	}
}

// TestStationScatterBuild: along the Kestrel Moor fixture (eight stations,
// one current step) the scatter comes from the four triples that do not
// straddle the step, and it is in the document's JSON, with the note that
// the fits' sigmas count the reading noise only.
func TestStationScatterBuild(t *testing.T) {
	d, err := Build(Document{}, kestrelMoor(t), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	r := d.Route
	if r.StationScatterTriples != 4 || r.StationScatterCurrent == nil || *r.StationScatterCurrent > 0.2 {
		t.Fatalf("scatter %v A from %d triples; want four triples and well under the 0.6 A step", r.StationScatterCurrent, r.StationScatterTriples)
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"station_scatter_current_a": `, `"station_scatter_depth_m": `, `"uncertainty_note": "Every fitted sigma`, "reading noise only"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("results.json lacks %q", want)
		}
	}
	buf.Reset()
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Realistic spread: stations scatter about the line through their neighbours by", "count the reading noise only"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("the HTML lacks %q", want)
		}
	}
}

// TestCoverSigmaEverywhere: with a ground sigma, every output carries the
// cover sigma, the depth sigma and the ground sigma in quadrature.
func TestCoverSigmaEverywhere(t *testing.T) {
	fits := kestrelMoor(t)
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, GroundSigma: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range d.Route.Stations {
		if s.CoverSigma == nil || math.Abs(*s.CoverSigma-math.Hypot(s.DepthSigma, 0.02)) > 1e-15 {
			t.Fatalf("%s: cover sigma %v, want hypot(%g, 0.02)", s.Key, s.CoverSigma, s.DepthSigma)
		}
	}
	for _, row := range readCSV(t, d) {
		ds, _ := strconv.ParseFloat(row["depth_sigma_m"], 64)
		cs, err := strconv.ParseFloat(row["cover_sigma_m"], 64)
		if err != nil || math.Abs(cs-math.Hypot(ds, 0.02)) > 1e-6 {
			t.Errorf("CSV %s: cover_sigma_m %q, depth_sigma_m %g", row["group"], row["cover_sigma_m"], ds)
		}
	}
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] == "conductor" {
			if cs, ok := f.Properties["cover_sigma_m"].(float64); !ok || cs < 0.02 {
				t.Errorf("GeoJSON %v: cover_sigma_m %v", f.Properties["group"], f.Properties["cover_sigma_m"])
			}
		}
	}
}

// TestStationPhaseSigma: AC stations carry their phase sigma.
func TestStationPhaseSigma(t *testing.T) {
	fits := kestrelMoor(t)
	for i := range fits {
		r := *fits[i].Result
		r.Sources = append(r.Sources[:0:0], r.Sources...)
		r.Sources[0].Phase, r.Sources[0].PhaseSigma = 12, 0.25
		// AC residuals in place of the DC ones, which Build refuses beside
		// AC problems.
		r.ResidualPhasors, r.PredictedPhasors = make([][3]complex128, len(r.Residuals)), make([][3]complex128, len(r.Residuals))
		r.Residuals, r.Predicted = nil, nil
		fits[i].Result = &r
	}
	// Mark the run as AC without refitting: the stations only need AC.
	for i := range fits {
		p := *fits[i].Problem
		p.Phasors = make([][3]complex128, len(p.Points))
		fits[i].Problem = &p
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, ProfileMax: -1})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range d.Route.Stations {
		if s.PhaseSigma == nil || *s.PhaseSigma != 0.25 {
			t.Errorf("%s: phase sigma %v, want 0.25", s.Key, s.PhaseSigma)
		}
	}
}

// TestSmallSigmasKept: a nonzero sigma is never written as zero, and the
// value keeps the digits its sigma resolves.
func TestSmallSigmasKept(t *testing.T) {
	d := fenwickLane(true)
	s := &d.Groups[0].Sources[0]
	s.Current, s.CurrentSigma = 41.904574, 0.0046
	s.Depth, s.DepthSigma = 1.1601234, 9.4e-5
	s.AzimuthSigma, s.OffsetSigma, s.DipSigma = 3e-4, 2e-5, 1e-6
	row := readCSV(t, d)[0]
	for col, want := range map[string]float64{
		"current_sigma_a": 0.0046, "depth_sigma_m": 9.4e-5, "azimuth_sigma_deg": 3e-4,
		"offset_sigma_m": 2e-5, "dip_sigma_deg": 1e-6,
	} {
		got, err := strconv.ParseFloat(row[col], 64)
		if err != nil || got != want {
			t.Errorf("CSV %s = %q, want %g", col, row[col], want)
		}
	}
	if row["current_a"] != "41.90457" || row["depth_m"] != "1.1601234" {
		t.Errorf("CSV current %s A, depth %s m; want 41.90457 and 1.1601234", row["current_a"], row["depth_m"])
	}
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] == "conductor" && f.Properties["group"] == "T01" {
			if f.Properties["depth_sigma_m"] != 9.4e-5 || f.Properties["current_sigma_a"] != 0.0046 {
				t.Errorf("GeoJSON sigmas %v m, %v A", f.Properties["depth_sigma_m"], f.Properties["current_sigma_a"])
			}
		}
	}
}

// TestPM: a value and its sigma are shown to the same decimal place, the
// sigma to two significant digits, in plain decimals.
func TestPM(t *testing.T) {
	for _, tc := range []struct {
		v, s float64
		want string
	}{
		{41.904574, 0.0046, "41.9046 ± 0.0046"},
		{-25.01842, 0.0043, "-25.0184 ± 0.0043"},
		{87.08412, 0.0068, "87.0841 ± 0.0068"},
		{1.80123, 0.0026, "1.8012 ± 0.0026"},
		// A sigma under a millimetre or a milliampere keeps its digits
		// (never "<0.001" for a sigma that is known): the reviewed
		// Kestrel Moor trend, -0.000332 ± 0.0000133 A/m in the JSON, is a
		// 25-sigma decay that "0.000 ± <0.001" hid.
		{1.1601234, 9.4e-5, "1.160123 ± 0.000094"},
		{-0.000332, 0.0000133, "-0.000332 ± 0.000013"},
		{0.0200412, 0.00031, "0.02004 ± 0.00031"},
		// JCGM 100:2008 (GUM) section 7.2.2 and NIST TN 1297 section 7
		// write their example mass, 100.02147 g with a combined standard
		// uncertainty of 0.35 mg, as (100.02147 ± 0.00035) g.
		{100.02147, 0.00035, "100.02147 ± 0.00035"},
		// A sigma that rounds up to the next power of ten keeps two
		// significant digits, not three (0.0996 -> 0.10, not 0.100).
		{2.3456, 0.0996, "2.35 ± 0.10"},
		// Under 1e-9 of the unit the sigma takes an exponent, still known.
		{1.16953, 1.2e-12, "1.169530000 ± 1.2e-12"},
		{112.71, 0.18, "112.71 ± 0.18"},
		{1234.4, 56, "1234 ± 56"},
		{0.403, 0.0200, "0.403 ± 0.020"},
		{5.5, 0, "5.50"},
	} {
		if got := pm(tc.v, tc.s); got != tc.want {
			t.Errorf("pm(%g, %g) = %q, want %q", tc.v, tc.s, got, tc.want)
		}
	}
	for _, tc := range []struct {
		s    float64
		want string
	}{{0.0076, "0.0076"}, {9.4e-5, "0.000094"}, {0.018, "0.018"}, {2.5e-4, "0.00025"}, {0.03, "0.030"}} {
		if got := sigText(tc.s); got != tc.want {
			t.Errorf("sigText(%g) = %q, want %q", tc.s, got, tc.want)
		}
	}
	if got := num(9.4e-5); strings.Contains(got, "e") {
		t.Errorf("num(9.4e-5) = %q: an exponent in a crew table", got)
	}
}

// TestHTMLNoExponents: the crew report's text (outside the plots) has no
// number in scientific notation and no sigma shown as zero.
func TestHTMLNoExponents(t *testing.T) {
	d := fenwickLane(true)
	for i := range d.Groups {
		s := &d.Groups[i].Sources[0]
		s.CurrentSigma, s.DepthSigma, s.AzimuthSigma = 0.0046, 9.4e-5, 0.004
	}
	for i := range d.Route.Stations {
		d.Route.Stations[i].CurrentSigma, d.Route.Stations[i].DepthSigma = 0.0046, 9.4e-5
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	// Plots and checksums (<code>, hexadecimal) aside.
	text := regexp.MustCompile(`(?s)<svg.*?</svg>|<code>.*?</code>`).ReplaceAllString(buf.String(), "")
	if m := regexp.MustCompile(`\d[eE][-+]?\d`).FindString(text); m != "" {
		t.Errorf("the report shows a number in scientific notation (%q)", m)
	}
	if m := regexp.MustCompile(`± 0\.0+(\D|$)`).FindString(text); m != "" {
		t.Errorf("the report shows a sigma rounded to zero (%q)", m)
	}
}

// TestCSVConductorColumn: each CSV row names the conductor along the route
// its source is, as the JSON does (Source.Conductor) and the HTML's
// findings ("conductor 2") do.
func TestCSVConductorColumn(t *testing.T) {
	d, err := Build(Document{}, twoCables(true), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, d)
	if len(rows) != 20 {
		t.Fatalf("%d rows, want 20", len(rows))
	}
	for _, r := range rows {
		want := map[string]string{"1": "1", "2": "2"}[r["source"]]
		if r["conductor"] != want {
			t.Errorf("%s source %s: conductor %q, want %q", r["group"], r["source"], r["conductor"], want)
		}
	}
	// A source in no track has an empty conductor.
	d, err = Build(Document{}, twoCables(true), &BuildSettings{Noise: 2, TrackMinStations: -1})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range readCSV(t, d) {
		if r["source"] == "2" && r["conductor"] != "" {
			t.Errorf("%s source 2 in no track: conductor %q", r["group"], r["conductor"])
		}
	}
}

// TestGeoJSONStationsArePoints: each conductor at a station is a Point at
// the fitted conductor (README: stations as Points), whatever its span,
// with its bearing and span as properties.
func TestGeoJSONStationsArePoints(t *testing.T) {
	n := 0
	for _, f := range geoFeatures(t, fenwickLane(true)) {
		if f.Properties["feature"] != "conductor" {
			continue
		}
		n++
		if f.Geometry.Type != "Point" || f.Properties["azimuth_deg"] == nil || f.Properties["span_m"] == nil {
			t.Errorf("conductor feature %v: %s with azimuth %v, span %v; want a Point with both",
				f.Properties["group"], f.Geometry.Type, f.Properties["azimuth_deg"], f.Properties["span_m"])
		}
	}
	if n != 12 {
		t.Errorf("%d conductor features, want 12", n)
	}
}

// TestSeverityBadgesPrint: browsers print without backgrounds unless told
// otherwise (CSS Color Adjustment Module Level 1, print-color-adjust), so
// the badges ask for exact colours and, in print, read as dark text in a
// border without relying on the background.
func TestSeverityBadgesPrint(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteHTML(&buf, fenwickLane(false)); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{"print-color-adjust: exact", "-webkit-print-color-adjust: exact"} {
		if !strings.Contains(page, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
	print := page[strings.Index(page, "@media print"):]
	if !regexp.MustCompile(`\.sev[^{]*\{[^}]*color: var\(--ink\)[^}]*background: none[^}]*border:`).MatchString(print) {
		t.Error("the print style does not give the badges dark text and a border without background")
	}
}

// TestHTMLPolish covers the crew report's small defects: n/a with a reason
// where the ground is unknown or a file holds no readings, a readable depth
// caption, labelled latitude and longitude, the site not repeated when it
// is the title, and plot legends clear of the data.
func TestHTMLPolish(t *testing.T) {
	d := fenwickLane(true)
	d.DepthReference.SensorHeight = 0
	d.MinCover = nil
	d.Site = d.Title
	d.Inputs = append(d.Inputs, Input{Role: "calibration", Path: "rover-cal.json"})
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{
		`<td class="num">n/a</td>`,
		"*Cover n/a: the sensors' height above the ground was not given",
		"Readings n/a: the file holds no readings",
		"Fitted depth below the sensors per group with ± two standard deviations: not the cover",
		"lat 52.47", "° N, lon 0.16", "° E",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
	if strings.Contains(page, "not computed, with ±") {
		t.Error("the depth caption is garbled")
	}
	// <title>, <h1> and the printed pages' running footer (a CSS
	// string; this title has nothing CSS escapes).
	if n := strings.Count(page, d.Title); n != 3 {
		t.Errorf("the title appears %d times, want 3 (title, heading and print footer)", n)
	}
	if got := latLon(54.312511, -2.084482, 6); got != "lat 54.312511° N, lon 2.084482° W" {
		t.Errorf("latLon = %q", got)
	}
}

// TestPlotLegendBelow: the legend is drawn below the plot area, so that it
// covers no data, ground or minimum-cover line: every legend label's
// height on the canvas is below the bottom of the plot's background.
func TestPlotLegendBelow(t *testing.T) {
	d := fenwickLane(false)
	_, _, dep, err := alongPlots(d, d.Route, 0)
	if err != nil {
		t.Fatal(err)
	}
	s := string(dep)
	// vgsvg draws with y up: the first white rectangle is the plot's
	// background, "M0,Y0L..." with Y0 its bottom.
	m := regexp.MustCompile(`<path d="M0,([0-9.]+)L[^"]*" style="fill:#FFFFFF"`).FindStringSubmatch(s)
	if m == nil {
		t.Fatal("no plot background")
	}
	bottom, _ := strconv.ParseFloat(m[1], 64)
	for _, label := range []string{"ground", "minimum cover 0.60 m (NEC Table 300.5)"} {
		m := regexp.MustCompile(`<text x="[0-9.]+" y="(-?[0-9.]+)" transform="scale\(1, -1\)"\s+style="[^"]*">` + regexp.QuoteMeta(label) + `</text>`).FindStringSubmatch(s)
		if m == nil {
			t.Errorf("no legend label %q", label)
			continue
		}
		y, _ := strconv.ParseFloat(m[1], 64)
		if -y >= bottom {
			t.Errorf("legend label %q at height %.1f, inside the plot (its bottom is at %.1f)", label, -y, bottom)
		}
	}
}

// TestWriteFindingsCSV: one row per finding, in the document's order, with
// the conductor (1 for the route's, empty for a further line no track
// follows), the numbers as text (four significant digits without a sigma)
// and the message; the groups joined by "; "; parseable by a CSV reader (encoding/csv) with the
// header's column count once the UTF-8 byte order mark, EF BB BF (the
// Unicode Standard, section 23.8; RFC 3629 section 6), is taken off the
// front.
func TestWriteFindingsCSV(t *testing.T) {
	d := fenwickLane(true)
	d.Findings = []Finding{
		{Kind: "current-step", Severity: "warning", ChainageFrom: 90, ChainageTo: 105, Groups: []string{"Line 7", "Line 8"},
			Position: [3]float64{94.437, 53.75, -1.1}, Message: "current falls, here, by \"7.27\" A",
			Values: []Value{{Name: "step", Value: -7.271, Sigma: 0.918, Unit: "A"}, {Name: "minimum cover", Value: 0.6, Unit: "m"},
				{Name: "between-station scatter", Value: 0.0295944, Unit: "A"}, {Name: "azimuth", Value: 123.456, Unit: "deg"}}},
		{Kind: "shallow-cover", Severity: "warning", Lone: true, ChainageFrom: 60, ChainageTo: 60, Groups: []string{"T05"}, Message: "a further line source"},
		{Kind: "shallow-cover", Severity: "caution", Conductor: 2, ChainageFrom: 45, ChainageTo: 45, Message: "cover"},
	}
	if len(d.Conductors) == 0 || d.Conductors[0].Number != 2 {
		d.Findings = d.Findings[:2]
	}
	var buf bytes.Buffer
	if err := WriteFindingsCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	if bytes.HasPrefix(buf.Bytes(), []byte{0xEF, 0xBB, 0xBF}) {
		buf.Next(3)
	} else {
		t.Errorf("findings CSV does not start with the UTF-8 byte order mark: % x", buf.Bytes()[:min(8, buf.Len())])
	}
	rows, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(d.Findings)+len(Cautions)+len(d.Warnings)+1 {
		t.Fatalf("%d rows, want the header, %d cautions, %d run warnings and %d", len(rows), len(Cautions), len(d.Warnings), len(d.Findings))
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	// The cautions and the run's warnings come first
	// (TestCautionsInEveryCrewFile), then the findings.
	rows = append(rows[:1], rows[1+len(Cautions)+len(d.Warnings):]...)
	r := rows[1]
	for name, want := range map[string]string{
		"severity": "warning", "kind": "current-step", "conductor": "1", "chainage_from_m": "90.000",
		// Joined by "; " as values is: group names may hold spaces, and
		// "Line 7 Line 8" could not be split back (found in review).
		"groups": "Line 7; Line 8", "east_m": "94.437",
		"values":  "step = -7.27 ± 0.92 A; minimum cover = 0.6 m; between-station scatter = 0.02959 A; azimuth = 123.5 deg",
		"message": "current falls, here, by \"7.27\" A",
	} {
		if got := r[col[name]]; got != want {
			t.Errorf("%s = %q, want %q", name, got, want)
		}
	}
	if r[col["lon_deg"]] == "" || r[col["lat_deg"]] == "" {
		t.Error("a geo-referenced document's finding has no longitude and latitude")
	}
	if rows[0][0] != "severity" {
		t.Errorf("first header %q", rows[0][0])
	}
	if got := rows[2][col["conductor"]]; got != "" || rows[2][col["chainage_from_m"]] != "60.000" {
		t.Errorf("lone line's finding: conductor %q, want empty (it is not conductor 1)", got)
	}
	if len(rows) > 3 && rows[3][col["conductor"]] != "2" {
		t.Errorf("further conductor's finding: conductor %q", rows[3][col["conductor"]])
	}
}

// TestLoneLineFinding: a shallow further line seen at one group of a
// single-cable route (a service crossing it: 0.6 m below sensors carried
// 0.3 m above the ground, so 0.3 m of cover against a 0.6 m minimum) is
// reported as a finding marked Lone, with no conductor number: its
// findings.csv row leaves the conductor empty, its GeoJSON feature says
// lone_line, and the crew report says it is not conductor 1. Cover is
// depth below the sensors less their height (package documentation).
func TestLoneLineFinding(t *testing.T) {
	fits := twoCables(false)
	g := &fits[4]
	main := g.Result.Sources[0]
	right := [3]float64{main.Dir[1], -main.Dir[0], 0}
	c := main.Point
	lone := inverse.SourceEstimate{
		Kind:  "line",
		Point: [3]float64{c[0] + 3*right[0], c[1] + 3*right[1], -0.6}, Dir: [3]float64{right[0], right[1], 0},
		Current: 15, CurrentSigma: 0.2, Depth: 0.6, DepthSigma: 0.02,
		Offset: 3, OffsetSigma: 0.02, Azimuth: 120, AzimuthSigma: 0.5,
		Identifiable: inverse.Identifiable{Current: true, Depth: true, Offset: true, Azimuth: true, Dip: true},
	}
	g.Result.Sources = append(g.Result.Sources, lone)
	d, err := Build(Document{Title: "Harrow Fen substation feeders"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	var got []Finding
	for _, f := range d.Findings {
		if f.Kind == "shallow-cover" {
			got = append(got, f)
		}
	}
	if len(d.Conductors) != 0 || len(got) != 1 {
		for _, f := range d.Findings {
			t.Log(f.Kind, f.Message)
		}
		t.Fatalf("%d tracks and %d cover findings, want none and one", len(d.Conductors), len(got))
	}
	f := got[0]
	if !f.Lone || f.Conductor != 0 || !strings.Contains(f.Message, "not followed along the route") {
		t.Fatalf("cover finding lone %v, conductor %d: %s", f.Lone, f.Conductor, f.Message)
	}
	var buf bytes.Buffer
	if err := WriteFindingsCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(buf.Bytes(), []byte(utf8BOM)))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range rows[1:] {
		if r[1] == "shallow-cover" {
			found = true
			if r[2] != "" {
				t.Errorf("lone line's findings.csv conductor %q, want empty", r[2])
			}
		}
	}
	if !found {
		t.Error("findings.csv has no shallow-cover row")
	}
	found = false
	for _, ft := range geoFeatures(t, d) {
		if ft.Properties["kind"] == "shallow-cover" {
			found = true
			if ft.Properties["lone_line"] != true || ft.Properties["conductor"] != nil {
				t.Errorf("lone line's GeoJSON finding: lone_line %v, conductor %v", ft.Properties["lone_line"], ft.Properties["conductor"])
			}
		}
	}
	if !found {
		t.Error("GeoJSON has no shallow-cover finding")
	}
	buf.Reset()
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "a further line that no conductor&#39;s track follows, not conductor 1") {
		t.Error("the crew report does not say the lone line's finding is not about conductor 1")
	}
}

// TestNoConductorFound: when no group's fit finds a current (each within
// currentK sigma of zero, as over ground with no conductor), the crew
// report says plainly that no conductor was found and does not say one
// was traced, and route.geojson (RFC 7946) has no route LineString and no
// sigma written as 0 (a failed fit's unestimated sigmas would read as
// exact), while staying a FeatureCollection with a Point per failed fit ("feature": "failed fit").
// With the currents restored the same route is traced, as a control; with
// G05's alone, the report says a conductor was found at one station.
func TestNoConductorFound(t *testing.T) {
	for _, keep := range []int{-1, 4, 10} { // the fit kept: none, G05's, all
		found := keep >= 0
		fits := twoCables(false)
		for i := range fits {
			if keep >= 0 && (keep == i || keep == len(fits)) {
				continue
			}
			s := &fits[i].Result.Sources[0]
			s.Current, s.CurrentSigma = 0.01, 0.2
			s.DepthSigma, s.AzimuthSigma, s.OffsetSigma = 0, 0, 0
		}
		d, err := Build(Document{Title: "Fenwick Lane cable route"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := WriteHTML(&buf, d); err != nil {
			t.Fatal(err)
		}
		html := buf.String()
		switch {
		case keep == 4:
			if !strings.Contains(html, "A conductor was found at one station only, chainage 40 m") || strings.Contains(html, "traced") {
				t.Error("the crew report does not say a conductor was found at G05 alone")
			}
		case found:
			if !strings.Contains(html, "A conductor was traced for 90 m along the route") {
				t.Error("control: the crew report does not say the conductor was traced for 90 m")
			}
		default:
			if !strings.Contains(html, "No conductor was found along the route") || strings.Contains(html, "traced") {
				i := strings.Index(html, "conductor was")
				t.Errorf("the crew report does not say plainly that no conductor was found: %q", html[max(i-20, 0):min(i+200, len(html))])
			}
		}
		routes, points, failed := 0, 0, 0
		for _, f := range geoFeatures(t, d) {
			switch f.Properties["feature"] {
			case "route":
				routes++
			case "conductor":
				points++
				if f.Geometry.Type != "Point" {
					t.Errorf("conductor feature geometry %s", f.Geometry.Type)
				}
			case "failed fit":
				// A failed fit is no conductor: its Point carries none
				// of the fit's numbers (TestGeoJSONFailedFitIsNoConductor).
				failed++
				if f.Geometry.Type != "Point" || f.Properties["fit"] != FitFailed {
					t.Errorf("failed fit feature %v: geometry %s, fit %v", f.Properties["group"], f.Geometry.Type, f.Properties["fit"])
				}
			}
			for k, v := range f.Properties {
				if strings.Contains(k, "sigma") && v == 0.0 {
					t.Errorf("%v feature %v writes %s as 0", f.Properties["feature"], f.Properties["group"], k)
				}
			}
			if f.Properties["feature"] == "conductor" && f.Properties["current_sigma_a"] == nil {
				t.Errorf("group %v: a positive current sigma is left out", f.Properties["group"])
			}
		}
		wantRoutes := 0
		if found && keep != 4 { // one used station draws no line, only its Point
			wantRoutes = 1
		}
		nFailed := 0
		for _, g := range d.Groups {
			if !g.OK {
				nFailed++
			}
		}
		if routes != wantRoutes || points != len(fits)-nFailed || failed != nFailed {
			t.Errorf("found %v: %d route, %d conductor and %d failed-fit features, want %d, %d and %d", found, routes, points, failed, wantRoutes, len(fits)-nFailed, nFailed)
		}
	}
}
