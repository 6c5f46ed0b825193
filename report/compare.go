package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"undercurrent/ingest"
)

// Comparing two surveys of one route (undercurrent compare OLD NEW): the
// same conductor walked again months later, to say what changed. Stations
// of conductor 1 are matched by chainage when both routes measure it from
// the same place (else by plan position), further conductors by their
// offset from conductor 1 and their azimuth, and each matched station's
// current and depth of cover are differenced with the sigmas of both
// surveys in quadrature. A transmitter or rectifier set differently
// scales every current by one factor: the ratio NEW/OLD along the route is
// tested for that factor and for a step in it (a changed loss), so that a
// re-set rectifier is not read as a loss at every station.

// CompareSettings are the thresholds of a comparison. A change is flagged
// only when it is beyond Sigmas standard deviations AND beyond the
// practical threshold: the fits' sigmas count the reading noise only, so a
// change of a few milliamps or millimetres can be many sigmas on a quiet
// survey and still mean nothing on the ground; the practical threshold
// alone would flag noise at a poorly determined station.
type CompareSettings struct {
	// MinCurrentChange is the least change of current flagged, A; 0 takes
	// DefaultCurrentShare of OLD's median |current| on each conductor.
	MinCurrentChange float64
	// MinCoverChange is the least change of cover (or depth) flagged, m;
	// 0 takes DefaultMinCoverChange.
	MinCoverChange float64
	// Sigmas is how many combined standard deviations a change must
	// exceed; 0 takes 3.
	Sigmas float64
	// Tolerance is how far apart two stations may be, m, along the route
	// (chainage) or in plan, to be one station; 0 takes 2.
	Tolerance float64
}

// Defaults of CompareSettings.
const (
	DefaultCurrentShare   = 0.05
	DefaultMinCoverChange = 0.10
	DefaultCompareSigmas  = 3.0
	DefaultTolerance      = 2.0
)

// Comparison is the result of comparing two result documents. Its JSON
// keys are stable: new keys may be added, none renamed.
type Comparison struct {
	// Cautions are the safety cautions (Cautions), first as in results.json.
	Cautions []string `json:"cautions"`
	Kind     string   `json:"kind"` // "survey-comparison"
	Old      string   `json:"old"`
	New      string   `json:"new"`
	// Mode is the signal mode of both, dc or ac.
	Mode string `json:"mode"`
	// FrequencyHz is the AC frequency both were demodulated at; 0 for DC.
	FrequencyHz float64 `json:"frequency_hz,omitempty"`
	// DepthQuantity is "cover" when both give the cover (the ground
	// known), else "depth" (below the reference of depth_reference, the
	// sensors unless a ground was given): a changed sensor height then
	// shows as a changed depth.
	DepthQuantity     string   `json:"depth_quantity"`
	MinCurrentChangeA float64  `json:"min_current_change_a,omitempty"`
	MinCoverChangeM   float64  `json:"min_cover_change_m"`
	Sigmas            float64  `json:"sigmas"`
	ToleranceM        float64  `json:"tolerance_m"`
	MinCoverM         *float64 `json:"min_cover_m,omitempty"`
	// Notes say how the inputs were brought together (reprojected,
	// matched in plan, a current sign turned).
	Notes      []string              `json:"notes,omitempty"`
	Conductors []ConductorComparison `json:"conductors"`
	OldOnly    []int                 `json:"old_only_conductors,omitempty"`
	NewOnly    []int                 `json:"new_only_conductors,omitempty"`
	Steps      []StepComparison      `json:"steps"`
	Changes    []Change              `json:"changes"`
	Matched    int                   `json:"matched_stations"`
	// PoorFits counts the matched stations whose group's fit locate
	// called poor, ambiguous or failed in OLD or NEW (groups[].problem,
	// or not ok): they are left out of every ratio's level and step
	// (StationChange.PoorFit), and their own changes are doubtful.
	// Found in review: a NEW survey whose 13 fits were all poor and
	// biased read as a 2% supply drop at 44 sigma with no word.
	PoorFits int `json:"poor_fit_stations,omitempty"`
	// oldPoor and newPoor are the keys of each side's groups whose fit
	// is not sound.
	oldPoor, newPoor map[string]bool
}

// ConductorComparison compares one conductor found in both surveys.
type ConductorComparison struct {
	Old int `json:"old_conductor"`
	New int `json:"new_conductor"`
	// MatchedBy is "chainage" or "plan".
	MatchedBy         string          `json:"matched_by"`
	MinCurrentChangeA float64         `json:"min_current_change_a"`
	Stations          []StationChange `json:"stations"`
	OldOnly           []string        `json:"old_only_stations,omitempty"`
	NewOnly           []string        `json:"new_only_stations,omitempty"`
	Ratio             *RatioProfile   `json:"ratio,omitempty"`
	// DepthOffset is the change of cover (or depth) common to the matched
	// stations, when there are three or more (see DepthOffset).
	DepthOffset *DepthOffset `json:"depth_offset,omitempty"`
	// Between are NEW's stations without a partner that lie between two
	// of OLD's used stations (a closer spacing, or an offset walk),
	// compared with OLD interpolated linearly along OLD's chainage
	// (OldKey names both of OLD's stations, "T06-T07"; Interpolated is
	// true). Their current is not flagged (a step of the ratio or a
	// current-step finding says that); their cover is, as a matched
	// station's.
	Between []StationChange `json:"new_stations_between_old,omitempty"`
	// NewChainageOffset is OLD's chainage at NEW's chainage 0, m (NEW's
	// chainage plus it is OLD's at one place; with NewChainageReversed,
	// OLD's is it less NEW's): NEW's stations are placed on OLD's
	// chainage by projecting their plan positions onto OLD's route, and
	// this is the median of what that gives. Absent with fewer than two
	// of NEW's stations near OLD's route.
	NewChainageOffset   *float64 `json:"new_chainage_offset_m,omitempty"`
	NewChainageReversed bool     `json:"new_chainage_reversed,omitempty"`
	// Partial is set when one survey walked stretches of the conductor
	// that the other did not (see PartialCoverage).
	Partial *PartialCoverage `json:"partial_coverage,omitempty"`

	// oldOn and newOn are OLD's and NEW's used stations on OLD's
	// chainage, sorted: what each survey walked, for the steps' pairing.
	oldOn, newOn []float64
}

// PartialCoverage says that the two surveys walked different stretches of
// one conductor (a re-survey of part of the route): BothFrom-BothTo is
// the stretch both walked (the matched stations, OLD's chainage) and
// OldFrom-OldTo and NewFrom-NewTo each survey's used stations on OLD's
// chainage. A step of current outside the stretch both walked cannot be
// compared (its status is not-covered-by-new or not-covered-by-old, not
// gone or new), and a change of loss there moves every current on the
// stretch by one factor, as a re-set supply does. LevelDoubt words where
// such a loss would lie for the ratio's level: upstream of the stretch
// when the DC current's direction is known (a loss downstream of it does
// not move it), else past either end; empty when that part was walked by
// neither or by both.
type PartialCoverage struct {
	BothFrom   float64 `json:"both_from_m"`
	BothTo     float64 `json:"both_to_m"`
	OldFrom    float64 `json:"old_from_m"`
	OldTo      float64 `json:"old_to_m"`
	NewFrom    float64 `json:"new_from_m"`
	NewTo      float64 `json:"new_to_m"`
	LevelDoubt string  `json:"level_doubt,omitempty"`
}

// DepthOffset is the change of cover (or depth) that the matched stations
// share: the weighted mean of the stations whose change agrees with the
// median change (within the sigmas, or the practical threshold), its
// sigma widened by their scatter. A sensor height left out of one survey,
// entered wrongly in one, or a ground level given differently moves every
// depth by one amount; so does a whole route re-graded. Applied is true
// when it is beyond both thresholds (--sigmas and --min-cover-change) and
// at least half the stations agree with it: the stations' changes are
// then measured beyond it and it is reported once.
type DepthOffset struct {
	Offset   float64 `json:"offset_m"`
	Sigma    float64 `json:"offset_sigma_m"`
	Stations int     `json:"stations"`
	Of       int     `json:"of_stations"`
	Applied  bool    `json:"applied"`
}

// StationChange is one station matched in both surveys. Sigmas are one
// standard deviation; a change's is both surveys' in quadrature.
type StationChange struct {
	OldKey      string  `json:"old_key"`
	NewKey      string  `json:"new_key"`
	Chainage    float64 `json:"chainage_m"`
	NewChainage float64 `json:"new_chainage_m"`
	// NewOnOld is NEW's station's place on OLD's chainage: its plan
	// position projected onto OLD's route, m. Chainage is OLD's station's
	// (for one of Between, this place).
	NewOnOld      float64 `json:"new_on_old_chainage_m"`
	Separation    float64 `json:"separation_m"`
	OldCurrent    float64 `json:"old_current_a"`
	OldCurrentSig float64 `json:"old_current_sigma_a"`
	NewCurrent    float64 `json:"new_current_a"`
	NewCurrentSig float64 `json:"new_current_sigma_a"`
	CurrentChange float64 `json:"current_change_a"`
	CurrentSigma  float64 `json:"current_change_sigma_a"`
	CurrentZ      float64 `json:"current_z"`
	// Ratio is NEW/OLD current, absent where OLD's current is within 3
	// sigma of zero.
	Ratio      *float64 `json:"ratio,omitempty"`
	RatioSigma *float64 `json:"ratio_sigma,omitempty"`
	// BeyondLevel is the change beyond the route's level factor, NEW -
	// level*OLD, with its sigma and z, when the level changed (the
	// conductor's ratio.level_applied); the current flag is then on it.
	BeyondLevel      *float64 `json:"current_change_beyond_level_a,omitempty"`
	BeyondLevelSigma *float64 `json:"current_change_beyond_level_sigma_a,omitempty"`
	BeyondLevelZ     *float64 `json:"current_change_beyond_level_z,omitempty"`
	CurrentFlag      bool     `json:"current_flag"`
	OldCover         *float64 `json:"old_cover_m,omitempty"`
	OldCoverSig      *float64 `json:"old_cover_sigma_m,omitempty"`
	NewCover         *float64 `json:"new_cover_m,omitempty"`
	NewCoverSig      *float64 `json:"new_cover_sigma_m,omitempty"`
	CoverChange      *float64 `json:"cover_change_m,omitempty"`
	CoverSigma       *float64 `json:"cover_change_sigma_m,omitempty"`
	CoverZ           *float64 `json:"cover_z,omitempty"`
	// CoverBeyondOffset is the change of cover beyond the conductor's
	// depth offset, with its sigma and z, when the offset is applied; the
	// cover flag is then on it.
	CoverBeyondOffset      *float64 `json:"cover_change_beyond_offset_m,omitempty"`
	CoverBeyondOffsetSigma *float64 `json:"cover_change_beyond_offset_sigma_m,omitempty"`
	CoverBeyondOffsetZ     *float64 `json:"cover_change_beyond_offset_z,omitempty"`
	CoverFlag              bool     `json:"cover_flag"`
	// Interpolated is true for one of ConductorComparison.Between: OLD's
	// values are interpolated between the two stations OldKey names.
	Interpolated bool `json:"old_interpolated,omitempty"`
	// NowShallow is true when NEW's cover is under the minimum cover and
	// OLD's was not.
	NowShallow bool `json:"now_under_min_cover,omitempty"`
	// PoorFit names the side(s) whose group's fit here is not sound
	// ("OLD", "NEW" or "both"; Comparison.PoorFits): the station is then
	// left out of the ratio's level and steps, and its changes are
	// doubtful. Empty when both are sound.
	PoorFit string `json:"poor_fit,omitempty"`
}

// RatioProfile is the test of NEW/OLD current along a conductor for one
// factor: Level is the supply's factor, LevelApplied whether it differs
// from 1 beyond both thresholds (the station changes are then measured
// beyond it), and Step the most significant single step in the ratio,
// when it is beyond both thresholds: a loss that changed between the
// surveys.
//
// Without a step Level is the weighted mean ratio of the stations that
// agree with the median ratio (LevelFrom "all"). With a step the two
// sides read two factors, and the supply's is the one on the side the
// current flows from: past a new loss every station reads the factor
// less the loss, and a median would take whichever side has more
// stations. A DC current is signed along increasing chainage, so its sign
// tells the side (LevelFrom "upstream": the step's Before side for a
// current flowing toward increasing chainage, its After side otherwise).
// An AC magnitude, or a DC current of no clear sign, does not
// (LevelFrom "unknown"): Level is then the step's Before side, but
// neither side is chosen: each station is measured against its own
// side's reading (SideLevels), and both readings are stated.
type RatioProfile struct {
	Level        float64    `json:"level"`
	LevelSigma   float64    `json:"level_sigma"`
	LevelApplied bool       `json:"level_applied"`
	Stations     int        `json:"stations"`
	Chi2         float64    `json:"chi2"`
	Dof          int        `json:"dof"`
	Constant     bool       `json:"constant"`
	Step         *RatioStep `json:"step,omitempty"`
	// LevelFrom is "all", "upstream" or "unknown" (see above).
	LevelFrom string `json:"level_from,omitempty"`
	// SideLevels is true when each station's change is measured against
	// its own side of the step (LevelFrom "unknown").
	SideLevels bool `json:"level_by_side,omitempty"`
	// MedianLevel is the weighted mean ratio of the stations that agree
	// with the median ratio, whatever LevelFrom says: the majority's
	// reading, which with a step is not the supply's factor.
	MedianLevel      float64 `json:"median_level,omitempty"`
	MedianLevelSigma float64 `json:"median_level_sigma,omitempty"`
}

// levelAt returns the factor a station at OLD chainage ch is measured
// against, its sigma and whether it differs from 1 (beyond both
// thresholds).
func (p *RatioProfile) levelAt(ch float64) (float64, float64, bool) {
	if p == nil {
		return 1, 0, false
	}
	if p.SideLevels && p.Step != nil {
		if ch > p.Step.boundary() {
			return p.Step.After, p.Step.AfterSigma, p.Step.afterApplied
		}
		return p.Step.Before, p.Step.BeforeSigma, p.Step.beforeApplied
	}
	return p.Level, p.LevelSigma, p.LevelApplied
}

// RatioStep is a step in the ratio profile between two successive matched
// stations (OLD's keys). Its chainages are OLD's and bracket the step with
// both walks' stations: ChainageFrom is the farther along of the two
// stations (OLD's and NEW's, placed on OLD's chainage) of the last pair
// before it, ChainageTo the nearer of the first pair after it; a pair
// beside the step whose ratio cannot tell the two sides apart (within
// --sigmas of both) widens the bracket past it, and FromKey and ToKey
// name the pairs that bound it.
type RatioStep struct {
	FromKey      string  `json:"from_key"`
	ToKey        string  `json:"to_key"`
	ChainageFrom float64 `json:"chainage_from_m"`
	ChainageTo   float64 `json:"chainage_to_m"`
	Before       float64 `json:"ratio_before"`
	BeforeSigma  float64 `json:"ratio_before_sigma"`
	After        float64 `json:"ratio_after"`
	AfterSigma   float64 `json:"ratio_after_sigma"`
	Z            float64 `json:"z"`
	// CurrentA is the step of the ratio times OLD's median |current| past
	// it: about the change of current it means there, A.
	CurrentA float64 `json:"current_a"`
	// Downstream is "after" or "before": the side the current flows to
	// (the step's After side for a current flowing toward increasing
	// chainage); empty when the flow's direction is not known (AC).
	Downstream string `json:"downstream,omitempty"`
	// CurrentAlongFlowA is the change the step means along the flow
	// (downstream less upstream), negative for a loss; absent when the
	// direction is not known.
	CurrentAlongFlowA *float64 `json:"current_along_flow_a,omitempty"`
	// BelowThreshold is true for a step many sigmas out (beyond
	// subThresholdSigmas, where the chi-square rejects one level and the
	// step explains the scatter) whose current is under the practical
	// threshold: found and reported as such, not hidden.
	BelowThreshold bool `json:"below_threshold,omitempty"`

	beforeApplied, afterApplied bool
	// split is OLD's chainage between the two pairs the step falls
	// between (hasSplit): the stations on either side of it are measured
	// against that side's reading. Else the bracket's middle.
	split    float64
	hasSplit bool
}

// boundary is the chainage that parts the step's two sides.
func (s *RatioStep) boundary() float64 {
	if s.hasSplit {
		return s.split
	}
	return (s.ChainageFrom + s.ChainageTo) / 2
}

// StepComparison compares the current-step findings of both surveys on
// one conductor (OLD's numbering). Status is new, gone, grown, shrunk,
// unchanged, not-covered-by-new or not-covered-by-old; steps are signed
// (a loss is negative), NEW's chainages taken onto OLD's. A step of one
// survey without a partner is gone (or new) only when the other survey
// has used stations on both sides of its bracket (within --tolerance);
// else that survey did not walk there and it is not covered.
type StepComparison struct {
	Conductor    int      `json:"conductor"`
	Status       string   `json:"status"`
	ChainageFrom float64  `json:"chainage_from_m"`
	ChainageTo   float64  `json:"chainage_to_m"`
	OldGroups    []string `json:"old_groups,omitempty"`
	NewGroups    []string `json:"new_groups,omitempty"`
	OldStep      *float64 `json:"old_step_a,omitempty"`
	OldStepSigma *float64 `json:"old_step_sigma_a,omitempty"`
	NewStep      *float64 `json:"new_step_a,omitempty"`
	NewStepSigma *float64 `json:"new_step_sigma_a,omitempty"`
	Change       *float64 `json:"change_a,omitempty"`
	ChangeSigma  *float64 `json:"change_sigma_a,omitempty"`
	Z            *float64 `json:"z,omitempty"`
	// BelowThreshold is true for a grown or shrunk step whose change is
	// beyond --sigmas but under the practical current threshold.
	BelowThreshold bool `json:"below_threshold,omitempty"`
}

// Change is one thing that changed, in words, for the list a crew reads:
// Kind is current-change, cover-change, ratio-step, level-change,
// depth-offset, step-new, step-gone, step-grown, step-shrunk or
// conductor-unmatched (station-unmatched, in earlier versions, is now a
// note). Conductor is OLD's number (0 for a conductor of NEW's without a
// partner: NewConductor names it). Groups holds OLD's keys then NEW's;
// OldGroups and NewGroups part them. Value and Sigma are the change's
// number in Unit: level-change NEW/OLD ("ratio", on the side the current
// flows from; ValuePastStep the other side's when the direction is not
// known), depth-offset and cover-change m, current-change, the step
// kinds and ratio-step A (ratio-step: along the flow where it is known),
// conductor-unmatched the conductor's median current, A. Stations are
// OLD's stations whose own flag restates this change (past a ratio step,
// every station reads the same loss) and so are not listed one by one.
// Notes carry locate's doubts about a conductor without a partner.
type Change struct {
	Kind         string   `json:"kind"`
	Conductor    int      `json:"conductor"`
	NewConductor int      `json:"new_conductor,omitempty"`
	Chainage     *float64 `json:"chainage_m,omitempty"`
	ChainageFrom *float64 `json:"chainage_from_m,omitempty"`
	ChainageTo   *float64 `json:"chainage_to_m,omitempty"`
	Groups       []string `json:"groups,omitempty"`
	OldGroups    []string `json:"old_groups,omitempty"`
	NewGroups    []string `json:"new_groups,omitempty"`
	Value        *float64 `json:"value,omitempty"`
	Sigma        *float64 `json:"sigma,omitempty"`
	ValuePast    *float64 `json:"value_past_step,omitempty"`
	SigmaPast    *float64 `json:"sigma_past_step,omitempty"`
	Unit         string   `json:"unit,omitempty"`
	Stations     []string `json:"stations,omitempty"`
	Notes        []string `json:"notes,omitempty"`
	// BelowThreshold is true for a ratio-step, step-grown or step-shrunk
	// that is many sigmas out but under the practical current threshold.
	BelowThreshold bool   `json:"below_threshold,omitempty"`
	Message        string `json:"message"`
}

// roundCh rounds a chainage to the centimetre for the list of changes.
func roundCh(x float64) *float64 { v := math.Round(x*100) / 100; return &v }

// CompareError is a refusal to compare: the inputs do not describe one
// route in one frame.
type CompareError struct{ Msg string }

func (e *CompareError) Error() string { return e.Msg }

func (s CompareSettings) filled() CompareSettings {
	if s.MinCoverChange <= 0 {
		s.MinCoverChange = DefaultMinCoverChange
	}
	if s.Sigmas <= 0 {
		s.Sigmas = DefaultCompareSigmas
	}
	if s.Tolerance <= 0 {
		s.Tolerance = DefaultTolerance
	}
	return s
}

// cstation is a used station of one conductor, in OLD's frame.
type cstation struct {
	st    *Station
	point [3]float64
	// on is the station's place on OLD's chainage (OLD's own chainage
	// for OLD's stations; NEW's plan position projected onto OLD's route)
	// and off its distance from that route in plan, m.
	on, off float64
}

// onRoute projects the plan position p onto the polyline through os (OLD's
// used stations in chainage order) and returns its place on OLD's
// chainage and its distance from the line, m. Beyond the ends the first
// and last segments are extended.
func onRoute(os []cstation, p [3]float64) (ch, off float64) {
	if len(os) == 0 {
		return math.NaN(), math.Inf(1)
	}
	if len(os) == 1 {
		a := os[0]
		d := a.st.Direction
		h := math.Hypot(d[0], d[1])
		if h == 0 {
			return a.st.Chainage, math.Hypot(p[0]-a.point[0], p[1]-a.point[1])
		}
		u := ((p[0]-a.point[0])*d[0] + (p[1]-a.point[1])*d[1]) / h
		return a.st.Chainage + u, math.Abs((p[0]-a.point[0])*d[1]-(p[1]-a.point[1])*d[0]) / h
	}
	ch, off = math.NaN(), math.Inf(1)
	for i := 1; i < len(os); i++ {
		a, b := os[i-1], os[i]
		ex, ny := b.point[0]-a.point[0], b.point[1]-a.point[1]
		l2 := ex*ex + ny*ny
		if l2 == 0 {
			continue
		}
		t := ((p[0]-a.point[0])*ex + (p[1]-a.point[1])*ny) / l2
		if i > 1 {
			t = math.Max(t, 0)
		}
		if i < len(os)-1 {
			t = math.Min(t, 1)
		}
		if d := math.Hypot(p[0]-(a.point[0]+t*ex), p[1]-(a.point[1]+t*ny)); d < off {
			ch, off = a.st.Chainage+t*(b.st.Chainage-a.st.Chainage), d
		}
	}
	if math.IsNaN(ch) { // every station at one point: the nearest's chainage
		for _, a := range os {
			if d := math.Hypot(p[0]-a.point[0], p[1]-a.point[1]); !(d >= off) {
				ch, off = a.st.Chainage, d
			}
		}
	}
	return ch, off
}

// Compare compares NEW (newDoc, read from newName) with OLD. It refuses
// (a *CompareError naming both files) documents of different signal modes
// or AC frequencies, one geo-referenced and one not, without a route, or
// without a station in common.
func Compare(old, newDoc *Document, oldName, newName string, s CompareSettings) (*Comparison, error) {
	s = s.filled()
	refuse := func(format string, a ...any) error {
		return &CompareError{Msg: fmt.Sprintf("cannot compare %s (OLD) with %s (NEW): ", oldName, newName) + fmt.Sprintf(format, a...)}
	}
	if old.Signal.Mode != newDoc.Signal.Mode {
		return nil, refuse("OLD is %s and NEW is %s (signal.mode): compare surveys of one signal mode", modeName(old.Signal.Mode), modeName(newDoc.Signal.Mode))
	}
	if old.Signal.Mode == SignalAC && math.Abs(old.Signal.FrequencyHz-newDoc.Signal.FrequencyHz) > 1e-6*math.Max(1, old.Signal.FrequencyHz) {
		return nil, refuse("OLD was demodulated at %g Hz and NEW at %g Hz: the currents of two frequencies are not one current", old.Signal.FrequencyHz, newDoc.Signal.FrequencyHz)
	}
	oo, no := old.Frame.Origin, newDoc.Frame.Origin
	if (oo == nil) != (no == nil) {
		which, other := oldName, newName
		if oo == nil {
			which, other = newName, oldName
		}
		return nil, refuse("%s is placed about a geodetic origin and %s only in local metres with none: their positions are not in one frame; run locate on both with latitude and longitude, or the same --origin", which, other)
	}
	if old.Route == nil || len(old.Route.Stations) == 0 {
		return nil, refuse("%s has no route (fewer than two groups fitted)", oldName)
	}
	if newDoc.Route == nil || len(newDoc.Route.Stations) == 0 {
		return nil, refuse("%s has no route (fewer than two groups fitted)", newName)
	}
	c := &Comparison{
		Cautions: append([]string(nil), Cautions...), Kind: "survey-comparison",
		Old: oldName, New: newName, Mode: old.Signal.Mode, FrequencyHz: old.Signal.FrequencyHz,
		MinCurrentChangeA: s.MinCurrentChange, MinCoverChangeM: s.MinCoverChange,
		Sigmas: s.Sigmas, ToleranceM: s.Tolerance,
		Conductors: []ConductorComparison{}, Steps: []StepComparison{}, Changes: []Change{},
		oldPoor: poorGroups(old), newPoor: poorGroups(newDoc),
	}
	// NEW's positions in OLD's frame.
	toOld := func(p [3]float64) [3]float64 { return p }
	if oo != nil && !sameOrigin(*oo, *no) {
		og := ingest.Geodetic{Lat: oo.Lat, Lon: oo.Lon, H: oo.H}
		ng := ingest.Geodetic{Lat: no.Lat, Lon: no.Lon, H: no.H}
		shift := og.ToLocal(ng.FromLocal([3]float64{}))
		if math.Hypot(shift[0], shift[1]) > 50e3 {
			return nil, refuse("their geodetic origins (%.6f, %.6f and %.6f, %.6f) lie %.0f km apart: not one route", oo.Lat, oo.Lon, no.Lat, no.Lon, math.Hypot(shift[0], shift[1])/1e3)
		}
		toOld = func(p [3]float64) [3]float64 { return og.ToLocal(ng.FromLocal(p)) }
		c.Notes = append(c.Notes, fmt.Sprintf("the two are placed about different geodetic origins (OLD %.6f, %.6f; NEW %.6f, %.6f, %.1f m east and %.1f m north of it): NEW's positions were taken into OLD's frame",
			oo.Lat, oo.Lon, no.Lat, no.Lon, shift[0], shift[1]))
	}
	// Depth or cover.
	c.DepthQuantity = "cover"
	if !hasCover(old.Route) || !hasCover(newDoc.Route) {
		c.DepthQuantity = "depth"
		if old.DepthReference.Kind != newDoc.DepthReference.Kind {
			c.DepthQuantity = ""
			c.Notes = append(c.Notes, fmt.Sprintf("depths not compared: OLD's are below %s and NEW's below %s, and not both give the cover (locate --sensor-height or --reference-z on both)", old.DepthReference.Kind, newDoc.DepthReference.Kind))
		} else {
			c.Notes = append(c.Notes, "not both give the cover (the ground level): depths are compared, below "+old.DepthReference.Kind+", so a sensor carried at another height shows as a change of depth")
		}
	}
	if newDoc.MinCover != nil {
		v := newDoc.MinCover.Depth
		c.MinCoverM = &v
	} else if old.MinCover != nil {
		v := old.MinCover.Depth
		c.MinCoverM = &v
	}

	// Conductor 1, then the further conductors matched by offset and azimuth.
	type pairT struct {
		o, n  *Route
		oi    int
		ni    int
		byPla bool
	}
	pairs := []pairT{{old.Route, newDoc.Route, 1, 1, false}}
	usedNew := map[int]bool{}
	for oi, ot := range old.Conductors {
		best, bd := -1, math.Inf(1)
		oaz := routeAzimuth(&ot.Route)
		for j, nt := range newDoc.Conductors {
			if usedNew[j] {
				continue
			}
			daz := math.Abs(math.Mod(oaz-routeAzimuth(&nt.Route)+360+90, 180) - 90)
			if d := math.Abs(ot.Offset - nt.Offset); d <= s.Tolerance && daz <= 20 && d < bd {
				best, bd = j, d
			}
		}
		if best < 0 {
			c.OldOnly = append(c.OldOnly, ot.Number)
			c.Changes = append(c.Changes, Change{Kind: "conductor-unmatched", Conductor: ot.Number,
				Message: fmt.Sprintf("conductor %d of OLD (%.1f m from conductor 1) has no partner in NEW", ot.Number, ot.Offset)})
			continue
		}
		usedNew[best] = true
		pairs = append(pairs, pairT{&old.Conductors[oi].Route, &newDoc.Conductors[best].Route, ot.Number, newDoc.Conductors[best].Number, true})
	}
	for j, nt := range newDoc.Conductors {
		if !usedNew[j] {
			c.NewOnly = append(c.NewOnly, nt.Number)
			c.Changes = append(c.Changes, unmatchedNew(newDoc, &newDoc.Conductors[j]))
		}
	}
	for k, p := range pairs {
		cc, mapCh := compareRoute(p.o, p.n, toOld, p.byPla, old.Signal.Mode == SignalDC, c, s)
		cc.Old, cc.New = p.oi, p.ni
		if k == 0 && len(cc.Stations) == 0 {
			along, plan := nearestStations(p.o, p.n, toOld)
			return nil, refuse("no station of conductor 1 in NEW lies within %g m (--tolerance) of one in OLD, along the route or in plan: the nearest lie %.2f m apart in plan (%.2f m along the route); if the traverses were walked that far from the first survey's, compare with --tolerance %s; else not the same stretch of route, or not in one frame", s.Tolerance, plan, along, strconv.FormatFloat(math.Ceil(plan+0.5), 'f', 0, 64))
		}
		c.Matched += len(cc.Stations)
		c.Conductors = append(c.Conductors, cc)
		oc, nc := p.oi, p.ni
		if oc == 1 {
			oc, nc = 0, 0
		}
		c.compareSteps(old, newDoc, oc, nc, p.oi, mapCh, cc, s)
	}
	c.poorNote()
	c.listChanges()
	for i := range c.Conductors {
		if c.Conductors[i].Partial != nil {
			c.Cautions = append(c.Cautions, partialCaution(&c.Conductors[i]))
		}
	}
	return c, nil
}

// poorGroups returns the keys of d's groups whose fit is not sound: not
// ok, or with a problem (poor, ambiguous).
func poorGroups(d *Document) map[string]bool {
	m := map[string]bool{}
	for _, g := range d.Groups {
		if !g.OK || g.Problem != "" {
			m[g.Key] = true
		}
	}
	return m
}

// poorNote counts the matched stations on a fit that is not sound
// (Comparison.PoorFits) and says so in the notes.
func (c *Comparison) poorNote() {
	c.PoorFits = 0
	nOld, nNew := 0, 0
	for _, cc := range c.Conductors {
		for _, st := range cc.Stations {
			if st.PoorFit == "" {
				continue
			}
			c.PoorFits++
			if st.PoorFit != "NEW" {
				nOld++
			}
			if st.PoorFit != "OLD" {
				nNew++
			}
		}
	}
	if c.PoorFits == 0 {
		return
	}
	c.Notes = append(c.Notes, fmt.Sprintf("%d of %d matched stations rest on a fit that locate called poor, ambiguous or failed (%d in OLD, %d in NEW; marked \"poor fit\"): a poor fit can be biased beyond its sigmas, so they are left out of the ratio NEW/OLD's level and steps, and their own changes of current and %s are doubtful; look at those groups' problems in the surveys' reports before reading a change there",
		c.PoorFits, c.Matched, nOld, nNew, orDepth(c.DepthQuantity)))
}

// nearestStations returns the least separation of a used station of o
// from one of n (NEW's points taken by toOld), along the route
// (OLD's chainage, NEW's stations placed on it by plan position) and in
// plan, m.
func nearestStations(o, n *Route, toOld func([3]float64) [3]float64) (along, plan float64) {
	along, plan = math.Inf(1), math.Inf(1)
	var os []cstation
	for i := range o.Stations {
		if o.Stations[i].Used {
			os = append(os, cstation{st: &o.Stations[i], point: o.Stations[i].Point})
		}
	}
	for _, a := range os {
		for _, b := range n.Stations {
			if !b.Used {
				continue
			}
			q := toOld(b.Point)
			on, _ := onRoute(os, q)
			along = math.Min(along, math.Abs(a.st.Chainage-on))
			plan = math.Min(plan, math.Hypot(a.point[0]-q[0], a.point[1]-q[1]))
		}
	}
	return along, plan
}

// unmatchedNew words a conductor of NEW's without a partner in OLD: its
// median current (and share of conductor 1's), its median cover or depth,
// and locate's doubts about it (a line above the sensors or the ground,
// a weak line, a current not clearly different from zero), so that a
// line a forced --count invented is not read as a new conductor.
func unmatchedNew(d *Document, t *Track) Change {
	var cur, c1, cov []float64
	used := 0
	for _, st := range t.Route.Stations {
		if !st.Used {
			continue
		}
		used++
		cur = append(cur, math.Abs(st.Current))
		if st.Cover != nil {
			cov = append(cov, *st.Cover)
		}
	}
	if d.Route != nil {
		for _, st := range d.Route.Stations {
			if st.Used {
				c1 = append(c1, math.Abs(st.Current))
			}
		}
	}
	ch := Change{Kind: "conductor-unmatched", NewConductor: t.Number, Unit: "A"}
	msg := fmt.Sprintf("conductor %d of NEW (%.1f m from conductor 1) has no partner in OLD", t.Number, t.Offset)
	if len(cur) > 0 {
		m := cmpMedian(cur)
		ch.Value = ptr(m)
		msg += fmt.Sprintf(": %s A at the median of its %d stations", strconv.FormatFloat(m, 'g', 3, 64), used)
		if m1 := cmpMedian(c1); m1 > 0 {
			msg += fmt.Sprintf(" (%s%% of conductor 1's %s A)", strconv.FormatFloat(100*m/m1, 'g', 2, 64), strconv.FormatFloat(m1, 'g', 3, 64))
		}
	}
	if len(cov) > 0 {
		msg += fmt.Sprintf(", cover %s m", strconv.FormatFloat(cmpMedian(cov), 'f', 2, 64))
	}
	// locate's doubts, counted over the sources that make it up.
	kinds := []struct{ key, words string }{
		{"not a buried conductor", "its line passes above the sensors (not a buried conductor)"},
		{"weak line", "a weak line that may absorb departures from the model rather than mark a conductor"},
		{"not significantly different from zero", "a current not clearly different from zero"},
	}
	count := make([]int, len(kinds))
	first := make([]string, len(kinds))
	for _, g := range d.Groups {
		for _, src := range g.Sources {
			if src.Conductor != t.Number {
				continue
			}
			for k, kd := range kinds {
				for _, n := range src.Notes {
					if strings.Contains(n, kd.key) {
						count[k]++
						if first[k] == "" {
							first[k] = g.Key + ": " + n
						}
						break
					}
				}
			}
		}
	}
	var doubts []string
	for k, kd := range kinds {
		if count[k] > 0 {
			doubts = append(doubts, fmt.Sprintf("%s at %d of its %d stations", kd.words, count[k], used))
			ch.Notes = append(ch.Notes, first[k])
		}
	}
	if len(cov) > 0 && cmpMedian(cov) < 0 {
		doubts = append(doubts, "a median cover above the ground")
	}
	if len(doubts) > 0 {
		msg += "; locate doubts it: " + strings.Join(doubts, "; ") + ": more likely a line the fit added (a forced --count) than a new conductor"
	}
	ch.Message = msg
	return ch
}

// depthOffset fits the change of cover common to the stations (see
// DepthOffset); nil for fewer than three stations with a change.
func depthOffset(st []StationChange, s CompareSettings) *DepthOffset {
	var d, ds []float64
	for _, x := range st {
		if x.CoverChange != nil && *x.CoverSigma > 0 {
			d, ds = append(d, *x.CoverChange), append(ds, *x.CoverSigma)
		}
	}
	if len(d) < 3 {
		return nil
	}
	med := cmpMedian(d)
	var id, ids []float64
	for i := range d {
		if math.Abs(d[i]-med) <= math.Max(s.Sigmas*ds[i], s.MinCoverChange/2) {
			id, ids = append(id, d[i]), append(ids, ds[i])
		}
	}
	if len(id) == 0 {
		return nil
	}
	m, sm, chi2 := weightedMean(id, ids)
	o := &DepthOffset{Offset: m, Sigma: inflated(sm, chi2, len(id)-1), Stations: len(id), Of: len(d)}
	o.Applied = 2*len(id) >= len(d) && math.Abs(m) > s.Sigmas*o.Sigma && math.Abs(m) >= s.MinCoverChange
	return o
}

// flagCover sets sc's cover flag: on its change beyond the depth offset
// when one is applied.
func flagCover(sc *StationChange, off *DepthOffset, s CompareSettings) {
	if sc.CoverChange == nil {
		return
	}
	d, sd := *sc.CoverChange, *sc.CoverSigma
	if off != nil && off.Applied {
		d -= off.Offset
		sd = math.Hypot(sd, off.Sigma)
		sc.CoverBeyondOffset, sc.CoverBeyondOffsetSigma, sc.CoverBeyondOffsetZ = ptr(d), ptr(sd), ptr(zOf(d, sd))
	}
	sc.CoverFlag = math.Abs(zOf(d, sd)) > s.Sigmas && math.Abs(d) >= s.MinCoverChange
}

func modeName(m string) string {
	switch m {
	case SignalDC:
		return "DC"
	case SignalAC:
		return "AC"
	}
	return strconv.Quote(m)
}

func sameOrigin(a, b Origin) bool {
	return math.Abs(a.Lat-b.Lat) < 1e-9 && math.Abs(a.Lon-b.Lon) < 1e-9 && math.Abs(a.H-b.H) < 1e-3
}

func hasCover(r *Route) bool {
	for _, s := range r.Stations {
		if s.Used && s.Cover != nil {
			return true
		}
	}
	return false
}

// routeAzimuth is the azimuth of the median direction of r's used
// stations, degrees clockwise from north.
func routeAzimuth(r *Route) float64 {
	var e, n float64
	for _, s := range r.Stations {
		if !s.Used {
			continue
		}
		d := s.Direction
		if d[1] < 0 || d[1] == 0 && d[0] < 0 {
			d[0], d[1] = -d[0], -d[1]
		}
		e += d[0]
		n += d[1]
	}
	return math.Mod(math.Atan2(e, n)*180/math.Pi+360, 360)
}

// cmpMedian is the median of v (NaN for none), v left as it is.
func cmpMedian(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	w := append([]float64(nil), v...)
	sort.Float64s(w)
	if len(w)%2 == 1 {
		return w[len(w)/2]
	}
	return (w[len(w)/2-1] + w[len(w)/2]) / 2
}

func ptr(v float64) *float64 { return &v }

// compareRoute matches the used stations of o and n (NEW's points taken
// by toOld) and compares them. It returns the comparison and a map from
// NEW's chainage to OLD's along the matched stations.
func compareRoute(o, n *Route, toOld func([3]float64) [3]float64, planOnly, dc bool, c *Comparison, s CompareSettings) (ConductorComparison, func(float64) float64) {
	var os, ns []cstation
	for i := range o.Stations {
		if o.Stations[i].Used {
			os = append(os, cstation{st: &o.Stations[i], point: o.Stations[i].Point})
		}
	}
	for i := range n.Stations {
		if n.Stations[i].Used {
			ns = append(ns, cstation{st: &n.Stations[i], point: toOld(n.Stations[i].Point)})
		}
	}
	// NEW's stations on OLD's chainage: their plan positions projected
	// onto OLD's route. Two walks whose chainages start at different
	// places (a re-walk's first traverse 1 m on) are paired, and their
	// steps bracketed, on one chainage.
	for i := range os {
		os[i].on = os[i].st.Chainage
	}
	var cps []chainPair // NEW's own chainage and its place on OLD's, near OLD's route
	for j := range ns {
		ns[j].on, ns[j].off = onRoute(os, ns[j].point)
		if ns[j].off <= s.Tolerance {
			cps = append(cps, chainPair{ns[j].st.Chainage, ns[j].on})
		}
	}
	sort.Slice(cps, func(a, b int) bool { return cps[a].n < cps[b].n })
	cc := ConductorComparison{MatchedBy: "plan", Stations: []StationChange{}}
	chDir, chOff := 1.0, math.NaN()
	if len(cps) >= 2 {
		chDir = dirOf(cps)
		var offs []float64
		for _, p := range cps {
			offs = append(offs, p.o-chDir*p.n)
		}
		chOff = cmpMedian(offs)
		cc.NewChainageOffset, cc.NewChainageReversed = ptr(math.Round(chOff*1000)/1000), chDir < 0
	}
	plan := func(a, b cstation) float64 { return math.Hypot(a.point[0]-b.point[0], a.point[1]-b.point[1]) }
	// Distances are matched to the millimetre, so that a re-walk offset
	// by just the tolerance (half a 4 m spacing, 2 m) pairs every station
	// alike rather than as its fit's last digits fall; equal distances
	// keep OLD's order, each of OLD's stations taking NEW's nearest after
	// it first.
	mm := func(x float64) float64 { return math.Round(x*1000) / 1000 }
	match := func(dist func(a, b cstation) float64) [][2]int {
		type cand struct {
			i, j int
			d    float64
		}
		var cs []cand
		for i := range os {
			for j := range ns {
				if d := dist(os[i], ns[j]); d <= s.Tolerance {
					cs = append(cs, cand{i, j, d})
				}
			}
		}
		sort.SliceStable(cs, func(a, b int) bool { return cs[a].d < cs[b].d })
		ui, uj := map[int]bool{}, map[int]bool{}
		var out [][2]int
		for _, x := range cs {
			if ui[x.i] || uj[x.j] {
				continue
			}
			ui[x.i], uj[x.j] = true, true
			out = append(out, [2]int{x.i, x.j})
		}
		sort.Slice(out, func(a, b int) bool { return os[out[a][0]].st.Chainage < os[out[b][0]].st.Chainage })
		return out
	}
	var m [][2]int
	if !planOnly && chDir > 0 && mm(math.Abs(chOff)) <= s.Tolerance {
		// Both walks measure chainage from about one place: paired along
		// OLD's chainage, NEW's stations placed on it by plan position.
		m = match(func(a, b cstation) float64 { return mm(math.Abs(a.on - b.on)) })
		var sep []float64
		for _, p := range m {
			sep = append(sep, plan(os[p[0]], ns[p[1]]))
		}
		if len(m) > 0 && mm(cmpMedian(sep)) <= s.Tolerance {
			cc.MatchedBy = "chainage"
		} else {
			m = nil
		}
	}
	if m == nil {
		m = match(func(a, b cstation) float64 { return mm(plan(a, b)) })
		if !planOnly && len(m) > 0 {
			c.Notes = append(c.Notes, "conductor 1's stations were matched in plan: the two routes' chainages do not start at one place (or no station lies within the tolerance along them)")
		}
	}
	if !planOnly && len(cps) >= 2 && (chDir < 0 || math.Abs(chOff) >= 0.05) {
		how := fmt.Sprintf("NEW's chainage starts %.2f m along OLD's route (NEW's chainage + %.2f m is OLD's at one place)", chOff, chOff)
		if chOff < 0 {
			how = fmt.Sprintf("NEW's chainage starts %.2f m before OLD's (NEW's chainage - %.2f m is OLD's at one place)", -chOff, -chOff)
		}
		if chDir < 0 {
			how = fmt.Sprintf("NEW's chainage runs against OLD's, from OLD's chainage %.2f m (%.2f m - NEW's chainage is OLD's at one place)", chOff, chOff)
		}
		c.Notes = append(c.Notes, how+": NEW's stations were placed on OLD's chainage by their plan positions, and every chainage shown is OLD's")
	}
	// OLD's current threshold.
	var mags []float64
	for _, x := range os {
		mags = append(mags, math.Abs(x.st.Current))
	}
	medI := cmpMedian(mags)
	minI := s.MinCurrentChange
	if minI <= 0 {
		minI = DefaultCurrentShare * medI
	}
	cc.MinCurrentChangeA = minI
	// A route measured the other way runs its directions, and a DC
	// current's sign, the other way.
	sign := 1.0
	if dc && len(m) > 0 {
		var dot float64
		for _, p := range m {
			a, b := os[p[0]].st.Direction, ns[p[1]].st.Direction
			dot += a[0]*b[0] + a[1]*b[1] + a[2]*b[2]
		}
		if dot < 0 {
			sign = -1
			c.Notes = append(c.Notes, "NEW's route runs the other way: its DC currents were turned to OLD's direction")
		}
	}
	matchedO, matchedN := map[int]bool{}, map[int]bool{}
	for _, p := range m {
		a, b := os[p[0]], ns[p[1]]
		matchedO[p[0]], matchedN[p[1]] = true, true
		sc := StationChange{
			OldKey: a.st.Key, NewKey: b.st.Key, Chainage: a.st.Chainage, NewChainage: b.st.Chainage,
			NewOnOld: b.on, Separation: plan(a, b),
			OldCurrent: a.st.Current, OldCurrentSig: a.st.CurrentSigma,
			NewCurrent: sign * b.st.Current, NewCurrentSig: b.st.CurrentSigma,
		}
		sc.CurrentChange = sc.NewCurrent - sc.OldCurrent
		sc.CurrentSigma = math.Hypot(sc.OldCurrentSig, sc.NewCurrentSig)
		sc.CurrentZ = zOf(sc.CurrentChange, sc.CurrentSigma)
		if math.Abs(sc.OldCurrent) > 3*sc.OldCurrentSig && sc.OldCurrent != 0 {
			r := sc.NewCurrent / sc.OldCurrent
			rs := math.Abs(r) * math.Hypot(sc.OldCurrentSig/sc.OldCurrent, sc.NewCurrentSig/sc.NewCurrent)
			if sc.NewCurrent == 0 {
				rs = sc.NewCurrentSig / math.Abs(sc.OldCurrent)
			}
			sc.Ratio, sc.RatioSigma = &r, &rs
		}
		oc, ocs := depthOf(a.st, c.DepthQuantity)
		nc, ncs := depthOf(b.st, c.DepthQuantity)
		setCover(&sc, oc, ocs, nc, ncs, c)
		switch po, pn := c.oldPoor[a.st.Key], c.newPoor[b.st.Key]; {
		case po && pn:
			sc.PoorFit = "both"
		case po:
			sc.PoorFit = "OLD"
		case pn:
			sc.PoorFit = "NEW"
		}
		cc.Stations = append(cc.Stations, sc)
	}
	for i, x := range os {
		if !matchedO[i] {
			cc.OldOnly = append(cc.OldOnly, x.st.Key)
		}
	}
	for j, x := range ns {
		if !matchedN[j] {
			cc.NewOnly = append(cc.NewOnly, x.st.Key)
		}
	}
	cc.DepthOffset = depthOffset(cc.Stations, s)
	for i := range cc.Stations {
		flagCover(&cc.Stations[i], cc.DepthOffset, s)
	}
	cc.Ratio = ratioProfile(cc.Stations, medI, minI, dc, s)
	for i := range cc.Stations {
		sc := &cc.Stations[i]
		d, sd, z := sc.CurrentChange, sc.CurrentSigma, sc.CurrentZ
		if level, levelSigma, ok := cc.Ratio.levelAt(sc.Chainage); ok {
			d = sc.NewCurrent - level*sc.OldCurrent
			sd = math.Sqrt(sq(sc.NewCurrentSig) + sq(level*sc.OldCurrentSig) + sq(sc.OldCurrent*levelSigma))
			z = zOf(d, sd)
			sc.BeyondLevel, sc.BeyondLevelSigma, sc.BeyondLevelZ = ptr(d), ptr(sd), ptr(z)
		}
		sc.CurrentFlag = math.Abs(z) > s.Sigmas && math.Abs(d) >= minI
	}
	// NEW's chainage to OLD's: linear between NEW's stations placed on
	// OLD's chainage, by the nearest one's offset beyond them; where fewer
	// than two lie near OLD's route, between the matched stations.
	if len(cps) < 2 {
		cps = nil
		for _, sc := range cc.Stations {
			cps = append(cps, chainPair{sc.NewChainage, sc.Chainage})
		}
		sort.Slice(cps, func(a, b int) bool { return cps[a].n < cps[b].n })
	}
	mapCh := chainMap(cps)
	for _, x := range os {
		cc.oldOn = append(cc.oldOn, x.on)
	}
	for _, x := range ns {
		on := x.on
		if !(x.off <= s.Tolerance) || math.IsNaN(on) {
			on = mapCh(x.st.Chainage)
		}
		if !math.IsNaN(on) {
			cc.newOn = append(cc.newOn, on)
		}
	}
	sort.Float64s(cc.oldOn)
	sort.Float64s(cc.newOn)
	cc.Partial = partialCoverage(&cc, flowOf(cc.Stations, dc), s.Tolerance)
	// NEW's stations without a partner between two of OLD's: compared
	// with OLD interpolated along its chainage (never beyond its ends).
	// Not across a gap in OLD (a station left out): at most twice OLD's
	// median spacing.
	var gaps []float64
	for i := 1; i < len(os); i++ {
		gaps = append(gaps, os[i].st.Chainage-os[i-1].st.Chainage)
	}
	maxGap := 2 * cmpMedian(gaps)
	if len(cps) >= 2 && len(gaps) > 0 {
		for j, x := range ns {
			if matchedN[j] {
				continue
			}
			ch := x.on
			if !(x.off <= s.Tolerance) {
				ch = mapCh(x.st.Chainage)
			}
			for i := 1; i < len(os); i++ {
				a, b := os[i-1].st, os[i].st
				if !(a.Chainage <= ch && ch <= b.Chainage) || b.Chainage == a.Chainage || b.Chainage-a.Chainage > maxGap {
					continue
				}
				w := (ch - a.Chainage) / (b.Chainage - a.Chainage)
				lerp := func(u, v float64) float64 { return u + w*(v-u) }
				sc := StationChange{
					OldKey: a.Key + "-" + b.Key, NewKey: x.st.Key, Chainage: ch, NewChainage: x.st.Chainage, NewOnOld: ch,
					Separation: math.Min(ch-a.Chainage, b.Chainage-ch), Interpolated: true,
					OldCurrent: lerp(a.Current, b.Current), OldCurrentSig: lerp(a.CurrentSigma, b.CurrentSigma),
					NewCurrent: sign * x.st.Current, NewCurrentSig: x.st.CurrentSigma,
				}
				sc.CurrentChange = sc.NewCurrent - sc.OldCurrent
				sc.CurrentSigma = math.Hypot(sc.OldCurrentSig, sc.NewCurrentSig)
				sc.CurrentZ = zOf(sc.CurrentChange, sc.CurrentSigma)
				oa, oas := depthOf(a, c.DepthQuantity)
				ob, obs := depthOf(b, c.DepthQuantity)
				nc, ncs := depthOf(x.st, c.DepthQuantity)
				if oa != nil && ob != nil && oas != nil && obs != nil {
					// The sigma interpolated too: the two stations'
					// errors are not averaged down.
					setCover(&sc, ptr(lerp(*oa, *ob)), ptr(lerp(*oas, *obs)), nc, ncs, c)
					flagCover(&sc, cc.DepthOffset, s)
				}
				cc.Between = append(cc.Between, sc)
				break
			}
		}
	}
	return cc, mapCh
}

// depthOf returns st's cover, or its depth, as q says, and its sigma
// (nil when it has none).
func depthOf(st *Station, q string) (*float64, *float64) {
	switch q {
	case "cover":
		return st.Cover, st.CoverSigma
	case "depth":
		return &st.Depth, &st.DepthSigma
	}
	return nil, nil
}

// setCover sets sc's cover (or depth) of OLD and NEW, their change, its
// sigma and z, and whether NEW's is now under the minimum cover; the flag
// is set by flagCover, once the depth offset is known.
func setCover(sc *StationChange, oc, ocs, nc, ncs *float64, c *Comparison) {
	if oc == nil || nc == nil || ocs == nil || ncs == nil {
		return
	}
	d := *nc - *oc
	sd := math.Hypot(*ocs, *ncs)
	z := zOf(d, sd)
	sc.OldCover, sc.OldCoverSig = ptr(*oc), ptr(*ocs)
	sc.NewCover, sc.NewCoverSig = ptr(*nc), ptr(*ncs)
	sc.CoverChange, sc.CoverSigma, sc.CoverZ = &d, &sd, &z
	if c.DepthQuantity == "cover" && c.MinCoverM != nil && *nc < *c.MinCoverM && *oc >= *c.MinCoverM {
		sc.NowShallow = true
	}
}

// chainPair is a matched station's chainage in NEW and in OLD.
type chainPair struct{ n, o float64 }

// dirOf is +1 when OLD's chainage grows with NEW's along cps (sorted by
// NEW's), else -1.
func dirOf(cps []chainPair) float64 {
	if len(cps) >= 2 && (cps[len(cps)-1].o-cps[0].o)*(cps[len(cps)-1].n-cps[0].n) < 0 {
		return -1
	}
	return 1
}

// zOf is d over its sigma s; 0 where s is not positive (a quantity held,
// not estimated: its change is not judged against a sigma), so that the
// JSON holds no infinity.
func zOf(d, s float64) float64 {
	if s > 0 && !math.IsInf(s, 0) {
		return d / s
	}
	return 0
}

// weightedMean returns the inverse-variance mean of v with sigmas sg,
// its sigma and the chi-square about it.
func weightedMean(v, sg []float64) (m, sm, chi2 float64) {
	var sw, swv float64
	for i := range v {
		w := 1 / sq(sg[i])
		sw += w
		swv += w * v[i]
	}
	m = swv / sw
	for i := range v {
		chi2 += sq((v[i] - m) / sg[i])
	}
	return m, math.Sqrt(1 / sw), chi2
}

// inflated returns sigma widened by the square root of chi2/dof when that
// exceeds 1: the stations scatter more than their fits' sigmas say.
func inflated(sigma, chi2 float64, dof int) float64 {
	if dof > 0 && chi2/float64(dof) > 1 {
		return sigma * math.Sqrt(chi2/float64(dof))
	}
	return sigma
}

// subThresholdSigmas is how many sigmas a step of the ratio must be out
// to be found when its current is under the practical threshold: 5
// sigma, the usual bar for a finding searched for among many places
// (common practice), since the step is looked for at every split of the
// stations.
const subThresholdSigmas = 5.0

// chi2Sigmas returns how many standard normal sigmas (one-sided) chi2
// for dof degrees of freedom lies above its expectation, by the
// Wilson-Hilferty cube-root approximation (Wilson and Hilferty 1931,
// Proc. Natl. Acad. Sci. 17, 684): (chi2/dof)^(1/3) is near normal with
// mean 1-2/(9 dof) and variance 2/(9 dof). 0 for no degrees of freedom.
func chi2Sigmas(chi2 float64, dof int) float64 {
	if dof <= 0 {
		return 0
	}
	k := float64(dof)
	return (math.Cbrt(chi2/k) - (1 - 2/(9*k))) / math.Sqrt(2/(9*k))
}

// ratioProfile tests the ratio NEW/OLD along the stations for one level
// and a step (see RatioProfile). medI is OLD's median |current|, minI the
// practical threshold of current; dc says OLD's currents are signed along
// increasing chainage (the flow's direction known from their sign).
func ratioProfile(st []StationChange, medI, minI float64, dc bool, s CompareSettings) *RatioProfile {
	var idx []int
	var r, rs []float64
	for i, x := range st {
		// A station on a poor fit is left out (Comparison.PoorFits).
		if x.Ratio != nil && *x.RatioSigma > 0 && x.PoorFit == "" {
			idx = append(idx, i)
			r, rs = append(r, *x.Ratio), append(rs, *x.RatioSigma)
		}
	}
	if len(r) < 2 {
		return nil
	}
	p := &RatioProfile{Stations: len(r)}
	med := cmpMedian(r)
	relMin := minI / math.Max(medI, 1e-300)
	var ir, irs []float64
	for i := range r {
		if math.Abs(r[i]-med) <= math.Max(s.Sigmas*rs[i], relMin) {
			ir, irs = append(ir, r[i]), append(irs, rs[i])
		}
	}
	if len(ir) == 0 {
		ir, irs = r, rs
	}
	m, sm, chi2 := weightedMean(ir, irs)
	p.Level, p.LevelSigma = m, inflated(sm, chi2, len(ir)-1)
	p.LevelApplied = math.Abs(p.Level-1) > s.Sigmas*p.LevelSigma && math.Abs(p.Level-1)*medI >= minI
	_, _, p.Chi2 = weightedMean(r, rs)
	p.Dof = len(r) - 1
	// The most significant single step.
	bestZ, bestChi2 := 0.0, 0.0
	for k := 1; k < len(r); k++ {
		a, as, ac := weightedMean(r[:k], rs[:k])
		b, bs, bc := weightedMean(r[k:], rs[k:])
		// Each side's sigma widened by the scatter of both sides about
		// their own levels.
		dof := len(r) - 2
		as, bs = inflated(as, ac+bc, dof), inflated(bs, ac+bc, dof)
		z := math.Abs(b-a) / math.Hypot(as, bs)
		if z > bestZ {
			bestZ, bestChi2 = z, ac+bc
			var after []float64
			for _, i := range idx[k:] {
				after = append(after, math.Abs(st[i].OldCurrent))
			}
			p.Step = &RatioStep{
				FromKey: st[idx[k-1]].OldKey, ToKey: st[idx[k]].OldKey,
				ChainageFrom: st[idx[k-1]].Chainage, ChainageTo: st[idx[k]].Chainage,
				Before: a, BeforeSigma: as, After: b, AfterSigma: bs, Z: z, CurrentA: (b - a) * cmpMedian(after),
			}
		}
	}
	// One level is rejected when the stations' chi-square about it is
	// beyond --sigmas (one-sided, by the Wilson-Hilferty approximation).
	varies := chi2Sigmas(p.Chi2, p.Dof) > s.Sigmas
	if stp := p.Step; stp != nil && !(stp.Z > s.Sigmas && math.Abs(stp.CurrentA) >= minI) {
		// Under the practical threshold a step is still found when it is
		// many sigmas out (subThresholdSigmas: the search tries every
		// split, so --sigmas alone would find steps in noise), one level
		// is rejected and the step leaves no scatter beyond the sigmas
		// (a ratio that drifts along the route is no step): a defect
		// growing slowly shows there, and the supply is read upstream
		// of it, not averaged across it.
		if stp.Z > math.Max(s.Sigmas, subThresholdSigmas) && varies && !(chi2Sigmas(bestChi2, len(r)-2) > s.Sigmas) {
			stp.BelowThreshold = true
		} else {
			p.Step = nil
		}
	}
	if p.Step != nil {
		bracketStep(p.Step, st, idx, r, rs, s.Sigmas)
	}
	// Constant only when no step was found and the chi-square does not
	// reject one level.
	p.Constant = p.Step == nil && !varies
	p.MedianLevel, p.MedianLevelSigma = p.Level, p.LevelSigma
	p.LevelFrom = "all"
	if p.Step == nil {
		return p
	}
	// A step: the supply's factor is the side the current flows from.
	stp := p.Step
	applied := func(l, ls float64) bool { return math.Abs(l-1) > s.Sigmas*ls && math.Abs(l-1)*medI >= minI }
	stp.beforeApplied, stp.afterApplied = applied(stp.Before, stp.BeforeSigma), applied(stp.After, stp.AfterSigma)
	flow := flowOf(st, dc)
	var beforeI, afterI []float64
	for _, i := range idx {
		if st[i].Chainage > stp.boundary() {
			afterI = append(afterI, math.Abs(st[i].OldCurrent))
		} else {
			beforeI = append(beforeI, math.Abs(st[i].OldCurrent))
		}
	}
	switch flow {
	case 1:
		p.LevelFrom = "upstream"
		p.Level, p.LevelSigma, p.LevelApplied = stp.Before, stp.BeforeSigma, stp.beforeApplied
		stp.Downstream = "after"
		stp.CurrentAlongFlowA = ptr((stp.After - stp.Before) * cmpMedian(afterI))
	case -1:
		p.LevelFrom = "upstream"
		p.Level, p.LevelSigma, p.LevelApplied = stp.After, stp.AfterSigma, stp.afterApplied
		stp.Downstream = "before"
		stp.CurrentAlongFlowA = ptr((stp.Before - stp.After) * cmpMedian(beforeI))
	default:
		p.LevelFrom = "unknown"
		p.SideLevels = true
		p.Level, p.LevelSigma = stp.Before, stp.BeforeSigma
		p.LevelApplied = stp.beforeApplied || stp.afterApplied
	}
	return p
}

// flowOf is the direction the current flows along OLD's chainage, +1 or
// -1, as the stations of the ratio (a ratio, on sound fits) read it; 0
// when it is not known. OLD's DC currents are signed along increasing
// chainage, and the ratio's stations all have one beyond 3 sigma of zero;
// a sign that changes along them, or an AC magnitude, leaves the
// direction unknown.
func flowOf(st []StationChange, dc bool) int {
	if !dc {
		return 0
	}
	var pos, neg int
	for _, x := range st {
		if x.Ratio == nil || !(*x.RatioSigma > 0) || x.PoorFit != "" {
			continue
		}
		if x.OldCurrent > 0 {
			pos++
		} else {
			neg++
		}
	}
	switch {
	case pos+neg == 0:
		return 0
	case neg == 0:
		return 1
	case pos == 0:
		return -1
	}
	return 0
}

// partialCoverage returns cc's PartialCoverage (nil when both surveys
// walked the same stretch, within tol at each end), from its matched
// stations, oldOn and newOn; flow is flowOf's direction.
func partialCoverage(cc *ConductorComparison, flow int, tol float64) *PartialCoverage {
	if len(cc.Stations) == 0 || len(cc.oldOn) == 0 || len(cc.newOn) == 0 {
		return nil
	}
	p := &PartialCoverage{BothFrom: math.Inf(1), BothTo: math.Inf(-1),
		OldFrom: cc.oldOn[0], OldTo: cc.oldOn[len(cc.oldOn)-1], NewFrom: cc.newOn[0], NewTo: cc.newOn[len(cc.newOn)-1]}
	for _, sc := range cc.Stations {
		p.BothFrom, p.BothTo = math.Min(p.BothFrom, sc.Chainage), math.Max(p.BothTo, sc.Chainage)
	}
	oldStart, newStart := p.OldFrom < p.BothFrom-tol, p.NewFrom < p.BothFrom-tol
	oldEnd, newEnd := p.OldTo > p.BothTo+tol, p.NewTo > p.BothTo+tol
	if !oldStart && !newStart && !oldEnd && !newEnd {
		return nil
	}
	// Where a loss changed outside the stretch both walked would lie,
	// upstream of it (or past either end when the flow is not known).
	var where []string
	switch {
	case flow >= 0 && oldStart && !newStart:
		where = append(where, fmt.Sprintf("before NEW's first station at %.1f m", p.NewFrom))
	case flow >= 0 && newStart && !oldStart:
		where = append(where, fmt.Sprintf("before OLD's first station at %.1f m", p.OldFrom))
	}
	switch {
	case flow <= 0 && oldEnd && !newEnd:
		where = append(where, fmt.Sprintf("past NEW's last station at %.1f m", p.NewTo))
	case flow <= 0 && newEnd && !oldEnd:
		where = append(where, fmt.Sprintf("past OLD's last station at %.1f m", p.OldTo))
	}
	if len(where) > 0 {
		p.LevelDoubt = "a change of loss " + strings.Join(where, " or ")
	}
	return p
}

// covers reports whether used stations on (sorted) lie on both sides of
// the bracket from-to, within tol: a station at or before from and
// another at or after to.
func covers(on []float64, from, to, tol float64) bool {
	return len(on) >= 2 && on[0] <= from+tol && on[len(on)-1] >= to-tol && on[0] < on[len(on)-1]
}

// bracketStep sets the chainages of stp, a step of the ratio between the
// ratio's stations idx[k-1] and idx[k] (its FromKey and ToKey), on OLD's
// chainage from both walks' stations. A ratio compares NEW's station at
// one place with OLD's at another (a re-walk's traverses a metre or two
// from the first survey's), and a loss that changed in either survey
// moves it once either station is past the loss: so the step lies past
// the nearer of the two stations of the last pair that reads the level
// before it and short of the farther of the first pair that reads the
// level after it. A pair beside the step whose ratio agrees with both
// levels (within sigmas of each: near a step the fits are poor) does not
// say which side it is on, and the bracket is widened past it.
func bracketStep(stp *RatioStep, st []StationChange, idx []int, r, rs []float64, sigmas float64) {
	k := -1
	for i := 1; i < len(idx); i++ {
		if st[idx[i-1]].OldKey == stp.FromKey && st[idx[i]].OldKey == stp.ToKey {
			k = i
		}
	}
	if k < 0 {
		return
	}
	stp.split, stp.hasSplit = (st[idx[k-1]].Chainage+st[idx[k]].Chainage)/2, true
	either := func(i int) bool {
		return math.Abs(r[i]-stp.Before) <= sigmas*math.Hypot(rs[i], stp.BeforeSigma) &&
			math.Abs(r[i]-stp.After) <= sigmas*math.Hypot(rs[i], stp.AfterSigma)
	}
	lo, hi := k-1, k
	for lo > 0 && either(lo) {
		lo--
	}
	for hi < len(idx)-1 && either(hi) {
		hi++
	}
	a, b := st[idx[lo]], st[idx[hi]]
	stp.FromKey, stp.ToKey = a.OldKey, b.OldKey
	stp.ChainageFrom, stp.ChainageTo = a.Chainage, b.Chainage
	if a.NewOnOld != 0 || b.NewOnOld != 0 {
		if a.Chainage <= b.Chainage {
			stp.ChainageFrom, stp.ChainageTo = math.Min(a.Chainage, a.NewOnOld), math.Max(b.Chainage, b.NewOnOld)
		} else {
			stp.ChainageFrom, stp.ChainageTo = math.Max(a.Chainage, a.NewOnOld), math.Min(b.Chainage, b.NewOnOld)
		}
	}
}

// stepFinding is a current-step finding's bracket and step.
type stepFinding struct {
	from, to float64
	step, sg float64
	groups   []string
}

func stepsOf(d *Document, conductor int, mapCh func(float64) float64) []stepFinding {
	var out []stepFinding
	for _, f := range d.Findings {
		if f.Kind != "current-step" || f.Conductor != conductor || f.Lone {
			continue
		}
		var v *Value
		for i := range f.Values {
			if f.Values[i].Name == "step" {
				v = &f.Values[i]
			}
		}
		if v == nil {
			continue
		}
		a, b := mapCh(f.ChainageFrom), mapCh(f.ChainageTo)
		if a > b {
			a, b = b, a
		}
		out = append(out, stepFinding{a, b, v.Value, v.Sigma, f.Groups})
	}
	return out
}

// compareSteps compares the current-step findings about conductor oc of
// OLD and nc of NEW (0 for conductor 1), taken onto OLD's chainage.
func (c *Comparison) compareSteps(old, newDoc *Document, oc, nc, number int, mapCh func(float64) float64, cc ConductorComparison, s CompareSettings) {
	os := stepsOf(old, oc, func(x float64) float64 { return x })
	ns := stepsOf(newDoc, nc, mapCh)
	// A NEW step with negative sign along a route measured the other way
	// is a loss too: compare by the size of the loss along OLD's direction.
	usedN := map[int]bool{}
	for _, a := range os {
		best, bd := -1, math.Inf(1)
		for j, b := range ns {
			if usedN[j] {
				continue
			}
			gap := math.Max(0, math.Max(a.from-b.to, b.from-a.to))
			if gap <= s.Tolerance && gap < bd {
				best, bd = j, gap
			}
		}
		sc := StepComparison{Conductor: number, ChainageFrom: a.from, ChainageTo: a.to, OldGroups: a.groups,
			OldStep: ptr(a.step), OldStepSigma: ptr(a.sg)}
		if best < 0 {
			sc.Status = "gone"
			if !covers(cc.newOn, a.from, a.to, s.Tolerance) {
				sc.Status = "not-covered-by-new"
			}
			c.Steps = append(c.Steps, sc)
			continue
		}
		usedN[best] = true
		b := ns[best]
		sc.NewGroups, sc.NewStep, sc.NewStepSigma = b.groups, ptr(b.step), ptr(b.sg)
		sc.ChainageFrom, sc.ChainageTo = math.Max(a.from, b.from), math.Min(a.to, b.to)
		if sc.ChainageFrom > sc.ChainageTo {
			sc.ChainageFrom, sc.ChainageTo = a.from, a.to
		}
		level, levelSigma, ok := cc.Ratio.levelAt(a.from)
		if !ok {
			level, levelSigma = 1, 0
		}
		d := math.Abs(b.step) - level*math.Abs(a.step)
		sd := math.Sqrt(sq(b.sg) + sq(level*a.sg) + sq(a.step*levelSigma))
		z := zOf(d, sd)
		sc.Change, sc.ChangeSigma, sc.Z = ptr(d), ptr(sd), ptr(z)
		// Beyond --sigmas the step grew or shrank, and is said so under
		// the practical threshold too (BelowThreshold): a defect that
		// grows slowly is not "unchanged" at every survey.
		switch {
		case math.Abs(z) > s.Sigmas && d > 0:
			sc.Status = "grown"
		case math.Abs(z) > s.Sigmas:
			sc.Status = "shrunk"
		default:
			sc.Status = "unchanged"
		}
		sc.BelowThreshold = sc.Status != "unchanged" && math.Abs(d) < cc.MinCurrentChangeA
		c.Steps = append(c.Steps, sc)
	}
	for j, b := range ns {
		if usedN[j] {
			continue
		}
		status := "new"
		if !covers(cc.oldOn, b.from, b.to, s.Tolerance) {
			status = "not-covered-by-old"
		}
		c.Steps = append(c.Steps, StepComparison{Conductor: number, Status: status, ChainageFrom: b.from, ChainageTo: b.to,
			NewGroups: b.groups, NewStep: ptr(b.step), NewStepSigma: ptr(b.sg)})
	}
	sort.SliceStable(c.Steps, func(i, j int) bool {
		if c.Steps[i].Conductor != c.Steps[j].Conductor {
			return c.Steps[i].Conductor < c.Steps[j].Conductor
		}
		return c.Steps[i].ChainageFrom < c.Steps[j].ChainageFrom
	})
}

// listChanges words what changed, in route order per conductor: the
// level, a common depth offset, a step of the ratio (with the stations
// past it whose flags restate it), the steps new, gone, grown or shrunk,
// and the stations whose current or cover changed. Stations without a
// partner are notes, not changes.
func (c *Comparison) listChanges() {
	q := "cover"
	if c.DepthQuantity == "depth" {
		q = "depth"
	}
	for _, cc := range c.Conductors {
		who := ""
		if cc.Old != 1 {
			who = fmt.Sprintf("conductor %d: ", cc.Old)
		}
		r := cc.Ratio
		var grouped map[string]bool
		if r != nil && r.LevelApplied {
			ch := Change{Kind: "level-change", Conductor: cc.Old, Value: ptr(r.Level), Sigma: ptr(r.LevelSigma), Unit: "ratio"}
			cause := c.levelCause()
			doubt := ""
			if cc.Partial != nil {
				doubt = cc.Partial.LevelDoubt
			}
			switch r.LevelFrom {
			case "upstream":
				side, from := "before", r.Step.ChainageFrom
				if r.Step.Downstream == "before" {
					side, from = "past", r.Step.ChainageTo
				}
				ch.Message = fmt.Sprintf("%sthe supply's current changed by one factor, NEW/OLD %s (%s), read on the side the current flows from, %s chainage %.1f m; past the step in the ratio, along the flow, the stations read %s, that factor less the change of loss at the step: station changes below are beyond the supply's factor",
					who, pmText(r.Level, r.LevelSigma, 3), cause, side, from, pmText(otherSide(r), otherSideSigma(r), 3))
				if doubt != "" {
					ch.Message += "; the factor may also be " + doubt + ""
				}
			case "unknown":
				st := r.Step
				ch.ValuePast, ch.SigmaPast = ptr(st.After), ptr(st.AfterSigma)
				ch.Message = fmt.Sprintf("%sthe ratio NEW/OLD reads %s before chainage %.1f m and %s past %.1f m: the supply's factor (%s) is the reading on the side the current is fed from, which an AC magnitude does not tell; neither side is taken as the factor, and each station is measured against its own side's reading",
					who, pmText(st.Before, st.BeforeSigma, 3), st.ChainageFrom, pmText(st.After, st.AfterSigma, 3), st.ChainageTo, cause)
				if doubt != "" {
					ch.Message += "; either reading may also hold " + doubt + ""
				}
			default:
				ch.Message = fmt.Sprintf("%sthe current changed by one factor along the route, NEW/OLD %s (%s): station changes below are beyond that factor", who, pmText(r.Level, r.LevelSigma, 3), cause)
				if doubt != "" {
					p := cc.Partial
					ch.Message = fmt.Sprintf("%sthe current changed by one factor on the stretch both surveys walked (chainage %.1f-%.1f m), NEW/OLD %s: a supply change (%s) or %s; station changes below are beyond that factor",
						who, p.BothFrom, p.BothTo, pmText(r.Level, r.LevelSigma, 3), cause, doubt)
				}
			}
			c.Changes = append(c.Changes, ch)
		}
		if o := cc.DepthOffset; o != nil && o.Applied {
			c.Changes = append(c.Changes, Change{Kind: "depth-offset", Conductor: cc.Old, Value: ptr(o.Offset), Sigma: ptr(o.Sigma), Unit: "m",
				Message: fmt.Sprintf("%s%d of %d stations' %s changed by one amount, %s m: the sensor height (locate --sensor-height) or the ground level (--reference-z) differs between the surveys, or the whole route was re-graded; station changes below are beyond it",
					who, o.Stations, o.Of, q, signed(pmText(o.Offset, o.Sigma, 3)))})
		}
		if r != nil && r.Step != nil {
			st := r.Step
			ch := Change{Kind: "ratio-step", Conductor: cc.Old, Chainage: roundCh((st.ChainageFrom + st.ChainageTo) / 2),
				ChainageFrom: roundCh(st.ChainageFrom), ChainageTo: roundCh(st.ChainageTo),
				Groups: []string{st.FromKey, st.ToKey}, OldGroups: []string{st.FromKey, st.ToKey}, Unit: "A"}
			head := fmt.Sprintf("%sthe ratio NEW/OLD steps from %s to %s between %s and %s (chainage %.1f-%.1f m, %.1f sigma)",
				who, pmText(st.Before, st.BeforeSigma, 3), pmText(st.After, st.AfterSigma, 3), st.FromKey, st.ToKey, st.ChainageFrom, st.ChainageTo, st.Z)
			if st.CurrentAlongFlowA != nil {
				a := *st.CurrentAlongFlowA
				ch.Value = ptr(a)
				if st.After != st.Before {
					ch.Sigma = ptr(math.Abs(a) * math.Hypot(st.BeforeSigma, st.AfterSigma) / math.Abs(st.After-st.Before))
				}
				verb, why := "falls", "current leaving the conductor there (a loss new or grown since OLD)"
				if a > 0 {
					verb, why = "rises", "current joining the conductor there, or a loss OLD had that has shrunk"
				}
				// The stations past the step, along the flow, whose flags
				// restate it.
				grouped = map[string]bool{}
				for _, sc := range cc.Stations {
					past := sc.Chainage > st.boundary()
					if st.Downstream == "before" {
						past = !past
					}
					if !past || !sc.CurrentFlag {
						continue
					}
					// Its change against the supply's factor agrees with the
					// step's at its own current (within the sigmas, or the
					// current threshold): one event, not another.
					level, _, _ := r.levelAt(sc.Chainage)
					dm := math.Abs(sc.NewCurrent) - level*math.Abs(sc.OldCurrent)
					sd := sc.CurrentSigma
					if sc.BeyondLevelSigma != nil {
						sd = *sc.BeyondLevelSigma
					}
					exp := (otherSide(r) - r.Level) * math.Abs(sc.OldCurrent)
					if dm*a > 0 && math.Abs(dm-exp) <= math.Max(c.Sigmas*math.Hypot(sd, otherSideSigma(r)*math.Abs(sc.OldCurrent)), cc.MinCurrentChangeA) {
						grouped[sc.OldKey] = true
						ch.Stations = append(ch.Stations, sc.OldKey)
					}
				}
				ch.Message = head + fmt.Sprintf(": along the flow the current now %s there by about %s A more than in OLD%s: %s", verb, strconv.FormatFloat(math.Abs(a), 'g', 3, 64), under(st.BelowThreshold, cc.MinCurrentChangeA), why)
				if len(ch.Stations) > 0 {
					ch.Message += fmt.Sprintf("; the stations past it, %s, each read this change against the supply's factor", strings.Join(ch.Stations, ", "))
				}
			} else {
				ch.Value = ptr(st.CurrentA)
				if st.After != st.Before {
					ch.Sigma = ptr(math.Abs(st.CurrentA) * math.Hypot(st.BeforeSigma, st.AfterSigma) / math.Abs(st.After-st.Before))
				}
				ch.Message = head + fmt.Sprintf(": about %s A if the current is fed from the start of the route (the reverse if fed from the far end)%s: a loss that changed there", signed(strconv.FormatFloat(st.CurrentA, 'g', 3, 64)), under(st.BelowThreshold, cc.MinCurrentChangeA))
			}
			ch.BelowThreshold = st.BelowThreshold
			c.Changes = append(c.Changes, ch)
		}
		for _, sp := range c.Steps {
			if sp.Conductor != cc.Old || sp.Status == "unchanged" {
				continue
			}
			if nc := notCovered(sp, cc.Partial); nc != "" {
				// Not a change: the other survey did not walk there.
				c.Notes = append(c.Notes, who+nc)
				continue
			}
			mid := (sp.ChainageFrom + sp.ChainageTo) / 2
			ch := Change{Kind: "step-" + sp.Status, Conductor: cc.Old, Chainage: roundCh(mid),
				ChainageFrom: roundCh(sp.ChainageFrom), ChainageTo: roundCh(sp.ChainageTo),
				Groups: append(append([]string(nil), sp.OldGroups...), sp.NewGroups...), OldGroups: sp.OldGroups, NewGroups: sp.NewGroups, Unit: "A"}
			var msg string
			switch sp.Status {
			case "new":
				ch.Value, ch.Sigma = ptr(*sp.NewStep), ptr(*sp.NewStepSigma)
				msg = fmt.Sprintf("a new change of current %s A at chainage %.1f-%.1f m (NEW %s), not found in OLD", signed(pmText(*sp.NewStep, *sp.NewStepSigma, 3)), sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.NewGroups, "-"))
			case "gone":
				ch.Value, ch.Sigma = ptr(*sp.OldStep), ptr(*sp.OldStepSigma)
				msg = fmt.Sprintf("the change of current %s A at chainage %.1f-%.1f m (OLD %s) is not found in NEW", signed(pmText(*sp.OldStep, *sp.OldStepSigma, 3)), sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.OldGroups, "-"))
			default:
				ch.Value, ch.Sigma = ptr(*sp.Change), ptr(*sp.ChangeSigma)
				msg = fmt.Sprintf("the change of current at chainage %.1f-%.1f m has %s: %s A in OLD, %s A in NEW, its size %s A (%.1f sigma)",
					sp.ChainageFrom, sp.ChainageTo, sp.Status, signed(pmText(*sp.OldStep, *sp.OldStepSigma, 3)), signed(pmText(*sp.NewStep, *sp.NewStepSigma, 3)), signed(pmText(*sp.Change, *sp.ChangeSigma, 3)), math.Abs(*sp.Z))
				if sp.BelowThreshold {
					ch.BelowThreshold = true
					msg = fmt.Sprintf("the change of current at chainage %.1f-%.1f m has %s by %s A (%.1f sigma), under the %.2g A threshold: %s A in OLD, %s A in NEW",
						sp.ChainageFrom, sp.ChainageTo, sp.Status, pmText(math.Abs(*sp.Change), *sp.ChangeSigma, 3), math.Abs(*sp.Z), cc.MinCurrentChangeA, signed(pmText(*sp.OldStep, *sp.OldStepSigma, 3)), signed(pmText(*sp.NewStep, *sp.NewStepSigma, 3)))
				}
			}
			ch.Message = who + msg
			c.Changes = append(c.Changes, ch)
		}
		stations := append(append([]StationChange(nil), cc.Stations...), cc.Between...)
		sort.SliceStable(stations, func(i, j int) bool { return stations[i].Chainage < stations[j].Chainage })
		for _, sc := range stations {
			where := sc.OldKey
			if sc.Interpolated {
				where = fmt.Sprintf("NEW's %s, between OLD's %s,", sc.NewKey, strings.Replace(sc.OldKey, "-", " and ", 1))
			}
			doubt := ""
			if sc.PoorFit != "" {
				doubt = fmt.Sprintf("; doubtful: %s's fit here is poor, ambiguous or failed", map[string]string{"both": "each survey", "OLD": "OLD", "NEW": "NEW"}[sc.PoorFit])
			}
			if sc.CurrentFlag && !grouped[sc.OldKey] {
				d, sd, z, how := sc.CurrentChange, sc.CurrentSigma, sc.CurrentZ, ""
				if sc.BeyondLevel != nil {
					d, sd, z, how = *sc.BeyondLevel, *sc.BeyondLevelSigma, *sc.BeyondLevelZ, " beyond the route's factor"
				}
				c.Changes = append(c.Changes, Change{Kind: "current-change", Conductor: cc.Old, Chainage: roundCh(sc.Chainage),
					Groups: []string{sc.OldKey, sc.NewKey}, OldGroups: []string{sc.OldKey}, NewGroups: []string{sc.NewKey},
					Value: ptr(d), Sigma: ptr(sd), Unit: "A",
					Message: fmt.Sprintf("%s%s at chainage %.1f m: current %s A, was %s A: changed %s A%s (%.1f sigma)%s",
						who, where, sc.Chainage, pmText(sc.NewCurrent, sc.NewCurrentSig, 3), pmText(sc.OldCurrent, sc.OldCurrentSig, 3), signed(pmText(d, sd, 3)), how, math.Abs(z), doubt)})
			}
			if sc.CoverFlag {
				extra := ""
				if sc.NowShallow {
					extra = fmt.Sprintf(", now under the minimum cover of %.2f m", *c.MinCoverM)
				}
				d, sd, z, how := *sc.CoverChange, *sc.CoverSigma, *sc.CoverZ, ""
				if sc.CoverBeyondOffset != nil {
					d, sd, z, how = *sc.CoverBeyondOffset, *sc.CoverBeyondOffsetSigma, *sc.CoverBeyondOffsetZ, " beyond the common offset"
				}
				was := "was"
				if sc.Interpolated {
					was = "OLD interpolated"
				}
				c.Changes = append(c.Changes, Change{Kind: "cover-change", Conductor: cc.Old, Chainage: roundCh(sc.Chainage),
					Groups: []string{sc.OldKey, sc.NewKey}, OldGroups: []string{sc.OldKey}, NewGroups: []string{sc.NewKey},
					Value: ptr(d), Sigma: ptr(sd), Unit: "m",
					Message: fmt.Sprintf("%s%s at chainage %.1f m: %s %s m, %s %s m: changed %s m%s (%.1f sigma)%s%s",
						who, where, sc.Chainage, q, pmText(*sc.NewCover, *sc.NewCoverSig, 3), was, pmText(*sc.OldCover, *sc.OldCoverSig, 3), signed(pmText(d, sd, 3)), how, math.Abs(z), extra, doubt)})
			}
		}
		if len(cc.OldOnly) > 0 {
			c.Notes = append(c.Notes, fmt.Sprintf("%sOLD's stations %s have no partner among NEW's used stations within %g m (none was surveyed there, or its fit was left out of the route)", who, strings.Join(cc.OldOnly, ", "), c.ToleranceM))
		}
		if len(cc.NewOnly) > 0 {
			var between, beyond []string
			inB := map[string]bool{}
			for _, sc := range cc.Between {
				inB[sc.NewKey] = true
			}
			for _, k := range cc.NewOnly {
				if inB[k] {
					between = append(between, k)
				} else {
					beyond = append(beyond, k)
				}
			}
			if len(between) > 0 {
				c.Notes = append(c.Notes, fmt.Sprintf("%sNEW's stations %s have no partner within %g m but lie between OLD's: their cover was compared with OLD's interpolated along the route", who, strings.Join(between, ", "), c.ToleranceM))
			}
			if len(beyond) > 0 {
				c.Notes = append(c.Notes, fmt.Sprintf("%sNEW's stations %s have no partner among OLD's used stations within %g m (none was surveyed there, or its fit was left out of the route)", who, strings.Join(beyond, ", "), c.ToleranceM))
			}
		}
	}
}

// under words a change found under the practical threshold of thr A
// ("" when it is beyond it).
func under(below bool, thr float64) string {
	if !below {
		return ""
	}
	return fmt.Sprintf(", under the %.2g A threshold", thr)
}

// notCovered words a step of one survey that the other did not walk on
// both sides of (StepComparison's not-covered statuses); "" for any other
// status.
func notCovered(sp StepComparison, p *PartialCoverage) string {
	span := func(old bool) string {
		switch {
		case p == nil:
			return ""
		case old:
			return fmt.Sprintf(" (its used stations lie at %.1f-%.1f m of OLD's chainage)", p.OldFrom, p.OldTo)
		}
		return fmt.Sprintf(" (its used stations lie at %.1f-%.1f m of OLD's chainage)", p.NewFrom, p.NewTo)
	}
	switch sp.Status {
	case "not-covered-by-new":
		return fmt.Sprintf("the change of current %s A at chainage %.1f-%.1f m (OLD %s) is not covered by NEW: NEW has no used station on one side of it%s, so whether it changed is not known",
			signed(pmText(*sp.OldStep, *sp.OldStepSigma, 3)), sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.OldGroups, "-"), span(false))
	case "not-covered-by-old":
		return fmt.Sprintf("the change of current %s A at chainage %.1f-%.1f m (NEW %s) is not covered by OLD: OLD has no used station on one side of it%s, so whether it is new is not known",
			signed(pmText(*sp.NewStep, *sp.NewStepSigma, 3)), sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.NewGroups, "-"), span(true))
	}
	return ""
}

// partialCaution is the caution a comparison of surveys that walked
// different stretches of a conductor carries.
func partialCaution(cc *ConductorComparison) string {
	p := cc.Partial
	who := "the route"
	if cc.Old != 1 {
		who = fmt.Sprintf("conductor %d", cc.Old)
	}
	msg := fmt.Sprintf("The two surveys walked different stretches of %s (OLD %.1f-%.1f m, NEW %.1f-%.1f m, on OLD's chainage) and are compared on %.1f-%.1f m only: a change of current or cover outside that stretch is not seen, and a step of current there is not covered, neither gone nor new.",
		who, p.OldFrom, p.OldTo, p.NewFrom, p.NewTo, p.BothFrom, p.BothTo)
	if p.LevelDoubt != "" {
		msg += fmt.Sprintf(" A ratio NEW/OLD other than 1 there may be %s rather than a changed supply: do not re-set a rectifier or transmitter on it without checking the supply itself.", p.LevelDoubt)
	}
	return msg
}

// levelCause words what changes every current by one factor: for DC a
// rectifier or transmitter; for AC at a mains frequency (50 or 60 Hz and
// their harmonics) the load on the line; for another AC tone the
// transmitter.
func (c *Comparison) levelCause() string {
	if c.Mode != SignalAC {
		return "a rectifier or transmitter set differently"
	}
	for _, f0 := range []float64{50, 60} {
		if h := c.FrequencyHz / f0; h >= 0.5 && math.Abs(h-math.Round(h)) < 0.01 {
			return "the load on the line changed"
		}
	}
	return "a transmitter set differently"
}

// otherSide returns the ratio on the side of r's step the current flows
// to, and otherSideSigma its sigma.
func otherSide(r *RatioProfile) float64 {
	if r.Step.Downstream == "before" {
		return r.Step.Before
	}
	return r.Step.After
}

func otherSideSigma(r *RatioProfile) float64 {
	if r.Step.Downstream == "before" {
		return r.Step.BeforeSigma
	}
	return r.Step.AfterSigma
}

// pmText formats v ± sigma for the terminal and the list of changes:
// sigma to two significant digits and v to the same decimals, at least
// prec (at most 12), as results.csv keeps a small sigma from being
// rounded to 0; a sigma that is not positive is printed with prec.
func pmText(v, sigma float64, prec int) string {
	if sigma > 0 && !math.IsInf(sigma, 0) && !math.IsNaN(sigma) {
		prec = max(prec, min(12, 1-int(math.Floor(math.Log10(sigma)))))
	}
	return fix(v, prec) + " ± " + fix(sigma, prec)
}

// signed puts a + before a text that does not start with a sign.
func signed(t string) string {
	if strings.HasPrefix(t, "-") {
		return t
	}
	return "+" + t
}

// WriteComparisonJSON writes c as indented JSON.
func WriteComparisonJSON(w io.Writer, c *Comparison) error {
	b, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// comparisonCSVHeader is the header of WriteComparisonCSV.
var comparisonCSVHeader = []string{"conductor", "old_key", "new_key", "chainage_m", "new_chainage_m", "separation_m",
	"old_current_a", "old_current_sigma_a", "new_current_a", "new_current_sigma_a",
	"current_change_a", "current_change_sigma_a", "current_z", "ratio", "ratio_sigma",
	"current_change_beyond_level_a", "current_change_beyond_level_sigma_a", "current_flag",
	"depth_quantity", "old_cover_m", "old_cover_sigma_m", "new_cover_m", "new_cover_sigma_m",
	"cover_change_m", "cover_change_sigma_m", "cover_z", "cover_flag", "now_under_min_cover"}

// WriteComparisonCSV writes one row per matched station. Like results.csv
// it is a data table and holds no cautions: read it with the terminal
// output or the JSON, which carry them.
func WriteComparisonCSV(w io.Writer, c *Comparison) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(comparisonCSVHeader); err != nil {
		return err
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }
	opt := func(v *float64) string {
		if v == nil {
			return ""
		}
		return num(*v)
	}
	for _, cc := range c.Conductors {
		for _, s := range cc.Stations {
			row := []string{strconv.Itoa(cc.Old), textCell(s.OldKey), textCell(s.NewKey), num(s.Chainage), num(s.NewChainage), num(s.Separation),
				num(s.OldCurrent), num(s.OldCurrentSig), num(s.NewCurrent), num(s.NewCurrentSig),
				num(s.CurrentChange), num(s.CurrentSigma), num(s.CurrentZ), opt(s.Ratio), opt(s.RatioSigma),
				opt(s.BeyondLevel), opt(s.BeyondLevelSigma), strconv.FormatBool(s.CurrentFlag),
				c.DepthQuantity, opt(s.OldCover), opt(s.OldCoverSig), opt(s.NewCover), opt(s.NewCoverSig),
				opt(s.CoverChange), opt(s.CoverSigma), opt(s.CoverZ), strconv.FormatBool(s.CoverFlag), strconv.FormatBool(s.NowShallow)}
			if err := cw.Write(row); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteComparisonText writes the comparison for a terminal: the inputs,
// each conductor's table of matched stations (flags marked *), the ratio
// profile, the steps, the list of changes and the cautions, first and
// last.
func WriteComparisonText(w io.Writer, c *Comparison) error {
	var b strings.Builder
	fmt.Fprintf(&b, "Comparing %s (OLD) with %s (NEW): %s, %d stations matched.\n", c.Old, c.New, modeName(c.Mode), c.Matched)
	fmt.Fprintf(&b, "Caution: %s\n", CautionShort)
	for _, n := range c.Notes {
		fmt.Fprintf(&b, "note: %s\n", n)
	}
	fmt.Fprintf(&b, "A change is flagged (*) when beyond %g sigma (both surveys' sigmas in quadrature) and beyond %g m of %s or the conductor's current threshold.\n",
		c.Sigmas, c.MinCoverChangeM, orDepth(c.DepthQuantity))
	for _, cc := range c.Conductors {
		fmt.Fprintf(&b, "\nConductor %d (NEW's %d), stations matched by %s; current threshold %.4g A.\n", cc.Old, cc.New, cc.MatchedBy, cc.MinCurrentChangeA)
		head := "current change A"
		if cc.Ratio != nil && cc.Ratio.LevelApplied {
			head = "beyond level, A"
		}
		covHead := orDepth(c.DepthQuantity) + " change m (z)"
		if o := cc.DepthOffset; o != nil && o.Applied {
			covHead = orDepth(c.DepthQuantity) + " beyond offset m (z)"
		}
		fmt.Fprintf(&b, "%-10s %-10s %9s %22s %9s %18s %s\n", "OLD", "NEW", "chainage", head, "z", "ratio NEW/OLD", covHead)
		for _, s := range cc.Stations {
			d, sd, z := s.CurrentChange, s.CurrentSigma, s.CurrentZ
			if s.BeyondLevel != nil {
				d, sd, z = *s.BeyondLevel, *s.BeyondLevelSigma, *s.BeyondLevelZ
			}
			mark := " "
			if s.CurrentFlag {
				mark = "*"
			}
			ratio := "-"
			if s.Ratio != nil {
				ratio = pmText(*s.Ratio, *s.RatioSigma, 3)
			}
			cov := "-"
			if s.CoverChange != nil {
				cm := " "
				if s.CoverFlag {
					cm = "*"
				}
				d, sd, z := *s.CoverChange, *s.CoverSigma, *s.CoverZ
				if s.CoverBeyondOffset != nil {
					d, sd, z = *s.CoverBeyondOffset, *s.CoverBeyondOffsetSigma, *s.CoverBeyondOffsetZ
				}
				cov = fmt.Sprintf("%s (%.1f)%s", signed(pmText(d, sd, 3)), z, cm)
				if s.NowShallow {
					cov += " now shallow"
				}
			}
			if s.PoorFit != "" {
				cov += "  poor fit (" + s.PoorFit + ")"
			}
			fmt.Fprintf(&b, "%-10s %-10s %9.1f %+11.4g ± %-8.2g%s %8.1f %18s %s\n", s.OldKey, s.NewKey, s.Chainage, d, sd, mark, z, ratio, cov)
		}
		if r := cc.Ratio; r != nil {
			word := "constant"
			switch {
			case r.Step == nil && !r.Constant:
				word = "not constant: the stations scatter about one level beyond their sigmas, and no single step explains it"
			case !r.Constant:
				word = "not constant"
			}
			stepNote := ""
			if r.Step != nil && r.Step.BelowThreshold {
				stepNote = fmt.Sprintf(" (%.1f sigma, under the current threshold)", r.Step.Z)
			}
			switch r.LevelFrom {
			case "upstream":
				fmt.Fprintf(&b, "Ratio NEW/OLD over %d stations (chi-square %.1f for %d degrees of freedom), %s: steps from %s to %s between %s and %s%s; the supply's factor is %s, on the side the current flows from", r.Stations, r.Chi2, r.Dof, word,
					pmText(r.Step.Before, r.Step.BeforeSigma, 3), pmText(r.Step.After, r.Step.AfterSigma, 3), r.Step.FromKey, r.Step.ToKey, stepNote, pmText(r.Level, r.LevelSigma, 3))
			case "unknown":
				fmt.Fprintf(&b, "Ratio NEW/OLD over %d stations (chi-square %.1f for %d degrees of freedom), %s: steps from %s to %s between %s and %s%s; which side is the supply's factor depends on the end the current is fed from", r.Stations, r.Chi2, r.Dof, word,
					pmText(r.Step.Before, r.Step.BeforeSigma, 3), pmText(r.Step.After, r.Step.AfterSigma, 3), r.Step.FromKey, r.Step.ToKey, stepNote)
			default:
				fmt.Fprintf(&b, "Ratio NEW/OLD: %s over %d stations (chi-square %.1f for %d degrees of freedom), %s", pmText(r.Level, r.LevelSigma, 3), r.Stations, r.Chi2, r.Dof, word)
			}
			switch {
			case r.SideLevels && r.LevelApplied:
				b.WriteString("; station changes are NEW less each side's ratio × OLD")
			case r.LevelApplied:
				fmt.Fprintf(&b, "; the level changed, so station changes are NEW - %s × OLD", fix(r.Level, 4))
			}
			b.WriteString(".\n")
		}
		if o := cc.DepthOffset; o != nil && o.Applied {
			fmt.Fprintf(&b, "Common change of %s: %s m at %d of %d stations; the changes above are beyond it.\n", orDepth(c.DepthQuantity), signed(pmText(o.Offset, o.Sigma, 3)), o.Stations, o.Of)
		}
		if len(cc.Between) > 0 {
			fmt.Fprintf(&b, "%d of NEW's stations lie between OLD's and were compared with OLD interpolated along the route.\n", len(cc.Between))
		}
	}
	b.WriteString("\nChanges of current (steps):")
	if len(c.Steps) == 0 {
		b.WriteString(" none in either survey.\n")
	} else {
		b.WriteString("\n")
		for _, sp := range c.Steps {
			o, n := "no step", "no step"
			if sp.OldStep != nil {
				o = signed(pmText(*sp.OldStep, *sp.OldStepSigma, 3)) + " A"
			}
			if sp.NewStep != nil {
				n = signed(pmText(*sp.NewStep, *sp.NewStepSigma, 3)) + " A"
			}
			status := sp.Status
			if sp.BelowThreshold {
				status += fmt.Sprintf(" by %s A (%.1f sigma), under the current threshold", pmText(math.Abs(*sp.Change), *sp.ChangeSigma, 3), math.Abs(*sp.Z))
			}
			switch sp.Status {
			case "not-covered-by-new":
				n, status = "not walked on both sides", "not covered by NEW"
			case "not-covered-by-old":
				o, status = "not walked on both sides", "not covered by OLD"
			}
			fmt.Fprintf(&b, "  conductor %d, chainage %.1f-%.1f m: OLD %s, NEW %s: %s\n", sp.Conductor, sp.ChainageFrom, sp.ChainageTo, o, n, status)
		}
	}
	if len(c.Changes) == 0 {
		b.WriteString("\nNo change beyond the thresholds.\n")
	} else {
		fmt.Fprintf(&b, "\nWhat changed (%d):\n", len(c.Changes))
		for i, ch := range c.Changes {
			fmt.Fprintf(&b, "%3d. [%s] %s\n", i+1, ch.Kind, ch.Message)
		}
	}
	b.WriteString("\nCautions:\n")
	for _, s := range c.Cautions {
		fmt.Fprintf(&b, "  - %s\n", s)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func orDepth(q string) string {
	if q == "" {
		return "depth"
	}
	return q
}
