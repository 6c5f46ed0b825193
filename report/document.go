package report

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
)

// SchemaVersion is the version of the result document written by this
// package. It grows by one whenever a field changes meaning or is removed;
// adding a field does not change it. Version 2: a dipole source's moment
// is moment_a_m2 and moment_sigma_a_m2 (moment_am2 and moment_sigma_am2 in
// version 1, which ReadJSON still reads), the name results.csv and
// route.geojson give it, and a dipole source has no direction, current_a,
// offset_m, azimuth_deg, dip_deg (nor their sigmas) or span_m, which were
// written as 0 for it (Source.MarshalJSON). Version 3: a route's
// station_scatter_current_a and station_scatter_depth_m are taken about
// the straight line through each station's neighbours, from
// station_scatter_triples runs of three stations (Route.
// StationScatterCurrent); before, from the differences of successive
// stations, station_scatter_pairs, which is gone. Some version 2
// documents, written between the two changes, hold the new spread with
// station_scatter_triples: ReadJSON keeps a spread given with
// station_scatter_triples and leaves out one given without it
// (readScatterV2).
const SchemaVersion = 3

// Document is the result of one locate run: what was read, how it was
// corrected, what was fitted per group, the route built from the groups and
// the findings a crew should act on. It is written as JSON (WriteJSON), CSV
// (WriteCSV), GeoJSON (WriteGeoJSON) and a crew report (WriteHTML).
//
// Positions are metres in the local east, north, up frame described by
// Frame; fields are nanotesla; currents amperes (RMS for AC); angles
// degrees; every sigma is one standard deviation.
type Document struct {
	// SchemaVersion is SchemaVersion when written by this package.
	SchemaVersion int `json:"schema_version"`
	// Tool is the program that wrote the document.
	Tool Tool `json:"tool"`
	// Created is when the document was made, RFC 3339 in UTC.
	Created string `json:"created,omitempty"`
	// Title and Site name the survey for the report ("Fenwick Lane cable
	// route", "Harrow Fen substation").
	Title string `json:"title,omitempty"`
	Site  string `json:"site,omitempty"`
	// Inputs are the files read, with checksums.
	Inputs []Input `json:"inputs"`
	// Calibration and BaseStation describe the corrections applied; nil
	// when none was.
	Calibration *Correction `json:"calibration,omitempty"`
	BaseStation *Correction `json:"base_station,omitempty"`
	// Frame is the coordinate frame of every position in the document.
	Frame Frame `json:"frame"`
	// DepthReference says what depth_m is measured from.
	DepthReference DepthReference `json:"depth_reference"`
	// Signal says whether the fit used DC fields or demodulated AC.
	Signal Signal `json:"signal"`
	// Settings are the options of the run, as the user gave them.
	Settings map[string]string `json:"settings,omitempty"`
	// MinCover is the minimum cover checked, nil when none was given.
	MinCover *MinCover `json:"min_cover,omitempty"`
	// Groups hold one fit each; one group when the run was not grouped.
	// When there is a route they are in route order.
	Groups []Group `json:"groups"`
	// Route is the along-route profile built from the groups; nil with
	// fewer than two groups. It follows the strongest conductor of each
	// group (conductor 1).
	Route *Route `json:"route,omitempty"`
	// Conductors are further conductors followed along the route: the
	// other line sources of the groups, linked from group to group by
	// their offset from conductor 1 (see Build), numbered from 2 by
	// decreasing current. Empty when every group holds one conductor or
	// none was seen in enough groups.
	Conductors []Track `json:"conductors,omitempty"`
	// LinesAbove are conductors above the sensors (overhead lines, cable
	// trays) fitted beside the buried lines (BuildSettings.LineAbove):
	// sources of their own kind, never in Groups' sources, the route,
	// Conductors or a cover check.
	LinesAbove []LineAbove `json:"lines_above_sensors,omitempty"`
	// Findings list what a crew should act on, most pressing first.
	Findings []Finding `json:"findings"`
	// Warnings are notes about the run that may need action (skipped
	// rows, clipped readings).
	Warnings []string `json:"warnings,omitempty"`
	// Notes say what the run did that needs no action when it is right
	// (the mains averaged out over whole cycles, depths taken below the
	// mean height of stacked sensors). Before, these were warnings, and a
	// correct routine run printed warnings a crew could not act on
	// (found in review).
	Notes []string `json:"notes,omitempty"`
	// PositionSigma is the one-sigma uncertainty of the logged positions
	// that the fits carried into their sigmas (locate --position-sigma,
	// inverse.Settings.PositionSigmaPlan and PositionSigmaUp); nil when
	// they took the positions as exact.
	PositionSigma *PositionSigma `json:"position_sigma,omitempty"`
	// UncertaintyNote says in words what the sigmas of the fits count
	// (the reading noise, and with PositionSigma the positions'
	// uncertainty; not the error of the model) and where a realistic
	// spread is given (Route.StationScatterCurrent and
	// StationScatterDepth). Build sets it to UncertaintyNoteFor
	// (PositionSigma): SigmaNote without position sigmas.
	UncertaintyNote string `json:"uncertainty_note,omitempty"`
}

// PositionSigma is the one-sigma uncertainty of the logged positions the
// fits counted in their sigmas, m: Plan across the plan (east and north,
// each), Up in height.
//
// With Columns the sigmas were each reading's own, from the log's
// position sigma columns (sigma_plan, sigma_up: a receiver's accuracy
// estimates): Plan and Up are then the largest of them, and FloorPlan
// and FloorUp the --position-sigma given beside them as a floor (0 for
// none).
type PositionSigma struct {
	Plan      float64 `json:"plan_m"`
	Up        float64 `json:"up_m"`
	Columns   bool    `json:"from_log_columns,omitempty"`
	FloorPlan float64 `json:"floor_plan_m,omitempty"`
	FloorUp   float64 `json:"floor_up_m,omitempty"`
	// Sources names the log columns read as the sigmas, with the unit
	// each was taken in: "hacc (mm) and vacc (m)" (set by the caller
	// that read the logs; empty when it did not say). A column that
	// means something else, or a unit misread, shows here.
	Sources string `json:"columns,omitempty"`
}

// Words says what a fit's sigma counts with these position sigmas, for
// the outputs to say it alike: "the reading noise and position
// uncertainty (0.2 m plan, 0.15 m height)"; "the reading noise" for nil.
func (p *PositionSigma) Words() string {
	if p == nil {
		return "the reading noise"
	}
	if p.Columns {
		from := "the log's position sigma columns"
		if p.Sources != "" {
			from = "the log's columns " + p.Sources
		}
		w := fmt.Sprintf("the reading noise and position uncertainty (each reading's own, from %s, up to %s m plan, %s m height",
			from, strconv.FormatFloat(p.Plan, 'g', 3, 64), strconv.FormatFloat(p.Up, 'g', 3, 64))
		if p.FloorPlan+p.FloorUp > 0 {
			w += fmt.Sprintf("; none below the %s m plan, %s m height given with --position-sigma",
				strconv.FormatFloat(p.FloorPlan, 'g', 3, 64), strconv.FormatFloat(p.FloorUp, 'g', 3, 64))
		}
		return w + ")"
	}
	return fmt.Sprintf("the reading noise and position uncertainty (%s m plan, %s m height)",
		strconv.FormatFloat(p.Plan, 'g', 3, 64), strconv.FormatFloat(p.Up, 'g', 3, 64))
}

// given says where the position sigmas came from, for the notes.
func (p *PositionSigma) given() string {
	if p.Columns && p.Sources != "" {
		return "as the log's columns " + p.Sources + " give them"
	}
	if p.Columns {
		return "as the log's position sigma columns give them"
	}
	return "as given with --position-sigma"
}

// Given says where the position sigmas came from: "as given with
// --position-sigma", or the log's columns.
func (p *PositionSigma) Given() string { return p.given() }

// UncertaintyNoteFor is the Document.UncertaintyNote that Build writes
// for fits given the position sigmas pos: SigmaNote for nil (the positions
// taken as exact), else the same note saying that the positions'
// uncertainty is counted too, in the fits of conductors (a magnetised
// object's position and moment, fitted apart with the conductors held,
// leave it out).
func UncertaintyNoteFor(pos *PositionSigma) string {
	if pos == nil {
		return SigmaNote
	}
	return "Every fitted sigma (current_sigma_a, depth_sigma_m, phase_sigma_deg, offset, azimuth and dip " +
		"sigmas) counts " + pos.Words() + ", " + pos.given() + " (position_sigma): each reading " +
		"weighed by its whole variance, the field's change over that position error added to the reading noise " +
		"(with a base-station correction, the base record's own noise too, which every survey reading taken between " +
		"two of its readings shares); a magnetised object's position and moment sigmas, fitted apart with the " +
		"conductors held, leave the positions' uncertainty out. " + sigmaSerial +
		"errors in the sensor positions beyond the uncertainty given (a bias that many readings share, such as a " +
		"shifted position fix or a wrong sensor height)" + sigmaSpread
}

// SigmaNote is the Document.UncertaintyNote that Build writes when the
// fits took the positions as exact (no position sigmas).
const SigmaNote = "Every fitted sigma (current_sigma_a, depth_sigma_m, phase_sigma_deg, offset, azimuth and dip " +
	"sigmas) counts the reading noise only (with a base-station correction, the base record's own noise too, " +
	"which every survey reading taken between two of its readings shares). " + sigmaSerial +
	"errors in the sensor positions (their scatter is counted when given with --position-sigma)" + sigmaSpread

// sigmaSerial and sigmaSpread are the notes' words after what the sigmas
// count: the serial correlation and the model's error, whose list the
// position errors left out end, and the realistic spread.
const sigmaSerial = "For DC fits it counts that noise's " +
	"correlation from reading to reading along the traverse as far as the fit's residuals show it: where their lag-1 " +
	"autocorrelation is significant every sigma is widened by the square root of (1 + rho)/(1 - rho) (the group's notes " +
	"say so, the run warns from 1.5 times); noise correlated over many readings (1/f drift, aliased mains) can still " +
	"leave sigmas too small. It does not count the error of the model: bends, a neighbouring " +
	"conductor, the finite length of a real conductor against the straight infinite line fitted, "

const sigmaSpread = ". Real errors are often many times larger. The route's station_scatter_current_a and " +
	"station_scatter_depth_m, the robust scatter between neighbouring stations, are a more realistic measure " +
	"of the spread of a single station's current and depth from station to station, but they cannot see a bias " +
	"that neighbouring stations share (a bend, a dive or a change of current nearby moves them alike): there " +
	"the real error can be many times the scatter. Stations whose fit misses its readings by well over the noise, " +
	"or that lie near a bend or a change of current the route found, have their sigmas widened for it (their notes say so)."

// Tool names the program, its version and how it was built.
type Tool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
	// Build is how the program was built, where that can change the
	// numbers: the Go release, the target system and architecture with
	// its instruction-set level (GOAMD64 and the like), and the build
	// tags (such as noasm, which swaps the assembly kernels of the linear
	// algebra for Go code that sums in another order). Empty when not
	// known.
	Build string `json:"build,omitempty"`
}

// Input is one file read.
type Input struct {
	// Role is what the file was used for: "survey", "base", "calibration",
	// "coil-response".
	Role string `json:"role"`
	// Path is the file name as given on the command line.
	Path string `json:"path"`
	// SHA256 is the hex SHA-256 of the file's bytes.
	SHA256 string `json:"sha256,omitempty"`
	// Rows is the number of readings kept from it (0 when not a log).
	Rows int `json:"rows,omitempty"`
}

// Correction describes a correction applied to the readings.
type Correction struct {
	// File is the calibration file or base-station log.
	File string `json:"file,omitempty"`
	// Summary is one line saying what was corrected and by how much.
	Summary string `json:"summary"`
	// Coil describes the induction coils whose voltages were converted to
	// field (locate --coil or --coil-response); nil otherwise.
	Coil *CoilResponse `json:"coil,omitempty"`
	// BaseGaps are the gaps of the base-station record that survey
	// readings fell in, bridged by a straight line (locate); the groups
	// named are not counted sound. Empty for other corrections.
	BaseGaps []BaseGap `json:"base_gaps,omitempty"`
}

// BaseGap is a gap in the base-station record that survey readings fell
// in: the base correction drew a straight line across it, whose error no
// fit's sigma holds.
type BaseGap struct {
	// Log is the survey log whose readings fell in it.
	Log string `json:"log"`
	// From and To are the times of the base readings either side (UTC,
	// RFC 3339, or seconds for relative times), Seconds the span.
	From    string  `json:"from"`
	To      string  `json:"to"`
	Seconds float64 `json:"seconds"`
	// Missing names the field components missing when not all three are.
	Missing []string `json:"missing,omitempty"`
	// BaseReadingsMissing counts the base readings missing in the gap
	// (one, for a 120-s gap in one-minute data).
	BaseReadingsMissing int `json:"base_readings_missing"`
	// Readings counts the survey readings in the gap, and Groups names
	// the groups they belong to (empty when the run was not grouped).
	Readings int      `json:"readings"`
	Groups   []string `json:"groups,omitempty"`
	// LineErrorRMS and LineErrorMax estimate the straight line's error
	// from the base record itself: its departure from straight lines
	// over spans as long within an hour of the gap, RMS and largest, nT,
	// of the components missing (Missing; all three when it is empty).
	// Nil when the record has no such span.
	LineErrorRMS *float64 `json:"line_error_rms_nt,omitempty"`
	LineErrorMax *float64 `json:"line_error_max_nt,omitempty"`
}

// CoilResponse is the response of the induction coils of a coil log, as
// used to turn their voltages into field.
type CoilResponse struct {
	// Turns, AreaM2 (mean turn area, m²) and Mu (the core's apparent
	// relative permeability) are the coil of Faraday's law V = -N A μ dB/dt
	// (locate --coil); zero for a measured response.
	Turns  float64 `json:"turns,omitempty"`
	AreaM2 float64 `json:"area_m2,omitempty"`
	Mu     float64 `json:"mu,omitempty"`
	// FrequencyHz is the survey frequency at which SensitivityVPerT (the
	// voltage amplitude per field amplitude, V/T) and PhaseDeg (how far
	// the voltage leads the field, degrees: -90 for the ideal law) are
	// given; each window was converted at its own estimated frequency.
	FrequencyHz      float64 `json:"frequency_hz"`
	SensitivityVPerT float64 `json:"sensitivity_v_per_t"`
	PhaseDeg         float64 `json:"phase_deg"`
	// Unit is the voltage unit the field columns were read in (V, mV, uV
	// or nV).
	Unit string `json:"unit"`
}

// Frame kinds.
const (
	// FrameLocalENU: metres east, north and up of a local origin.
	FrameLocalENU = "local-enu"
)

// Frame is the coordinate frame of the document's positions.
type Frame struct {
	// Kind is FrameLocalENU.
	Kind string `json:"kind"`
	// Origin is the WGS84 position of the local origin when the input
	// was geo-referenced; nil when positions are only local.
	Origin *Origin `json:"origin,omitempty"`
}

// Origin is a WGS84 position.
type Origin struct {
	Lat float64 `json:"lat_deg"`
	Lon float64 `json:"lon_deg"`
	H   float64 `json:"height_m"`
}

// Depth reference kinds.
const (
	// DepthBelowSensors: depth below the mean height of the sensors.
	DepthBelowSensors = "mean-sensor-height"
	// DepthBelowGround: depth below a ground surface the user gave.
	DepthBelowGround = "ground"
)

// DepthReference says what depths are measured from.
type DepthReference struct {
	// Kind is DepthBelowSensors or DepthBelowGround.
	Kind string `json:"kind"`
	// Z is the up coordinate of the reference, m.
	Z float64 `json:"z_m"`
	// SensorHeight is the sensors' mean height above ground, m, when
	// known (cover = depth - SensorHeight for DepthBelowSensors); zero
	// when unknown or when Kind is DepthBelowGround.
	SensorHeight float64 `json:"sensor_height_m,omitempty"`
	// GroundSigma is the one-sigma uncertainty of the ground level
	// relative to the reference, m, that the cover sigmas include; zero
	// when none was given (cover sigmas then cover the reading noise only).
	GroundSigma float64 `json:"ground_sigma_m,omitempty"`
	// PerGroup is true, for DepthBelowSensors, when the groups' depths are
	// not all measured from one height: their sensors' mean heights differ
	// by over a centimetre (a sloping route), or, with SensorHeight, some
	// groups' depths are below the sensors' height where they pass over
	// each line (groundAtLines). Z is then the first group's mean sensor
	// height only; each group's own is its Centroid's up.
	PerGroup bool `json:"per_group,omitempty"`
	// PerLog is true when the logs' sensors stood at different heights
	// above the ground (--sensor-height LOG=H): SensorHeight is then the
	// datum, the groups whose sensors stood at another height give it
	// (Group.SensorHeight), and their depths are referred to the plane
	// SensorHeight above the ground, so cover = depth - SensorHeight
	// holds for every group.
	PerLog bool `json:"per_log,omitempty"`
}

// Signal modes.
const (
	SignalDC = "dc"
	SignalAC = "ac"
)

// Signal describes what was fitted.
type Signal struct {
	// Mode is SignalDC or SignalAC.
	Mode string `json:"mode"`
	// FrequencyHz and WindowS are the demodulation frequency and window
	// length for AC; zero for DC.
	FrequencyHz float64 `json:"frequency_hz,omitempty"`
	WindowS     float64 `json:"window_s,omitempty"`
	// NuisanceHz lists the other frequencies fitted alongside in every
	// window and not reported (the mains and their odd harmonics beside
	// an injected tracer); empty when none were.
	NuisanceHz []float64 `json:"nuisance_hz,omitempty"`
	// PhasesWithinGroups is set when some group was fitted with a phase
	// ramp (the field's frequency off the one demodulated at): the phases
	// then compare between the conductors of a group, not along the route
	// (PhaseWords).
	PhasesWithinGroups bool `json:"phases_within_groups,omitempty"`
}

// MinCover is a minimum depth of cover and where it comes from.
type MinCover struct {
	Depth float64 `json:"depth_m"`
	// Code names the code or practice the user took it from; empty when
	// none was named.
	Code string `json:"code,omitempty"`
}

// Group is the fit of one group of readings.
type Group struct {
	// Key is the group's value of the grouping column; empty when the
	// run was not grouped.
	Key string `json:"key"`
	// Log is the survey log the group's readings come from (of its first
	// reading, where a traverse runs on into the next file), its path as
	// given; empty when not known. Which log (crew, day) a group came
	// from could not be read from the outputs where its name stood bare
	// beside another log's (found in review).
	Log string `json:"log,omitempty"`
	// SensorHeight is the height above the ground, m, of the sensors of
	// the group's log where it differs from DepthReference.SensorHeight
	// (--sensor-height LOG=H): the group's depths are then referred to
	// the plane DepthReference.SensorHeight above the ground, not to its
	// own sensors, which stood SensorHeight above it (depth below them =
	// depth + SensorHeight - DepthReference.SensorHeight); absent
	// otherwise.
	SensorHeight float64 `json:"sensor_height_m,omitempty"`
	// Points is the number of readings fitted.
	Points int `json:"points"`
	// Chainage is the group's distance along the route, m; nil without
	// a route.
	Chainage *float64 `json:"chainage_m,omitempty"`
	// Centroid is the mean position of the readings, m.
	Centroid [3]float64 `json:"centroid_m"`
	// RMS is the root-mean-square residual, nT.
	RMS float64 `json:"rms_nt"`
	// Background is the fitted uniform field [east, north, up], nT, and
	// its sigma.
	Background      [3]float64 `json:"background_nt"`
	BackgroundSigma [3]float64 `json:"background_sigma_nt"`
	// Chi2 and DOF are the fit's own chi-square and degrees of freedom,
	// measured against Noise, the reading noise the fit used. When the
	// noise was estimated from the fit's own residuals (no noise given),
	// Chi2 equals DOF by construction and says nothing about the quality
	// of the fit: see ReferenceChi2.
	Chi2 float64 `json:"chi2"`
	DOF  int     `json:"dof"`
	// Noise is the one-sigma reading noise the fit used, nT: the noise
	// given, or the fit's own estimate from its residuals; zero when
	// unknown.
	Noise float64 `json:"noise_nt,omitempty"`
	// ResidualLag1 is the lag-1 autocorrelation of a DC fit's residuals
	// along the readings (pooled over the axes), and SigmaWidening the
	// factor by which the first line's current's sigma was widened for it
	// (each other parameter is widened by its own factor; see
	// inverse.Result.SerialCorrelation and SigmaWidening): absent when not
	// widened, and for AC.
	ResidualLag1  float64 `json:"residual_lag1,omitempty"`
	SigmaWidening float64 `json:"sigma_widening,omitempty"`
	// ReferenceNoise is the group's reference reading noise, nT: the
	// noise given for the run or, when it was estimated (with three
	// groups or more), the group's noise measured apart from its fit
	// times the survey's reference ratio (the lower quartile of the
	// groups' fit noise over their measured noise, at least 1), or
	// without measured noise the median of the groups' own estimates. It
	// is the yardstick that calls a fit poor. Zero when there is none.
	ReferenceNoise float64 `json:"reference_noise_nt,omitempty"`
	// ReferenceChi2 is the chi-square of the fit against ReferenceNoise,
	//
	//	ReferenceChi2 = Chi2 * (Noise / ReferenceNoise)^2,
	//
	// with DOF degrees of freedom: ReferenceChi2/DOF well above 1 means
	// the group fits much worse than the survey's noise allows. Zero when
	// ReferenceNoise or Noise is zero.
	ReferenceChi2 float64 `json:"reference_chi2,omitempty"`
	// OK is true when the fit converged and is usable: its estimates are
	// reported and, unless Problem says otherwise, sound. A group can be
	// OK with a Problem (a fit that converged but fits poorly or is
	// ambiguous: used with care).
	OK bool `json:"ok"`
	// Status says why the fit stopped.
	Status string `json:"status,omitempty"`
	// Problem says why the fit failed, is poor or is ambiguous; empty
	// when it is sound. It includes the verdict of the route's quality
	// check: a group whose ReferenceChi2/DOF exceeds the route's limit
	// (a "poor-fit" finding of severity caution) carries the reason
	// here, so that every output agrees with the findings.
	Problem string `json:"problem,omitempty"`
	// Criteria compare models with different numbers of conductors.
	Criteria []Criterion `json:"criteria,omitempty"`
	// Sources are the fitted conductors and objects.
	Sources []Source `json:"sources"`
	// Notes are remarks on the fit.
	Notes []string `json:"notes,omitempty"`
	// PhaseRampHz is the frequency offset, Hz, of the phase ramp fitted to
	// an AC group, with its one-sigma: the phasors turned by 360·δf·t
	// degrees across the group (the field's frequency off the one
	// demodulated at, or wandering) and were turned back before the fit,
	// about the group's middle. Nil when no ramp was fitted.
	PhaseRampHz      *float64 `json:"phase_ramp_hz,omitempty"`
	PhaseRampSigmaHz *float64 `json:"phase_ramp_sigma_hz,omitempty"`
	// Profile holds a compact copy of the readings for plots; nil when
	// not kept.
	Profile *Profile `json:"profile,omitempty"`
	// Pair, when not nil, is a go-and-return pair among the group's
	// sources whose current and spacing the readings do not separate:
	// Pair.Sources names its two lines, whose currents and positions are
	// then not identifiable, and Pair holds what is determined. When it
	// holds the first source, the group's conductor is the pair; it may
	// also lie beside a stronger conductor (a cable beside a pair).
	Pair *Pair `json:"pair,omitempty"`
	// SummedSources, when not nil, names the two lines (indices in
	// Sources, the first 0) of a split of the group's first line in two
	// lines carrying current the same way, in shares the readings do not
	// part, whose sum the route takes at their centre (one conductor
	// bending under the readings; see the group's notes): the route's
	// station for the group holds the sum's current, the centre and its
	// depth, which results.csv, route.geojson and the tables give on both
	// lines' rows (both are conductor 1).
	SummedSources *[2]int `json:"summed_sources,omitempty"`
}

// Pair is a go-and-return pair of conductors too close together, for
// their depth, for the readings to separate the current from the spacing
// (inverse.PairEstimate): far from currents I and -I spaced d the field
// is that of a line dipole, mu0 I d / (2 pi r^2), fixed by the product
// I d and the pair's centre.
type Pair struct {
	// Sources are the indices of the pair's two lines in Group.Sources.
	Sources [2]int `json:"sources"`
	// Point is the pair's centre, midway between the lines, m; Direction
	// its unit direction, turned along increasing chainage when there is
	// a route (as the sources are).
	Point     [3]float64 `json:"point_m"`
	Direction [3]float64 `json:"direction"`
	// Depth of the centre below the depth reference, m, its offset from
	// the readings' centroid (positive to the right looking along
	// Direction), m, and the azimuth, degrees, with sigmas.
	Depth        float64 `json:"depth_m"`
	DepthSigma   float64 `json:"depth_sigma_m"`
	Offset       float64 `json:"offset_m"`
	OffsetSigma  float64 `json:"offset_sigma_m"`
	Azimuth      float64 `json:"azimuth_deg"`
	AzimuthSigma float64 `json:"azimuth_sigma_deg"`
	// CurrentTimesSpacing is the pair's current times its spacing, I d,
	// A m (RMS for AC), and its sigma.
	CurrentTimesSpacing      float64 `json:"current_times_spacing_am"`
	CurrentTimesSpacingSigma float64 `json:"current_times_spacing_sigma_am"`
	// NetCurrent is the sum of the two currents (signed along Direction
	// for DC, RMS for AC), A, and its sigma: current that does not return
	// through the pair.
	NetCurrent      float64 `json:"net_current_a"`
	NetCurrentSigma float64 `json:"net_current_sigma_a"`
	// NetCurrentPhase is the AC net current's phase flowing along
	// Direction, degrees (referenced as Source.Phase), and its sigma; nil
	// for DC.
	NetCurrentPhase      *float64 `json:"net_current_phase_deg,omitempty"`
	NetCurrentPhaseSigma *float64 `json:"net_current_phase_sigma_deg,omitempty"`
	// Unidentifiable lists what the readings do not determine: "current"
	// and "spacing", and for AC "net current phase" when the net current
	// is within its noise (NetCurrentPhase is then absent).
	Unidentifiable []string `json:"unidentifiable"`
	Notes          []string `json:"notes,omitempty"`
}

// Criterion scores the model with Count conductors.
type Criterion struct {
	Count  int     `json:"count"`
	AIC    float64 `json:"aic"`
	BIC    float64 `json:"bic"`
	RSS    float64 `json:"rss_nt2"`
	Chosen bool    `json:"chosen,omitempty"`
	// Rejected says why the fit stopped adding conductors at this count
	// (the criterion did not fall, or a guard against over-fitting, such
	// as a current within its noise); empty for the counts it accepted.
	Rejected string `json:"rejected,omitempty"`
}

// Source kinds.
const (
	KindLine   = "line"
	KindDipole = "dipole"
)

// Source is one fitted conductor (or, for KindDipole, a magnetised object).
type Source struct {
	// Kind is KindLine or KindDipole.
	Kind string `json:"kind"`
	// Point is a point on the conductor, m (inverse.SourceEstimate.Point;
	// the dipole's position for KindDipole): where the line crosses the
	// group's traverse in plan (inverse.SourceEstimate.AtTrackCrossing),
	// also when the traverse crosses it obliquely; where the readings are
	// not one walked traverse or run within 20 degrees of the line, the
	// point under the centroid of the readings in plan (the source's notes
	// say so). Depth is the depth there.
	Point [3]float64 `json:"point_m"`
	// Direction is the conductor's unit direction.
	Direction [3]float64 `json:"direction"`
	// Current is the current along Direction, A (RMS for AC), and its
	// sigma.
	Current      float64 `json:"current_a"`
	CurrentSigma float64 `json:"current_sigma_a"`
	// Phase is the AC phase, degrees, and its sigma; nil for DC. It is
	// referenced to a cosine of the demodulation frequency peaking at time
	// 0 of the log's time scale (calibrate.Window), so differences between
	// the conductors of one group are meaningful; between groups only
	// while the frequency is exact (an error δf turns it by 360 δf t
	// degrees, which the sigma does not count).
	Phase      *float64 `json:"phase_deg,omitempty"`
	PhaseSigma *float64 `json:"phase_sigma_deg,omitempty"`
	// Depth is the depth of Point below the depth reference, m.
	Depth      float64 `json:"depth_m"`
	DepthSigma float64 `json:"depth_sigma_m"`
	// Offset is the horizontal distance of the conductor from the
	// readings' centroid, m, signed positive to the right looking along
	// Direction; zero for a dipole, which lists it in Unidentifiable (its
	// position is Point, with PointSigma).
	Offset      float64 `json:"offset_m"`
	OffsetSigma float64 `json:"offset_sigma_m"`
	// PointSigma is a dipole's one-sigma uncertainty of Point (east,
	// north, up), m; nil for lines, and for a dipole whose position the
	// readings do not resolve.
	PointSigma *[3]float64 `json:"point_sigma_m,omitempty"`
	// Azimuth is the direction's bearing, degrees clockwise from north.
	Azimuth      float64 `json:"azimuth_deg"`
	AzimuthSigma float64 `json:"azimuth_sigma_deg"`
	// Dip is the direction's angle below horizontal, degrees.
	Dip      float64 `json:"dip_deg"`
	DipSigma float64 `json:"dip_sigma_deg"`
	// Span is the extent of the readings along Direction, relative to
	// Point, m: the stretch of conductor the readings see.
	Span [2]float64 `json:"span_m"`
	// Moment is a dipole's moment, A m^2, and its sigma; nil for lines.
	Moment      *[3]float64 `json:"moment_a_m2,omitempty"`
	MomentSigma *[3]float64 `json:"moment_sigma_a_m2,omitempty"`
	// Unidentifiable lists quantities the readings cannot determine
	// ("azimuth", "depth"); for a dipole also those of a line that do not
	// apply to a point ("current", "offset", "azimuth", "dip").
	Unidentifiable []string `json:"unidentifiable,omitempty"`
	Notes          []string `json:"notes,omitempty"`
	// Conductor is the number of the further conductor (Track.Number)
	// this source was followed in; 0 when it is in none (the first source
	// of a group is conductor 1, the one Document.Route follows).
	Conductor int `json:"conductor,omitempty"`
}

// Profile is a compact copy of a group's readings: enough to plot the
// measured field against the fitted one across the conductor.
type Profile struct {
	// Component says what the field values are: "dc" (the field, nT),
	// or "ac-in-phase" (the real part of the RMS phasor after turning it
	// by minus the first source's phase, nT).
	Component string `json:"component"`
	// Positions are the reading positions, m.
	Positions [][3]float64 `json:"positions_m"`
	// Offset is each reading's horizontal offset across the first
	// source, m, positive to the right looking along its direction.
	Offset []float64 `json:"offset_m"`
	// Measured and Predicted are the field [east, north, up], nT.
	Measured  [][3]float64 `json:"measured_nt"`
	Predicted [][3]float64 `json:"predicted_nt"`
	// MeasuredQuadrature and PredictedQuadrature are, for
	// ComponentACInPhase, the quadrature part of the same readings (the
	// imaginary part of the turned phasor, nT), reading by reading as
	// Measured; absent for DC and in documents written before they were
	// added. Where the conductors differ in phase (three phases, a cable
	// beside a lagging pipe) much of a misfit can lie in quadrature, which
	// the in-phase part alone does not show.
	MeasuredQuadrature  [][3]float64 `json:"measured_quadrature_nt,omitempty"`
	PredictedQuadrature [][3]float64 `json:"predicted_quadrature_nt,omitempty"`
}

// hasQuadrature reports whether p holds the quadrature part of an AC
// profile, reading by reading.
func (p *Profile) hasQuadrature() bool {
	n := len(p.Offset)
	return p.Component == ComponentACInPhase && n > 0 && len(p.MeasuredQuadrature) == n && len(p.PredictedQuadrature) == n
}

// Route is the along-route profile built from the groups.
type Route struct {
	// Length is the chainage of the last station, m.
	Length float64 `json:"length_m"`
	// Stations are the groups in route order.
	Stations []Station `json:"stations"`
	// StationScatterCurrent and StationScatterDepth are the robust
	// between-station scatter of current (A) and of depth (m) along the
	// route among used stations, a realistic one-sigma spread of a single
	// station's estimate that, unlike the fits' sigmas, includes the
	// error of the model. Each run of three successive used stations
	// a, b, c gives b's departure from the straight line through a and c,
	// scaled to one station's spread:
	//
	//	e = |x(b) - (w x(a) + (1-w) x(c))| / sqrt(1 + w^2 + (1-w)^2)
	//	w = (chainage(c) - chainage(b)) / (chainage(c) - chainage(a))
	//	scatter = 1.4826 * median e
	//
	// leaving out triples that straddle a reported current step and
	// triples that hold a station reported as a current anomaly (for
	// current and depth alike). The line through the neighbours takes
	// out the route's own trend (a current falling along a protected
	// pipe, a conductor deepening), which differences of two stations
	// counted as error. sqrt(1 + w^2 + (1-w)^2) is the standard deviation
	// of the departure under independent errors of unit sigma (Gasser,
	// Sroka & Jennen-Steinmetz, Biometrika 73(3):625-633, 1986); 1.4826
	// makes the median absolute deviation a consistent estimator of a
	// normal standard deviation (Rousseeuw & Croux, J. Am. Stat. Assoc.
	// 88(424):1273-1283, 1993). Nil on a route of fewer than
	// MinScatterStations used stations or with fewer than
	// MinScatterTriples triples. StationScatterTriples is the number of
	// triples used.
	StationScatterCurrent *float64 `json:"station_scatter_current_a,omitempty"`
	StationScatterDepth   *float64 `json:"station_scatter_depth_m,omitempty"`
	StationScatterTriples int      `json:"station_scatter_triples,omitempty"`
	// SmallestStepSeen is about the smallest change of current between
	// two successive stations that the step test reports at the route's
	// between-station scatter (route.Route.SmallestStep), A: a route
	// that reports no step does not rule out a loss smaller than that.
	// Nil when the stations scatter no more than their fits' sigmas say.
	SmallestStepSeen *float64 `json:"smallest_step_seen_a,omitempty"`
	// PairNet is true when conductor 1 is a go-and-return pair (two
	// cores side by side carrying opposite currents, resolved or not):
	// a station where the pair was found gives its centre and depth,
	// and its current is the pair's net current, the sum of the cores'
	// currents along Direction (the current that does not return
	// through the pair), so that a step is current leaving or joining
	// the circuit. The cores' own currents, where resolved, are in the
	// groups' sources. On a further conductor's Track.Route, true when
	// that conductor is a go-and-return pair found beside conductor 1
	// (Group.Pair), followed at its centre with its net current.
	PairNet bool `json:"pair_net,omitempty"`
	// FirstWalk, when the route was walked more than once and one ratio
	// or one change per walk accounts for the walks' currents differing
	// (the walks-differ caution), names the first walk ("day1.csv"): the
	// steps, the summary's currents at the route's ends and the
	// between-station scatter take every station's current at its level
	// (Station.CurrentFirstWalk), and RepeatGap is the chainage within
	// which stations are repeats of one station, m. Both absent otherwise.
	FirstWalk string  `json:"first_walk,omitempty"`
	RepeatGap float64 `json:"repeat_gap_m,omitempty"`
	// Gaps are the stretches of the route with no station, far longer
	// than its station spacing (RouteGaps), where the conductor's
	// position, current and cover are not known. results.json writes
	// them as RouteGaps finds them from the stations (normalized),
	// whatever this holds; absent when there are none.
	Gaps []RouteGap `json:"gaps,omitempty"`
}

// endLevel returns the current at the route's end at station a (used),
// at the first walk's level, pooled over a's repeats (the used stations
// within RepeatGap of it): their inverse-variance mean and its sigma. It
// gives a's own current when the walks were not brought to one level.
func (r *Route) endLevel(a *Station) (float64, float64) {
	if r.FirstWalk == "" {
		return a.Current, a.CurrentSigma
	}
	var sw, swv float64
	for i := range r.Stations {
		s := &r.Stations[i]
		if d := math.Abs(s.Chainage - a.Chainage); !s.Used || d >= r.RepeatGap && d > 0 {
			continue
		}
		v, sig := s.levelCurrent()
		if !(sig > 0) {
			return a.levelCurrent()
		}
		sw += 1 / (sig * sig)
		swv += v / (sig * sig)
	}
	if !(sw > 0) {
		return a.levelCurrent()
	}
	return swv / sw, math.Sqrt(1 / sw)
}

// Track is a further conductor followed along the route.
type Track struct {
	// Number is the conductor's number, 2, 3, ...: the findings about it
	// carry it in Finding.Conductor and the sources that make it up in
	// Source.Conductor.
	Number int `json:"number"`
	// Offset is the median signed horizontal offset of this conductor
	// from conductor 1, m, positive to the right looking along increasing
	// chainage.
	Offset float64 `json:"offset_m"`
	// Route is the along-route profile of this conductor, one station per
	// group it was seen in. Its chainage is measured along this
	// conductor from its first station.
	Route Route `json:"route"`
	// Crossing, when not nil, says that this conductor crosses or runs at
	// an angle to conductor 1 (the crew report's summary words it so), for
	// which Offset, a median, means little.
	Crossing *Crossing `json:"crossing,omitempty"`
	// PhaseFromConductor1 is, for AC, the phase of this conductor's
	// current less conductor 1's, degrees in (-180, 180], both taken as
	// flowing along conductor 1's direction, and its one-sigma
	// uncertainty: the weighted mean over the groups where both were used
	// (trackPhase). Nil for DC or when no group has both phases.
	PhaseFromConductor1      *float64 `json:"phase_from_conductor_1_deg,omitempty"`
	PhaseFromConductor1Sigma *float64 `json:"phase_from_conductor_1_sigma_deg,omitempty"`
	// ReturnShare is, for each AC conductor read as a return path of
	// conductor 1's current (its phase within 30° of anti-phase at three
	// sigmas, not one of a three-phase set: addTrackPhases), the share of
	// conductor 1's current it carries back, |I| cos(its angle from
	// anti-phase) / |I1|, and NetToEarthA the net current left to return
	// by other paths (remote earth, conductors outside the survey), the
	// magnitude of the phasor sum of conductor 1's current and the
	// returns': with one return, on it; with several (ReturnSet), on the
	// last of them only, summed over all. Each with its one-sigma, weighted
	// means over the groups where all were used (trackReturn, phasorSum),
	// first order in the stations' sigmas, their correlations in the fit
	// left out. Nil otherwise.
	ReturnShare      *float64 `json:"return_share,omitempty"`
	ReturnShareSigma *float64 `json:"return_share_sigma,omitempty"`
	NetToEarthA      *float64 `json:"net_to_earth_a,omitempty"`
	NetToEarthSigmaA *float64 `json:"net_to_earth_sigma_a,omitempty"`
	// ReturnSet is, where more than one conductor is read as a return of
	// conductor 1's current, the numbers of conductor 1 and all of them:
	// the conductors whose phasor sum NetToEarthA is. Nil otherwise.
	ReturnSet []int `json:"return_set,omitempty"`
	// ReturnOffDeg is, for an AC conductor not read as a return whose
	// phase lies within 45° of anti-phase at three sigmas (past the 30°
	// a return share needs, or too uncertain to be inside it), its angle
	// from anti-phase, degrees, and its sigma: the summary says why it is
	// given no share. Nil otherwise.
	ReturnOffDeg      *float64 `json:"return_off_anti_phase_deg,omitempty"`
	ReturnOffSigmaDeg *float64 `json:"return_off_anti_phase_sigma_deg,omitempty"`
	// PolyphaseSet is, on the later of two further AC conductors whose
	// phases from conductor 1 lie near +120° and -120° (polyphaseSet), the
	// numbers of the three conductors, as the phases of one three-phase
	// circuit, and PolyphaseResidualA the magnitude of their phasor sum,
	// A (of the groups' sums' mean, each referred to conductor 1's phase
	// at its group), with its one-sigma: the circuit's residual, what
	// returns by a neutral, earth or conductors outside the survey, if the
	// three are one circuit (separate circuits on those phases look the
	// same).
	// Members of such a set get no ReturnShare. Nil otherwise.
	PolyphaseSet            []int    `json:"polyphase_set,omitempty"`
	PolyphaseResidualA      *float64 `json:"polyphase_residual_a,omitempty"`
	PolyphaseResidualSigmaA *float64 `json:"polyphase_residual_sigma_a,omitempty"`
	// PolyphaseResidualPhaseDeg is, with PolyphaseResidualA, the
	// residual's phase less conductor 1's, degrees in (-180, 180] (all read
	// along conductor 1's direction), and its one-sigma: between which
	// phases the load is heaviest. Nil where the residual is within three
	// sigmas of zero (its phase then means nothing).
	PolyphaseResidualPhaseDeg      *float64 `json:"polyphase_residual_phase_deg,omitempty"`
	PolyphaseResidualPhaseSigmaDeg *float64 `json:"polyphase_residual_phase_sigma_deg,omitempty"`
}

// Crossing is how a further conductor runs at an angle to conductor 1.
type Crossing struct {
	// AngleDeg is the median angle in plan between the two conductors'
	// fitted directions, degrees.
	AngleDeg float64 `json:"angle_deg"`
	// ChainageM is conductor 1's chainage where this conductor's offset
	// from it reaches zero, m; nil when the offsets do not change along
	// the route.
	ChainageM *float64 `json:"chainage_m,omitempty"`
	// Crosses is true when that place lies where this conductor was
	// followed and it was seen on both sides of conductor 1; OneSide when
	// it was seen on one side only (a branch, or a crossing the fits do
	// not show beyond it).
	Crosses bool `json:"crosses"`
	OneSide bool `json:"one_side"`
	// LengthM is the length followed along this conductor itself, m.
	LengthM float64 `json:"length_m"`
}

// Station is one group's conductor on the route.
type Station struct {
	Key      string  `json:"key"`
	Chainage float64 `json:"chainage_m"`
	// Point and Direction are the conductor's, Direction turned along
	// increasing chainage.
	Point     [3]float64 `json:"point_m"`
	Direction [3]float64 `json:"direction"`
	// Current is signed along Direction (RMS for AC, with Phase and
	// PhaseSigma, degrees; both nil for DC).
	Current      float64  `json:"current_a"`
	CurrentSigma float64  `json:"current_sigma_a"`
	Phase        *float64 `json:"phase_deg,omitempty"`
	PhaseSigma   *float64 `json:"phase_sigma_deg,omitempty"`
	Depth        float64  `json:"depth_m"`
	DepthSigma   float64  `json:"depth_sigma_m"`
	// Cover is depth below ground, m, when the ground is known, and
	// CoverSigma its one-sigma uncertainty: DepthSigma and
	// DepthReference.GroundSigma in quadrature, as the cover findings use.
	Cover      *float64 `json:"cover_m,omitempty"`
	CoverSigma *float64 `json:"cover_sigma_m,omitempty"`
	// Used is true when the station entered the step and cover checks.
	Used bool `json:"used"`
	// LeftOut is, on a station not Used, why it was left out, as
	// results.csv's left_out and route.geojson's give it; set when the
	// document is written (normalized), absent on a used station.
	LeftOut string `json:"left_out,omitempty"`
	// UnderCentre is true when Point is the conductor's point under the
	// centre of the group's readings in plan, not where it crosses their
	// traverse: the readings do not lie along one traverse (fixed
	// sensors, a compact group) or it runs within 20 degrees of the
	// conductor (route.Station.UnderCentre). Absent otherwise.
	UnderCentre bool `json:"under_readings_centre,omitempty"`
	// CurrentFirstWalk and CurrentFirstWalkSigma are, on a used station
	// of a route walked more than once at currents that differ by one
	// ratio or one change per walk (Route.FirstWalk), its current brought
	// to the first walk's level, A, with the ratio's or change's sigma
	// carried, as the steps take it (route.Placed.FirstWalkCurrent);
	// absent otherwise.
	CurrentFirstWalk      *float64 `json:"current_first_walk_a,omitempty"`
	CurrentFirstWalkSigma *float64 `json:"current_first_walk_sigma_a,omitempty"`
	// RouteCurrentSigma is, on a used station whose current sigma the
	// route's steps take narrower than the fit gives it (a poor fit whose
	// sigmas the fit widened for residuals correlated along its readings:
	// route.Placed.RouteSigma), that sigma, A, at the first walk's level
	// when CurrentFirstWalk is given; absent otherwise. The least cover's
	// test of a station against its neighbours (routeCoverDoubt) takes it,
	// as the route's own neighbour tests do.
	RouteCurrentSigma *float64 `json:"route_current_sigma_a,omitempty"`
}

// routeLevelCurrent is levelCurrent with the sigma the route's steps take
// (RouteCurrentSigma) where it differs from the fit's.
func (s *Station) routeLevelCurrent() (float64, float64) {
	v, sigma := s.levelCurrent()
	if s.RouteCurrentSigma != nil {
		sigma = *s.RouteCurrentSigma
	}
	return v, sigma
}

// levelCurrent returns s's current and sigma at the first walk's level
// (CurrentFirstWalk) when it has one, else its own.
func (s *Station) levelCurrent() (float64, float64) {
	if s.CurrentFirstWalk != nil && s.CurrentFirstWalkSigma != nil {
		return *s.CurrentFirstWalk, *s.CurrentFirstWalkSigma
	}
	return s.Current, s.CurrentSigma
}

// estimated reports whether s's current and depth are estimates: a
// station left out (not Used) with zero sigmas is one whose fit failed and
// estimated nothing, and its zeros are not measurements.
func (s *Station) estimated() bool {
	return s.Used || s.CurrentSigma != 0 || s.DepthSigma != 0
}

// MarshalJSON writes s as an element of results.json's route stations. A
// station whose fit estimated nothing (estimated) has no current_a,
// current_sigma_a, depth_m or depth_sigma_m, as results.csv leaves those
// cells empty: 0 ± 0 would read as an exact measurement of no current at
// no depth. ReadJSON reads the missing members as zero. WriteJSON first
// clears the numbers of every station left out because its group's fit
// failed (withoutFailedEstimates), whatever sigmas that fit gave.
func (s Station) MarshalJSON() ([]byte, error) {
	type plain Station // Station's members without this method
	if s.estimated() {
		return json.Marshal(plain(s))
	}
	// The members named here take the place of plain's of the same name
	// (the shallower field wins) and, nil, are left out.
	return json.Marshal(struct {
		plain
		Current      *float64 `json:"current_a,omitempty"`
		CurrentSigma *float64 `json:"current_sigma_a,omitempty"`
		Depth        *float64 `json:"depth_m,omitempty"`
		DepthSigma   *float64 `json:"depth_sigma_m,omitempty"`
	}{plain: plain(s)})
}

// Severities of findings, most pressing first.
const (
	SeverityWarning = "warning"
	SeverityCaution = "caution"
	SeverityInfo    = "info"
)

// Finding is something a crew should act on or know.
type Finding struct {
	// Kind is "current-step", "current-anomaly", "shallow-cover",
	// "poor-fit", "dipole-anomaly", or another kind a later version adds.
	Kind string `json:"kind"`
	// Severity is SeverityWarning, SeverityCaution or SeverityInfo.
	Severity string `json:"severity"`
	// ChainageFrom and ChainageTo bracket the finding along the route,
	// m; a current step lies between them, and a shallow-cover stretch
	// may reach from one to the other (the nearest stations with enough
	// cover either side; Groups are the stations that fail).
	ChainageFrom float64 `json:"chainage_from_m"`
	ChainageTo   float64 `json:"chainage_to_m"`
	// Position is the best location, m.
	Position [3]float64 `json:"position_m"`
	// Groups are the keys of the groups involved.
	Groups []string `json:"groups,omitempty"`
	// Message is one plain sentence.
	Message string `json:"message"`
	// Values are the numbers behind the finding.
	Values []Value `json:"values,omitempty"`
	// Conductor is the number of the further conductor (Track.Number)
	// the finding is about, its chainage measured along that conductor's
	// route; 0 for conductor 1, Document.Route.
	Conductor int `json:"conductor,omitempty"`
	// Lone is true for a finding about a further line that no
	// conductor's track follows (a service crossing the route, seen at
	// one traverse): it is about neither conductor 1 nor a further
	// conductor, and Conductor is 0. Its chainage is conductor 1's where
	// the line was seen.
	Lone bool `json:"lone_line,omitempty"`
	// ID is the finding's id (FindingIDs), set when the document is
	// written: results.json, findings.csv and route.geojson give the same
	// id, so the three files join on it. Empty in a document being built
	// or read back (ReadJSON clears it: it is made again on writing).
	ID string `json:"id,omitempty"`
}

// Value is a number with its sigma and unit.
type Value struct {
	// Name is a phrase for a crew ("location (chainage)"), which a later
	// version may reword.
	Name string `json:"name"`
	// Key is the value's machine key ("location_chainage_m", ValueKey),
	// which is not reworded: findingValueKeys names every value of every
	// kind of finding and README lists them. Set when the document is
	// written, as Finding.ID is; empty in a document being built or read
	// back.
	Key   string  `json:"key,omitempty"`
	Value float64 `json:"value"`
	Sigma float64 `json:"sigma,omitempty"`
	Unit  string  `json:"unit,omitempty"`
}
