package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// csvHeader lists the columns of WriteCSV. used and left_out are empty
// for a row that is no station of a conductor's route (see sourceUse). lon_deg and lat_deg are empty
// when the document has no geodetic origin; conductor is empty for a
// source in no track (see Source.Conductor); cover_m and cover_sigma_m are
// empty when the ground is not known; moment_a_m2 and moment_sigma_a_m2
// are a dipole's (a magnetised object's) alone; the pair_ columns are an
// unresolved go-and-return pair's (Group.Pair), on both its lines' rows,
// whose current_a is then empty (the net current's phase for AC, along the
// pair's azimuth_deg); the sum_ columns are on both lines' rows of a
// same-way split whose sum the route takes (Group.SummedSources): the
// station's current (and phase), whose shares the rows' current_a give.
// uncertainty_note is empty unless the group's sigmas carry a caveat of
// their own: "robust (Huber) weights: uncertainties are approximate"
// (inverse.RobustNote) for a fit with --robust; "sigmas count the reading
// noise and position uncertainty (0.2 m plan, 0.15 m height)" for a fit
// that counted the positions' uncertainty (--position-sigma,
// Document.PositionSigma; the group's notes say so). current_first_walk_a and
// its sigma are, on a used station's row of a route walked again at
// currents that differ by one change or ratio per walk (Route.FirstWalk),
// the station's current at the first walk's level, as the steps, the
// summary and the current plot take it (Station.CurrentFirstWalk); empty
// otherwise (they were in results.json alone, found in review). fit is
// what the group's fit is worth (fitStatus): "sound", "used with care"
// (ok with a problem) or "failed" (ok false: its current, depth and cover
// mean nothing, and a script drops the row), on every row of the group;
// before, a failed fit's numbers read as usable to any program that did
// not also read ok (found in review). A failed fit's rows leave the fit's
// numbers empty and give the centre of its readings (failedFitRow). station_scatter_current_a and
// station_scatter_depth_m are, on the rows of a conductor's stations
// (conductor not empty), the realistic spread of one station's current
// and depth along that conductor's route (Route.StationScatterCurrent and
// StationScatterDepth, as results.json names them; cover's is depth's),
// which the fits' sigmas, counting the reading noise (and the position
// uncertainty given) alone, understate;
// empty where the route has too few triples of used stations to give one.
// log is the survey log the group's readings come from, its path as given
// (Group.Log), on every row of the group.
var csvHeader = []string{
	"chainage_m", "route_chainage_m", "group", "source", "conductor", "kind", "signal",
	"current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg",
	"depth_m", "depth_sigma_m", "depth_reference", "cover_m", "cover_sigma_m",
	"moment_a_m2", "moment_sigma_a_m2",
	"east_m", "north_m", "up_m", "lon_deg", "lat_deg",
	"azimuth_deg", "azimuth_sigma_deg", "dip_deg", "dip_sigma_deg",
	"offset_m", "offset_sigma_m",
	"points", "rms_nt", "reference_chi2", "dof", "ok", "problem", "used", "left_out",
	"pair_current_times_spacing_am", "pair_current_times_spacing_sigma_am",
	"pair_net_current_a", "pair_net_current_sigma_a",
	"pair_net_current_phase_deg", "pair_net_current_phase_sigma_deg",
	"sum_current_a", "sum_current_sigma_a", "sum_phase_deg", "sum_phase_sigma_deg",
	"uncertainty_note",
	"current_first_walk_a", "current_first_walk_sigma_a",
	"fit", "station_scatter_current_a", "station_scatter_depth_m",
	"log",
}

// csvCol maps a column name of csvHeader to its index.
var csvCol = func() map[string]int {
	m := make(map[string]int, len(csvHeader))
	for i, h := range csvHeader {
		m[h] = i
	}
	return m
}()

// WriteCSV writes one row per group and source (a group without sources
// gets one row with empty source columns), in the order of d.Groups: route
// order when there is a route. Columns are named in the header row with
// their units; positions and depths are those of the source's point_m
// and depth_m (the group's centroid when it has no source or its fit
// failed, failedFitRow, whose rows leave the fit's numbers empty), except where
// the row is a route station placed elsewhere (rowPlace): both lines of a
// same-way split whose sum the route takes give the station's centre,
// depth and cover (and offset_m the centre's, along the row's azimuth:
// rowOffset), and a further conductor's row its station's point,
// where that conductor's route passes, and depth and cover there, as the
// summaries quote them.
//
// conductor is 1 for the first line source of a group (the one the route
// follows) and for the second line of a same-way split whose sum the route
// takes, the track's number for a source followed as a further conductor,
// and empty otherwise. chainage_m is measured along the row's
// own conductor, as the findings about that conductor give it: along the
// further conductor's route, from its first station, for a source
// followed as one (Track.Route), else along the route (conductor 1);
// route_chainage_m is the group's chainage along the route whatever the
// source (Group.Chainage). signal is the run's signal on every row,
// "dc" or "ac-rms-" with the frequency ("ac-rms-50Hz", signalCell): a DC
// current_a is signed along the row's azimuth_deg, an AC one is RMS with
// its phase in phase_deg. depth_reference names what depth_m is measured
// from, as results.json's depth_reference.kind does (DepthBelowSensors or
// DepthBelowGround). cover_sigma_m is the depth sigma and the ground
// level's sigma in quadrature, as the cover findings use. moment_a_m2 and
// its sigma are the magnitude of a dipole's moment as the GeoJSON object
// gives it (objectMoment). ok and problem are the group's (see Group.OK
// and Group.Problem): a group the route calls poor has ok true and its
// reason in problem. used is true when the row's station entered its
// conductor's current and cover profile (Station.Used, as results.json's
// route.stations[].used and conductors[].route.stations[].used give it),
// false when the route left it out, with the reason in left_out, and
// empty for a row that is no station of a conductor's route (a
// magnetised object, a line no track follows, a survey without a route).
//
// The file is UTF-8 without a byte order mark, whatever its text: it is a
// data table for programs, most of whose CSV readers (Go's encoding/csv,
// Python's csv with encoding "utf-8", R's read.csv) take a byte order
// mark for part of the first column's name. Before, it started with one
// only when some cell was not ASCII (a "±" in a problem), so that the
// first column was "chainage_m" on one run and "\ufeffchainage_m" on the
// next (found in review). findings.csv, the crew's spreadsheet, keeps its
// mark. Lines end in LF, as findings.csv's.
//
// Sigmas have six significant digits, so that none is rounded to zero;
// each value carries two decimals past its sigma's leading digit (and at
// least the millimetre, 0.01 degree or 1e-4 A), positions the
// millimetre, and longitude and latitude 1e-8 degree. A sigma that is not
// positive (a quantity held rather than fitted, such as an assumed
// azimuth, or one a failed fit did not estimate) is left empty, as the
// GeoJSON leaves it out, rather than written as 0, which would read as
// exact; cover_sigma_m is then empty too. So is rms_nt for a group whose
// fit failed before estimating anything (too few readings).
//
// The text cells group, problem and left_out go through textCell: one
// that starts with "=", "+", "-", "@", a tab or a carriage return (a group
// named "=1+2" or "-T09") gets a leading apostrophe, so that a spreadsheet
// shows it as text rather than running it as a formula.
func WriteCSV(w io.Writer, d *Document) error {
	return WriteCSVWith(w, d, CSVOptions{})
}

// WriteCSVWith is WriteCSV in the style opt asks for: with
// opt.DecimalComma, a semicolon between fields and a decimal comma in
// every number, the text cells as WriteCSV writes them.
func WriteCSVWith(w io.Writer, d *Document, opt CSVOptions) error {
	if err := d.Validate(); err != nil {
		return err
	}
	wr := csv.NewWriter(w)
	cw := newCSVRowWriter(wr, opt, csvHeader, csvTextColumns...)
	if err := wr.Write(csvHeader); err != nil {
		return fmt.Errorf("report: writing CSV: %w", err)
	}
	for _, g := range d.Groups {
		base := func(src string, kind string, p [3]float64) []string {
			row := make([]string, len(csvHeader))
			set := func(col, v string) { row[csvCol[col]] = v }
			if g.Chainage != nil {
				set("chainage_m", fix(*g.Chainage, 3))
				set("route_chainage_m", fix(*g.Chainage, 3))
			}
			set("group", textCell(g.Key))
			set("log", textCell(g.Log))
			set("source", src)
			set("kind", kind)
			set("signal", d.signalCell())
			set("east_m", fix(p[0], 3))
			set("north_m", fix(p[1], 3))
			set("up_m", fix(p[2], 3))
			if lon, lat, ok := d.wgs84(p); ok {
				set("lon_deg", fix(lon, 8))
				set("lat_deg", fix(lat, 8))
			}
			set("points", strconv.Itoa(g.Points))
			if g.fitted() {
				set("rms_nt", sig(g.RMS)) // empty when the fit estimated none
			}
			if g.ReferenceChi2 > 0 {
				set("reference_chi2", sig(g.ReferenceChi2))
			}
			if g.DOF > 0 {
				set("dof", strconv.Itoa(g.DOF))
			}
			set("ok", strconv.FormatBool(g.OK))
			set("fit", fitStatus(&g))
			set("problem", textCell(g.Problem))
			if slices.Contains(g.Notes, inverse.RobustNote) {
				set("uncertainty_note", inverse.RobustNote)
			} else if d.PositionSigma != nil && slices.ContainsFunc(g.Notes, func(n string) bool { return strings.HasPrefix(n, inverse.PositionSigmaNote) }) {
				set("uncertainty_note", positionSigmaCell(d.PositionSigma))
			}
			return row
		}
		if len(g.Sources) == 0 {
			row := base("", "", g.Centroid)
			if st := d.stationOf(&g, 0, nil); st != nil {
				row[csvCol["used"]] = strconv.FormatBool(st.Used)
				row[csvCol["left_out"]] = textCell(d.leftOut(st, 0))
			}
			if err := cw.Write(row); err != nil {
				return fmt.Errorf("report: writing CSV: %w", err)
			}
			continue
		}
		for i, s := range g.Sources {
			if !g.OK {
				if err := cw.Write(d.failedFitRow(&g, i, &s, base)); err != nil {
					return fmt.Errorf("report: writing CSV: %w", err)
				}
				continue
			}
			at, depth, depthSigma, st := d.rowPlace(&g, i, &s)
			off, offSigma := g.rowOffset(i, &s, at, st)
			row := base(strconv.Itoa(i+1), s.Kind, at)
			set := func(col, v string) { row[csvCol[col]] = v }
			if c := sourceConductor(d, &g, i, &s); c > 0 {
				set("conductor", strconv.Itoa(c))
				if r := d.conductorRoute(c); r != nil && r.StationScatterCurrent != nil && r.StationScatterDepth != nil {
					set("station_scatter_current_a", sig(*r.StationScatterCurrent))
					set("station_scatter_depth_m", sig(*r.StationScatterDepth))
				}
			}
			if c := d.sourceChainage(&g, &s); c != nil {
				set("chainage_m", fix(*c, 3))
			}
			if st := d.stationOf(&g, i, &s); st != nil {
				set("used", strconv.FormatBool(st.Used))
				set("left_out", textCell(d.leftOut(st, s.Conductor)))
				if st.CurrentFirstWalk != nil && st.CurrentFirstWalkSigma != nil {
					set("current_first_walk_a", fixSig(*st.CurrentFirstWalk, *st.CurrentFirstWalkSigma, 4))
					set("current_first_walk_sigma_a", sigCell(*st.CurrentFirstWalkSigma))
				}
			}
			if p := g.Pair; p != nil && (i == p.Sources[0] || i == p.Sources[1]) {
				// A line of an unresolved go-and-return pair: its current
				// and position are not determined and are left empty; the
				// depth columns give the pair's centre (Group.Pair, in the
				// result document, has its current times spacing).
				set("depth_m", fixSig(p.Depth, p.DepthSigma, 3))
				set("depth_sigma_m", sig(p.DepthSigma))
				set("depth_reference", d.DepthReference.Kind)
				if c, ok := d.cover(p.Depth); ok {
					cs := d.coverSigma(p.DepthSigma)
					set("cover_m", fixSig(c, cs, 3))
					set("cover_sigma_m", sig(cs))
				}
				set("azimuth_deg", fixSig(p.Azimuth, p.AzimuthSigma, 2))
				set("azimuth_sigma_deg", sig(p.AzimuthSigma))
				set("pair_current_times_spacing_am", fixSig(p.CurrentTimesSpacing, p.CurrentTimesSpacingSigma, 4))
				set("pair_current_times_spacing_sigma_am", sig(p.CurrentTimesSpacingSigma))
				set("pair_net_current_a", fixSig(p.NetCurrent, p.NetCurrentSigma, 4))
				set("pair_net_current_sigma_a", sig(p.NetCurrentSigma))
				if p.NetCurrentPhase != nil && p.NetCurrentPhaseSigma != nil {
					set("pair_net_current_phase_deg", fixSig(*p.NetCurrentPhase, *p.NetCurrentPhaseSigma, 2))
					set("pair_net_current_phase_sigma_deg", sigCell(*p.NetCurrentPhaseSigma))
				}
				if err := cw.Write(row); err != nil {
					return fmt.Errorf("report: writing CSV: %w", err)
				}
				continue
			}
			if s.Kind != KindDipole {
				set("current_a", fixSig(s.Current, s.CurrentSigma, 4))
				set("current_sigma_a", sigCell(s.CurrentSigma))
				if s.Phase != nil {
					ps := 0.0
					if s.PhaseSigma != nil {
						ps = *s.PhaseSigma
						set("phase_sigma_deg", sigCell(ps))
					}
					set("phase_deg", fixSig(*s.Phase, ps, 2))
				}
				set("azimuth_deg", fixSig(s.Azimuth, s.AzimuthSigma, 2))
				set("azimuth_sigma_deg", sigCell(s.AzimuthSigma))
				set("dip_deg", fixSig(s.Dip, s.DipSigma, 2))
				set("dip_sigma_deg", sigCell(s.DipSigma))
				set("offset_m", fixSig(off, offSigma, 3))
				set("offset_sigma_m", sigCell(offSigma))
			} else if m, ms, ok := d.objectMoment(&s); ok {
				set("moment_a_m2", fixSig(m, ms, 4))
				set("moment_sigma_a_m2", sigCell(ms))
			}
			if st := d.summedStation(&g); st != nil && g.summedPart(i) {
				// A line of a same-way split whose sum the route takes:
				// the sum, on both lines' rows, beside the line's share.
				set("sum_current_a", fixSig(st.Current, st.CurrentSigma, 4))
				set("sum_current_sigma_a", sigCell(st.CurrentSigma))
				if st.Phase != nil && st.PhaseSigma != nil {
					set("sum_phase_deg", fixSig(*st.Phase, *st.PhaseSigma, 2))
					set("sum_phase_sigma_deg", sigCell(*st.PhaseSigma))
				}
			}
			set("depth_m", fixSig(depth, depthSigma, 3))
			set("depth_sigma_m", sigCell(depthSigma))
			set("depth_reference", d.DepthReference.Kind)
			if c, ok := d.cover(depth); ok {
				cs := d.sourceCoverSigma(depthSigma)
				set("cover_m", fixSig(c, cs, 3))
				set("cover_sigma_m", sigCell(cs))
			}
			if err := cw.Write(row); err != nil {
				return fmt.Errorf("report: writing CSV: %w", err)
			}
		}
	}
	wr.Flush()
	if err := wr.Error(); err != nil {
		return fmt.Errorf("report: writing CSV: %w", err)
	}
	return nil
}

// failedFitRow is results.csv's row for source i of group g, whose fit
// failed (g.OK false; fit "failed"): base's cells (the group's own:
// points, rms_nt, reference_chi2, dof, ok, problem, fit), its chainage,
// conductor, used and left_out, placed at the centre of the group's
// readings as route.geojson's "failed fit" Point is, and none of the
// fit's numbers: current, phase, depth, cover, moment, azimuth, dip,
// offset, the pair_ and sum_ columns and their sigmas are empty. Before,
// they were written as for a sound fit, and a row 14 m past a cable's end
// gave a cover of 0.636 m to any program that did not also read ok or
// fit (found in review); the crew report and the terminal table show
// "fit failed, no value" and dashes there, and results.json keeps the
// numbers in the group's sources, beside its ok false, for diagnosis.
func (d *Document) failedFitRow(g *Group, i int, s *Source, base func(string, string, [3]float64) []string) []string {
	row := base(strconv.Itoa(i+1), s.Kind, g.Centroid)
	if c := sourceConductor(d, g, i, s); c > 0 {
		row[csvCol["conductor"]] = strconv.Itoa(c)
	}
	if c := d.sourceChainage(g, s); c != nil {
		row[csvCol["chainage_m"]] = fix(*c, 3)
	}
	if st := d.stationOf(g, i, s); st != nil {
		row[csvCol["used"]] = strconv.FormatBool(st.Used)
		row[csvCol["left_out"]] = textCell(d.leftOut(st, s.Conductor))
	}
	return row
}

// textCell returns a text cell of a CSV file (a group's name, a message)
// as a spreadsheet should show it: a cell starting with "=", "+", "-", "@",
// a tab or a carriage return gets a leading apostrophe, so that a
// spreadsheet opening the file shows the text as written instead of
// reading it as a formula, as the OWASP guidance on CSV injection advises
// (CWE-1236). Group names come straight from the survey log: a traverse
// named "=1+2" showed as 3 and one named "-T09" as an error, and a name
// such as "=HYPERLINK(...)" would run. A program reading the file strips
// one leading apostrophe from such a cell to get the text back. Numeric
// cells are not passed through it: "-0.508" is a number to a spreadsheet.
func textCell(s string) string {
	if s == "" {
		return s
	}
	switch s[0] {
	case '=', '+', '-', '@', '\t', '\r':
		return "'" + s
	}
	return s
}

// sourceConductor is the number of the conductor along the route that
// source i of group g is: its track's number, 1 for the first line source
// of a group on a route (or of the only group) whose fit is used (g.OK), 0
// for a source in no track or of a failed fit (no current found, not
// converged), which the route leaves out.
func sourceConductor(d *Document, g *Group, i int, s *Source) int {
	switch {
	case s.Conductor > 0:
		return s.Conductor
	case i == 0 && s.Kind != KindDipole && g.OK:
		return 1
	case g.SummedSources != nil && i == g.SummedSources[1] && g.OK:
		// The second line of a same-way split whose sum the route takes:
		// a share of conductor 1's current.
		return 1
	}
	return 0
}

// stationOf is the route station that source i of group g is, or nil:
// its track's station for a source followed as a further conductor, the
// route's (conductor 1's) station of the group for its first line source
// (s nil for a group without sources), nil for any other source and
// without a route.
func (d *Document) stationOf(g *Group, i int, s *Source) *Station {
	var r *Route
	switch {
	case s != nil && s.Conductor > 0:
		for k := range d.Conductors {
			if d.Conductors[k].Number == s.Conductor {
				r = &d.Conductors[k].Route
			}
		}
	case i == 0 && (s == nil || s.Kind != KindDipole):
		r = d.Route
	}
	if r == nil {
		return nil
	}
	for k := range r.Stations {
		if r.Stations[k].Key == g.Key {
			return &r.Stations[k]
		}
	}
	return nil
}

// leftOut says why station st of group g, on the route of conductor (0
// for conductor 1, else a further conductor's Track.Number), was left out
// of its conductor's current and cover profile; empty when it was used
// (see whyLeftOut).
func (d *Document) leftOut(st *Station, conductor int) string {
	switch d.whyLeftOut(st, conductor) {
	case leftUsed:
		return ""
	case leftFailed:
		return "the fit failed or found no current (see problem)"
	case leftObject:
		return "a magnetised object at this station (see its dipole-anomaly finding)"
	case leftPastEnd:
		return "past the conductor's end: the fit finds only the field beyond it (see problem and the finding that the conductor appears to end)"
	case leftUnplaced:
		return "too few readings to place the conductor: the fit has fewer than 10 more measured values than unknowns (degrees of freedom), so the station takes no part in the route's line and chainage either (see problem, and the poor-fit finding, which compares its current with its neighbours')"
	}
	return "left out of the profile (see problem)"
}

// sourceChainage is the chainage of source s of group g along its own
// conductor: along the further conductor's route (Track.Route, measured
// from that conductor's first station, as the findings about it give it)
// for a source followed in a track, otherwise the group's chainage along
// the route (conductor 1). Nil without a route.
func (d *Document) sourceChainage(g *Group, s *Source) *float64 {
	if s.Conductor > 0 {
		for _, t := range d.Conductors {
			if t.Number != s.Conductor {
				continue
			}
			for _, st := range t.Route.Stations {
				if st.Key == g.Key {
					c := st.Chainage
					return &c
				}
			}
		}
	}
	if s.Kind == KindDipole && g.Chainage != nil && d.Route != nil {
		// A magnetised object's own chainage, as its finding gives it.
		for _, st := range d.Route.Stations {
			if st.Key == g.Key {
				c := route.ObjectChainage(st.Chainage, st.Point, st.Direction, s.Point)
				return &c
			}
		}
	}
	return g.Chainage
}

// sourceCoverSigma is coverSigma for a source's depth sigma, and 0 (not
// estimated) when the depth sigma is not positive: the ground's sigma
// alone would make a depth that was held or not fitted look known.
func (d *Document) sourceCoverSigma(depthSigma float64) float64 {
	if !(depthSigma > 0) {
		return 0
	}
	return d.coverSigma(depthSigma)
}

// coverSigma is the one-sigma uncertainty of the cover at a depth with
// sigma depthSigma: it and the ground level's sigma in quadrature.
func (d *Document) coverSigma(depthSigma float64) float64 {
	return math.Hypot(depthSigma, d.DepthReference.GroundSigma)
}

// cover returns the depth of cover for a depth below the reference, and
// false when the ground is not known.
func (d *Document) cover(depth float64) (float64, bool) {
	switch {
	case d.DepthReference.Kind == DepthBelowGround:
		return depth, true
	case d.DepthReference.SensorHeight > 0:
		return depth - d.DepthReference.SensorHeight, true
	}
	return 0, false
}

// fix formats v with prec decimals, without a negative zero.
func fix(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if z := strconv.FormatFloat(0, 'f', prec, 64); s == "-"+z {
		return z
	}
	return s
}

// sig formats v with six significant digits.
func sig(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// sigCell formats a sigma for a CSV cell: six significant digits when it
// is positive and finite, empty otherwise (held or not estimated, not
// exact), as putSigma leaves it out of the GeoJSON.
func sigCell(sigma float64) string {
	if sigma > 0 && !math.IsInf(sigma, 1) {
		return sig(sigma)
	}
	return ""
}

// fixSig formats a value whose one-sigma uncertainty is sigma with at least
// prec decimals and enough more to show two digits past the sigma's
// leading one (at most 12 decimals), so that a small sigma is never
// rounded off the value.
func fixSig(v, sigma float64, prec int) string {
	if sigma > 0 && !math.IsInf(sigma, 0) && !math.IsNaN(sigma) {
		prec = max(prec, min(12, 2-int(math.Floor(math.Log10(sigma)))))
	}
	return fix(v, prec)
}

// positionSigmaCell is the uncertainty_note of a fit that counted the
// positions' uncertainty pos.
func positionSigmaCell(pos *PositionSigma) string {
	return "sigmas count " + pos.Words()
}
