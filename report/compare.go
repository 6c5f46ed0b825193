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
}

// StationChange is one station matched in both surveys. Sigmas are one
// standard deviation; a change's is both surveys' in quadrature.
type StationChange struct {
	OldKey        string  `json:"old_key"`
	NewKey        string  `json:"new_key"`
	Chainage      float64 `json:"chainage_m"`
	NewChainage   float64 `json:"new_chainage_m"`
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
	CoverFlag        bool     `json:"cover_flag"`
	// NowShallow is true when NEW's cover is under the minimum cover and
	// OLD's was not.
	NowShallow bool `json:"now_under_min_cover,omitempty"`
}

// RatioProfile is the test of NEW/OLD current along a conductor for one
// factor: Level is the weighted mean ratio of the stations that agree
// with the median ratio, LevelApplied whether it differs from 1 beyond
// both thresholds (the station changes are then measured beyond it), and
// Step the most significant single step in the ratio, when it is beyond
// both thresholds: a loss that changed between the surveys.
type RatioProfile struct {
	Level        float64    `json:"level"`
	LevelSigma   float64    `json:"level_sigma"`
	LevelApplied bool       `json:"level_applied"`
	Stations     int        `json:"stations"`
	Chi2         float64    `json:"chi2"`
	Dof          int        `json:"dof"`
	Constant     bool       `json:"constant"`
	Step         *RatioStep `json:"step,omitempty"`
}

// RatioStep is a step in the ratio profile between two successive matched
// stations (OLD's keys and chainages).
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
}

// StepComparison compares the current-step findings of both surveys on
// one conductor (OLD's numbering). Status is new, gone, grown, shrunk or
// unchanged; steps are signed (a loss is negative), NEW's chainages taken
// onto OLD's.
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
}

// Change is one thing that changed, in words, for the list a crew reads:
// Kind is current-change, cover-change, ratio-step, level-change,
// step-new, step-gone, step-grown, step-shrunk, station-unmatched or
// conductor-unmatched.
type Change struct {
	Kind      string   `json:"kind"`
	Conductor int      `json:"conductor"`
	Chainage  *float64 `json:"chainage_m,omitempty"`
	Groups    []string `json:"groups,omitempty"`
	Message   string   `json:"message"`
}

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
		Old: oldName, New: newName, Mode: old.Signal.Mode,
		MinCurrentChangeA: s.MinCurrentChange, MinCoverChangeM: s.MinCoverChange,
		Sigmas: s.Sigmas, ToleranceM: s.Tolerance,
		Conductors: []ConductorComparison{}, Steps: []StepComparison{}, Changes: []Change{},
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
			c.Changes = append(c.Changes, Change{Kind: "conductor-unmatched", Conductor: 0,
				Message: fmt.Sprintf("conductor %d of NEW (%.1f m from conductor 1) has no partner in OLD", nt.Number, nt.Offset)})
		}
	}
	for k, p := range pairs {
		cc, mapCh := compareRoute(p.o, p.n, toOld, p.byPla, old.Signal.Mode == SignalDC, c, s)
		cc.Old, cc.New = p.oi, p.ni
		if k == 0 && len(cc.Stations) == 0 {
			return nil, refuse("no station of conductor 1 in NEW lies within %g m of one in OLD, along the route or in plan: not the same stretch of route, or not in one frame", s.Tolerance)
		}
		c.Matched += len(cc.Stations)
		c.Conductors = append(c.Conductors, cc)
		oc, nc := p.oi, p.ni
		if oc == 1 {
			oc, nc = 0, 0
		}
		c.compareSteps(old, newDoc, oc, nc, p.oi, mapCh, cc, s)
	}
	c.listChanges()
	return c, nil
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
			os = append(os, cstation{&o.Stations[i], o.Stations[i].Point})
		}
	}
	for i := range n.Stations {
		if n.Stations[i].Used {
			ns = append(ns, cstation{&n.Stations[i], toOld(n.Stations[i].Point)})
		}
	}
	plan := func(a, b cstation) float64 { return math.Hypot(a.point[0]-b.point[0], a.point[1]-b.point[1]) }
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
	cc := ConductorComparison{MatchedBy: "plan", Stations: []StationChange{}}
	var m [][2]int
	if !planOnly {
		m = match(func(a, b cstation) float64 { return math.Abs(a.st.Chainage - b.st.Chainage) })
		var sep []float64
		for _, p := range m {
			sep = append(sep, plan(os[p[0]], ns[p[1]]))
		}
		if len(m) > 0 && cmpMedian(sep) <= s.Tolerance {
			cc.MatchedBy = "chainage"
		} else {
			m = nil
		}
	}
	if m == nil {
		m = match(plan)
		if !planOnly && len(m) > 0 {
			c.Notes = append(c.Notes, "conductor 1's stations were matched in plan: the two routes' chainages do not start at one place (or no station lies within the tolerance along them)")
		}
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
			Separation: plan(a, b),
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
		var oc, ocs, nc, ncs *float64
		switch c.DepthQuantity {
		case "cover":
			oc, ocs, nc, ncs = a.st.Cover, a.st.CoverSigma, b.st.Cover, b.st.CoverSigma
		case "depth":
			oc, ocs, nc, ncs = &a.st.Depth, &a.st.DepthSigma, &b.st.Depth, &b.st.DepthSigma
		}
		if oc != nil && nc != nil && ocs != nil && ncs != nil {
			d := *nc - *oc
			sd := math.Hypot(*ocs, *ncs)
			z := zOf(d, sd)
			sc.OldCover, sc.OldCoverSig = ptr(*oc), ptr(*ocs)
			sc.NewCover, sc.NewCoverSig = ptr(*nc), ptr(*ncs)
			sc.CoverChange, sc.CoverSigma, sc.CoverZ = &d, &sd, &z
			sc.CoverFlag = math.Abs(z) > s.Sigmas && math.Abs(d) >= s.MinCoverChange
			if c.DepthQuantity == "cover" && c.MinCoverM != nil && *nc < *c.MinCoverM && *oc >= *c.MinCoverM {
				sc.NowShallow = true
			}
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
	cc.Ratio = ratioProfile(cc.Stations, medI, minI, s)
	level := 1.0
	levelSigma := 0.0
	if cc.Ratio != nil && cc.Ratio.LevelApplied {
		level, levelSigma = cc.Ratio.Level, cc.Ratio.LevelSigma
	}
	for i := range cc.Stations {
		sc := &cc.Stations[i]
		d, sd, z := sc.CurrentChange, sc.CurrentSigma, sc.CurrentZ
		if level != 1 {
			d = sc.NewCurrent - level*sc.OldCurrent
			sd = math.Sqrt(sq(sc.NewCurrentSig) + sq(level*sc.OldCurrentSig) + sq(sc.OldCurrent*levelSigma))
			z = zOf(d, sd)
			sc.BeyondLevel, sc.BeyondLevelSigma, sc.BeyondLevelZ = ptr(d), ptr(sd), ptr(z)
		}
		sc.CurrentFlag = math.Abs(z) > s.Sigmas && math.Abs(d) >= minI
	}
	// NEW's chainage to OLD's: linear between matched stations, by the
	// nearest pair's offset beyond them.
	var cps []chainPair
	for _, sc := range cc.Stations {
		cps = append(cps, chainPair{sc.NewChainage, sc.Chainage})
	}
	sort.Slice(cps, func(a, b int) bool { return cps[a].n < cps[b].n })
	mapCh := func(x float64) float64 {
		if len(cps) == 0 {
			return x
		}
		if len(cps) == 1 || x <= cps[0].n {
			return cps[0].o + (x-cps[0].n)*dirOf(cps)
		}
		for i := 1; i < len(cps); i++ {
			if x <= cps[i].n {
				a, b := cps[i-1], cps[i]
				if b.n == a.n {
					return a.o
				}
				return a.o + (x-a.n)*(b.o-a.o)/(b.n-a.n)
			}
		}
		l := cps[len(cps)-1]
		return l.o + (x-l.n)*dirOf(cps)
	}
	return cc, mapCh
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

// ratioProfile tests the ratio NEW/OLD along the stations for one level
// and a step (see RatioProfile). medI is OLD's median |current|, minI the
// practical threshold of current.
func ratioProfile(st []StationChange, medI, minI float64, s CompareSettings) *RatioProfile {
	var idx []int
	var r, rs []float64
	for i, x := range st {
		if x.Ratio != nil && *x.RatioSigma > 0 {
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
	bestZ := 0.0
	for k := 1; k < len(r); k++ {
		a, as, ac := weightedMean(r[:k], rs[:k])
		b, bs, bc := weightedMean(r[k:], rs[k:])
		// Each side's sigma widened by the scatter of both sides about
		// their own levels.
		dof := len(r) - 2
		as, bs = inflated(as, ac+bc, dof), inflated(bs, ac+bc, dof)
		z := math.Abs(b-a) / math.Hypot(as, bs)
		if z > bestZ {
			bestZ = z
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
	if p.Step != nil && !(p.Step.Z > s.Sigmas && math.Abs(p.Step.CurrentA) >= minI) {
		p.Step = nil
	}
	p.Constant = p.Step == nil
	return p
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
	level, levelSigma := 1.0, 0.0
	if cc.Ratio != nil && cc.Ratio.LevelApplied {
		level, levelSigma = cc.Ratio.Level, cc.Ratio.LevelSigma
	}
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
		d := math.Abs(b.step) - level*math.Abs(a.step)
		sd := math.Sqrt(sq(b.sg) + sq(level*a.sg) + sq(a.step*levelSigma))
		z := zOf(d, sd)
		sc.Change, sc.ChangeSigma, sc.Z = ptr(d), ptr(sd), ptr(z)
		switch {
		case math.Abs(z) > s.Sigmas && math.Abs(d) >= cc.MinCurrentChangeA && d > 0:
			sc.Status = "grown"
		case math.Abs(z) > s.Sigmas && math.Abs(d) >= cc.MinCurrentChangeA:
			sc.Status = "shrunk"
		default:
			sc.Status = "unchanged"
		}
		c.Steps = append(c.Steps, sc)
	}
	for j, b := range ns {
		if usedN[j] {
			continue
		}
		c.Steps = append(c.Steps, StepComparison{Conductor: number, Status: "new", ChainageFrom: b.from, ChainageTo: b.to,
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
// level, a step of the ratio, the steps new, gone, grown or shrunk, the
// stations whose current or cover changed and those without a partner.
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
		if r := cc.Ratio; r != nil && r.LevelApplied {
			c.Changes = append(c.Changes, Change{Kind: "level-change", Conductor: cc.Old,
				Message: fmt.Sprintf("%sthe current changed by one factor along the route, NEW/OLD %.4f ± %.4f (a transmitter or rectifier set differently): station changes below are beyond that factor", who, r.Level, r.LevelSigma)})
		}
		if r := cc.Ratio; r != nil && r.Step != nil {
			st := r.Step
			c.Changes = append(c.Changes, Change{Kind: "ratio-step", Conductor: cc.Old, Chainage: ptr((st.ChainageFrom + st.ChainageTo) / 2),
				Groups: []string{st.FromKey, st.ToKey},
				Message: fmt.Sprintf("%sthe ratio NEW/OLD steps from %.4f ± %.4f to %.4f ± %.4f between %s and %s (chainage %.1f-%.1f m, %.1f sigma, about %+.3g A): a loss that changed there",
					who, st.Before, st.BeforeSigma, st.After, st.AfterSigma, st.FromKey, st.ToKey, st.ChainageFrom, st.ChainageTo, st.Z, st.CurrentA)})
		}
		for _, sp := range c.Steps {
			if sp.Conductor != cc.Old || sp.Status == "unchanged" {
				continue
			}
			mid := (sp.ChainageFrom + sp.ChainageTo) / 2
			var msg string
			switch sp.Status {
			case "new":
				msg = fmt.Sprintf("a new change of current %+.4g ± %.2g A at chainage %.1f-%.1f m (NEW %s), not found in OLD", *sp.NewStep, *sp.NewStepSigma, sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.NewGroups, "-"))
			case "gone":
				msg = fmt.Sprintf("the change of current %+.4g ± %.2g A at chainage %.1f-%.1f m (OLD %s) is not found in NEW", *sp.OldStep, *sp.OldStepSigma, sp.ChainageFrom, sp.ChainageTo, strings.Join(sp.OldGroups, "-"))
			default:
				msg = fmt.Sprintf("the change of current at chainage %.1f-%.1f m has %s: %+.4g ± %.2g A in OLD, %+.4g ± %.2g A in NEW, its size %+.4g ± %.2g A (%.1f sigma)",
					sp.ChainageFrom, sp.ChainageTo, sp.Status, *sp.OldStep, *sp.OldStepSigma, *sp.NewStep, *sp.NewStepSigma, *sp.Change, *sp.ChangeSigma, math.Abs(*sp.Z))
			}
			c.Changes = append(c.Changes, Change{Kind: "step-" + sp.Status, Conductor: cc.Old, Chainage: &mid,
				Groups: append(append([]string(nil), sp.OldGroups...), sp.NewGroups...), Message: who + msg})
		}
		for _, sc := range cc.Stations {
			ch := sc.Chainage
			if sc.CurrentFlag {
				d, sd, z, how := sc.CurrentChange, sc.CurrentSigma, sc.CurrentZ, ""
				if sc.BeyondLevel != nil {
					d, sd, z, how = *sc.BeyondLevel, *sc.BeyondLevelSigma, *sc.BeyondLevelZ, " beyond the route's factor"
				}
				c.Changes = append(c.Changes, Change{Kind: "current-change", Conductor: cc.Old, Chainage: &ch, Groups: []string{sc.OldKey, sc.NewKey},
					Message: fmt.Sprintf("%s%s at chainage %.1f m: current %.4g ± %.2g A, was %.4g ± %.2g A: changed %+.4g ± %.2g A%s (%.1f sigma)",
						who, sc.OldKey, ch, sc.NewCurrent, sc.NewCurrentSig, sc.OldCurrent, sc.OldCurrentSig, d, sd, how, math.Abs(z))})
			}
			if sc.CoverFlag {
				extra := ""
				if sc.NowShallow {
					extra = fmt.Sprintf(", now under the minimum cover of %.2f m", *c.MinCoverM)
				}
				c.Changes = append(c.Changes, Change{Kind: "cover-change", Conductor: cc.Old, Chainage: &ch, Groups: []string{sc.OldKey, sc.NewKey},
					Message: fmt.Sprintf("%s%s at chainage %.1f m: %s %.3f ± %.3f m, was %.3f ± %.3f m: changed %+.3f ± %.3f m (%.1f sigma)%s",
						who, sc.OldKey, ch, q, *sc.NewCover, *sc.NewCoverSig, *sc.OldCover, *sc.OldCoverSig, *sc.CoverChange, *sc.CoverSigma, math.Abs(*sc.CoverZ), extra)})
			}
		}
		if len(cc.OldOnly) > 0 {
			c.Changes = append(c.Changes, Change{Kind: "station-unmatched", Conductor: cc.Old, Groups: cc.OldOnly,
				Message: fmt.Sprintf("%sOLD's stations %s have no partner among NEW's used stations within %g m (none was surveyed there, or its fit was left out of the route)", who, strings.Join(cc.OldOnly, ", "), c.ToleranceM)})
		}
		if len(cc.NewOnly) > 0 {
			c.Changes = append(c.Changes, Change{Kind: "station-unmatched", Conductor: cc.Old, Groups: cc.NewOnly,
				Message: fmt.Sprintf("%sNEW's stations %s have no partner among OLD's used stations within %g m (none was surveyed there, or its fit was left out of the route)", who, strings.Join(cc.NewOnly, ", "), c.ToleranceM)})
		}
	}
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
		fmt.Fprintf(&b, "%-10s %-10s %9s %22s %9s %18s %s\n", "OLD", "NEW", "chainage", head, "z", "ratio NEW/OLD", orDepth(c.DepthQuantity)+" change m (z)")
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
				ratio = fmt.Sprintf("%.4f ± %.4f", *s.Ratio, *s.RatioSigma)
			}
			cov := "-"
			if s.CoverChange != nil {
				cm := " "
				if s.CoverFlag {
					cm = "*"
				}
				cov = fmt.Sprintf("%+.3f ± %.3f (%.1f)%s", *s.CoverChange, *s.CoverSigma, *s.CoverZ, cm)
				if s.NowShallow {
					cov += " now shallow"
				}
			}
			fmt.Fprintf(&b, "%-10s %-10s %9.1f %+11.4g ± %-8.2g%s %8.1f %18s %s\n", s.OldKey, s.NewKey, s.Chainage, d, sd, mark, z, ratio, cov)
		}
		if r := cc.Ratio; r != nil {
			word := "constant"
			if !r.Constant {
				word = "not constant"
			}
			fmt.Fprintf(&b, "Ratio NEW/OLD: %.4f ± %.4f over %d stations (chi-square %.1f for %d degrees of freedom), %s", r.Level, r.LevelSigma, r.Stations, r.Chi2, r.Dof, word)
			if r.Step != nil {
				fmt.Fprintf(&b, ": steps from %.4f to %.4f between %s and %s", r.Step.Before, r.Step.After, r.Step.FromKey, r.Step.ToKey)
			}
			if r.LevelApplied {
				fmt.Fprintf(&b, "; the level changed, so station changes are NEW - %.4f × OLD", r.Level)
			}
			b.WriteString(".\n")
		}
	}
	fmt.Fprintf(&b, "\nChanges of current (steps): ")
	if len(c.Steps) == 0 {
		b.WriteString("none in either survey.\n")
	} else {
		b.WriteString("\n")
		for _, sp := range c.Steps {
			o, n := "-", "-"
			if sp.OldStep != nil {
				o = fmt.Sprintf("%+.4g ± %.2g", *sp.OldStep, *sp.OldStepSigma)
			}
			if sp.NewStep != nil {
				n = fmt.Sprintf("%+.4g ± %.2g", *sp.NewStep, *sp.NewStepSigma)
			}
			fmt.Fprintf(&b, "  conductor %d, chainage %.1f-%.1f m: OLD %s A, NEW %s A: %s\n", sp.Conductor, sp.ChainageFrom, sp.ChainageTo, o, n, sp.Status)
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
