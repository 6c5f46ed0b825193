package route

import (
	"fmt"
	"math"
)

// Kind says what a Finding is about.
type Kind string

// The kinds of finding Build reports.
const (
	// KindCurrentStep is a change in current between two stations larger
	// than its uncertainty: current leaving (or joining) the conductor.
	KindCurrentStep Kind = "current-step"
	// KindCurrentChange is a change in current larger than its
	// uncertainty but smaller than Settings.MinStep of the current: at that
	// size more likely the straight-line model's error near a change of
	// depth or a bend than current leaving or joining. Information only.
	KindCurrentChange Kind = "current-change"
	// KindCurrentAnomaly is a station whose current departs from both
	// neighbours alike: a local disturbance rather than a step.
	KindCurrentAnomaly Kind = "current-anomaly"
	// KindShallowCover is cover shallower than Settings.MinCover.
	KindShallowCover Kind = "shallow-cover"
	// KindPoorFit is a station whose fit failed, is poor or is ambiguous.
	KindPoorFit Kind = "poor-fit"
	// KindDipole is a station whose field is better explained by a
	// magnetised object than by a current.
	KindDipole Kind = "dipole-anomaly"
	// KindSurfaceDisturbance is a station whose field holds a local
	// disturbance that a point dipole explains, placed above the ground:
	// not a buried item but something on the surface or at the sensor.
	// The station's own fit stays in the profile.
	KindSurfaceDisturbance Kind = "surface-disturbance"
	// KindWeakSource is a weak, steep further line source of a station's
	// fit: more likely the fit absorbing a bend or a change of depth than
	// a conductor, but shallow if it is one.
	KindWeakSource Kind = "weak-source"
	// KindWalksDiffer is repeats of stations (a route walked again) whose
	// currents disagree beyond their sigmas: the current changed between
	// the walks, a step's size changed between them (the walks agreeing
	// on one side of it; a warning), or the current varied during them
	// (walks.go).
	KindWalksDiffer Kind = "walks-differ"
	// KindWalksDepthDiffer is repeats of stations whose depths differ
	// between the walks beyond 3 sigmas of their mean difference: one
	// walk's sensors stood at another height than the one given (a
	// caution, walks.go walksDepthDiffer).
	KindWalksDepthDiffer Kind = "walks-depth-differ"
	// KindUnsearched is a stretch of the route inside which two or more
	// stations in a row give no usable current: no step can be found
	// there (unsearched.go).
	KindUnsearched Kind = "unsearched"
	// KindAttenuation is the steady fall of current along the route,
	// fitted as an exponential (attenuation.go). Information only.
	KindAttenuation Kind = "attenuation"
	// KindBendNear is a station whose fitted dip departs from the slope
	// of the depths of the stations either side: the conductor bends
	// near it, and the straight line fitted there is tilted, its depth
	// and current biased; its sigmas are widened (bend.go). A caution.
	KindBendNear Kind = "bend-near"
)

// Severity ranks findings for a crew.
type Severity string

// Severities, from most to least pressing.
const (
	// SeverityWarning: act on it (confirmed shallow cover, a clear step).
	SeverityWarning Severity = "warning"
	// SeverityCaution: check it (possible shallow cover, a poor fit).
	SeverityCaution Severity = "caution"
	// SeverityInfo: worth knowing (a dipole-like object).
	SeverityInfo Severity = "info"
)

// rank orders severities for sorting, most pressing first.
func (s Severity) rank() int {
	switch s {
	case SeverityWarning:
		return 0
	case SeverityCaution:
		return 1
	}
	return 2
}

// Value is one quantity behind a finding, with its one-sigma uncertainty
// (zero when not known).
type Value struct {
	Name  string
	Value float64
	Sigma float64
	Unit  string
}

// String formats v as "name = value ± sigma unit", the sigma to two
// significant digits and the value to the same decimal place (PlusMinus).
func (v Value) String() string {
	if v.Sigma > 0 && !math.IsInf(v.Sigma, 0) {
		return fmt.Sprintf("%s = %s %s", v.Name, PlusMinus(v.Value, v.Sigma), v.Unit)
	}
	return fmt.Sprintf("%s = %.3g %s", v.Name, v.Value, v.Unit)
}

// Finding is something a crew should know or act on, located along the
// route.
type Finding struct {
	Kind     Kind
	Severity Severity
	// From and To are the chainage range, m (equal for a single station).
	// A step lies between the two stations at From and To. A shallow-cover
	// stretch may reach from From to To: they are the nearest usable
	// stations either side with enough cover (the run's own end station
	// where a side has none), and Keys are the stations that fail.
	From, To float64
	// Position is the best location, m ENU (the midpoint of a step's
	// bracket).
	Position [3]float64
	// Keys are the groups involved, in route order.
	Keys []string
	// Repeats gives, for a station of Keys combined with its repeats
	// (a route walked again: "T11 with day2.csv:T11", repeats.go), the
	// keys of those repeats, by the station's key; nil when none. The
	// steps name and use them.
	Repeats map[string][]string
	// Message is one plain sentence for the report.
	Message string
	// Values are the numbers behind the finding.
	Values []Value
	// Reasons are the separate reasons of a poor-fit caution, each a
	// clause of Message (the fit's own problem first); nil for other
	// findings.
	Reasons []string
}
