package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
)

// WriteJSON writes d as indented JSON followed by a newline, after
// checking it with Validate. Field names are stable: see Document. The
// first member, "cautions", is Cautions, the safety cautions every crew
// report carries, so that a program or person reading results.json alone
// has them too; ReadJSON ignores it (they are the writer's, not the fit's).
// The document is written in this version's layout with schema_version
// SchemaVersion, also when d was read from an earlier version.
func WriteJSON(w io.Writer, d *Document) error {
	if err := d.Validate(); err != nil {
		return err
	}
	b, err := json.MarshalIndent(jsonDocument{Cautions: Cautions, Document: d.normalized()}, "", "  ")
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	b = append(collapseNumberArrays(b), '\n')
	if _, err := w.Write(b); err != nil {
		return fmt.Errorf("report: writing JSON: %w", err)
	}
	return nil
}

// ReadJSON reads a document written by WriteJSON. name is used in error
// messages (a file name); errors give the line and column of bad JSON.
// Fields this version does not know are ignored, so documents from later
// versions with added fields still read; a later schema_version is an
// error, and so is a nil r. A version 1 document's dipole moments,
// moment_am2 and moment_sigma_am2, are read as Source.Moment and
// MomentSigma; a version 1 or 2 document's realistic spread is read only
// when given with station_scatter_triples (readScatterV2).
func ReadJSON(r io.Reader, name string) (*Document, error) {
	if r == nil {
		return nil, fmt.Errorf("report: %s: no reader (nil)", name)
	}
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("report: %s: %w", name, err)
	}
	var d Document
	err = json.Unmarshal(data, &d)
	if err == nil && d.SchemaVersion == 1 {
		err = readMomentV1(data, &d)
	}
	if err == nil && d.SchemaVersion < 3 {
		err = readScatterV2(data, &d)
	}
	if err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := lineCol(data, se.Offset)
			return nil, fmt.Errorf("report: %s:%d:%d: %w", name, line, col, err)
		case errors.As(err, &te):
			line, col := lineCol(data, te.Offset)
			return nil, fmt.Errorf("report: %s:%d:%d: field %s: %s is not a %s", name, line, col, te.Field, te.Value, te.Type)
		}
		return nil, fmt.Errorf("report: %s: %w", name, err)
	}
	if err := d.Validate(); err != nil {
		return nil, fmt.Errorf("%w (in %s)", err, name)
	}
	// A finding's id and a station's reason for being left out are made
	// again on writing, from the document then.
	for i := range d.Findings {
		d.Findings[i].ID = ""
		for k := range d.Findings[i].Values {
			d.Findings[i].Values[k].Key = ""
		}
	}
	if d.Route != nil {
		for i := range d.Route.Stations {
			d.Route.Stations[i].LeftOut = ""
		}
	}
	for k := range d.Conductors {
		for i := range d.Conductors[k].Route.Stations {
			d.Conductors[k].Route.Stations[i].LeftOut = ""
		}
	}
	return &d, nil
}

// readMomentV1 fills the dipole moments of d, read from a version 1
// document (data), from their version 1 names, moment_am2 and
// moment_sigma_am2, now moment_a_m2 and moment_sigma_a_m2.
func readMomentV1(data []byte, d *Document) error {
	var v1 struct {
		Groups []struct {
			Sources []struct {
				Moment      *[3]float64 `json:"moment_am2"`
				MomentSigma *[3]float64 `json:"moment_sigma_am2"`
			} `json:"sources"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(data, &v1); err != nil {
		return err
	}
	for i, g := range v1.Groups {
		for j, s := range g.Sources {
			if i >= len(d.Groups) || j >= len(d.Groups[i].Sources) {
				continue
			}
			if t := &d.Groups[i].Sources[j]; t.Moment == nil {
				t.Moment, t.MomentSigma = s.Moment, s.MomentSigma
			}
		}
	}
	return nil
}

// readScatterV2 leaves out of d, read from a version 1 or 2 document
// (data), each route's station_scatter_current_a and
// station_scatter_depth_m that were not given with
// station_scatter_triples: those were the scatter of the differences of
// successive stations (with station_scatter_pairs), which holds the
// route's own trend, and would read in this version as the departures
// from the neighbours' line that they were not. A spread given with
// station_scatter_triples, as version 2 documents written after that
// change give it, is kept.
func readScatterV2(data []byte, d *Document) error {
	type route struct {
		Triples *int `json:"station_scatter_triples"`
	}
	var v2 struct {
		Route      *route `json:"route"`
		Conductors []struct {
			Route *route `json:"route"`
		} `json:"conductors"`
	}
	if err := json.Unmarshal(data, &v2); err != nil {
		return err
	}
	drop := func(r *Route, had *route) {
		if r != nil && (had == nil || had.Triples == nil) {
			r.StationScatterCurrent, r.StationScatterDepth, r.StationScatterTriples = nil, nil, 0
		}
	}
	drop(d.Route, v2.Route)
	for i := range d.Conductors {
		var had *route
		if i < len(v2.Conductors) {
			had = v2.Conductors[i].Route
		}
		drop(&d.Conductors[i].Route, had)
	}
	return nil
}

// jsonDocument is a Document as results.json holds it: the cautions
// first, then the document's own members.
type jsonDocument struct {
	Cautions []string `json:"cautions"`
	*Document
}

// lineCol turns the offset the JSON decoder reports (the number of bytes
// read, so just past the offending byte) into the 1-based line and column of
// the last byte read.
func lineCol(data []byte, off int64) (line, col int) {
	if off > 0 {
		off--
	}
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	before := data[:off]
	line = 1 + bytes.Count(before, []byte{'\n'})
	col = int(off) - bytes.LastIndexByte(before, '\n')
	return line, col
}

// normalized returns a shallow copy of d whose required arrays are empty
// rather than nil, so that they are written as [] rather than null.
func (d *Document) normalized() *Document {
	c := *d
	// The layout written is this version's, whatever version was read.
	c.SchemaVersion = SchemaVersion
	if c.Inputs == nil {
		c.Inputs = []Input{}
	}
	c.Findings = make([]Finding, len(d.Findings))
	copy(c.Findings, d.Findings)
	for i, id := range d.FindingIDs() {
		f := &c.Findings[i]
		f.ID = id
		if f.Values != nil {
			f.Values = slices.Clone(f.Values)
			for k := range f.Values {
				f.Values[k].Key = ValueKey(f.Kind, f.Values[k])
			}
		}
	}
	c.Groups = make([]Group, len(d.Groups))
	copy(c.Groups, d.Groups)
	for i := range c.Groups {
		if c.Groups[i].Sources == nil {
			c.Groups[i].Sources = []Source{}
		}
		if pr := c.Groups[i].Profile; pr != nil {
			c.Groups[i].Profile = pr.rounded()
		}
	}
	if d.Route != nil {
		c.Route = d.withoutFailedEstimates(d.Route)
		c.Route.Gaps = RouteGaps(d.Route)
		d.setLeftOut(c.Route, 0)
	}
	if len(d.Conductors) > 0 {
		c.Conductors = make([]Track, len(d.Conductors))
		copy(c.Conductors, d.Conductors)
		for i := range c.Conductors {
			c.Conductors[i].Route = *d.withoutFailedEstimates(&d.Conductors[i].Route)
			c.Conductors[i].Route.Gaps = RouteGaps(&d.Conductors[i].Route)
			d.setLeftOut(&c.Conductors[i].Route, c.Conductors[i].Number)
		}
	}
	return &c
}

// setLeftOut sets the reason on each station of r (a copy, of conductor
// n: 0 for the route, else a further conductor's Track.Number) that the
// route left out, as results.csv's left_out gives it, so that results.json
// alone says why (found in review: only results.csv and route.geojson
// did). A used station's is cleared.
func (d *Document) setLeftOut(r *Route, n int) {
	for i := range r.Stations {
		r.Stations[i].LeftOut = d.leftOut(&r.Stations[i], n)
	}
}

// withoutFailedEstimates returns a copy of route r in which each station
// left out (not Used) because its group's fit failed (Group.OK false: no
// current found, or nothing fitted) has no current, phase, depth or cover,
// so that results.json leaves them out (Station.MarshalJSON), as README
// says of a failed fit's station and as route.geojson and results.csv
// leave its unestimated sigmas out. The fit's meaningless numbers stay in
// its group's sources, with their unidentifiable lists and the group's
// problem to say so. A no-current-found fit has a current sigma but holds
// its depth (sigma 0): written, the station read as a depth known exactly
// (38.22 ± 0 m under the end of a conductor). A station left out as a
// magnetised object (its group's fit sound) keeps its numbers.
func (d *Document) withoutFailedEstimates(r *Route) *Route {
	failed := map[string]bool{}
	for i := range d.Groups {
		if !d.Groups[i].OK {
			failed[d.Groups[i].Key] = true
		}
	}
	c := *r
	c.Stations = make([]Station, len(r.Stations))
	copy(c.Stations, r.Stations)
	for i := range c.Stations {
		s := &c.Stations[i]
		if s.Used || !failed[s.Key] {
			continue
		}
		s.Current, s.CurrentSigma, s.Depth, s.DepthSigma = 0, 0, 0, 0
		s.Phase, s.PhaseSigma, s.Cover, s.CoverSigma = nil, nil, nil, nil
	}
	return &c
}

// collapseNumberArrays rewrites indented JSON so that arrays holding only
// numbers sit on one line ("[1.5, -2, 3]"), leaving strings untouched.
func collapseNumberArrays(b []byte) []byte {
	out := make([]byte, 0, len(b))
	inString, escaped := false, false
	for i := 0; i < len(b); i++ {
		c := b[i]
		if inString {
			out = append(out, c)
			switch {
			case escaped:
				escaped = false
			case c == '\\':
				escaped = true
			case c == '"':
				inString = false
			}
			continue
		}
		if c == '"' {
			inString = true
			out = append(out, c)
			continue
		}
		if c == '[' {
			if j, ok := numberArrayEnd(b, i); ok {
				out = append(out, '[')
				first := true
				for _, f := range bytes.FieldsFunc(b[i+1:j], func(r rune) bool { return r == ',' || r == ' ' || r == '\n' || r == '\t' || r == '\r' }) {
					if !first {
						out = append(out, ", "...)
					}
					out = append(out, f...)
					first = false
				}
				out = append(out, ']')
				i = j
				continue
			}
		}
		out = append(out, c)
	}
	return out
}

// numberArrayEnd returns the index of the ']' closing the array opened at
// b[i] when it holds only numbers (and is not empty).
func numberArrayEnd(b []byte, i int) (int, bool) {
	digits := false
	for j := i + 1; j < len(b); j++ {
		switch c := b[j]; {
		case c == ']':
			return j, digits
		case c >= '0' && c <= '9':
			digits = true
		case c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E' || c == ',' || c == ' ' || c == '\n' || c == '\t' || c == '\r':
		default:
			return 0, false
		}
	}
	return 0, false
}

// Rounding of a Profile's numbers in results.json: positions and offsets
// to the millimetre, fields to 0.01 nT. A profile is data for a plot (a figure a
// few hundred points wide shows neither), and written at full precision
// (17 significant digits, 3.9400000000000004) it was four fifths of a long
// survey's results.json. The fitted results keep full precision.
const (
	profileMetres    = 1e3 // steps per metre
	profileNanotesla = 1e2 // steps per nanotesla
)

// rounded returns a copy of p with its numbers rounded for writing.
func (p *Profile) rounded() *Profile {
	r := func(v, scale float64) float64 {
		// Divided by a power of ten, the rounded value is the double
		// nearest the decimal, which JSON prints in its fewest digits
		// (3.94, not 3.9400000000000004).
		q := math.Round(v*scale) / scale
		if q == 0 { // no "-0"
			return 0
		}
		if math.IsInf(q, 0) || math.IsNaN(q) {
			return v
		}
		return q
	}
	vec := func(vs [][3]float64, scale float64) [][3]float64 {
		if vs == nil {
			return nil
		}
		out := make([][3]float64, len(vs))
		for i, v := range vs {
			for k := range 3 {
				out[i][k] = r(v[k], scale)
			}
		}
		return out
	}
	c := *p
	c.Positions = vec(p.Positions, profileMetres)
	if p.Offset != nil {
		c.Offset = make([]float64, len(p.Offset))
		for i, v := range p.Offset {
			c.Offset[i] = r(v, profileMetres)
		}
	}
	c.Measured = vec(p.Measured, profileNanotesla)
	c.Predicted = vec(p.Predicted, profileNanotesla)
	c.MeasuredQuadrature = vec(p.MeasuredQuadrature, profileNanotesla)
	c.PredictedQuadrature = vec(p.PredictedQuadrature, profileNanotesla)
	return &c
}
