package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"undercurrent/inverse/route"
)

// GeoJSON frame markers, in the top-level "coordinate_frame" member.
const (
	GeoJSONWGS84 = "wgs84"
	GeoJSONLocal = "local-enu"
)

// WriteGeoJSON writes the route, the conductors and the findings as an
// RFC 7946 FeatureCollection.
//
// When the document has a geodetic origin, positions are converted from
// local east, north, up to WGS84 longitude and latitude (in that order, as
// RFC 7946 section 3.1.1 requires) and the top-level member
// "coordinate_frame" is "wgs84". Otherwise RFC 7946's requirement of WGS84
// cannot be met: positions are written as local [east, north] metres,
// "coordinate_frame" is "local-enu" and "coordinate_note" says so in words,
// so that nobody takes them for longitudes and latitudes. The top-level
// member "depth_reference" is the document's DepthReference, as
// results.json writes it: what every depth_m is measured from. The
// top-level member "signal" says what every current_a and phase_deg is:
// its mode ("dc" or "ac", with frequency_hz and window_s for AC, as
// results.json's signal), "current" in words (DC signed along the Point's
// azimuth_deg, or AC RMS) and, for AC, "phase_reference" (geoSignal). The
// top-level member "cautions" (a foreign member, RFC 7946 section 6.1)
// holds Cautions, and "warnings" the run's warnings (Document.Warnings),
// when there are any.
//
// Map viewers show a feature's properties and drop a FeatureCollection's
// foreign members, so every feature also carries "caution"
// (CautionShort), "run_warnings" (Document.Warnings, when there are any)
// and, without a geodetic origin, "coordinate_note" (GeoJSONLocalNote):
// in review a crew given this layer in a viewer saw no caution at all.
//
// Writing local metres as coordinates breaks RFC 7946's WGS84 rule; the
// file is written all the same, marked as above, since it is the only
// layer of the route a GIS can take in a frame of its user's choosing
// (and the command line warns when it writes one: locate's
// localGeoJSONWarning).
//
// Features, each with a "feature" property naming what it is:
//
//   - "route": a LineString through the route's used stations (when there
//     is a route; a MultiLineString whose parts a station the route did
//     not use breaks, see routeFeature), with length_m and stations; one
//     more per further conductor followed along the route
//     (Document.Conductors), with its number in "conductor" and its median
//     offset from conductor 1 in offset_m; where stations the route
//     left out break or interrupt the line, "not_used" lists their group
//     keys and "gap_note" says why in words; each route and the Points of
//     its conductor carry its realistic spread, station_scatter_current_a
//     and station_scatter_depth_m (Route.StationScatterCurrent), when it
//     has one;
//   - "route past unused station": the stretch of a conductor's route
//     across stations it left out between two used ones (routeBridges),
//     so that the line does not vanish where the conductor runs;
//   - "unsurveyed gap": a stretch of a conductor's route with no station,
//     far longer than the route's station spacing (RouteGaps), drawn
//     apart from the route's line, which breaks there ("unsurveyed" and
//     "unsurveyed_note" on the route say so), with its bracketing
//     stations, chainages, length and a note (routeGapFeatures): the
//     conductor's position, current and cover there are not known;
//   - "failed fit": one Point per group whose fit failed (Group.OK
//     false), at the centre of its readings, with "fit": "failed" and none
//     of the fit's numbers (failedFitFeature); its sources get no
//     "conductor" Point;
//   - "conductor": one Point per line source (of a fit that did not
//     fail), at the point on the
//     conductor nearest the group's readings (point_m) or, where the
//     source is a route station placed elsewhere, at the station, with its
//     depth and cover (rowPlace: the centre of a same-way split whose sum
//     the route takes, where a further conductor's route passes), so that
//     each Point lies on its conductor's route line, with the group key,
//     chainage_m along its own conductor (as results.csv gives it: along a
//     further conductor's route for a source followed in one, as the
//     findings about that conductor give it, else along the route),
//     route_chainage_m (the group's, along the route), current, phase,
//     depth, depth_reference (DepthReference.Kind, what depth_m is
//     measured from) and depth_note (the same in words, geoDepthNote),
//     cover and their sigmas, fit (fitStatus), the azimuth (the
//     conductor's bearing there, for a GIS to orient a symbol), the dip
//     (dip_deg and dip_sigma_deg, as results.csv gives them), the span of conductor the readings see along that bearing
//     (span_m), the group's ok and problem, "conductor": 1 for the
//     conductor the route follows, the track's number for a further
//     conductor, absent for a source in no track, and "used": whether the
//     station entered its conductor's current and cover profile
//     (Station.Used; with "left_out", the reason, when false), absent for
//     a source that is no station of a conductor's route; the two lines of
//     a same-way split whose sum the route takes (Group.SummedSources) are
//     both conductor 1, at the lines' centre, and carry the sum the route
//     takes in sum_current_a (with sum_phase_deg for AC) and their sigmas,
//     beside each line's share in current_a;
//   - "pair conductor": a "conductor" Point that is one of the two lines
//     of an unresolved go-and-return pair (Group.Pair): its depth, cover
//     and azimuth are the pair's centre's, with the pair's current times
//     spacing and net current in place of a current, which the line's
//     own is not determined;
//   - "object": one Point per dipole source (a magnetised object), with
//     the group key, chainages, depth, depth_reference and cover and their
//     sigmas as for a conductor, and the magnitude of its moment,
//     moment_a_m2, with its sigma moment_sigma_a_m2, as its dipole-anomaly
//     finding gives them;
//   - "finding": one Point per finding at its position (for a shallow-cover
//     stretch a LineString along its conductor's route, conductor 1's for
//     a lone line, over its chainage range, the stretch where the cover may
//     be short: stretchLine), with kind,
//     severity, chainage range and message, "conductor" (1 for the
//     route's conductor, the track's number for a further one, as
//     findings.csv gives it; absent for a lone line), "lone_line": true when it is about a further
//     line that no conductor's track follows (Finding.Lone), and each of
//     its values as a property named by its key (ValueKey: "step_a" and
//     "step_sigma_a", "cover_m", ...).
//
// Sigmas count the reading noise (uncertainty_note of results.json);
// where the fits counted the positions' uncertainty too
// (Document.PositionSigma), the collection's position_sigma gives it and
// its sigma_note says so.
// Sigmas are written with six significant digits, so that none is rounded
// to zero, and each value with two digits past its sigma's leading one. A
// sigma that is not positive (a fit that failed and left none, a quantity
// the readings do not determine or that was held) is left out, and a
// cover's sigma with it, rather than written as 0, which would read as
// exact. The route's lines run only through stations
// the route used (Station.Used), so that each station is drawn once, at
// its fitted conductor: with fewer than two used stations in a row there
// is no line; the stretches across the stations left out are features of
// their own ("route past unused station").
func WriteGeoJSON(w io.Writer, d *Document) error {
	if err := d.Validate(); err != nil {
		return err
	}
	fc := featureCollection{Type: "FeatureCollection", Features: []feature{}}
	if d.Frame.Origin != nil {
		fc.Frame = GeoJSONWGS84
		o := *d.Frame.Origin
		fc.Origin = &o
	} else {
		fc.Frame = GeoJSONLocal
		fc.Note = "Coordinates are metres east and north of a local origin, not WGS84 longitude and latitude: " +
			"the survey had no geodetic positions. RFC 7946 requires WGS84, so GIS software will misplace " +
			"these features unless told the frame."
	}
	if p := d.PositionSigma; p != nil {
		fc.SigmaNote = "Sigmas count " + p.Words() + ", " + p.Given() + "; a magnetised object's leave the positions' uncertainty out"
	}
	if r := d.Route; r != nil {
		// conductor 1 named as its Points and findings name it, so that a
		// GIS filtering or joining by conductor keeps the route's own line
		// (found in review: it alone had none).
		if f, ok := d.routeFeature(r, map[string]any{"conductor": 1}); ok {
			fc.Features = append(fc.Features, f)
		}
	}
	for k := range d.Conductors {
		t := &d.Conductors[k] // routeFeature tells its conductor by the route's address
		f, ok := d.routeFeature(&t.Route, map[string]any{
			"conductor": t.Number,
			"offset_m":  round(t.Offset, 3),
		})
		if ok {
			fc.Features = append(fc.Features, f)
		}
	}
	if r := d.Route; r != nil {
		fc.Features = append(fc.Features, d.routeBridges(r, 1)...)
		fc.Features = append(fc.Features, d.routeGapFeatures(r, 1)...)
	}
	for k := range d.Conductors {
		t := &d.Conductors[k]
		fc.Features = append(fc.Features, d.routeBridges(&t.Route, t.Number)...)
		fc.Features = append(fc.Features, d.routeGapFeatures(&t.Route, t.Number)...)
	}
	depthNote := d.geoDepthNote()
	for _, g := range d.Groups {
		if !g.OK {
			// A failed fit: one Point at the centre of its readings,
			// with nothing the fit estimated (failedFitFeature).
			fc.Features = append(fc.Features, d.failedFitFeature(&g))
			continue
		}
		for i, s := range g.Sources {
			at, depth, depthSigma, _ := d.rowPlace(&g, i, &s)
			props := map[string]any{
				"group":   g.Key,
				"source":  i + 1,
				"depth_m": roundSig(depth, depthSigma, 3),
				"ok":      g.OK,
				"fit":     fitStatus(&g),
			}
			putSigma(props, "depth_sigma_m", depthSigma)
			if g.Log != "" {
				props["log"] = g.Log
			}
			props["depth_reference"] = d.DepthReference.Kind
			props["depth_note"] = depthNote
			if g.SensorHeight > 0 {
				props["sensor_height_m"] = json.Number(fix(g.SensorHeight, 3))
				props["depth_note"] = groupDatumNote(d, &g)
			}
			if r := d.conductorRoute(sourceConductor(d, &g, i, &s)); r != nil {
				putScatter(props, r)
			}
			if g.Problem != "" {
				props["problem"] = g.Problem
			}
			if c := d.sourceChainage(&g, &s); c != nil {
				props["chainage_m"] = round(*c, 3)
			}
			if g.Chainage != nil {
				props["route_chainage_m"] = round(*g.Chainage, 3)
			}
			if c := sourceConductor(d, &g, i, &s); c > 0 {
				props["conductor"] = c
			}
			if st := d.stationOf(&g, i, &s); st != nil {
				props["used"] = st.Used
				if why := d.leftOut(st, s.Conductor); why != "" {
					props["left_out"] = why
				}
				// A route walked again at another current: the station's
				// current at the first walk's level, as the steps take it
				// (Station.CurrentFirstWalk).
				if st.CurrentFirstWalk != nil && st.CurrentFirstWalkSigma != nil {
					props["current_first_walk_a"] = roundSig(*st.CurrentFirstWalk, *st.CurrentFirstWalkSigma, 4)
					putSigma(props, "current_first_walk_sigma_a", *st.CurrentFirstWalkSigma)
				}
			}
			if c, ok := d.cover(depth); ok {
				cs := d.sourceCoverSigma(depthSigma)
				props["cover_m"] = roundSig(c, cs, 3)
				putSigma(props, "cover_sigma_m", cs)
			}
			if st := d.summedStation(&g); st != nil && g.summedPart(i) {
				// A line of a same-way split whose sum the route takes:
				// the sum, on both lines' Points, beside the line's share.
				props["sum_current_a"] = roundSig(st.Current, st.CurrentSigma, 4)
				putSigma(props, "sum_current_sigma_a", st.CurrentSigma)
				if st.Phase != nil && st.PhaseSigma != nil {
					props["sum_phase_deg"] = roundSig(*st.Phase, *st.PhaseSigma, 2)
					putSigma(props, "sum_phase_sigma_deg", *st.PhaseSigma)
				}
			}
			if s.Kind == KindDipole {
				props["feature"] = "object"
				if m, ms, ok := d.objectMoment(&s); ok {
					props["moment_a_m2"] = roundSig(m, ms, 4)
					putSigma(props, "moment_sigma_a_m2", ms)
				}
			} else {
				props["feature"] = "conductor"
				props["current_a"] = roundSig(s.Current, s.CurrentSigma, 4)
				putSigma(props, "current_sigma_a", s.CurrentSigma)
				props["azimuth_deg"] = roundSig(s.Azimuth, s.AzimuthSigma, 2)
				putSigma(props, "azimuth_sigma_deg", s.AzimuthSigma)
				// The dip, as results.csv gives it: on a dipping
				// conductor (a bore diving under a river) the azimuth
				// alone does not say how it runs (found in review).
				props["dip_deg"] = roundSig(s.Dip, s.DipSigma, 2)
				putSigma(props, "dip_sigma_deg", s.DipSigma)
				if s.Phase != nil {
					ps := 0.0
					if s.PhaseSigma != nil {
						ps = *s.PhaseSigma
						putSigma(props, "phase_sigma_deg", ps)
					}
					props["phase_deg"] = roundSig(*s.Phase, ps, 2)
				}
				if s.Span[1] > s.Span[0] {
					props["span_m"] = []json.Number{round(s.Span[0], 3), round(s.Span[1], 3)}
				}
			}
			if p := g.Pair; p != nil && (i == p.Sources[0] || i == p.Sources[1]) {
				// A line of an unresolved go-and-return pair: its current
				// and depth are not determined; the pair's centre, depth
				// and current times spacing are (Group.Pair).
				for _, k := range []string{"current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg", "azimuth_sigma_deg", "dip_deg", "dip_sigma_deg"} {
					delete(props, k)
				}
				props["feature"] = "pair conductor"
				// The pair's bearing, as results.csv and the report give
				// it: a line's own azimuth means nothing here.
				props["azimuth_deg"] = roundSig(p.Azimuth, p.AzimuthSigma, 2)
				putSigma(props, "azimuth_sigma_deg", p.AzimuthSigma)
				props["depth_m"] = roundSig(p.Depth, p.DepthSigma, 3)
				putSigma(props, "depth_sigma_m", p.DepthSigma)
				if c, ok := d.cover(p.Depth); ok {
					cs := d.coverSigma(p.DepthSigma)
					props["cover_m"] = roundSig(c, cs, 3)
					putSigma(props, "cover_sigma_m", cs)
				}
				props["current_times_spacing_am"] = roundSig(p.CurrentTimesSpacing, p.CurrentTimesSpacingSigma, 4)
				putSigma(props, "current_times_spacing_sigma_am", p.CurrentTimesSpacingSigma)
				props["net_current_a"] = roundSig(p.NetCurrent, p.NetCurrentSigma, 4)
				putSigma(props, "net_current_sigma_a", p.NetCurrentSigma)
				if p.NetCurrentPhase != nil && p.NetCurrentPhaseSigma != nil {
					props["net_current_phase_deg"] = roundSig(*p.NetCurrentPhase, *p.NetCurrentPhaseSigma, 2)
					putSigma(props, "net_current_phase_sigma_deg", *p.NetCurrentPhaseSigma)
				}
			}
			geom := d.point(at)
			fc.Features = append(fc.Features, feature{Type: "Feature", Geometry: geom, Properties: props})
		}
	}
	for i := range d.LinesAbove {
		fc.Features = append(fc.Features, d.lineAboveFeature(&d.LinesAbove[i]))
	}
	findingIDs := d.FindingIDs()
	for fi, f := range d.Findings {
		props := map[string]any{
			"feature":         "finding",
			"kind":            f.Kind,
			"severity":        f.Severity,
			"chainage_from_m": round(f.ChainageFrom, 3),
			"chainage_to_m":   round(f.ChainageTo, 3),
			"message":         f.Message,
		}
		if len(f.Groups) > 0 {
			props["groups"] = f.Groups
		}
		switch {
		case f.Conductor > 0:
			props["conductor"] = f.Conductor
		case !f.Lone:
			// About the route's own conductor, as findings.csv gives it.
			props["conductor"] = 1
		}
		if f.Lone {
			props["lone_line"] = true
		}
		for _, v := range f.Values {
			// Named by the value's key (ValueKey), as results.json and
			// findings.csv give it, its sigma with "_sigma" before the
			// unit (sigmaKey).
			k := ValueKey(f.Kind, v)
			if _, taken := props[k]; taken {
				continue
			}
			if v.Sigma > 0 {
				props[k] = roundSig(v.Value, v.Sigma, 3)
				props[sigmaKey(k, v.Unit)] = sigNum(v.Sigma)
			} else {
				props[k] = json.Number(sig(v.Value))
			}
		}
		geom := d.point(f.Position)
		if g, ok := d.stretchLine(&f); ok {
			geom = g
		}
		fc.Features = append(fc.Features, feature{Type: "Feature", ID: findingIDs[fi], Geometry: geom, Properties: props})
	}
	// What a map viewer must show with every feature: viewers drop a
	// FeatureCollection's foreign members, so the cautions, the run's
	// warnings and, without an origin, the frame go on each feature too.
	for _, f := range fc.Features {
		f.Properties["caution"] = CautionShort
		if len(d.Warnings) > 0 {
			f.Properties["run_warnings"] = d.Warnings
		}
		if fc.Frame == GeoJSONLocal {
			f.Properties["coordinate_note"] = GeoJSONLocalNote
		}
	}
	setFeatureIDs(fc.Features)
	// One feature per line: compact, and readable in a diff.
	var buf bytes.Buffer
	buf.WriteString(`{"type":"FeatureCollection",`)
	head, err := json.Marshal(struct {
		Schema   int            `json:"schema_version"`
		Cautions []string       `json:"cautions"`
		Warnings []string       `json:"warnings,omitempty"`
		Frame    string         `json:"coordinate_frame"`
		Note     string         `json:"coordinate_note,omitempty"`
		Origin   *Origin        `json:"local_origin,omitempty"`
		Depth    DepthReference `json:"depth_reference"`
		Signal   geoSignal      `json:"signal"`
		Position *PositionSigma `json:"position_sigma,omitempty"`
		Sigma    string         `json:"sigma_note,omitempty"`
	}{SchemaVersion, Cautions, d.Warnings, fc.Frame, fc.Note, fc.Origin, d.DepthReference, d.geoSignalOf(), d.PositionSigma, fc.SigmaNote})
	if err != nil {
		return fmt.Errorf("report: GeoJSON: %w", err)
	}
	buf.Write(head[1 : len(head)-1])
	buf.WriteString(",\n\"features\":[")
	for i, f := range fc.Features {
		if i > 0 {
			buf.WriteByte(',')
		}
		b, err := json.Marshal(f)
		if err != nil {
			return fmt.Errorf("report: GeoJSON: %w", err)
		}
		buf.WriteString("\n")
		buf.Write(b)
	}
	buf.WriteString("\n]}\n")
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("report: writing GeoJSON: %w", err)
	}
	return nil
}

type featureCollection struct {
	Type  string `json:"type"`
	Frame string `json:"coordinate_frame"`
	Note  string `json:"coordinate_note,omitempty"`
	// SigmaNote says what the sigmas count where the fits counted the
	// positions' uncertainty (Document.PositionSigma); empty otherwise,
	// when they count the reading noise only.
	SigmaNote string    `json:"sigma_note,omitempty"`
	Origin    *Origin   `json:"local_origin,omitempty"`
	Features  []feature `json:"features"`
}

// setFeatureIDs gives each feature an id (RFC 7946 section 3.2) made of
// what it is and what it belongs to, "route/c1", "conductor/c1/T10/1"
// (conductor 1's Point at group T10, its source 1), "finding/current-step/
// c1/T07+T08", so that an asset register appending runs has a key that
// does not hang on the features' order; a second feature with the same
// parts gets "#2", a third "#3", in the order written. A feature that
// has its id already keeps it: a finding's is FindingIDs', which
// results.json and findings.csv give too.
func setFeatureIDs(fs []feature) {
	seen := map[string]int{}
	for i := range fs {
		if fs[i].ID != "" {
			continue
		}
		p := fs[i].Properties
		parts := []string{strings.ReplaceAll(fmt.Sprint(p["feature"]), " ", "-")}
		if k, ok := p["kind"].(string); ok {
			parts = append(parts, k)
		}
		if c, ok := p["conductor"]; ok {
			parts = append(parts, fmt.Sprintf("c%v", c))
		}
		if g, ok := p["group"].(string); ok && g != "" {
			parts = append(parts, g)
		}
		if s, ok := p["source"]; ok && p["feature"] != "failed fit" {
			// A failed fit's id stays failed-fit/GROUP, as before it
			// gave its source.
			parts = append(parts, fmt.Sprint(s))
		}
		if a, ok := p["from_group"].(string); ok {
			b, _ := p["to_group"].(string)
			parts = append(parts, a+".."+b)
		}
		if gs, ok := p["groups"].([]string); ok && len(gs) > 0 {
			parts = append(parts, strings.Join(gs, "+"))
		}
		id := strings.Join(parts, "/")
		seen[id]++
		if n := seen[id]; n > 1 {
			id += fmt.Sprintf("#%d", n)
		}
		fs[i].ID = id
	}
}

type feature struct {
	Type       string         `json:"type"`
	ID         string         `json:"id,omitempty"`
	Geometry   geometry       `json:"geometry"`
	Properties map[string]any `json:"properties"`
}

type geometry struct {
	Type        string          `json:"type"`
	Coordinates json.RawMessage `json:"coordinates"`
}

// position formats one GeoJSON position: [lon, lat] to 1e-8 degree (about
// a millimetre) with an origin, else [east, north] to the millimetre.
func (d *Document) position(p [3]float64) string {
	if lon, lat, ok := d.wgs84(p); ok {
		return "[" + fix(lon, 8) + "," + fix(lat, 8) + "]"
	}
	return "[" + fix(p[0], 3) + "," + fix(p[1], 3) + "]"
}

func (d *Document) point(p [3]float64) geometry {
	return geometry{Type: "Point", Coordinates: json.RawMessage(d.position(p))}
}

// lineParts formats a polyline's coordinates as GeoJSON position arrays:
// one, unless the line crosses the antimeridian. Longitudes are given in
// (-180, 180], so a step across the 180th meridian written as it is (from
// 179.99997 to -179.99993) is drawn by a GIS as a line round the whole
// globe; RFC 7946 section 3.1.9 says such a line SHOULD be cut in two, the
// parts meeting at the meridian (longitude 180 on one side, -180 on the
// other, at the latitude interpolated linearly in degrees between the two
// positions either side). A part left with fewer than two distinct
// positions (a line ending on the meridian) is dropped.
func (d *Document) lineParts(pts [][3]float64) [][]byte {
	type pos struct{ lon, lat float64 }
	var ll []pos
	for _, p := range pts {
		lon, lat, ok := d.wgs84(p)
		if !ok {
			ll = nil
			break
		}
		ll = append(ll, pos{lon, lat})
	}
	if ll == nil {
		b := []byte{'['}
		for i, p := range pts {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, d.position(p)...)
		}
		return [][]byte{append(b, ']')}
	}
	var parts [][]byte
	var cur []string
	add := func(lon, lat float64) {
		s := "[" + fix(lon, 8) + "," + fix(lat, 8) + "]"
		if len(cur) == 0 || cur[len(cur)-1] != s {
			cur = append(cur, s)
		}
	}
	flush := func() {
		if len(cur) > 1 {
			parts = append(parts, []byte("["+strings.Join(cur, ",")+"]"))
		}
		cur = nil
	}
	for i, p := range ll {
		if i > 0 {
			q := ll[i-1]
			if dl := p.lon - q.lon; math.Abs(dl) > 180 {
				edge := 180.0 // the meridian as seen from q's side
				if q.lon < 0 {
					edge = -180
				}
				lon := p.lon + 360 // p unwrapped onto q's side
				if edge < 0 {
					lon = p.lon - 360
				}
				t := (edge - q.lon) / (lon - q.lon)
				lat := q.lat + t*(p.lat-q.lat)
				add(edge, lat)
				flush()
				add(-edge, lat)
			}
		}
		add(p.lon, p.lat)
	}
	flush()
	return parts
}

// line is pts as a LineString, or as a MultiLineString when it crosses the
// antimeridian (lineParts).
func (d *Document) line(pts [][3]float64) geometry {
	parts := d.lineParts(pts)
	if len(parts) == 1 {
		return geometry{Type: "LineString", Coordinates: json.RawMessage(parts[0])}
	}
	return geometry{Type: "MultiLineString", Coordinates: json.RawMessage("[" + string(bytes.Join(parts, []byte{','})) + "]")}
}

func along(p, dir [3]float64, t float64) [3]float64 {
	return [3]float64{p[0] + t*dir[0], p[1] + t*dir[1], p[2] + t*dir[2]}
}

// stretchLine is the plan line of a shallow-cover finding f that spans
// stations: its conductor's route through the used stations from
// f.ChainageFrom to f.ChainageTo (the nearest stations either side that
// bound the shallow run, route.Bracket), the stretch where the cover may
// be short. A map showed the demo's 20 m of shallow cable as one dot
// (found in review). A lone line's finding (a go-and-return pair beside
// conductor 1, a crossing line) is drawn the same way along conductor 1's
// route, the stretch of it where the shallow line may be met; its
// Position is still the line's own point. Repeats of a station (a route
// walked again, at its chainage) are drawn once. ok is false for any
// other finding, one at a single chainage, or when fewer than two
// stations lie in the range: the finding is then a Point.
func (d *Document) stretchLine(f *Finding) (geometry, bool) {
	if f.Kind != string(route.KindShallowCover) || !(f.ChainageTo > f.ChainageFrom) {
		return geometry{}, false
	}
	n := f.Conductor
	if n == 0 {
		n = 1
	}
	r := d.conductorRoute(n)
	if r == nil {
		return geometry{}, false
	}
	const tol = 1e-6 // m: the bracket's ends are stations' own chainages
	var pts [][3]float64
	last := math.Inf(-1)
	for _, s := range r.Stations {
		if !s.Used || s.Chainage < f.ChainageFrom-tol || s.Chainage > f.ChainageTo+tol || s.Chainage <= last+tol {
			continue
		}
		pts = append(pts, s.Point)
		last = s.Chainage
	}
	if len(pts) < 2 {
		return geometry{}, false
	}
	return d.line(pts), true
}

// round returns v rounded to prec decimals as a JSON number.
func round(v float64, prec int) json.Number { return json.Number(fix(v, prec)) }

// roundSig returns v as a JSON number with at least prec decimals and
// two digits past the leading digit of its sigma (fixSig).
func roundSig(v, sigma float64, prec int) json.Number { return json.Number(fixSig(v, sigma, prec)) }

// sigNum returns a sigma as a JSON number with six significant digits.
func sigNum(v float64) json.Number { return json.Number(sig(v)) }

// putSigma sets props[key] to sigma (sigNum) when it is positive and
// finite, and leaves it out otherwise: a zero sigma is one not estimated,
// not an exact value.
func putSigma(props map[string]any, key string, sigma float64) {
	if sigma > 0 && !math.IsInf(sigma, 1) {
		props[key] = sigNum(sigma)
	}
}

// objectMoment returns the magnitude of a dipole source's moment, A m^2,
// and its one-sigma uncertainty: the values of the dipole-anomaly finding
// at the source's position, whose sigma allows for the correlations of the
// moment's components with the position and the conductors' geometry.
// Without such a finding the magnitude comes from the moment vector and
// its sigma from the per-axis sigmas by first-order propagation, taking
// the axes as independent (zero when they are not given).
func (d *Document) objectMoment(s *Source) (m, sigma float64, ok bool) {
	for _, f := range d.Findings {
		if f.Kind != "dipole-anomaly" || f.Position != s.Point {
			continue
		}
		for _, v := range f.Values {
			if v.Name == "moment" {
				return v.Value, v.Sigma, true
			}
		}
	}
	if s.Moment == nil {
		return 0, 0, false
	}
	v := *s.Moment
	m = math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
	if s.MomentSigma != nil && m > 0 {
		var ss float64
		for a, sa := range *s.MomentSigma {
			ss += (v[a] / m * sa) * (v[a] / m * sa)
		}
		sigma = math.Sqrt(ss)
	}
	return m, sigma, true
}

// routeFeature is a route's used stations (Station.Used) as a LineString,
// with props and the route's feature, length and station count as
// properties. A station the route did not use (a failed fit, no current
// found, left out for an object) breaks the line: the runs of two or more
// used stations either side of it become the parts of a MultiLineString,
// and "parts" gives their number. length_m is the sum of the parts'
// lengths along the route's chainage and "stations" counts the stations
// drawn. A used station with no used neighbour makes no part and is shown
// by its "conductor" Point alone. ok is false when no part has two
// stations: there is no route to draw.
func (d *Document) routeFeature(r *Route, props map[string]any) (f feature, ok bool) {
	var parts [][]Station
	var run []Station
	flush := func() {
		if len(run) > 1 {
			parts = append(parts, run)
		}
		run = nil
	}
	gapsOf := RouteGaps(r)
	for _, s := range r.Stations {
		if !s.Used {
			flush()
			continue
		}
		if n := len(run); n > 0 && inGap(gapsOf, math.Min(run[n-1].Chainage, s.Chainage), math.Max(run[n-1].Chainage, s.Chainage)) {
			// No station for a stretch far longer than the route's
			// spacing: drawn apart, as an "unsurveyed gap" (routeGapFeatures).
			flush()
		}
		run = append(run, s)
	}
	flush()
	if len(parts) == 0 {
		return feature{}, false
	}
	// The stations that break the line, between its first and last
	// drawn station, and why: a GIS user sees the gap explained.
	first, last := parts[0][0].Key, parts[len(parts)-1][len(parts[len(parts)-1])-1].Key
	conductor := 0 // r's conductor: 0 for conductor 1's route
	for k := range d.Conductors {
		if r == &d.Conductors[k].Route {
			conductor = d.Conductors[k].Number
		}
	}
	groups := map[string]*Group{}
	for i := range d.Groups {
		groups[d.Groups[i].Key] = &d.Groups[i]
	}
	var gaps, why []string
	inside := false
	for i := range r.Stations {
		s := &r.Stations[i]
		if s.Key == first {
			inside = true
		}
		if inside && !s.Used {
			gaps = append(gaps, s.Key)
			w := "not used"
			if groups[s.Key] != nil {
				w = d.leftOut(s, conductor)
			}
			why = append(why, s.Key+": "+w)
		}
		if s.Key == last {
			break
		}
	}
	var length float64
	var n int
	var lines [][]byte
	var cut bool
	for _, part := range parts {
		pts := make([][3]float64, len(part))
		for j, s := range part {
			pts[j] = s.Point
		}
		l := d.lineParts(pts)
		cut = cut || len(l) > 1
		lines = append(lines, l...)
		length += part[len(part)-1].Chainage - part[0].Chainage
		n += len(part)
	}
	if len(lines) == 0 {
		return feature{}, false
	}
	props["feature"] = "route"
	props["length_m"] = round(length, 3)
	props["stations"] = n
	putScatter(props, r)
	geom := geometry{Type: "LineString", Coordinates: json.RawMessage(lines[0])}
	if len(gaps) > 0 {
		props["not_used"] = gaps
		props["gap_note"] = "The line is broken where the route left a station out of its current and cover profile (" +
			strings.Join(why, "; ") + "); that station's Point has \"used\": false. The conductor is not taken to stop there: " +
			"a feature \"" + featureBridge + "\" draws the stretch between the stations either side."
	}
	if len(gapsOf) > 0 {
		var names []string
		for _, g := range gapsOf {
			names = append(names, g.From+" to "+g.To)
		}
		props["unsurveyed"] = names
		props["unsurveyed_note"] = "The line is broken where the survey has no station for far longer than the route's spacing (" +
			gapWords(r) + "); a feature \"" + featureGap + "\" draws each such stretch: the conductor's position, current and cover there are not known."
	}
	if len(parts) > 1 {
		props["parts"] = len(parts)
	}
	if cut {
		props["antimeridian_note"] = "The line crosses the 180th meridian and is cut there into parts that end at longitude 180 and -180 (RFC 7946, section 3.1.9)."
	}
	if len(lines) > 1 {
		geom = geometry{Type: "MultiLineString", Coordinates: json.RawMessage("[" + string(bytes.Join(lines, []byte{','})) + "]")}
	}
	return feature{Type: "Feature", Geometry: geom, Properties: props}, true
}

// GeoJSONLocalNote is the coordinate_note every feature of a GeoJSON
// file without a geodetic origin carries, since map viewers drop the
// FeatureCollection's own "coordinate_note".
const GeoJSONLocalNote = "Coordinates are metres east and north of a local origin, not longitude and latitude: " +
	"a map viewer takes them for degrees and places this feature wrongly."

// featureGap is the "feature" property of a stretch of a conductor's
// route with no station (RouteGaps, routeGapFeatures).
const featureGap = "unsurveyed gap"

// routeGapFeatures are route r's gaps (RouteGaps; r is conductor n's: 1
// for the route, else a further conductor's Track.Number), one LineString
// feature each, "feature": featureGap, instead of a stretch of the route's
// line: the route's line (routeFeature) breaks there and no "route past
// unused station" is drawn across it. Each runs straight from the used
// station nearest before the gap to the used one nearest after it (the
// gap's own stations when they were used); a gap with no used station on
// one side has no feature, since the route does not reach it. Its
// properties: conductor, from_group and to_group (the stations either side
// of the stretch with no station), chainage_from_m, chainage_to_m,
// length_m, median_spacing_m (the station spacing the gap is measured against: the route's median, or the stretch's own where wider),
// spacing_ratio, used false, not_used (stations the line passes that the
// route left out, if any) and a note in words.
func (d *Document) routeGapFeatures(r *Route, n int) []feature {
	var out []feature
	for _, g := range RouteGaps(r) {
		var a, b *Station
		for i := range r.Stations {
			s := &r.Stations[i]
			if !s.Used {
				continue
			}
			if s.Chainage <= g.FromChainage+1e-6 && (a == nil || s.Chainage > a.Chainage) {
				a = s
			}
			if s.Chainage >= g.ToChainage-1e-6 && (b == nil || s.Chainage < b.Chainage) {
				b = s
			}
		}
		if a == nil || b == nil {
			continue
		}
		var skipped []string
		for i := range r.Stations {
			s := &r.Stations[i]
			if !s.Used && s.Chainage > a.Chainage && s.Chainage < b.Chainage {
				skipped = append(skipped, s.Key)
			}
		}
		note := fmt.Sprintf("No station for %.0f m between %s and %s (chainage %.0f to %.0f m), %.1f times the station spacing of %s m about it: "+
			"the survey did not cross the conductor here. This line only joins the stations either side; the conductor's position, depth, current and cover along it are not known, and may differ (a bore may run deeper, a cable may bend).",
			g.Length, g.From, g.To, g.FromChainage, g.ToChainage, g.Ratio, trimFloat(g.Spacing))
		props := map[string]any{
			"feature":          featureGap,
			"conductor":        n,
			"from_group":       g.From,
			"to_group":         g.To,
			"chainage_from_m":  round(g.FromChainage, 3),
			"chainage_to_m":    round(g.ToChainage, 3),
			"length_m":         round(g.Length, 3),
			"median_spacing_m": round(g.Spacing, 3),
			"spacing_ratio":    round(g.Ratio, 2),
			"used":             false,
			"note":             note,
		}
		if len(skipped) > 0 {
			props["not_used"] = skipped
		}
		out = append(out, feature{Type: "Feature", Geometry: d.line([][3]float64{a.Point, b.Point}), Properties: props})
	}
	return out
}

// featureBridge is the "feature" property of a stretch of a conductor's
// route across stations the route left out (routeBridges).
const featureBridge = "route past unused station"

// Fit statuses, as route.geojson's "fit" property and results.csv's
// fit column give them (fitStatus).
const (
	FitSound    = "sound"
	FitWithCare = "used with care"
	FitFailed   = "failed"
)

// fitStatus is what g's fit is worth: FitFailed when it failed or found
// no current (Group.OK false: its numbers mean nothing), FitWithCare when
// it converged with a problem (poor or ambiguous, Group.Problem), else
// FitSound.
func fitStatus(g *Group) string {
	switch {
	case !g.OK:
		return FitFailed
	case g.Problem != "":
		return FitWithCare
	}
	return FitSound
}

// conductorRoute is the route of conductor n (1 for Document.Route, a
// further conductor's Track.Route), nil for 0 or a number not followed.
func (d *Document) conductorRoute(n int) *Route {
	if n == 1 {
		return d.Route
	}
	for k := range d.Conductors {
		if n > 1 && d.Conductors[k].Number == n {
			return &d.Conductors[k].Route
		}
	}
	return nil
}

// putScatter sets the realistic spread of route r's stations
// (Route.StationScatterCurrent and StationScatterDepth, named as
// results.json names them) in props, when r has one.
func putScatter(props map[string]any, r *Route) {
	if r.StationScatterCurrent != nil && r.StationScatterDepth != nil {
		props["station_scatter_current_a"] = sigNum(*r.StationScatterCurrent)
		props["station_scatter_depth_m"] = sigNum(*r.StationScatterDepth)
	}
}

// geoDepthNote says in words what every depth_m of the GeoJSON is
// measured from and how it stands to the cover, for a map viewer's
// pop-up: a depth below the sensors labelled "depth_m" reads as depth
// below ground, which is the deeper by the sensors' height (found in
// review: "depth 0.70 m" over a cable with 0.40 m of cover).
func (d *Document) geoDepthNote() string {
	r := d.DepthReference
	switch {
	case r.Kind == DepthBelowGround:
		return "depth_m is the depth below the ground surface given, the same as cover_m."
	case r.SensorHeight > 0:
		h := fix(r.SensorHeight, 2)
		return "depth_m is the depth below the sensors, not below the ground: the sensors were " + h +
			" m above the ground, so cover_m, the depth below ground, is " + h + " m less."
	}
	return "depth_m is the depth below the sensors, not below the ground: their height above the ground was not given, " +
		"so the cover (the depth below ground) is less than depth_m by that height and is not computed."
}

// groupDatumNote is the depth note of a group whose log's sensors stood at
// another height than the datum (Group.SensorHeight, logheight.go).
func groupDatumNote(d *Document, g *Group) string {
	h, H := g.SensorHeight, d.DepthReference.SensorHeight
	return fmt.Sprintf("depth_m is referred to the datum %s m above the ground, not to this log's sensors, which stood %s m above it (sensor_height_m; the depth below them is depth_m %s %s m), so cover_m, the depth below ground, is %s m less than depth_m.",
		fix(H, 2), fix(h, 2), map[bool]string{true: "plus", false: "less"}[h > H], fix(math.Abs(h-H), 2), fix(H, 2))
}

// failedFitFeature is the Point of group g whose fit failed (Group.OK
// false: it found no current the readings determine, or fitted nothing):
// "feature": "failed fit", at the centre of the group's readings (its
// Centroid, where the readings were taken, not a conductor), with the
// group, its chainage, "fit": "failed", its problem, used and left_out
// as for a conductor, and a note saying not to read it as a conductor.
// It carries no current, depth, cover, azimuth or sigma: a failed fit's
// numbers mean nothing, and a Point labelled "conductor, cover 0.64 m"
// stood 14 m past a conductor's end over empty ground (found in review).
// results.json keeps the fit's numbers in the group's sources.
func (d *Document) failedFitFeature(g *Group) feature {
	props := map[string]any{
		"feature": "failed fit",
		"group":   g.Key,
		"ok":      false,
		"fit":     FitFailed,
		"note": "The fit at this group failed: it found no conductor its readings determine, and its numbers mean nothing here. " +
			"This Point is the centre of the group's readings, not a conductor: do not use it as a conductor's position, depth or current.",
	}
	if g.Log != "" {
		props["log"] = g.Log
	}
	if g.Problem != "" {
		props["problem"] = g.Problem
	}
	if g.Chainage != nil {
		props["chainage_m"] = round(*g.Chainage, 3)
		props["route_chainage_m"] = round(*g.Chainage, 3)
	}
	var first *Source
	if len(g.Sources) > 0 {
		first = &g.Sources[0]
	}
	if first != nil {
		// Joins results.csv's row (group, source 1) of the failed fit.
		props["source"] = 1
	}
	if st := d.stationOf(g, 0, first); st != nil {
		props["used"] = st.Used
		if why := d.leftOut(st, 0); why != "" {
			props["left_out"] = why
		}
	}
	return feature{Type: "Feature", Geometry: d.point(g.Centroid), Properties: props}
}

// routeBridges are the stretches of route r (of conductor n: 1 for the
// route, else a further conductor's Track.Number) across the stations the
// route left out between two used ones, one LineString feature each,
// "feature": featureBridge. routeFeature's line breaks at such a station,
// and a map showed a gap where the conductor certainly runs (a 10 m gap
// in an 11 kV cable at a magnetised object, whose line fit was sound;
// found in review), while the crew report's plan draws the stretch
// dotted. Each runs from the used station before to the used station
// after, through the fitted conductor of a station left out for a
// magnetised object (its line fit is sound) and straight past any other
// (a failed fit's point means nothing). Its properties: conductor,
// from_group and to_group, not_used (the stations crossed), length_m
// (along the chainage), used false, passes_magnetised_object (true when
// a station crossed was left out for an object) and a note in words.
func (d *Document) routeBridges(r *Route, n int) []feature {
	conductor := n
	if n == 1 {
		conductor = 0 // whyLeftOut's number for the route's conductor
	}
	var out []feature
	prev := -1
	gaps := RouteGaps(r)
	for i := range r.Stations {
		if !r.Stations[i].Used {
			continue
		}
		if prev >= 0 && i > prev+1 && inGap(gaps, math.Min(r.Stations[prev].Chainage, r.Stations[i].Chainage), math.Max(r.Stations[prev].Chainage, r.Stations[i].Chainage)) {
			// A stretch with an unsurveyed gap in it: the gap's own
			// feature draws it (routeGapFeatures).
			prev = i
			continue
		}
		if prev >= 0 && i > prev+1 {
			a, b := &r.Stations[prev], &r.Stations[i]
			pts := [][3]float64{a.Point}
			var keys, why []string
			object, other := false, false
			for k := prev + 1; k < i; k++ {
				st := &r.Stations[k]
				keys = append(keys, st.Key)
				why = append(why, st.Key+": "+d.leftOut(st, conductor))
				if d.whyLeftOut(st, conductor) == leftObject {
					object = true
					pts = append(pts, st.Point)
				} else {
					other = true
				}
			}
			pts = append(pts, b.Point)
			note := "The conductor is taken to run on between " + a.Key + " and " + b.Key + ", across stations the route left out of its current and cover profile (" +
				strings.Join(why, "; ") + ")."
			if object {
				note += " The line passes through the fitted conductor of each station left out for a magnetised object found there, whose line fit is sound."
			}
			if other {
				note += " It is drawn straight past a station whose fit does not place the conductor: its position there is less certain than at a used station."
			}
			props := map[string]any{
				"feature":                  featureBridge,
				"conductor":                n,
				"from_group":               a.Key,
				"to_group":                 b.Key,
				"not_used":                 keys,
				"length_m":                 round(b.Chainage-a.Chainage, 3),
				"used":                     false,
				"passes_magnetised_object": object,
				"note":                     note,
			}
			out = append(out, feature{Type: "Feature", Geometry: d.line(pts), Properties: props})
		}
		prev = i
	}
	return out
}
