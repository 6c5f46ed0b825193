package report

import (
	"encoding/json"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// rfc7946Check checks the GeoJSON written for d against the rules of
// RFC 7946 that a map viewer relies on, and returns its features:
//
//   - section 3.3: the top level is a FeatureCollection with a "features"
//     array;
//   - section 3.2: each is a "Feature" with a "geometry" member (an
//     object here: every feature is placed) and a "properties" member (an
//     object);
//   - sections 3.1.2-3.1.5: a Point's coordinates are one position, a
//     LineString's two or more, a MultiLineString's an array of such;
//   - sections 3.1.1 and 4: a position is longitude then latitude, in
//     decimal degrees of WGS84, finite numbers (RFC 8259 section 6 has
//     no NaN or infinity), within [-180, 180] and [-90, 90].
//
// near, when the document has an origin, is how far in degrees every
// position may lie from it, which tells longitude and latitude apart: the
// fixtures' origins are far from the equator, so swapped they would be
// tens of degrees off.
func rfc7946Check(t *testing.T, d *Document, near float64) []map[string]any {
	t.Helper()
	top, feats := geoCollection(t, d)
	var typ string
	if err := json.Unmarshal(top["type"], &typ); err != nil || typ != "FeatureCollection" {
		t.Fatalf("top-level type %s", top["type"])
	}
	var raw []map[string]json.RawMessage
	if err := json.Unmarshal(top["features"], &raw); err != nil {
		t.Fatal(err)
	}
	checkPos := func(i int, p []float64) {
		if len(p) != 2 {
			t.Errorf("feature %d: position %v has %d elements", i, p, len(p))
			return
		}
		for _, v := range p {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("feature %d: position %v not finite", i, p)
			}
		}
		if o := d.Frame.Origin; o != nil {
			if p[0] < -180 || p[0] > 180 || p[1] < -90 || p[1] > 90 {
				t.Errorf("feature %d: position %v out of range", i, p)
			}
			if math.Abs(p[0]-o.Lon) > near || math.Abs(p[1]-o.Lat) > near {
				t.Errorf("feature %d: position %v is not [lon, lat] near the origin (%g, %g)", i, p, o.Lon, o.Lat)
			}
		}
	}
	var props []map[string]any
	for i, f := range raw {
		var ft string
		if err := json.Unmarshal(f["type"], &ft); err != nil || ft != "Feature" {
			t.Errorf("feature %d: type %s", i, f["type"])
		}
		var p map[string]any
		if err := json.Unmarshal(f["properties"], &p); err != nil || p == nil {
			t.Errorf("feature %d: properties %s", i, f["properties"])
		}
		props = append(props, p)
		g := feats[i].Geometry
		switch g.Type {
		case "Point":
			var pos []float64
			if err := json.Unmarshal(g.Coordinates, &pos); err != nil {
				t.Errorf("feature %d: Point coordinates %s", i, g.Coordinates)
			}
			checkPos(i, pos)
		case "LineString":
			var line [][]float64
			if err := json.Unmarshal(g.Coordinates, &line); err != nil || len(line) < 2 {
				t.Errorf("feature %d: LineString coordinates %s", i, g.Coordinates)
			}
			for _, pos := range line {
				checkPos(i, pos)
			}
		case "MultiLineString":
			var lines [][][]float64
			if err := json.Unmarshal(g.Coordinates, &lines); err != nil || len(lines) == 0 {
				t.Errorf("feature %d: MultiLineString coordinates %s", i, g.Coordinates)
			}
			for _, line := range lines {
				if len(line) < 2 {
					t.Errorf("feature %d: a MultiLineString part of %d positions", i, len(line))
				}
				for _, pos := range line {
					checkPos(i, pos)
				}
			}
		default:
			t.Errorf("feature %d: geometry %q", i, g.Type)
		}
	}
	return props
}

// TestGeoJSONCrewSeesCautionsOnEveryFeature: map viewers show a feature's
// properties and drop a FeatureCollection's foreign members (RFC 7946
// section 6.1 allows them, but nothing must read them), so the cautions,
// the run's warnings and, without an origin, the note that the
// coordinates are local metres were in route.geojson where no crew would
// see them (found in review). Now every feature carries the cautions'
// short form in "caution", the run's warnings in "run_warnings" and,
// without an origin, "coordinate_note"; the top-level members stay, with
// a "warnings" array beside "cautions". Checked on the Fenwick Lane
// fixture, with and without an origin, which also passes the RFC 7946
// checks of rfc7946Check.
func TestGeoJSONCrewSeesCautionsOnEveryFeature(t *testing.T) {
	for _, geo := range []bool{true, false} {
		d := fenwickLane(geo)
		if len(d.Warnings) == 0 {
			t.Fatal("fixture: no run warnings")
		}
		props := rfc7946Check(t, d, 0.01)
		kinds := map[string]int{}
		for i, p := range props {
			kinds[p["feature"].(string)]++
			if p["caution"] != CautionShort {
				t.Errorf("geo=%v feature %d (%v): caution %v", geo, i, p["feature"], p["caution"])
			}
			var w []string
			rw, _ := p["run_warnings"].([]any)
			for _, x := range rw {
				s, _ := x.(string)
				w = append(w, s)
			}
			if !slices.Equal(w, d.Warnings) {
				t.Errorf("geo=%v feature %d: run_warnings %q, want %q", geo, i, w, d.Warnings)
			}
			n, has := p["coordinate_note"]
			if has != !geo || has && n != GeoJSONLocalNote {
				t.Errorf("geo=%v feature %d: coordinate_note %v", geo, i, n)
			}
		}
		for _, k := range []string{"route", "conductor", "finding"} {
			if kinds[k] == 0 {
				t.Errorf("geo=%v: no %s feature checked (%v)", geo, k, kinds)
			}
		}
		top, _ := geoCollection(t, d)
		var w []string
		if err := json.Unmarshal(top["warnings"], &w); err != nil || !slices.Equal(w, d.Warnings) {
			t.Errorf("geo=%v: top-level warnings %s", geo, top["warnings"])
		}
	}
}

// TestGeoJSONRouteRunsPastUnusedStations: where the route leaves a
// station out of its profile its line breaks, and a map showed a gap
// where the conductor runs (in the demo, 10 m of an 11 kV cable at a
// magnetised object whose line fit was sound; in the Fenwick Lane
// fixture the last station, T12, beyond the object at T11, was not drawn
// at all). Now a "route past unused station" LineString joins the used
// stations either side: through the object station's fitted conductor,
// so that each vertex is a conductor Point, and straight past a failed
// fit (twoCables with no current found at G04, G09 and G10; nothing is
// drawn past G09 and G10, the last stations).
func TestGeoJSONRouteRunsPastUnusedStations(t *testing.T) {
	type bridge struct {
		from, to string
		via      []string
		object   bool
	}
	fits := twoCables(false)
	for _, i := range []int{3, 8, 9} {
		s := &fits[i].Result.Sources[0]
		s.Current, s.CurrentSigma = 0.01, 0.2
		s.DepthSigma, s.AzimuthSigma, s.OffsetSigma = 0, 0, 0
	}
	failed, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		d    *Document
		want []bridge
	}{
		{"object", fenwickLane(true), []bridge{{"T10", "T12", []string{"T10", "T11", "T12"}, true}}},
		// G09 and G10 end the route: no used station beyond them.
		{"failed", failed, []bridge{{"G03", "G05", []string{"G03", "G05"}, false}}},
	} {
		props := rfc7946Check(t, c.d, 1)
		_, feats := geoCollection(t, c.d)
		points := map[string][2]float64{} // conductor 1's Points by group
		for i, p := range props {
			if p["feature"] == "conductor" && p["conductor"] == 1.0 {
				var pos [2]float64
				if err := json.Unmarshal(feats[i].Geometry.Coordinates, &pos); err != nil {
					t.Fatal(err)
				}
				points[p["group"].(string)] = pos
			}
		}
		var got []bridge
		for i, p := range props {
			if p["feature"] != featureBridge {
				continue
			}
			b := bridge{from: p["from_group"].(string), to: p["to_group"].(string), object: p["passes_magnetised_object"] == true}
			var line [][2]float64
			if feats[i].Geometry.Type != "LineString" || json.Unmarshal(feats[i].Geometry.Coordinates, &line) != nil {
				t.Fatalf("%s: bridge geometry %s %s", c.name, feats[i].Geometry.Type, feats[i].Geometry.Coordinates)
			}
			for _, pos := range line {
				at := ""
				for k, q := range points {
					if math.Abs(q[0]-pos[0]) < 1e-9 && math.Abs(q[1]-pos[1]) < 1e-9 {
						at = k
					}
				}
				b.via = append(b.via, at)
			}
			got = append(got, b)
			if p["conductor"] != 1.0 || p["used"] != false || !strings.Contains(p["note"].(string), "taken to run on between "+b.from+" and "+b.to) {
				t.Errorf("%s: bridge properties %v", c.name, p)
			}
		}
		sort.Slice(got, func(i, j int) bool { return got[i].from < got[j].from })
		if len(got) != len(c.want) {
			t.Fatalf("%s: bridges %+v, want %+v", c.name, got, c.want)
		}
		for i := range got {
			if got[i].from != c.want[i].from || got[i].to != c.want[i].to || !slices.Equal(got[i].via, c.want[i].via) || got[i].object != c.want[i].object {
				t.Errorf("%s: bridge %+v, want %+v", c.name, got[i], c.want[i])
			}
		}
	}
}

// TestGeoJSONFailedFitIsNoConductor: a failed fit (no current found past
// a cable's end, Group.OK false) was a "conductor" Point with a current,
// depth and cover: in review one stood 14 m past a conductor's true end
// with "cover_m" 0.636, which a map labelled by cover shows as a cable
// over empty ground. Now it is a "failed fit" Point at the centre of the
// group's readings, "fit": "failed", with its problem and a note, and
// none of the fit's numbers; the sound stations keep theirs with "fit":
// "sound". (Wickham Staithe: an 8 A cable ending before traverse W6.)
func TestGeoJSONFailedFitIsNoConductor(t *testing.T) {
	d := wickhamDoc(t, 5)
	props := rfc7946Check(t, d, 0)
	_, feats := geoCollection(t, d)
	groups := map[string]*Group{}
	for i := range d.Groups {
		groups[d.Groups[i].Key] = &d.Groups[i]
	}
	seen := map[string]string{}
	for i, p := range props {
		key, _ := p["group"].(string)
		g := groups[key]
		if g == nil || p["feature"] == "finding" {
			continue
		}
		seen[key] = p["feature"].(string)
		if g.OK {
			if p["feature"] != "conductor" || p["fit"] != fitStatus(g) || p["current_a"] == nil || p["cover_m"] == nil {
				t.Errorf("%s (sound): %v", key, p)
			}
			continue
		}
		if p["feature"] != "failed fit" || p["fit"] != FitFailed || p["ok"] != false || p["problem"] != g.Problem {
			t.Errorf("%s (failed): feature %v, fit %v, ok %v, problem %v", key, p["feature"], p["fit"], p["ok"], p["problem"])
		}
		if n, _ := p["note"].(string); !strings.Contains(n, "not a conductor") {
			t.Errorf("%s: note %q", key, n)
		}
		for k := range p {
			for _, num := range []string{"current", "depth", "cover", "azimuth", "phase", "span", "sigma"} {
				if strings.Contains(k, num) {
					t.Errorf("%s: a failed fit's Point carries %s = %v", key, k, p[k])
				}
			}
		}
		var pos [2]float64
		if err := json.Unmarshal(feats[i].Geometry.Coordinates, &pos); err != nil {
			t.Fatal(err)
		}
		if math.Abs(pos[0]-g.Centroid[0]) > 1e-3 || math.Abs(pos[1]-g.Centroid[1]) > 1e-3 {
			t.Errorf("%s: failed fit at %v, want its readings' centre %v", key, pos, g.Centroid[:2])
		}
	}
	if len(seen) != 8 || seen["W5"] != "conductor" || seen["W6"] != "failed fit" || seen["W8"] != "failed fit" {
		t.Errorf("features by group: %v", seen)
	}
}

// TestGeoJSONDepthSaysItsReference: depth_m is measured from the depth
// reference, below the sensors unless a ground was given; a map labelled
// by it read "depth 0.70 m" over a cable with 0.40 m of cover (found in
// review). depth_m keeps its name and value (scripts read it), cover_m
// is depth_m less the sensor height where that is known, and depth_note
// says in words what depth_m is measured from: with the sensors' height
// (0.25 m in the Fenwick Lane fixture), without it (no cover_m), and
// below a ground given (cover_m equal to depth_m).
func TestGeoJSONDepthSaysItsReference(t *testing.T) {
	for _, c := range []struct {
		name   string
		ref    DepthReference
		cover  float64 // depth_m - cover_m; NaN for no cover
		inNote string
	}{
		{"sensor height", DepthReference{Kind: DepthBelowSensors, SensorHeight: 0.25}, 0.25, "the sensors were 0.25 m above the ground"},
		{"no height", DepthReference{Kind: DepthBelowSensors}, math.NaN(), "their height above the ground was not given"},
		{"ground", DepthReference{Kind: DepthBelowGround}, 0, "below the ground surface given"},
	} {
		d := fenwickLane(true)
		d.DepthReference = c.ref
		n := 0
		for _, p := range rfc7946Check(t, d, 0.01) {
			if p["feature"] != "conductor" && p["feature"] != "object" {
				continue
			}
			n++
			note, _ := p["depth_note"].(string)
			if !strings.HasPrefix(note, "depth_m is the depth below the") || !strings.Contains(note, c.inNote) {
				t.Errorf("%s: %v %v: depth_note %q", c.name, p["feature"], p["group"], note)
			}
			if p["depth_reference"] != c.ref.Kind {
				t.Errorf("%s: depth_reference %v", c.name, p["depth_reference"])
			}
			depth, _ := p["depth_m"].(float64)
			cover, has := p["cover_m"].(float64)
			if has == math.IsNaN(c.cover) || has && math.Abs(depth-cover-c.cover) > 1e-9 {
				t.Errorf("%s: %v depth_m %v, cover_m %v", c.name, p["group"], p["depth_m"], p["cover_m"])
			}
		}
		if n == 0 {
			t.Errorf("%s: no conductor checked", c.name)
		}
	}
}

// TestCSVFitStatusAndRealisticSpread: results.csv gave a failed fit's
// current, depth and cover as numbers with nothing beside them but ok
// false, and the realistic spread of a station's current and depth, which
// the summary states, in no column (found in review). Appended columns,
// the earlier ones unmoved: "fit" ("sound", "used with care" or "failed",
// as fitStatus) on every row, and station_scatter_current_a and
// station_scatter_depth_m on conductor 1's rows, which are the route's
// between-station scatter, recomputed here from the rows' own currents
// and depths by its definition (Route.StationScatterCurrent: 1.4826 times
// the median absolute departure of each used station from the line
// through its used neighbours, over sqrt(1 + w^2 + (1-w)^2) with w from
// the chainages, triples across the reported step left out; the scaling
// of Gasser, Sroka and Jennen-Steinmetz, Biometrika 73(3), 1986, and the
// 1.4826 of Rousseeuw and Croux, J. Am. Stat. Assoc. 88(424), 1993); route.geojson's
// route and conductor Points carry the same.
func TestCSVFitStatusAndRealisticSpread(t *testing.T) {
	// The columns before this change, in their order.
	if i := slices.Index(csvHeader, "current_first_walk_sigma_a"); i != 49 || !slices.Equal(csvHeader[50:53], []string{"fit", "station_scatter_current_a", "station_scatter_depth_m"}) {
		t.Fatalf("columns moved: current_first_walk_sigma_a at %d, then %q", i, csvHeader[i+1:])
	}
	w := wickhamDoc(t, 5)
	for _, r := range readCSV(t, w) {
		g := w.Groups[slices.IndexFunc(w.Groups, func(g Group) bool { return g.Key == r["group"] })]
		want := FitSound
		switch {
		case !g.OK:
			want = FitFailed
		case g.Problem != "":
			want = FitWithCare
		}
		if r["fit"] != want || (want == FitFailed) != (r["ok"] == "false") {
			t.Errorf("%s: fit %q ok %q, want %q", r["group"], r["fit"], r["ok"], want)
		}
	}

	d := fenwickLane(true)
	var steps [][2]float64
	for _, f := range d.Findings {
		if f.Kind == "current-step" {
			steps = append(steps, [2]float64{f.ChainageFrom, f.ChainageTo})
		}
	}
	if len(steps) == 0 {
		t.Fatal("fixture: no current step")
	}
	var cur, dep, ch []float64
	var cells [][2]string
	for _, r := range readCSV(t, d) {
		if r["conductor"] != "1" {
			continue
		}
		cells = append(cells, [2]string{r["station_scatter_current_a"], r["station_scatter_depth_m"]})
		if r["used"] != "true" {
			continue
		}
		i, _ := strconv.ParseFloat(r["current_a"], 64)
		z, _ := strconv.ParseFloat(r["depth_m"], 64)
		c, _ := strconv.ParseFloat(r["chainage_m"], 64)
		// Each row's current is signed along its own azimuth.
		cur, dep, ch = append(cur, math.Abs(i)), append(dep, z), append(ch, c)
	}
	var dI, dD []float64
	for j := 1; j+1 < len(ch); j++ {
		if slices.ContainsFunc(steps, func(s [2]float64) bool { return ch[j-1] < s[1] && ch[j+1] > s[0] }) {
			continue
		}
		w := (ch[j+1] - ch[j]) / (ch[j+1] - ch[j-1])
		k := math.Sqrt(1 + w*w + (1-w)*(1-w))
		dI = append(dI, math.Abs(cur[j]-w*cur[j-1]-(1-w)*cur[j+1])/k)
		dD = append(dD, math.Abs(dep[j]-w*dep[j-1]-(1-w)*dep[j+1])/k)
	}
	if len(dI) < MinScatterTriples {
		t.Fatalf("fixture: %d triples", len(dI))
	}
	scale := 1.4826
	wantI, wantD := scale*median(dI), scale*median(dD)
	if len(cells) == 0 {
		t.Fatal("no conductor-1 rows")
	}
	// The rows' currents and depths are written to 1e-4 (two digits past
	// their sigmas' leading ones), each off by up to 5e-5: a departure
	// from the line through two neighbours is off by up to (1 + w + 1 - w)
	// 5e-5 = 1e-4 before its scaling by at least sqrt(1.5), and the
	// scatter by up to scale times that.
	tol := scale * 1e-4
	for _, c := range cells {
		gi, err1 := strconv.ParseFloat(c[0], 64)
		gd, err2 := strconv.ParseFloat(c[1], 64)
		if err1 != nil || err2 != nil || math.Abs(gi-wantI) > tol || math.Abs(gd-wantD) > tol {
			t.Errorf("station_scatter_current_a %q, station_scatter_depth_m %q; from the rows %.6g A and %.6g m", c[0], c[1], wantI, wantD)
		}
	}
	for _, p := range rfc7946Check(t, d, 0.01) {
		if p["feature"] == "route" || p["feature"] == "conductor" && p["conductor"] == 1.0 {
			gi, _ := p["station_scatter_current_a"].(float64)
			gd, _ := p["station_scatter_depth_m"].(float64)
			if math.Abs(gi-wantI) > tol || math.Abs(gd-wantD) > tol {
				t.Errorf("route.geojson %v %v: scatter %v A, %v m", p["feature"], p["group"], p["station_scatter_current_a"], p["station_scatter_depth_m"])
			}
		}
	}
}
