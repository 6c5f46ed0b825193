package report

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"time"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// Fit is one group's readings and their fit, as Build takes them.
type Fit struct {
	// Key is the group's value of the grouping column; empty when the run
	// was not grouped. With several fits every key must be non-empty and
	// unique (Build refuses others): the route places each group by it.
	Key string
	// Problem holds the readings that were fitted (Points with Fields for
	// DC, or Phasors for AC).
	Problem *inverse.Problem
	// Result is the fit (inverse.FitLines or FitStrengths); nil when the
	// fit failed, with the reason in Err. Build reports the sources in
	// Result.Sources: from FitStrengths its lines, its segments and
	// polylines' legs (each as its line) and its dipoles.
	Result *inverse.Result
	Err    error
	// Dipole is true when the caller found the readings better explained
	// by a point dipole (a magnetised object) than by a current.
	Dipole bool
	// Settings are the settings Result was fitted with (Background,
	// ReferenceZ and MinDepth are used when Build searches for a
	// magnetised object, see dipole.go); nil means the defaults.
	Settings *inverse.Settings
	// PhaseRampHz, when not zero, is the frequency offset, Hz, of a phase
	// ramp the caller fitted to an AC group (Problem's phasors are turned
	// back by it), and PhaseRampSigmaHz its one-sigma.
	PhaseRampHz, PhaseRampSigmaHz float64
	// MeasuredNoise is this group's noise measured apart from the fit, nT
	// (as BuildSettings.MeasuredNoise, which stands in when it is 0).
	MeasuredNoise float64
	// PositionScatter is the scatter of the group's logged positions from
	// reading to reading, m (from their fourth differences along the
	// traverse), and PositionMisfit the misfit per field component, nT
	// RMS, that scatter alone makes to the fit (through the fitted field's
	// gradient); both 0 when not measured. sharedMisfit names scattered
	// positions as the cause of a misfit they explain.
	PositionScatter, PositionMisfit float64
	// ComponentSwing and MagnitudeSwing are the robust spread of the
	// fit's residuals, nT, per field component and of |B| (the readings'
	// magnitude less the model's); both 0 when not measured. A field
	// that turned rather than changed (a sensor tilting with no attitude
	// logged) leaves the first far above the second: sharedMisfit names
	// the tilt.
	ComponentSwing, MagnitudeSwing float64
	// Walk names the survey log the group's readings come from, when a
	// run reads several, and Start is the time of its first reading (zero
	// when not known): the route names the walks by them where repeats
	// of a station disagree (route.Station.Walk).
	Walk  string
	Start time.Time
	// Log is the path, as given, of the survey log the group's readings
	// come from (Group.Log); empty when not known.
	Log string
	// SensorHeight is the height above the ground, m, of the sensors of
	// this fit's log where it differs from BuildSettings.SensorHeight
	// (logs of crews that carried their sensors at different heights);
	// zero means BuildSettings.SensorHeight. It needs depths below the
	// sensors and BuildSettings.SensorHeight above zero, the datum: Build
	// refers the fit's depths to the plane that height above the ground
	// (logheight.go), so that cover = depth - BuildSettings.SensorHeight
	// holds for this fit as for the others.
	SensorHeight float64
	// Traverse names the traverse the group walks where the caller knows
	// it (the group value its walks share), for the route to pair a
	// station's walks (route.Station.Traverse); empty when not known.
	Traverse string

	// levelOff, when not 0, is the mean height, m, of the group's sensors
	// above a --reference-z level that one flat level does not fit
	// (referenceLevelWarnings): a line above that level is not taken for
	// a fault of the data.
	levelOff float64
	// depthShift is SensorHeight less the datum, m, by which toDatum
	// moved the fit's depths (logheight.go); 0 when it moved none.
	depthShift float64

	object *route.Object // the magnetised object found by checkDipoles
	// surface is an object checkDipoles would have accepted but that lies
	// above the ground (aboveGround, surface.go): reported as a
	// disturbance, the fit kept (surfaceRefit: its conductors refitted
	// with the disturbance's field taken out).
	surface      *route.Object
	surfaceRefit bool
	// sameObject is the key of the group that reports the object this
	// fit's readings also saw (mergeSameObjects, sameobject.go): Result is
	// then the conductors refitted with that object's field taken out, and
	// sameOffset the distance, m, between this fit's own placing of the
	// object and the reported one.
	sameObject string
	sameOffset float64
	// sumSplit makes the route take the sum of the strongest line's
	// same-way split (markSplitSums).
	sumSplit bool
	// lineObject is a magnetised object found by checkTrackDipoles beside
	// the further conductor Result.Sources[objectLine] (Result then holds
	// the refitted conductors and the object).
	lineObject *route.Object
	objectLine int
	// weakTested is the Result whose weak further lines checkLoneDipoles
	// tested for a magnetised object in their place (lonedipole.go); a
	// line it kept is then not one (addLoneCover).
	weakTested *inverse.Result
	// replaced are the indices into weakTested of the weak further lines
	// whose place checkLoneDipoles gave to the magnetised object
	// replacedBy; addLoneCover still checks their cover (lonedipole.go).
	replaced   []int
	replacedBy *route.Object
	// partner is the index into Result.Opposed of the strongest line's
	// partner core when partnerChosen (choosePartners), -1 for none;
	// partnerOdd, when not empty, says that it lies at a spacing unlike
	// the neighbouring groups' partners (partner.go).
	partner       int
	partnerChosen bool
	partnerOdd    string
	// weak are the indices into Result.Sources of the weak lines beside
	// the pair that its net current takes in (chooseWeak, partner.go).
	weak []int
	// crossPairs are the resolved go-and-return pairs (Result.Opposed)
	// of the crossing line that leadByContinuity moved from first place,
	// their indices those of the Result it made (lead.go).
	crossPairs []crossPair
}

// crossPair is a resolved go-and-return pair of a crossing line
// (Fit.crossPairs), with its lines' currents, by which a later copy of the
// Result is known to keep the pair's indices.
type crossPair struct {
	q   inverse.PairEstimate
	cur [2]float64
}

// BuildSettings tunes Build. A nil *BuildSettings or a zero field takes the
// default given beside it.
type BuildSettings struct {
	// SensorHeight is the sensors' height above ground, m, used for cover
	// when depths are below the sensors' mean height; 0 when unknown (then
	// Build refuses a MinCover unless the fits' depths are below the ground,
	// inverse.Settings.ReferenceZ).
	SensorHeight float64
	// MinCover is the minimum depth of cover to check, m, and CoverCode
	// the code or practice it comes from; 0 for no check. Checking it needs
	// the ground: depths below ReferenceZ, or SensorHeight above 0; Build
	// refuses it otherwise rather than take the ground at the sensors.
	MinCover  float64
	CoverCode string
	// GroundSigma is the one-sigma uncertainty of the ground level
	// relative to the depth reference, m (route.Settings.GroundSigma),
	// added in quadrature to the depth sigmas for cover; 0 leaves the
	// fits' sigmas, which cover the reading noise only.
	GroundSigma float64
	// StepK is route.Settings.StepK: 0 means 3.
	StepK float64
	// MinStep is route.Settings.MinStep: the smallest change in current
	// reported as a step, a fraction of the current; 0 means 0.02, a
	// negative value reports every significant change as a step.
	MinStep float64
	// Noise is the reading noise the fits were given (inverse.Problem
	// Sigma), nT; 0 when they estimated it. It is the yardstick for
	// calling a group's fit poor: with 0, when there are at least three
	// groups, each group's measured noise (Fit.MeasuredNoise, else
	// MeasuredNoise) times the survey's reference ratio of fit to
	// measured noise, or without measured noise the median of the groups'
	// own noise estimates (yardstick.go).
	Noise float64
	// MeasuredNoise is the noise of the fitted values measured apart from
	// the fits, nT (for AC, the windows' own sine-fit residuals; for DC, the
	// fourth differences of successive readings); 0 when not
	// measured. It stands in for a group's own Fit.MeasuredNoise when
	// that is 0, in the yardstick for a poor fit (yardstick.go) and in the
	// warning of a misfit many groups share (sharedMisfit), which the
	// yardstick, taken from the lower quartile of the groups' fits, takes
	// as the norm once over three quarters of them share it.
	MeasuredNoise float64
	// KeptRails names readings held at one value on an axis, as at a
	// magnetometer's range, that were kept in the fits because they could
	// not be told from the trace's own extreme (cmd/undercurrent
	// clipped.go), such as "bz -45800 nT on 480 of 1200 readings of
	// cut.csv"; "" when none. sharedMisfit names them first as the cause.
	KeptRails string
	// ProfileMax is the most readings per group kept for the report's
	// plots; 0 means 240, negative keeps none.
	ProfileMax int
	// TrackMinStations is the fewest groups a further conductor must be
	// seen in to be followed along the route as a track of its own
	// (Document.Conductors); 0 means 3, negative follows none.
	TrackMinStations int
	// LineAbove lets Build fit one line above the sensors (an overhead
	// line, a cable tray) beside the buried lines of groups whose fits
	// miss by farAnyMisfit times the noise, and take it when the survey
	// agrees (refitLinesAbove); the line is reported in
	// Document.LinesAbove, never as a buried conductor. DC only.
	LineAbove bool
	// LineAboveWhy adds a warning saying why a line above that was tried
	// was not taken (the survey's groups disagreed, a turned sensor fitted
	// as well).
	LineAboveWhy bool
	// Progress, when not nil, is told how far the search for magnetised
	// objects has got, the longest part of Build on a survey with many
	// groups (progress.go); its calls come one at a time.
	Progress ProgressFunc
}

// Build makes the result document from per-group fits: head supplies what
// Build cannot know (Tool, Title, Site, Created, Inputs, Calibration,
// BaseStation, Frame, Signal, Settings, Warnings) and is copied; Build
// fills DepthReference, MinCover, Groups, Route and Findings.
//
// For each fit it records the sources (with spans, unidentifiable
// quantities and a thinned profile of the readings against the fit), the
// background, the fit statistics and, when the fit failed, did not converge
// or cannot tell two numbers of conductors apart (BIC within 2 of the
// chosen count: "not worth more than a bare mention", Kass & Raftery, J.
// Am. Stat. Assoc. 90(430):773-795, 1995), why. The strongest source of
// each group becomes a route.Station; route.Build then orders the groups
// along the route and finds steps in current, shallow cover, poor fits and
// dipole-like anomalies, which SetRoute takes into the document. With one
// group there is no route but the cover and fit checks still run.
//
// The other line sources of the groups are linked from group to group by
// their offset from the strongest conductor into further conductors
// (tracks.go); each seen in at least TrackMinStations groups gets its own
// route analysis with the same settings, recorded in Document.Conductors,
// and its findings join Document.Findings marked with its number. Groups
// the route or a track reports as anomalous are searched for a magnetised
// object (dipole.go); one found beside a further conductor is reported on
// that conductor's track.
//
// Each group records the chi-square against the survey's reference noise
// (Group.ReferenceChi2); a converged group the route calls a poor fit gets
// the reason in its Problem, so that every output agrees with the
// findings. Document.PositionSigma is set from the fits' settings and
// Document.UncertaintyNote to UncertaintyNoteFor it, and each route
// gets its between-station scatter (Route.StationScatterCurrent).
//
// Signal.Mode is set to AC when the problems carry phasors, DC otherwise,
// keeping head's frequency and window. Build returns an error when fits is
// empty, a fit has no problem (a failed fit too: give the readings it was
// asked to fit), a fit has neither a result nor an error, or the route
// cannot be built; and when the fits do not make one survey
// (buildcheck.go): keys repeated, or empty among several fits; DC problems
// (Fields) mixed with AC ones (Phasors); a result that was not fitted to
// its fit's problem (residuals for another number of readings, or of the
// other kind, DC or AC); results whose depths are measured from different
// references (Result.DepthReference, or ReferenceZ heights more than a
// micrometre apart); or a MinCover with depths below the sensors and no
// SensorHeight. A setting that is NaN or infinite, or negative where only
// zero or more has a meaning, is refused too, naming the field.
func Build(head Document, fits []Fit, set *BuildSettings) (*Document, error) {
	if len(fits) == 0 {
		return nil, errors.New("report: no fits to report")
	}
	if err := checkFits(fits, set); err != nil {
		return nil, err
	}
	var bs BuildSettings
	if set != nil {
		bs = *set
	}
	if bs.ProfileMax == 0 {
		bs.ProfileMax = 240
	}
	if bs.TrackMinStations == 0 {
		bs.TrackMinStations = 3
	}
	d := head
	d.SchemaVersion = SchemaVersion
	if d.Frame.Kind == "" {
		d.Frame.Kind = FrameLocalENU
	}
	d.Groups, d.Route, d.Conductors = nil, nil, nil
	d.Findings = append([]Finding{}, head.Findings...)
	d.Warnings = append([]string(nil), head.Warnings...)
	d.Notes = append([]string(nil), head.Notes...)

	ac := false
	for i, f := range fits {
		if f.Problem == nil {
			return nil, fmt.Errorf("report: fit %d (group %q) has no problem", i, f.Key)
		}
		if f.Result == nil && f.Err == nil {
			return nil, fmt.Errorf("report: fit %d (group %q) has neither a result nor an error", i, f.Key)
		}
		ac = ac || f.Problem.Phasors != nil
	}
	if ac {
		d.Signal.Mode = SignalAC
	} else {
		d.Signal = Signal{Mode: SignalDC}
	}

	// Depth reference: the fits' own, from the first that has one. Its
	// height is written rounded to the nanometre (nanoMetre) so that the
	// files do not carry the noise of a mean or a subtraction (0.3 m read
	// 0.30000000000000066); the fits and the route keep their own values.
	// When no fit ran, the reference the fits were given (Fit.Settings): a
	// run whose every fit failed had said depths are below the sensors
	// though --reference-z was given.
	d.DepthReference = DepthReference{Kind: DepthBelowSensors, SensorHeight: bs.SensorHeight}
	fromFit := false
	for _, f := range fits {
		if f.Result != nil {
			if f.Result.DepthReference == "ReferenceZ" {
				d.DepthReference = DepthReference{Kind: DepthBelowGround, Z: nanoMetre(f.Result.ReferenceZ)}
			} else {
				d.DepthReference.Z = nanoMetre(f.Result.ReferenceZ)
			}
			fromFit = true
			break
		}
	}
	for i := 0; i < len(fits) && !fromFit; i++ {
		if s := fits[i].Settings; s != nil && s.ReferenceZ != nil {
			d.DepthReference = DepthReference{Kind: DepthBelowGround, Z: nanoMetre(*s.ReferenceZ)}
			break
		}
	}
	d.MinCover = nil
	if bs.MinCover > 0 {
		d.MinCover = &MinCover{Depth: bs.MinCover, Code: bs.CoverCode}
	}

	ref := yardstickOf(fits, &bs)

	rs := &route.Settings{StepK: bs.StepK, MinStep: bs.MinStep, MinCover: bs.MinCover, CoverCode: bs.CoverCode, GroundSigma: bs.GroundSigma}
	d.DepthReference.GroundSigma = bs.GroundSigma
	if d.DepthReference.Kind == DepthBelowSensors {
		rs.SensorHeight = bs.SensorHeight
	}
	rs.DepthsBelowGround = d.DepthReference.Kind == DepthBelowGround
	if !ref.set() {
		rs.MaxReducedChi2 = -1
	}
	var stations []route.Station
	pairRoute := false // conductor 1 is a go-and-return pair (circuitOf)
	// Build's own copy of the fits: the analyses below replace some of
	// their results (leadByPosition, checkDipoles, markSplitSums).
	fits = append([]Fit(nil), fits...)
	if bs.LineAbove && !ac {
		la, why := refitLinesAbove(fits, &bs)
		if la != nil {
			d.LinesAbove = []LineAbove{*la}
			d.Warnings = append(d.Warnings, la.words())
		} else if why != "" && bs.LineAboveWhy {
			d.Warnings = append(d.Warnings, why)
		}
	}
	// A --reference-z level against the sensors' own heights: groups
	// whose sensors stand far above it are not blamed for a line above it.
	levelWarn, levelOff := referenceLevelWarnings(fits, d.Frame.Origin)
	for i := range fits {
		if h, ok := levelOff[fits[i].Key]; ok {
			fits[i].levelOff = h
		}
	}
	var cutShort map[int]string // cutShortProblems, by fit
	analyse := func() (*route.Route, error) {
		d.Groups = nil
		// A split whose sum alone carries a current found takes the sum
		// whatever its neighbours read (splitSumFound).
		for i := range fits {
			if splitSumFound(fits[i].Result, ac) && NoCurrent(&fits[i].Result.Sources[0], ac) {
				fits[i].sumSplit = true
			}
		}
		// With --sensor-height, depths of a log whose sensors stood at
		// another height referred to the datum (logheight.go), then
		// below the sensors' height over each line (groundlevel.go),
		// for the refits too.
		if rs.SensorHeight > 0 {
			for i := range fits {
				toDatum(&fits[i], rs.SensorHeight)
				groundAtLines(&fits[i])
			}
		}
		// Conductor 1 by continuity where a stronger line crosses it,
		// then by position where the currents do not pick it (lead.go),
		// then on one track where a parallel line becomes the stronger
		// (leadswap.go).
		leadByContinuity(fits, ac)
		leadByPosition(fits, ac)
		leadBySwap(fits, ac)
		// The strongest line's partner core, the same along the route
		// (partner.go).
		choosePartners(fits, ac)
		// The weak lines beside it that its net current takes in, each
		// decided once along the route (partner.go).
		chooseWeak(fits, ac)
		stations = make([]route.Station, 0, len(fits))
		pairRoute = followsPair(fits, ac)
		placeShort := shortFitsUnplaced(fits)
		cutShort = cutShortProblems(fits)
		for i, f := range fits {
			g, st := buildGroup(&f, ac, ref.of(&f), bs.ProfileMax, pairRoute, bs.SensorHeight)
			if placeShort {
				unplace(&f, &g, &st)
			}
			if w := cutShort[i]; w != "" && st.OK {
				// Readings that end before they cross a line
				// (cutShortProblems): not sound, and, as a fit too
				// short to place the conductor (unplace), left out of
				// the route's line, its steps and its cover.
				if g.Problem != "" {
					g.Problem += "; "
				}
				g.Problem += w
				st.OK, st.Unplaced = false, true
				st.Point, st.Problem = g.Centroid, g.Problem
			}
			d.Groups = append(d.Groups, g)
			if fixedFailed(&f) {
				// Not a place along the route (fixedFailed): no
				// station, so no chainage, and never chainage 0.
				continue
			}
			stations = append(stations, st)
		}
		if len(stations) == 0 && len(fits) > 0 {
			return nil, noStationsError(fits)
		}
		r, err := route.Build(stations, rs)
		if err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
		return r, nil
	}
	r, err := analyse()
	if err != nil {
		return nil, err
	}
	// Groups the route finds anomalous may hold a magnetised object:
	// refit them with a dipole (dipole.go) and analyse again.
	if len(fits) > 1 && checkDipoles(fits, r, bs.Progress) {
		if r, err = analyse(); err != nil {
			return nil, err
		}
	}
	var tracks []builtTrack
	if len(stations) >= 2 {
		if tracks, err = buildTracks(fits, r, rs, bs.TrackMinStations, pairRoute, ac); err != nil {
			return nil, err
		}
		// A current anomaly on a further conductor may be a magnetised
		// object beside it (dipole.go): refit those groups and follow the
		// conductors again.
		if checkTrackDipoles(fits, r, tracks, bs.Progress) {
			if r, err = analyse(); err != nil {
				return nil, err
			}
			if tracks, err = buildTracks(fits, r, rs, bs.TrackMinStations, pairRoute, ac); err != nil {
				return nil, err
			}
		}
		// A weak further line off the conductor that no track follows
		// may be a magnetised object's field (lonedipole.go): test it,
		// and follow the conductors again when an object is kept.
		if checkLoneDipoles(fits, r, tracks) {
			if r, err = analyse(); err != nil {
				return nil, err
			}
			if tracks, err = buildTracks(fits, r, rs, bs.TrackMinStations, pairRoute, ac); err != nil {
				return nil, err
			}
		}
		// A station whose line the fit split in two, where the sum
		// fits its neighbours better than the stronger share, takes the
		// sum (sameway.go): analyse and follow the conductors again.
		if markSplitSums(fits, r, tracks) {
			if r, err = analyse(); err != nil {
				return nil, err
			}
			if tracks, err = buildTracks(fits, r, rs, bs.TrackMinStations, pairRoute, ac); err != nil {
				return nil, err
			}
		}
		// d.Groups are still in the order of fits here.
		for _, t := range tracks {
			for _, m := range t.members {
				for _, j := range m.lines() {
					d.Groups[m.fit].Sources[j].Conductor = t.number
				}
			}
		}
	}
	markPoorGroups(d.Groups, r)
	moreConductorsFindings(d.Groups, fits, r)
	if d.DepthReference.Kind == DepthBelowSensors {
		d.DepthReference.PerGroup = perGroupReference(fits)
	}
	d.Notes = append(d.Notes, sensorHeightNotes(fits, rs.SensorHeight)...)
	if n := logHeightNote(fits, rs.SensorHeight); n != "" {
		d.Notes = append(d.Notes, n)
		d.DepthReference.PerLog = true
	}
	d.Warnings = append(d.Warnings, levelWarn...)
	// No heights logged: the ground under each traverse taken as level
	// (groundslope.go).
	flat := heightsUnlogged(fits)
	if flat && (rs.SensorHeight > 0 || d.DepthReference.Kind == DepthBelowGround) {
		d.Notes = append(d.Notes, levelGroundNote(rs.SensorHeight, d.DepthReference.Kind == DepthBelowGround))
	}
	shared := sharedMisfit(fits, &bs, rs)
	if shared != "" && flat && bs.KeptRails == "" {
		shared += groundMisfitCause
	}
	if shared != "" {
		d.Warnings = append([]string{shared}, d.Warnings...)
	}
	if w := serialWarning(fits); w != "" {
		d.Warnings = append(d.Warnings, w)
	}
	markLoneMisfits(d.Groups, fits, &bs, rs, flat)
	if w := climbUnlogged(r, flat); w != "" {
		d.Warnings = append(d.Warnings, w)
	}
	d.PositionSigma = positionSigma(fits)
	d.UncertaintyNote = UncertaintyNoteFor(d.PositionSigma)
	aloneFindings(fits, r)
	surfaceFindings(fits, r)
	sameObjectFindings(fits, r)
	caveatMisfitSteps(r, modelMisses(fits, &bs, rs, shared != "" || bs.Noise <= 0 && rs.MaxReducedChi2 < 0))
	if pairRoute {
		caveatPartnerSteps(r, fits)
		caveatTradedSteps(r, fits, ac)
	} else {
		caveatNeighbourTrades(r, tracks)
		trackEnds(r, tracks, rs)
		widenBesideSteps(r, tracks)
	}
	d.SetRoute(r)
	fixedFailedFindings(&d, fits, r)
	if d.Route != nil {
		d.Route.PairNet = pairRoute
		turnPairs(d.Groups, r, ac)
	}
	if len(stations) < 2 {
		d.Route = nil
		for i := range d.Groups {
			d.Groups[i].Chainage = nil
		}
	}
	d.addTracks(tracks)
	byKey := make(map[string]*inverse.Result, len(fits))
	for _, f := range fits {
		if f.Result != nil {
			byKey[f.Key] = f.Result
		}
	}
	d.addTrackPhasesWith(byKey)
	d.addCrossings()
	d.addLoneCover(fits, r, rs, tracks, bs.TrackMinStations)
	d.addCutShortCover(fits, r, rs, cutShort)
	d.addPairCover(rs)
	d.addCurrentRamps(fits)
	return &d, nil
}

// sharedMisfit warns when a third of the groups' fits or more miss the
// readings by far more than the noise measured apart from the fits (each
// group's Fit.MeasuredNoise, else BuildSettings.MeasuredNoise) and by more
// than a share of the signal: the model does not describe the field,
// though each fit, measured against the others, may pass as sound. In
// review a go-and-return pair 0.3 m apart under 20 nT readings (2 nT per
// window) was fitted on every traverse as one 1.2 A line 1.2 m aside
// missing by 24 nT, "7 sound". "" when the noise was given (each fit is
// then measured against it), not measured, or over two thirds of the fits
// are within it.
//
// The share is the route's minor misfit (1%) for AC, whose windows measure
// all the noise the phasors carry. For DC it is dcMisfitShare: the noise
// measured from fourth differences of successive readings (see
// cmd/undercurrent dcnoise.go) does not see slow wander, such as a
// residual sensor offset turning with an 8° sway of the staff, which made
// exact fits of a 1 A cable at 1.5 m miss by 2.3 times that noise and 5.5%
// of the signal (found in review); a one-line fit of a go-and-return pair
// misses by 74%.
func sharedMisfit(fits []Fit, bs *BuildSettings, rs *route.Settings) string {
	if bs.Noise > 0 {
		return ""
	}
	n, misses := measuredMisfits(fits, bs, rs)
	bad := len(misses)
	// A third of the groups or more: at half, the median of the groups'
	// own noise estimates, the poor-fit yardstick when the noise is not
	// measured, lies between the two kinds, and the misfits passed as
	// sound (three of six traverses over three cables of one circuit, 600
	// nT against 0.7 nT). Without a yardstick (the route's check off:
	// fewer than three groups) one is enough: a lone traverse fitted with
	// the wrong model (one line over a go-and-return pair, half its depth
	// and a tenth of its current) was "1 sound", with no word.
	least := 2
	if rs.MaxReducedChi2 < 0 {
		least = 1
	}
	if n < least || bad < least || 3*bad < n {
		return ""
	}
	var rms, frac, noise []float64
	var keys []string
	for _, m := range misses {
		keys = append(keys, m.key)
		rms = append(rms, m.rms)
		noise = append(noise, m.noise)
		frac = append(frac, m.frac)
	}
	m, nm := median(rms), median(noise)
	which := ""
	if bad < n {
		which = " (" + strings.Join(keys[:min(len(keys), 8)], ", ")
		if len(keys) > 8 {
			which += ", ..."
		}
		which += ")"
	}
	lead := fmt.Sprintf("%d of %d groups' fits%s miss the readings by %.3g nT RMS per component (median)", bad, n, which, m)
	if n == 1 {
		lead = fmt.Sprintf("the group's fit misses the readings by %.3g nT RMS per component", m)
	}
	if bs.KeptRails != "" {
		// Readings held at a value that may be the sensor's range were
		// kept: before, a strong line railed on 43% of the log missed by
		// 1000 times the noise and this warning named close conductors,
		// not the rails the run had already suspected (found in review).
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: the fitted lines do not describe this field. Readings held at one value were kept in the fits (%s; see the warning on them): if that value is the magnetometer's range they are not the field and are the likeliest cause, so give it with --range-nt to leave them out and locate again; only then suspect conductors closer together than the fit can part or an object. Positions, depths and currents may be wrong although the fits, measured against one another, may pass as sound",
			lead, m/nm, nm, 100*median(frac), bs.KeptRails)
	}
	if a, k := aboveExplains(fits, misses); a != nil {
		// Before the axes: a line above the sensors misfits as a turned
		// axis does, and following the axes' advice fitted its mirror
		// image below ground as sound (found in review).
		which := "every one of them"
		if k < bad {
			which = fmt.Sprintf("%d of them", k)
		}
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: no line below the sensors describes this field, so positions, depths and currents of lines below mean nothing here. A conductor above the sensors explains %s, or the field's axes are read wrong (a sensor turned half round about its vertical gives the same readings over a conductor below); at %s, %s",
			lead, m/nm, nm, 100*median(frac), which, a.key, a.words(a.ac))
	}
	if sc, pm := jitterExplains(misses); pm > 0 {
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: the positions scatter from reading to reading by %.2g m, which alone makes about %.3g nT of misfit, most on the anomaly's flanks: scattered positions (satellite positioning jitter) are the likely cause, rather than conductors closer together than the fit can part; they flatten and widen the fitted anomaly, so depths read deep and currents high although the fits, measured against one another, may pass as sound; give their scatter with --position-sigma PLAN,HEIGHT (m), smooth the track or use corrected positions",
			lead, m/nm, nm, 100*median(frac), sc, pm)
	}
	if m > axesMisfit*nm && median(frac) > axesMisfitShare {
		// Every fit far off a strong field: the readings' axes are the
		// likelier cause (a sensor turned a quarter turn on its mount
		// missed by 360 times the noise and 28% of the signal on every
		// traverse, and this warning named close conductors: found in
		// review).
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.3g%% of the signal: the fitted lines do not describe this field, so positions, depths and currents mean nothing. A misfit this large on a strong field most often means the field's axes are read wrong: check the sensor's orientation and the field columns first (a sensor turned on its mount or upside down, two field columns swapped, an axis's sign reversed, a field logged north, east, down read as east, north, up; a base log beside the survey, --base, names the mistake), or a conductor above the sensors, such as an overhead line or a cable tray, which the fit never places there (with the axes right, do not turn one to make the readings fit: that fits its mirror image below ground), then conductors closer together than the fit can part or an object",
			lead, m/nm, nm, 100*median(frac))
	}
	if c, g := tiltExplains(misses); c > 0 && m >= tiltMisfit*nm {
		// The components miss, |B| does not: a sensor tilting by a
		// tenth of a degree, no attitude logged, missed by 22 times
		// the noise on every traverse and this warning named close
		// conductors only (found in review).
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: its components miss by %.3g nT (robust spread, median) and |B| by only %.3g nT: the field turned rather than changed, as it does when the sensor tilts or turns along the traverses with no attitude logged or read (sway, a leaning pole, wander: a tenth of a degree turns a 50 000 nT field by 90 nT), not as a conductor's field left out of the fit does, which moves |B| with it. Log the sensor's roll and pitch (and heading) and read them with --frame sensor, or hold the sensor level and steady; only then suspect conductors closer together than the fit can part or an object. Positions, depths and currents may be wrong although the fits, measured against one another, may pass as sound",
			lead, m/nm, nm, 100*median(frac), c, g)
	}
	timed := ""
	if timedDC(fits) {
		timed = "; " + timeVaryingCause
	}
	if median(frac) < farAnyShare {
		return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: the fitted lines do not describe this field; %s. Conductors closer together than the fit can part or a conductor above the sensors may also do it%s",
			lead, m/nm, nm, 100*median(frac), smallShareCauses, timed)
	}
	return fmt.Sprintf("%s, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: the fitted lines do not describe this field (conductors closer together than the fit can part, such as the two cores of a pair, parallel circuits, a conductor above the sensors, such as an overhead line or a cable tray, which the fit never places there, or an object), so positions, depths and currents may be wrong although the fits, measured against one another, may pass as sound; confirm on site by other means%s",
		lead, m/nm, nm, 100*median(frac), timed)
}

// timeVaryingCause is the misfit's cause sharedMisfit adds for DC readings
// that carry times: a current changing in time for a while (a train
// drawing on a DC railway, a tram, cathodic protection switched), which a
// fit taking every current as steady reads as a bend, a tee, a second
// conductor or an object. On simulated surveys beside a DC railway whose
// trains raised its current for 15-60 s several times a walk, no text
// said so and the misfits were given those causes (found in review). It
// is named as a possibility only: which traverses a train spoilt is not
// told (DEVELOPERS.md, Known limits).
const timeVaryingCause = "a current that changed in time while the traverses were walked does it too (trains or trams drawing on a DC line nearby, cathodic protection switched: the fits take every current as steady, and read the change as a bend, a tee, a second conductor or an object): where such a source is near, log a reference current (--current-reference) or walk the traverses again between trains, and do not take a poor traverse's cover or bend for the conductor's"

// timedDC reports whether a DC survey's fits carry the time of their
// readings (Fit.Start, or the problem's Times) and none was scaled by a
// reference current (Problem.Scale), which models the change already.
func timedDC(fits []Fit) bool {
	timed := false
	for i := range fits {
		p := fits[i].Problem
		if p == nil || len(p.Phasors) > 0 || p.Scale != nil {
			return false
		}
		timed = timed || !fits[i].Start.IsZero() || len(p.Times) > 1
	}
	return timed
}

// axesMisfit and axesMisfitShare are the median misfit, in multiples of
// the readings' noise, and share of the signal beyond which sharedMisfit
// names the field's axes before close conductors: a one-line fit of a
// go-and-return pair misses by 74% of the signal but the pair's field is
// a few nT to a few hundred, tens of times the noise; a turned sensor's
// fits miss by hundreds of times it.
const (
	axesMisfit      = 100
	axesMisfitShare = 0.2
)

// tiltRatio is how many times |B|'s residual spread the components' (per
// axis) must be for sharedMisfit to take a group's misfit for a turned
// field: noise alone leaves them alike, a conductor's field left unfitted
// changes |B| by its part along the Earth's field (cmd/undercurrent
// measures only where that part leaves a ratio under 1.4), while a tilt
// leaves |B| to the noise and to the part of the tilt the fit took up
// (2-7 times the components' in review and in simulation); and tiltMisfit the least median misfit, in multiples
// of the noise, for the tilt to be named (the tilt of a tenth of a degree
// found in review missed by 22 times it).
const (
	tiltRatio  = 2.0
	tiltMisfit = 5.0
)

// tiltExplains returns the median component and |B| residual spread, nT,
// of the misses when over half of them swing their components tiltRatio
// times as much as |B| and by at least tiltMisfit times their noise; 0, 0
// otherwise.
func tiltExplains(misses []misfit) (comp, mag float64) {
	var cs, ms []float64
	for _, m := range misses {
		if m.compSwing >= tiltMisfit*m.noise && m.compSwing > tiltRatio*m.magSwing {
			cs = append(cs, m.compSwing)
			ms = append(ms, m.magSwing)
		}
	}
	if 2*len(cs) <= len(misses) {
		return 0, 0
	}
	return median(cs), median(ms)
}

// jitterShare is the least share of a group's misfit beyond its noise
// (root-sum-square) that the scatter of its positions must make
// (Fit.PositionMisfit) for sharedMisfit to name the positions as the cause.
const jitterShare = 0.5

// jitterExplains returns the median position scatter, m, and the median
// misfit it makes, nT, of the misses when the scatter explains at least
// jitterShare of the misfit beyond the noise in over half of them; 0, 0
// otherwise.
func jitterExplains(misses []misfit) (scatter, misfitNT float64) {
	var sc, pm []float64
	for _, m := range misses {
		if m.jitter {
			sc = append(sc, m.posScatter)
			pm = append(pm, m.posMisfit)
		}
	}
	if 2*len(sc) <= len(misses) {
		return 0, 0
	}
	return median(sc), median(pm)
}

// misfit is a group's fit that misses the noise measured apart from it
// (measuredMisfits): its RMS residual per real component, that noise, nT,
// and the residual's share of the signal.
type misfit struct {
	key              string
	rms, noise, frac float64
	// posScatter and posMisfit are the fit's Fit.PositionScatter and
	// PositionMisfit; compSwing and magSwing its ComponentSwing and
	// MagnitudeSwing.
	posScatter, posMisfit float64
	compSwing, magSwing   float64
	// jitter is true when the positions' scatter makes jitterShare of the
	// misfit beyond the noise or more (jittered).
	jitter bool
}

// jittered reports whether the misfit pm, nT, that the scatter of a
// group's positions makes explains jitterShare or more of its fit's misfit
// r beyond the noise (root-sum-square), nT.
func jittered(r, noise, pm float64) bool {
	excess := math.Sqrt(math.Max(r*r-noise*noise, 0))
	return pm > 0 && pm >= jitterShare*excess
}

// positionsHeld reports whether res was fitted with position sigmas
// (inverse.Settings.PositionSigmaPlan, PositionSigmaUp) whose variance,
// beside the noise, holds its residuals: its note does not say they are
// too small (inverse.PositionSigmaShortNote) nor that the fit refused
// them (inverse.PositionSigmaRefusedNote).
func positionsHeld(res *inverse.Result) bool {
	for _, n := range res.Notes {
		if strings.HasPrefix(n, inverse.PositionSigmaNote) {
			return !strings.Contains(n, inverse.PositionSigmaShortNote) && !strings.Contains(n, inverse.PositionSigmaRefusedNote)
		}
	}
	return false
}

// measuredMisfits returns the number of groups whose noise was measured
// apart from their fits and those of them whose fits miss the readings by
// more than the square root of the poor-fit limit times that noise and by
// more than a share of the signal (see sharedMisfit).
func measuredMisfits(fits []Fit, bs *BuildSettings, rs *route.Settings) (n int, misses []misfit) {
	limit := rs.MaxReducedChi2
	if limit <= 0 {
		// Also when the route's own check is off (no reference noise
		// with fewer than three groups): this check has its own.
		limit = 4
	}
	minor := rs.MinorMisfit
	if minor == 0 {
		minor = 0.01
	}
	for _, f := range fits {
		res := f.Result
		if res == nil || len(res.Sources) == 0 || res.RMS <= 0 {
			continue
		}
		measured := f.MeasuredNoise
		if !(measured > 0) {
			measured = bs.MeasuredNoise
		}
		if !(measured > 0) {
			continue
		}
		n++
		sig := fitSignal(res)
		// An AC fit's RMS is of complex residuals; the windows' noise is
		// per real component.
		r := res.RMS
		share := minor
		if f.Problem != nil && f.Problem.Phasors != nil {
			r /= math.Sqrt2
		} else {
			share = math.Max(minor, dcMisfitShare)
		}
		// Fits of several lines side by side that miss their own readings'
		// noise many times over are counted whatever the share: the share
		// allows for a single conductor's departure from a straight line,
		// which moves its estimates by about that fraction, whereas lines
		// whose currents trade against one another can be far off at a
		// small share (four 50 Hz circuits 0.35 m apart, fitted as a wrong
		// set of lines on every traverse at 17 times the windows' noise and
		// 0.17% of the signal, were all "sound", with no word).
		if len(res.Sources) >= farMisfitLines && r > farMisfit*measured {
			share = 0
		}
		// So are fits of any number of lines that miss by farAnyMisfit
		// times the noise and farAnyShare of the signal: an overhead line
		// 11.7 m above a 25 A cable 1.3 m down left one-line fits on every
		// traverse 42-50 times the noise off at 6% of the signal, the
		// current 13 sigma high and "5 sound", with no word (found in
		// review).
		jitter := jittered(r, measured, f.PositionMisfit)
		if positionsHeld(res) {
			// Given position sigmas whose variance, beside the noise,
			// holds the misfit (the fit's position-weighted chi-square,
			// inverse.PositionSigmaShortNote): the fit was weighed by it
			// and its sigmas carry it (25 A at 0.8 m, positions scattered
			// 0.1 m and given so, read 25.07 ± 0.11 A, pulls RMS 1.0 over
			// six seeds, yet all were poor at 52 times the noise; found in
			// review). Judged by that variance, not by the scatter of the
			// logged track (PositionMisfit): a true place scattered about
			// a smooth logged one leaves the track no scatter to measure,
			// and a track scattered 0.02 m on half of each traverse and
			// 0.4 m on the other measures the first (robust), so such fits
			// were all poor, "the fitted lines do not describe this
			// field", with pulls RMS 1.18/1.10 (found in review), and the
			// shared warning said so of fits all sound. A model miss that
			// the position variance would take up is refused that variance
			// in the fit (inverse.PositionSigmaRefusedNote): not held.
			continue
		}
		if r > farAnyMisfit*measured {
			share = math.Min(share, farAnyShare)
		}
		// No rule fails a fit at any share from some multiple of the noise:
		// a 50-times rule (to catch a sensor tilted a constant few degrees,
		// 300 A read as 333 A, 570 times the noise at 1.9% of the signal)
		// failed right fits of strong conductors with ordinary model errors
		// (300 A rising 0.4 m over 8 m, a 0.3 m sag, a 0.5% axis scale:
		// cover 0.8495 ± 0.0071 m for 0.85, poor, the route's least cover
		// skipping the shallow stretch; found in review) and was taken out.
		if r > math.Sqrt(limit)*measured && sig > 0 && res.RMS > share*sig {
			misses = append(misses, misfit{key: f.Key, rms: r, noise: measured, frac: res.RMS / sig, posScatter: f.PositionScatter, posMisfit: f.PositionMisfit, compSwing: f.ComponentSwing, magSwing: f.MagnitudeSwing, jitter: jitter})
		}
	}
	return n, misses
}

// markLoneMisfits gives the groups whose fits miss the noise measured
// apart from them (measuredMisfits) the reason as their Problem, when the
// route's own poor-fit check is off (fewer than three groups, the noise
// not given): then nothing else can call them poor, and a single traverse
// fitted with the wrong model was counted sound.
//
// With the route's check on, only the fits that miss by farAnyMisfit times
// that noise or more are marked: measured against one another they pass
// when every traverse shares the misfit (an overhead line above a buried
// cable: 42-50 times the noise on all five traverses, the current 13
// sigma off, "5 sound"; found in review).
func markLoneMisfits(groups []Group, fits []Fit, bs *BuildSettings, rs *route.Settings, flat bool) {
	if bs.Noise > 0 {
		return
	}
	_, misses := measuredMisfits(fits, bs, rs)
	for _, m := range misses {
		if rs.MaxReducedChi2 >= 0 && !(m.rms > farAnyMisfit*m.noise) {
			continue
		}
		for i := range groups {
			g := &groups[i]
			if g.Key != m.key || !g.OK {
				continue
			}
			why := fmt.Sprintf("the fit misses the readings by %.3g nT RMS per component, %.3g times the %.3g nT noise the readings themselves show and %.2g%% of the signal: the fitted lines do not describe this field",
				m.rms, m.rms/m.noise, m.noise, 100*m.frac)
			switch {
			case m.jitter:
				// Poor without the positions' scatter given: the fit took
				// every reading as placed exactly, its sigmas leave the
				// scatter out and its depth reads deep.
				why += fmt.Sprintf("; the positions scatter from reading to reading by %.2g m, which alone makes about %.3g nT of it: give their scatter with --position-sigma PLAN,HEIGHT (m) to weigh each reading by it, or smooth the track or use corrected positions", m.posScatter, m.posMisfit)
			case m.frac < farAnyShare:
				why += "; " + smallShareCauses
			}
			if !m.jitter && flat {
				// No heights on this traverse: the ground's shape
				// across it is a cause too (groundslope.go).
				why += groundLoneCause
			}
			if g.Problem != "" {
				g.Problem += "; "
			}
			g.Problem += why
			break
		}
	}
}

// smallShareCauses names the likely causes of a misfit many times the
// noise at a small share of a strong signal (several lines fitted beside
// one another, farMisfitLines).
const smallShareCauses = "a misfit this many times the noise at so small a share of the signal is what a bend or a change of depth close by, a small conductor or object beside the line, or a sensor tilted by a constant angle with no attitude logged leaves over a strong conductor (a 1 degree tilt turns its field by 1.7% of it and pulled 300 A to 305 A in simulation): the estimates may be off by more than their stated uncertainty; if the sensor may have been tilted, log its roll and pitch (--frame sensor) or check it is level"

// farMisfit is the multiple of its own readings' noise beyond which a fit of
// farMisfitLines lines or more counts as missing them in measuredMisfits
// whatever its share of the signal. The DC share's cause, noise correlated
// from reading to reading, had exact fits miss by 2.3 times the noise.
const (
	farMisfit      = 10
	farMisfitLines = 3
)

// farAnyMisfit is the multiple of its own readings' noise beyond which any
// fit counts as missing them (measuredMisfits) whatever its share of the
// signal, and is not sound even when every group shares the misfit
// (markLoneMisfits): noise correlated from reading to reading had exact
// fits miss by 2.3 times it, a line left out of the model (an overhead
// line above a buried cable) by 42-50 times it.
//
// farAnyShare is the share of the signal such a fit must also miss by: the
// demo's bends and closing cables leave AC fits 20-24 times their windows'
// noise off at 0.6-1.1% of the signal, which the route's own check weighs;
// the overhead line's 6%.
const (
	farAnyMisfit = 20
	farAnyShare  = 0.02
)

// dcMisfitShare is the least share of a DC fit's signal its misfit must
// reach for sharedMisfit (see there).
const dcMisfitShare = 0.1

// currentK is the number of sigmas a current must exceed to be taken as
// found: 3 for a DC current (a normal value: |Z| > 3 with probability
// 0.0027), and for an AC RMS current, the modulus of a phasor of two
// normal parts, the k with the same tail under the Rayleigh distribution,
// exp(-k²/2) = 0.0027, k = 3.44 (as inverse's guard on extra lines).
func currentK(ac bool) float64 {
	if ac {
		return math.Sqrt(-2 * math.Log(math.Erfc(3/math.Sqrt2)))
	}
	return 3
}

// NoCurrent reports whether line source s carries no current the data
// resolve: not identifiable, or within currentK sigma of zero. A fit to
// readings with no conductor under them (a coil log with no AC field, a
// traverse beyond the end of the cable) still places a line somewhere;
// its depth and position are then noise, and a cover check on them would
// warn of a conductor that is not there. A nil s carries none: true.
func NoCurrent(s *inverse.SourceEstimate, ac bool) bool {
	if s == nil {
		return true
	}
	if s.Kind == KindDipole {
		return false
	}
	return !s.Identifiable.Current || !(math.Abs(s.Current) > currentK(ac)*s.CurrentSigma)
}

// noLineCurrent reports whether no line among ss carries a current the
// data resolve (NoCurrent); false when ss holds no line.
func noLineCurrent(ss []inverse.SourceEstimate, ac bool) bool {
	lines := 0
	for i := range ss {
		if ss[i].Kind == KindDipole {
			continue
		}
		lines++
		if !NoCurrent(&ss[i], ac) {
			return false
		}
	}
	return lines > 0
}

// anglesApproximate returns the fit's note that its line angles, fitted
// from a single traverse, are so poorly determined that its sigmas are
// approximate (inverse.AnglesApproximateNote), or "".
func anglesApproximate(notes []string) string {
	for _, n := range notes {
		if strings.HasPrefix(n, inverse.AnglesApproximateNote) {
			return n
		}
	}
	return ""
}

// heldRejected returns the fit's note that its held line angles are
// rejected by the readings (inverse.HeldAnglesRejectedNote), or "".
func heldRejected(notes []string) string {
	for _, n := range notes {
		if strings.HasPrefix(n, inverse.HeldAnglesRejectedNote) {
			return n
		}
	}
	return ""
}

// followsPair reports whether the route follows a go-and-return pair: at
// least half of the groups whose fit found a current (usable, see
// circuitOf) find the strongest line in a pair by the strict test of
// circuitOf. A pair at one or two groups of a single cable (a riser or a
// ramp the straight-line model bends to) does not turn the whole route
// into a pair. Two feeders that every group resolves, each keeping its
// own current, are followed as two conductors instead (twoFeeders).
func followsPair(fits []Fit, ac bool) bool {
	if twoFeeders(fits, ac) {
		return false
	}
	strict, usable := 0, 0
	for i := range fits {
		_, st, ok := circuitOf(&fits[i], ac)
		if ok {
			usable++
		}
		if st {
			strict++
		}
	}
	return strict > 0 && 2*strict >= usable
}

// circuitOf returns the go-and-return pair that the strongest line of fit f
// belongs to, for the route to follow: the unresolved pair holding it
// (inverse.Result.Pairs), or a line the fit resolved beside it with the
// opposite current (inverse.Result.Opposed) whose current is significant,
// at least minPartnerShare of the strongest's, and that lies no further
// from it than their centre lies below the readings: the one
// choosePartners chose (the same conductor along the route, partner.go),
// else the one that best balances it. strict is true for an unresolved pair and for a
// resolved one that returns at least half the current (the net current
// at most half the stronger core's): the two cores of one circuit.
// usable is false, and p nil, for a fit that failed or found no current.
//
// When the route follows a pair (followsPair, pairRoute in Build), every
// group with a pair gives the route its centre, depth and net current
// (the current that does not return through the pair, signed along the
// pair's direction, its sigma from the fit's covariance), and the
// partner is not followed as a further conductor. The looser test at the
// other groups keeps a circuit whose cores some traverses resolve and
// others do not on one footing. Before, the route took the net current
// at an unresolved pair and the strongest core's current where the cores
// were resolved, and reported the difference as current leaving and
// joining (a sound 10 A / 6 A circuit read "current falls by 5.73 A");
// and where a balanced pair's cores were resolved it took whichever was
// the stronger, +10 A here and -10 A there, and reported 20 A steps.
func circuitOf(f *Fit, ac bool) (p *inverse.PairEstimate, strict, usable bool) {
	res := f.Result
	if res == nil || len(res.Sources) == 0 || !(res.Status.Converged() || res.Status == inverse.Stalled) {
		return nil, false, false
	}
	if p := pairOf(res); p != nil {
		return p, true, true
	}
	s0 := &res.Sources[0]
	if s0.Kind == KindDipole || !sound(s0) || NoCurrent(s0, ac) {
		return nil, false, false
	}
	var k int
	if f.partnerChosen {
		k = f.partner
	} else if c := partnerCandidates(f, ac); len(c) > 0 {
		k = c[0]
	} else {
		k = -1
	}
	if k < 0 || k >= len(res.Opposed) {
		return nil, false, true
	}
	p = &res.Opposed[k]
	o := &res.Sources[p.Lines[0]+p.Lines[1]] // one of them is 0, the strongest
	return p, math.Abs(p.NetCurrent) <= 0.5*math.Max(math.Abs(s0.Current), math.Abs(o.Current)), true
}

// returnShareClause words, for a return path of conductor 1's current
// (trackReturn, chosen by addTrackPhases: within 30° of anti-phase at
// three sigmas, not of a three-phase set), the share of conductor 1's
// current it returns and the net current left to return by other paths
// (with several returns, their phasor sum with conductor 1's, on the last
// of them; the others point to it); for a conductor not read as a return
// but within 45° of anti-phase, why not; for the later
// member of a three-phase set (polyphaseSet), the set's residual, worded
// as holding only if the three are one circuit; "" otherwise. The
// go-and-return wording of circuitOf covers only a pair within its depth
// of each other; a return farther off (a water main 2 m from a service
// cable carrying a tracer's earth return) was given only its phase from
// conductor 1 (found in review), while a tracer user needs how much comes
// back along it and how much goes to remote earth.
func returnShareClause(t *Track) string {
	if len(t.PolyphaseSet) == 3 && t.PolyphaseResidualA != nil && t.PolyphaseResidualSigmaA != nil {
		s := t.PolyphaseSet
		var phase string
		if t.PolyphaseResidualPhaseDeg != nil && t.PolyphaseResidualPhaseSigmaDeg != nil {
			phase = fmt.Sprintf(" at %s° from conductor 1's phase (read along conductor 1's direction; with the currents about 120° apart, the phase it lies nearest carries the most current)", pm(*t.PolyphaseResidualPhaseDeg, *t.PolyphaseResidualPhaseSigmaDeg))
		}
		return fmt.Sprintf("; conductors %d, %d and %d have phases about 120° apart, as the three phases of one three-phase circuit have: if they are one circuit, its residual (the phasor sum of the three currents, what returns by a neutral, earth or conductors outside the survey) is %s A%s; separate circuits on those phases give the sum no meaning",
			s[0], s[1], s[2], pm(*t.PolyphaseResidualA, *t.PolyphaseResidualSigmaA), phase)
	}
	if t.ReturnOffDeg != nil && t.ReturnOffSigmaDeg != nil {
		return fmt.Sprintf("; not read as a return: %s° from anti-phase (a return through an inductive path can be so far off)", pm(*t.ReturnOffDeg, *t.ReturnOffSigmaDeg))
	}
	if t.ReturnShare == nil || t.ReturnShareSigma == nil {
		return ""
	}
	share := fmt.Sprintf("; it carries back %s%% of conductor 1's current (its current times the cosine of its angle from anti-phase, over conductor 1's)", pm(100**t.ReturnShare, 100**t.ReturnShareSigma))
	if len(t.ReturnSet) == 0 {
		if t.NetToEarthA == nil || t.NetToEarthSigmaA == nil {
			return ""
		}
		return share + fmt.Sprintf(", and the two together leave a net %s A (their phasor sum) that returns by other paths, such as remote earth or conductors outside the survey", pm(*t.NetToEarthA, *t.NetToEarthSigmaA))
	}
	set := numberList(t.ReturnSet)
	last := t.ReturnSet[len(t.ReturnSet)-1]
	switch {
	case t.NetToEarthA != nil && t.NetToEarthSigmaA != nil:
		return share + fmt.Sprintf("; conductors %s (conductor 1 and the conductors read as its returns) together leave a net %s A (the phasor sum of their currents) that returns by other paths, such as remote earth or conductors outside the survey", set, pm(*t.NetToEarthA, *t.NetToEarthSigmaA))
	case t.Number == last:
		return share + fmt.Sprintf("; conductors %s are read as conductor 1 and its returns, but no group has all of them, so the net they leave to other paths is not given", set)
	default:
		return share + fmt.Sprintf(", one of the returns read beside conductor 1 (conductors %s: the net they leave to other paths is given with conductor %d)", set, last)
	}
}

// numberList words conductor numbers, "1, 2 and 3".
func numberList(ns []int) string {
	var b strings.Builder
	for k, n := range ns {
		switch {
		case k == 0:
		case k == len(ns)-1:
			b.WriteString(" and ")
		default:
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%d", n)
	}
	return b.String()
}

// circuitPartner is the index of the line that the route's conductor of
// fit f is paired with when the route follows a go-and-return pair
// (circuitOf), or -1.
func circuitPartner(f *Fit, ac, pairRoute bool) int {
	if !pairRoute {
		return -1
	}
	if p, _, _ := circuitOf(f, ac); p != nil {
		return p.Lines[0] + p.Lines[1] // one of them is 0, the strongest
	}
	return -1
}

// buildGroup converts one fit into the document's group and the route's
// station (the strongest source is the one the route follows; with
// pairRoute, the go-and-return pair it belongs to, see circuitOf).
func buildGroup(f *Fit, ac bool, refSigma float64, profileMax int, pairRoute bool, sensorHeight float64) (Group, route.Station) {
	pts := f.Problem.Points
	g := Group{Key: f.Key, Log: f.Log, Points: len(pts), Centroid: centroid(pts), Sources: []Source{}}
	if f.depthShift != 0 {
		g.SensorHeight = f.SensorHeight
	}
	st := route.Station{Key: f.Key, Point: g.Centroid, AC: ac, Dipole: f.Dipole, Walk: f.Walk, Start: f.Start, Traverse: f.Traverse}
	if f.Result == nil {
		g.Problem = "the fit failed: " + f.Err.Error()
		st.Problem = g.Problem
		return g, st
	}
	res := f.Result
	g.RMS = res.RMS
	g.Background, g.BackgroundSigma = res.Background, res.BackgroundSigma
	g.Chi2, g.DOF = res.Chi2, res.DOF
	g.Status = res.Status.String()
	// A stalled fit stopped where rounding allows no further reduction:
	// at the minimum for practical purposes. Running out of iterations
	// is a failure.
	g.OK = (res.Status.Converged() || res.Status == inverse.Stalled) && len(res.Sources) > 0
	for _, n := range res.Notes {
		// The report judges every fit against its own poor-fit yardstick
		// (poor-fit findings): inverse's note that the lines miss the
		// readings' noise floor (inverse.LinesMissNote) would say it again.
		if !strings.HasPrefix(n, inverse.LinesMissNote) {
			g.Notes = append(g.Notes, n)
		}
	}
	if f.PhaseRampHz != 0 {
		hz, sigma := f.PhaseRampHz, f.PhaseRampSigmaHz
		g.PhaseRampHz, g.PhaseRampSigmaHz = &hz, &sigma
		st.PhaseRampHz, st.PhaseRampSigmaHz = hz, sigma
	}
	for _, c := range res.Criteria {
		g.Criteria = append(g.Criteria, Criterion{Count: c.Count, AIC: c.AIC, BIC: c.BIC, RSS: c.RSS, Chosen: c.Chosen, Rejected: c.Rejected})
	}
	for _, s := range res.Sources {
		g.Sources = append(g.Sources, buildSource(s, pts, ac))
	}
	pair := pairOf(res)
	if pair != nil {
		g.Pair = buildPair(pair, ac)
	} else if len(res.Pairs) > 0 {
		// A pair beside a stronger conductor: reported with the group,
		// not followed (its lines' currents are not determined).
		g.Pair = buildPair(&res.Pairs[0], ac)
	}
	// An unresolved go-and-return pair has no current of its own lines,
	// but its centre and current times spacing are found (Group.Pair).
	// Every line is asked: the first is the strongest whose current is
	// found when any is (inverse lists those first), but a caller's
	// Result may not be so ordered, and a line of any size whose current
	// is not resolved (a phantom 33 m down at -54 ± 62 A beside a clean
	// 20 A cable, fitted with --count 2) says nothing of the others.
	//
	// A same-way split whose sum the readings find (splitSumFound) is not
	// weak: its shares are not parted, but its current is known, and the
	// route takes the sum (forced by Build, see splitSumFound).
	weak := g.OK && noLineCurrent(res.Sources, ac) && pair == nil && !splitSumFound(res, ac)
	// A lone line a few centimetres from the sensors with a current just
	// over 3 sigma, or one whose fall in chi-square noise reaches at some
	// place along the readings: noise, not a conductor (nearSensorProblem,
	// undetectedProblem).
	var near string
	if g.OK && !weak && pair == nil {
		near = nearSensorProblem(f, res, ac)
		if near == "" {
			near = undetectedProblem(f, res, ac)
		}
	}
	// Nor is a line above the ground given a buried conductor.
	var above string
	var aboveFail bool
	if len(res.Sources) > 0 && g.OK && !weak && near == "" {
		above, aboveFail = aboveGroundProblem(res, &res.Sources[0], sensorHeight)
	}
	// A single traverse whose line angles the readings do not determine,
	// where holding them perpendicular and level misses the readings by
	// more than chance allows (inverse.HeldAnglesRejectedNote): the current
	// and position are biased beyond their sigmas.
	held := heldRejected(res.Notes)
	// A lone line the readings place nowhere (lostLineProblem).
	var lost string
	var lostFail bool
	if g.OK && !weak && near == "" && above == "" && pair == nil {
		noise := f.MeasuredNoise
		if !(noise > 0) {
			noise = refSigma
		}
		lost, lostFail = lostLineProblem(res, noise)
	}
	// The conductor's line stood up to the dip's bound (dipAtBound).
	var steep string
	if g.OK && !weak && near == "" && above == "" && len(res.Sources) > 0 {
		steep = dipAtBound(&res.Sources[0])
	}
	if weak || near != "" || aboveFail || held != "" || lostFail || steep != "" {
		g.OK = false
	}
	switch {
	case len(res.Sources) == 0:
		g.Problem = "no conductor was fitted"
	case held != "" && !weak:
		g.Problem = "the fit failed: " + held
	case g.OK && anglesApproximate(res.Notes) != "":
		g.Problem = anglesApproximate(res.Notes)
	case weak:
		g.Problem = noCurrentProblem(f, res, &res.Sources[0], ac)
	case near != "":
		g.Problem = near
	case aboveFail && f.levelOff != 0:
		g.Problem = fmt.Sprintf("the fit is set aside, not failed: the ground level given does not hold here, where the sensors' mean height is %.2f m above it (one flat --reference-z level does not fit this survey; see the warnings), and the line lies above that level (depth %s m below it), which says nothing of the readings", f.levelOff, PlusMinus(res.Sources[0].Depth, res.Sources[0].DepthSigma))
	case aboveFail:
		g.Problem = "the fit failed: " + above
	case lostFail:
		g.Problem = "the fit failed: " + lost
	case steep != "":
		g.Problem = "the fit failed: " + steep
	case !g.OK:
		g.Problem = "the fit did not converge (" + g.Status + ")"
	case f.Problem != nil && f.Problem.Sigma == 0 && res.DOF < MinDOF:
		g.Problem = fewDOF(res.DOF)
	case above != "":
		g.Problem = above
	case lost != "":
		g.Problem = lost
	default:
		g.Problem = ambiguity(res.Criteria)
	}
	if g.OK {
		// A further line above the ground: the fit is poor
		// (furtherAboveGround).
		if w := furtherAboveGround(res, sensorHeight); w != "" {
			if g.Problem != "" {
				g.Problem += "; "
			}
			g.Problem += w
		}
		// A local field the lines absorbed, which a refused line dipole
		// takes most of (linedipole.go): the fit is poor.
		if w := lineDipoleProblem(res, refSigma); w != "" && !ac {
			if g.Problem != "" {
				g.Problem += "; "
			}
			g.Problem += w
		}
	}
	if f.Dipole && g.Problem == "" && f.object == nil {
		// The caller's verdict, without a fitted object to show for it.
		g.Problem = "a magnetised object (a buried steel or iron item) explains the readings better than a current (fitted as a point dipole)"
	}
	if f.object != nil {
		st.Object = f.object
	}
	if len(res.Sources) > 0 {
		s := res.Sources[0]
		if g.OK {
			// A failed or currentless fit's position means nothing: the
			// station keeps the readings' centroid and no direction, so
			// that it neither starts the route's chain nor turns its
			// neighbours' currents (route.Station). Before, a traverse
			// with no current found, fitted 13 m aside, started the
			// chain and flipped the next station's current: a false
			// "current rises by 1.880 A" on a constant 1 A pipe.
			st.Point, st.Dir = s.Point, s.Dir
			st.UnderCentre = s.Kind == KindLine && !s.AtTrackCrossing
		}
		st.Current, st.CurrentSigma = s.Current, s.CurrentSigma
		st.Phase, st.PhaseSigma = s.Phase, s.PhaseSigma
		st.Depth, st.DepthSigma = s.Depth, s.DepthSigma
		circ, partner := pair, -1
		if circ == nil && pairRoute {
			circ, _, _ = circuitOf(f, ac)
		}
		if circ != nil {
			// The route follows the pair's centre, and its current
			// profile takes the pair's net current (the current that
			// does not return through the pair): for an unresolved
			// pair the one current found, for resolved cores their
			// sum, so that both read alike (circuitOf).
			if g.OK {
				st.Point, st.Dir, st.UnderCentre = circ.Point, circ.Dir, false
			}
			st.Current, st.CurrentSigma = circ.NetCurrent, circ.NetCurrentSigma
			st.Phase, st.PhaseSigma = circ.NetCurrentPhase, circ.NetCurrentPhaseSigma
			st.Depth, st.DepthSigma = circ.Depth, circ.DepthSigma
			if ws := weakBeside(f, circ, ac); len(ws) > 0 {
				// Weak lines beside the cores, fitted here and not
				// elsewhere: their current is the pair's (partner.go).
				st.Current, st.CurrentSigma, st.Phase, st.PhaseSigma = netWithWeak(f, circ, ws, ac)
				g.Notes = append(g.Notes, weakNote(f, ws))
			}
			st.PairNet = true
			partner = circ.Lines[0] + circ.Lines[1]
		} else if sw := sameWayOf(res); sw != nil && f.sumSplit {
			// The strongest line split in two same-way lines whose
			// shares the readings do not part (inverse.Result.SameWay),
			// the second followed by no track, and the sum nearer the
			// current of the stations either side (markSplitSums): the
			// route takes their sum at their centre weighted by their
			// currents (splitSumCentre), not the stronger share (a
			// cable diving under a road read 0.9 of 2 A at the bends in
			// its depth, two false steps).
			point, dir, depth, depthSigma := splitSumCentre(res, sw)
			g.Notes = append(g.Notes, splitSumNote(sw, depth, depthSigma, ac, NoCurrent(&s, ac)))
			g.SummedSources = &[2]int{0, sw.Lines[1]}
			if g.OK {
				st.Point, st.Dir, st.UnderCentre = point, dir, false
			}
			st.Current, st.CurrentSigma = sw.NetCurrent, sw.NetCurrentSigma
			st.Phase, st.PhaseSigma = sw.NetCurrentPhase, sw.NetCurrentPhaseSigma
			st.Depth, st.DepthSigma = depth, depthSigma
			partner = sw.Lines[1]
			st.SummedSplit = true
		} else if s.Identifiable.Dip && finite(s.DipSigma) && s.DipSigma > 0 {
			// The route compares the line's dip with its neighbours'
			// depths (route.BendDoubt); a pair's or a summed split's
			// centre has no dip of its own to compare.
			st.DipSigma = s.DipSigma
		}
		if g.OK && s.Kind == KindLine {
			st.Reach = route.ReachOf(pts, st.Point, st.Dir)
		}
		for j, o := range res.Sources {
			if j == 0 || j == partner {
				continue
			}
			if o.Kind != KindDipole && sound(&o) && !NoCurrent(&o, ac) {
				st.Further = append(st.Further, route.Line{Point: o.Point, Dir: o.Dir,
					Current: o.Current, CurrentSigma: o.CurrentSigma, Depth: o.Depth, DepthSigma: o.DepthSigma, AzimuthSigma: o.AzimuthSigma})
			}
		}
		if profileMax > 0 {
			if p, err := buildProfile(f, profileMax); err == nil {
				g.Profile = p
			}
		}
	}
	st.RMS = res.RMS
	st.Signal = signalRMS(res)
	g.Noise = res.Sigma
	if res.SigmaWidening > 1 {
		g.ResidualLag1, g.SigmaWidening = res.SerialCorrelation, res.SigmaWidening
	}
	if !ac && f.MeasuredNoise > 0 && res.Sigma > 0 {
		// Each DC fit judged against the noise of its own readings as well
		// (route strain.go): the square root of the values fitted, three
		// per reading, over the noise the sigmas were computed with. Both
		// are the group's, and hold for the further conductors' stations
		// (trackStation) too.
		st.Noise = f.MeasuredNoise
		st.SigmasPerMisfit = math.Sqrt(float64(3*len(pts))) / res.Sigma
	}
	st.Widening = res.SigmaWidening
	if refSigma > 0 && res.Sigma > 0 {
		// Chi-square against the yardstick noise (yardstick.go), so that a
		// group fitting much worse than its noise allows stands out.
		st.Chi2 = res.Chi2 * (res.Sigma / refSigma) * (res.Sigma / refSigma)
		st.DOF = res.DOF
		st.SigmaFromResiduals = f.Problem != nil && f.Problem.Sigma == 0
		g.ReferenceNoise, g.ReferenceChi2 = refSigma, st.Chi2
	}
	st.OK = g.OK
	if !f.Dipole {
		st.Problem = g.Problem
	}
	return g, st
}

// unplace leaves station st of fit f, and its group g, out of the route's
// line and chainage when the fit leaves too few degrees of freedom to
// place the conductor (unplacedFit): the station is placed on the route as
// a failed fit's is, at its readings' centroid, and left out of the
// profile, its current compared with its neighbours' in its poor-fit
// finding (route.Station.Unplaced); the group stays a converged, poor fit.
// Build calls it when at least three fits, and most, place the conductor
// (shortFitsUnplaced): a lone traverse keeps its cover check, and short
// fits that are most of the survey are kept as before. Before, a traverse cut to its first
// three readings over a 30 A cable, fitted from 1 degree of freedom with a
// line 4.6 m aside carrying -0.56 A, steered the route through that line
// (5 m added to every later chainage) and its current entered the profile
// unexamined.
func unplace(f *Fit, g *Group, st *route.Station) {
	if !st.OK || st.Dipole || f.Dipole || !unplacedFit(f) {
		return
	}
	st.OK, st.Unplaced = false, true
	st.Point = g.Centroid
	if !strings.Contains(g.Problem, fewDOFMark) {
		if g.Problem != "" {
			g.Problem += "; "
		}
		g.Problem += fewDOF(f.Result.DOF)
		st.Problem = g.Problem
	}
}

// shortFitsUnplaced reports whether the fits too short to place the
// conductor (unplacedFit) are left out of the route's line (unplace): only
// when at least three fits place it and they outnumber the short ones.
// Where most or all traverses are short (a log read every 2 m over 8 m
// traverses, 1-7 degrees of freedom each, every fit within millimetres of
// the truth; a walk repeated with short traverses; an AC pair with few
// windows) leaving them all out lost the least cover and set the chainage
// by the readings' centres, 20% long, or at one end of the route (found in
// regression review); there they are kept, as before the rule, each with
// its few-degrees-of-freedom caution.
func shortFitsUnplaced(fits []Fit) bool {
	placed, short := 0, 0
	for i := range fits {
		f := &fits[i]
		switch {
		case f.Result == nil || f.Dipole:
		case unplacedFit(f):
			short++
		default:
			placed++
		}
	}
	return short > 0 && placed >= 3 && placed > short
}

// unplacedFit reports whether fit f converged but leaves too few degrees
// of freedom (under MinDOF, the reading noise not given) for its line to
// place the conductor along the route (route.Station.Unplaced): its noise,
// and every sigma with it, rests on a few residuals, and the line may be
// anywhere the few readings allow.
func unplacedFit(f *Fit) bool {
	return f.Problem != nil && f.Problem.Sigma == 0 && f.Result != nil && f.Result.DOF < MinDOF
}

// markPoorGroups gives each converged group that the route's quality check
// calls poor (a "poor-fit" finding of severity caution or worse about
// conductor 1) the reason as its Problem, so that the group, the CSV, the
// GeoJSON and the crew report's table agree with the findings. Failed
// groups keep the reason they failed; a problem the group already has is
// kept, the route's other reasons appended.
func markPoorGroups(groups []Group, r *route.Route) {
	byKey := map[string]int{}
	for i := range groups {
		if _, dup := byKey[groups[i].Key]; !dup {
			byKey[groups[i].Key] = i
		}
	}
	for _, f := range r.Findings {
		if f.Kind != route.KindPoorFit || f.Severity == route.SeverityInfo {
			continue
		}
		for _, k := range f.Keys {
			i, ok := byKey[k]
			if !ok || !groups[i].OK {
				continue
			}
			g := &groups[i]
			reasons := f.Reasons
			if len(reasons) == 0 {
				reasons = []string{f.Message}
			}
			for _, why := range reasons {
				if g.ReferenceNoise > 0 {
					why = strings.Replace(why, route.MisfitNoiseWords+",",
						"times the survey's reference noise of "+sig(g.ReferenceNoise)+" nT,", 1)
				}
				if why != g.Problem && !strings.Contains(g.Problem, why) {
					if g.Problem != "" {
						g.Problem += "; "
					}
					g.Problem += why
				}
			}
		}
	}
}

// ambiguity says when the number of conductors is not clear: another
// count, not rejected by the fit, scores within 2 of the chosen one on BIC.
// MinDOF is the fewest degrees of freedom a fit must leave for its group to be
// sound when the reading noise is not given. The noise is then estimated from the
// residuals, and so every sigma: from nu degrees of freedom the estimate is
// uncertain by about 1/sqrt(2 nu) of itself (the chi distribution's spread; common
// practice), over 22% below 10. A traverse of three readings had been fitted from
// 1-3 degrees of freedom and called sound.
const MinDOF = 10

// fewDOF is the problem of a fit that leaves dof < MinDOF degrees of freedom.
func fewDOF(dof int) string {
	spread := "cannot be estimated at all"
	if dof > 0 {
		spread = fmt.Sprintf("is uncertain by about %.0f%% of itself", 100/math.Sqrt(2*float64(dof)))
	}
	return fmt.Sprintf("the fit has only %d %s, %s, and every uncertainty with it; take more readings across the conductor, or give the reading noise (--noise)", dof, fewDOFMark, spread)
}

// fewDOFMark is the part of fewDOF's text that marks a group's problem as
// one (whyLeftOut).
const fewDOFMark = "more measured values than unknowns (degrees of freedom): the reading noise, estimated from the residuals"

func ambiguity(cs []inverse.ModelScore) string {
	var chosen *inverse.ModelScore
	for i := range cs {
		if cs[i].Chosen {
			chosen = &cs[i]
		}
	}
	if chosen == nil {
		return ""
	}
	for _, c := range cs {
		if c.Count != chosen.Count && c.Rejected == "" && math.Abs(c.BIC-chosen.BIC) < 2 {
			return fmt.Sprintf("%d and %d conductors fit about as well (BIC within 2)", min(c.Count, chosen.Count), max(c.Count, chosen.Count))
		}
	}
	return ""
}

// pairOf returns the unresolved go-and-return pair of res that holds its
// strongest line, or nil.
func pairOf(res *inverse.Result) *inverse.PairEstimate {
	for i := range res.Pairs {
		if p := &res.Pairs[i]; p.Lines[0] == 0 || p.Lines[1] == 0 {
			return p
		}
	}
	return nil
}

// turnPairs turns each group's unresolved pair along the route r, as
// Document.SetRoute turns the sources: a pair whose direction points
// against increasing chainage is reversed, with its azimuth, offset and
// the sign (DC) or phase (AC) of its net current, so that the net current
// reads the same way at every station (ac: the fits are AC).
func turnPairs(groups []Group, r *route.Route, ac bool) {
	dir := map[string][3]float64{}
	for _, p := range r.Stations {
		if _, dup := dir[p.Key]; !dup {
			dir[p.Key] = p.Dir
		}
	}
	for i := range groups {
		p := groups[i].Pair
		t, ok := dir[groups[i].Key]
		if p == nil || !ok || p.Direction[0]*t[0]+p.Direction[1]*t[1] >= 0 {
			continue
		}
		for a := range p.Direction {
			p.Direction[a] = -p.Direction[a]
		}
		p.Azimuth = math.Mod(p.Azimuth+180, 360)
		p.Offset = -p.Offset
		switch {
		case p.NetCurrentPhase != nil:
			ph := math.Mod(*p.NetCurrentPhase+360, 360) - 180 // +180 wrapped to [-180, 180)
			p.NetCurrentPhase = &ph
		case !ac:
			p.NetCurrent = -p.NetCurrent
		}
		// An AC net current within its noise has no phase to turn; its
		// RMS stays as the fit gave it, as on a track's station.
	}
}

// buildPair converts an unresolved pair for the document.
func buildPair(p *inverse.PairEstimate, ac bool) *Pair {
	unid := []string{"current", "spacing"}
	if p.AzimuthSigma == 0 {
		unid = append(unid, "azimuth") // held, not fitted
	}
	out := &Pair{
		Sources: p.Lines, Point: p.Point, Direction: p.Dir,
		Depth: p.Depth, DepthSigma: p.DepthSigma,
		Offset: p.Offset, OffsetSigma: p.OffsetSigma,
		Azimuth: p.Azimuth, AzimuthSigma: p.AzimuthSigma,
		CurrentTimesSpacing: p.Moment, CurrentTimesSpacingSigma: p.MomentSigma,
		NetCurrent: p.NetCurrent, NetCurrentSigma: p.NetCurrentSigma,
		Unidentifiable: unid,
		Notes:          append([]string(nil), p.Notes...),
	}
	if ac {
		if p.NetCurrent > currentK(true)*p.NetCurrentSigma {
			ph, phs := p.NetCurrentPhase, p.NetCurrentPhaseSigma
			out.NetCurrentPhase, out.NetCurrentPhaseSigma = &ph, &phs
		} else {
			// A net current within its noise has no phase to speak of (a
			// balanced pair read "∠144 ± 617°").
			out.Unidentifiable = append(out.Unidentifiable, "net current phase")
		}
	}
	return out
}

// buildSource converts one fitted source; pts are the group's readings,
// whose extent along the source gives its span.
func buildSource(s inverse.SourceEstimate, pts [][3]float64, ac bool) Source {
	kind := s.Kind
	if kind == "" {
		kind = KindLine
	}
	out := Source{
		Kind: kind, Point: s.Point, Direction: s.Dir,
		Current: s.Current, CurrentSigma: s.CurrentSigma,
		Depth: s.Depth, DepthSigma: s.DepthSigma,
		Offset: s.Offset, OffsetSigma: s.OffsetSigma,
		Azimuth: s.Azimuth, AzimuthSigma: s.AzimuthSigma,
		Dip: s.Dip, DipSigma: s.DipSigma,
		Notes: append([]string(nil), s.Notes...),
	}
	if ac {
		ph, phs := s.Phase, s.PhaseSigma
		out.Phase, out.PhaseSigma = &ph, &phs
	}
	phased := s.Identifiable.Phase || !ac
	id := s.Identifiable
	if kind == KindDipole {
		m, ms := s.Moment, s.MomentSigma
		out.Moment, out.MomentSigma = &m, &ms
		// A point has no offset across itself: its position is Point, with
		// PointSigma. The fit's own dipoles give their east offset from
		// the readings' centroid there (inverse.SourceEstimate), an object
		// found beside the conductors none; either read "0 ± 0" as an
		// exact offset (a steel drum 2.5 m along the traverse from the
		// readings' centre).
		out.Offset, out.OffsetSigma, id.Offset = 0, 0, false
		if ps := s.PointSigma; ps != ([3]float64{}) {
			out.PointSigma = &ps
		}
		if ps := dipolePhaseSigma(m, ms); ac && s.PhaseSigma == 0 && ps > 0 {
			// The moment's reference phase is estimated, not held.
			out.PhaseSigma, phased = &ps, true
		}
	}
	for _, q := range []struct {
		ok   bool
		name string
	}{{id.Current, "current"}, {phased, "phase"}, {id.Depth, "depth"}, {id.Offset, "offset"}, {id.Azimuth, "azimuth"}, {id.Dip, "dip"}} {
		if !q.ok {
			out.Unidentifiable = append(out.Unidentifiable, q.name)
		}
	}
	if len(pts) > 0 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range pts {
			t := (p[0]-s.Point[0])*s.Dir[0] + (p[1]-s.Point[1])*s.Dir[1] + (p[2]-s.Point[2])*s.Dir[2]
			lo, hi = math.Min(lo, t), math.Max(hi, t)
		}
		out.Span = [2]float64{lo, hi}
	}
	return out
}

// buildProfile keeps a thinned copy of the readings against the fit. For
// AC it keeps the in-phase part (each phasor turned by minus the strongest
// source's phase, real part) and the quadrature part (imaginary part) of
// the same readings.
func buildProfile(f *Fit, max int) (*Profile, error) {
	p, res := f.Problem, f.Result
	s := res.Sources[0]
	if p.Phasors == nil {
		if len(res.Predicted) != len(p.Points) || len(p.Fields) != len(p.Points) {
			return nil, errors.New("report: no predictions to plot")
		}
		return NewProfile(p.Points, p.Fields, res.Predicted, s.Point, s.Dir, ComponentDC, max)
	}
	if len(res.PredictedPhasors) != len(p.Points) || len(p.Phasors) != len(p.Points) {
		return nil, errors.New("report: no predictions to plot")
	}
	rot := cmplx.Rect(1, -s.Phase*math.Pi/180)
	part := func(v [][3]complex128, f func(complex128) float64) [][3]float64 {
		out := make([][3]float64, len(v))
		for i, b := range v {
			for k := range 3 {
				out[i][k] = f(b[k] * rot)
			}
		}
		return out
	}
	re := func(c complex128) float64 { return real(c) }
	im := func(c complex128) float64 { return imag(c) }
	// The in-phase and quadrature parts of the same readings, chosen once
	// from the misfits and peaks of both, line up reading by reading.
	return newProfile(p.Points, s.Point, s.Dir, ComponentACInPhase, max,
		part(p.Phasors, re), part(res.PredictedPhasors, re), part(p.Phasors, im), part(res.PredictedPhasors, im))
}

func centroid(pts [][3]float64) [3]float64 {
	var c [3]float64
	for _, p := range pts {
		c[0], c[1], c[2] = c[0]+p[0], c[1]+p[1], c[2]+p[2]
	}
	if n := float64(len(pts)); n > 0 {
		c = [3]float64{c[0] / n, c[1] / n, c[2] / n}
	}
	return c
}

// signalRMS is the root-mean-square per axis reading of the fitted
// sources' field (the fitted field less the uniform background), nT, in
// the same measure as inverse.Result.RMS; zero when the result carries no
// predictions.
func signalRMS(res *inverse.Result) float64 {
	var ss float64
	n := 0
	for _, p := range res.Predicted {
		for j := range 3 {
			d := p[j] - res.Background[j]
			ss += d * d
		}
		n++
	}
	for _, p := range res.PredictedPhasors {
		for j := range 3 {
			d := p[j] - res.BackgroundPhasor[j]
			ss += real(d)*real(d) + imag(d)*imag(d)
		}
		n++
	}
	if n == 0 {
		return 0
	}
	return math.Sqrt(ss / float64(3*n))
}

// anomalyRMS is the RMS per component of the fitted sources' field about
// its own mean over the group's readings, nT: the anomaly the readings
// show, whatever uniform part the sources give.
func anomalyRMS(res *inverse.Result) float64 {
	var ss float64
	n := 0
	if len(res.Predicted) > 0 {
		var m [3]float64
		for _, p := range res.Predicted {
			for j := range 3 {
				m[j] += p[j]
			}
		}
		for j := range 3 {
			m[j] /= float64(len(res.Predicted))
		}
		for _, p := range res.Predicted {
			for j := range 3 {
				d := p[j] - m[j]
				ss += d * d
			}
			n++
		}
	}
	if len(res.PredictedPhasors) > 0 {
		var m [3]complex128
		for _, p := range res.PredictedPhasors {
			for j := range 3 {
				m[j] += p[j]
			}
		}
		for j := range 3 {
			m[j] /= complex(float64(len(res.PredictedPhasors)), 0)
		}
		for _, p := range res.PredictedPhasors {
			for j := range 3 {
				d := p[j] - m[j]
				ss += real(d)*real(d) + imag(d)*imag(d)
			}
			n++
		}
	}
	if n == 0 {
		return 0
	}
	return math.Sqrt(ss / float64(3*n))
}

// fitSignal is the signal a fit's misfit is measured against
// (measuredMisfits): the sources' field about the background
// (signalRMS), or, when most of that is uniform over the group, its
// anomaly about its own mean (anomalyRMS). A fit run off to a phantom
// line far below (a sensor turned half round, its field's vertical
// reversed: found in review) gives a near-uniform field of hundreds of
// thousands of nT standing in for the background, against which a misfit
// of 360 times the readings' noise was 0.3% and passed unwarned.
func fitSignal(res *inverse.Result) float64 {
	sig := signalRMS(res)
	if a := anomalyRMS(res); a < phantomShare*sig {
		return a
	}
	return sig
}

// phantomShare is the share of the sources' field about the background
// below which its anomaly over the group is taken as the signal instead
// (fitSignal): a line crossing a traverse gives an anomaly of most of its
// field (over a traverse of four depths either side of a line, its field
// about its mean is 82% of it in RMS, computed from the two-dimensional
// Biot-Savart field of a long line, components d/(x²+d²) and x/(x²+d²));
// a far line's field is near uniform.
const phantomShare = 0.25

// nanoMetre rounds a length in metres to the nearest nanometre, far below
// any depth's uncertainty, for the document's derived reference heights.
func nanoMetre(v float64) float64 { return math.Round(v*1e9) / 1e9 }

// dipolePhaseSigma is the one-sigma uncertainty, degrees, of an AC
// dipole's reference phase: the phase of the phasor of its strongest axis,
// whose part in phase with that phase is the axis's moment m[a] (acMoment)
// and whose parts in phase and in quadrature have the axis's sigma ms[a].
// To first order (the law of propagation of uncertainty, JCGM 100:2008
// section 5.1.2, applied to atan2 at zero quadrature) it is ms[a]/|m[a]|
// radians. Zero when the moment has no strongest axis or no sigma, or when
// the sigma is as large as the moment (the phase is then not determined
// and stays unidentifiable).
func dipolePhaseSigma(m, ms [3]float64) float64 {
	big := 0
	for a := range 3 {
		if math.Abs(m[a]) > math.Abs(m[big]) {
			big = a
		}
	}
	if !(math.Abs(m[big]) > ms[big]) || !(ms[big] > 0) {
		return 0
	}
	return ms[big] / math.Abs(m[big]) * 180 / math.Pi
}

// fixedFailed reports whether f is a failed fit of readings that all lie at
// one horizontal position (within 1 mm): a fixed sensor's record (a
// reference magnetometer logged beside the route and read with the survey),
// not a traverse. Its point is the sensor's, not the conductor's nor a
// traverse's, so it is no station of the route: placed as one it became
// the first traverse along the route and set chainage 0 there, moving
// every chainage by the sensor's distance from the first traverse (5.1 m in
// review). Its group keeps its problem and has no chainage.
// noStationsError says why no group gave a place along the route: each
// (up to three) failed with all its readings at one place, as a one-row
// log does. Before, locate said only "no stations".
func noStationsError(fits []Fit) error {
	var why []string
	for i := range fits {
		if len(why) == 3 {
			why = append(why, fmt.Sprintf("and %d more", len(fits)-3))
			break
		}
		f := &fits[i]
		n := 0
		if f.Problem != nil {
			n = len(f.Problem.Points)
		}
		name := "the log"
		if f.Key != "" {
			name = "group " + f.Key
		}
		w := fmt.Sprintf("%s has %d %s at one place", name, n, map[bool]string{true: "reading", false: "readings"}[n == 1])
		if f.Err != nil {
			w += " (" + f.Err.Error() + ")"
		}
		why = append(why, w)
	}
	return fmt.Errorf("report: no group gives a place along a route: %s; a line fit needs readings along a traverse across the conductor", strings.Join(why, "; "))
}

func fixedFailed(f *Fit) bool {
	if f.Result != nil || f.Problem == nil || len(f.Problem.Points) == 0 {
		return false
	}
	p0 := f.Problem.Points[0]
	for _, p := range f.Problem.Points[1:] {
		if math.Abs(p[0]-p0[0]) > 1e-3 || math.Abs(p[1]-p0[1]) > 1e-3 {
			return false
		}
	}
	return true
}

// fixedFailedFindings adds, for each failed fit of a fixed sensor
// (fixedFailed, no station of the route), the caution a failed station
// draws from the route, placed at the chainage of the route's station
// nearest the sensor in plan (0 without a route), and sorts the findings again.
func fixedFailedFindings(d *Document, fits []Fit, r *route.Route) {
	added := false
	for i := range fits {
		f := &fits[i]
		if !fixedFailed(f) {
			continue
		}
		at := f.Problem.Points[0]
		where, ch := "", 0.0
		if r != nil {
			best := math.Inf(1)
			for _, s := range r.Stations {
				if dist := math.Hypot(s.Point[0]-at[0], s.Point[1]-at[1]); dist < best {
					best, ch = dist, s.Chainage
					where = fmt.Sprintf(", %.1f m from %s (chainage %.1f m)", dist, s.Key, s.Chainage)
				}
			}
		}
		d.Findings = append(d.Findings, Finding{
			Kind: string(route.KindPoorFit), Severity: SeverityCaution,
			ChainageFrom: ch, ChainageTo: ch, Position: at, Groups: []string{f.Key},
			Message: fmt.Sprintf("fit at %s failed: %v; its readings all lie at one place (a fixed sensor's record, not a traverse across the conductor%s), so it is no station of the route: it has no chainage and is left out of the current and cover profile",
				f.Key, f.Err, where),
		})
		added = true
	}
	if added {
		SortFindings(d.Findings)
	}
}

// positionSigma is the position sigmas the fits counted in their sigmas
// (Document.PositionSigma): those of the first fit whose settings give
// the positions an uncertainty and do not make it robust (whose Huber
// weights leave them unused, inverse.PositionSigmaRobustNote); nil when no
// fit's do (the positions taken as exact).
func positionSigma(fits []Fit) *PositionSigma {
	// The readings' own sigmas (the log's columns): the largest over
	// every fit, floored by the settings' as the fit floors them.
	var own *PositionSigma
	for _, f := range fits {
		if f.Problem == nil || f.Problem.PositionSigmas == nil || (f.Settings != nil && f.Settings.Robust) {
			continue
		}
		if own == nil {
			own = &PositionSigma{Columns: true}
			if s := f.Settings; s != nil {
				own.FloorPlan, own.FloorUp = s.PositionSigmaPlan, s.PositionSigmaUp
			}
		}
		for _, v := range f.Problem.PositionSigmas {
			if v[0] > own.Plan {
				own.Plan = v[0]
			}
			if v[1] > own.Up {
				own.Up = v[1]
			}
		}
	}
	if own != nil && own.Plan+own.Up > 0 {
		own.Plan, own.Up = max(own.Plan, own.FloorPlan), max(own.Up, own.FloorUp)
		return own
	}
	for _, f := range fits {
		if s := f.Settings; s != nil && !s.Robust && (s.PositionSigmaPlan > 0 || s.PositionSigmaUp > 0) {
			return &PositionSigma{Plan: s.PositionSigmaPlan, Up: s.PositionSigmaUp}
		}
	}
	return nil
}
