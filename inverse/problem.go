package inverse

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"
)

// Problem describes what to fit: field readings at known positions. Give either Fields
// (DC) or Phasors (AC), not both.
type Problem struct {
	// Points are the sensor positions in metres, local east, north, up.
	Points [][3]float64
	// Fields are DC readings in nanotesla (east, north, up), one per point.
	Fields [][3]float64
	// Phasors are AC readings, complex RMS nanotesla per axis referenced to a common
	// time origin (as produced by demodulation), one per point.
	Phasors [][3]complex128
	// Sigma is the one-sigma reading noise per axis in nT; for Phasors, per real and
	// per imaginary part of each axis's phasor (so a phasor's modulus scatters by
	// sqrt(2) Sigma). Zero means unknown: it is estimated from the residuals
	// (s^2 = RSS/DOF, RSS over every real number).
	Sigma float64
	// Travel, when not nil, gives each reading's half-travel in metres (ENU): reading i
	// is the mean of the field along the straight segment Points[i] - Travel[i] ..
	// Points[i] + Travel[i] (a demodulated AC window walked at a steady pace, see
	// calibrate.Window.Travel), not the field at Points[i]. Every model prediction and
	// derivative is then that path average by three-point Gauss-Legendre quadrature
	// (weights 5/18, 8/18, 5/18 at -sqrt(3/5) Travel, 0, +sqrt(3/5) Travel): exact for
	// a field of degree five along the path, with a relative error of about
	// 3.6e-4 (L/h)^6 over a line at distance h for a travel L = 2 |Travel| (2.3e-8 at
	// L/h = 0.2, where Simpson's rule at the same cost would leave 1.3e-5; see
	// the package documentation). Nil means point readings.
	Travel [][3]float64
	// Scale, when not nil, multiplies the conductors' fields at each reading (one
	// positive factor per reading; lines, segments and polylines, not dipoles,
	// whose magnetised objects do not follow the current, nor the background):
	// reading i is modelled as background + Scale[i] Phi_i(theta) c. The field of conductors is
	// linear in their current, so a current that varies in time by a known ratio
	// r(t) (a current record, see the package documentation) is r(t_i) here, and
	// the fitted strengths are those at r = 1. Nil means 1 at every reading.
	Scale []float64
	// Times, when not nil, gives each DC reading's time in seconds (any origin;
	// NaN for none). Along a single traverse the automatic count then checks
	// for a current changing in time while it was walked (CurrentRampNote).
	Times []float64
	// PositionSigmas, when not nil, gives each reading's own one-sigma
	// position uncertainty, m: [0] across the plan (east and north, each),
	// [1] in height, as a positioned survey logs it fix by fix (a
	// receiver's horizontal and vertical accuracy, 0.02 m with RTK fixed,
	// 0.5 m float; ingest's sigma_plan and sigma_up columns). It enters
	// each reading's variance as Settings.PositionSigmaPlan and
	// PositionSigmaUp do (positionWeights), reading by reading, and like
	// them as an upper bound: the residuals may shrink all readings'
	// position variances by one factor per axis (positionScale), the
	// ratio between readings kept. With the settings' sigmas given too,
	// each reading takes the larger of its own and the settings' (the
	// settings a floor). NaN (not logged for that reading) takes the
	// settings' value, 0 without them.
	PositionSigmas [][2]float64
}

// Subset returns a problem holding the readings i of p for which keep(i)
// is true, in their order, with p's Sigma: points, fields or phasors and
// travels and scales alike (the per-reading slices p gives). The readings' arrays are
// copied; p is not changed.
func (p *Problem) Subset(keep func(i int) bool) *Problem {
	q := &Problem{Sigma: p.Sigma}
	for i := range p.Points {
		if !keep(i) {
			continue
		}
		q.Points = append(q.Points, p.Points[i])
		if p.Fields != nil {
			q.Fields = append(q.Fields, p.Fields[i])
		}
		if p.Phasors != nil {
			q.Phasors = append(q.Phasors, p.Phasors[i])
		}
		if p.Travel != nil {
			q.Travel = append(q.Travel, p.Travel[i])
		}
		if p.Scale != nil {
			q.Scale = append(q.Scale, p.Scale[i])
		}
		if len(p.Times) == len(p.Points) {
			q.Times = append(q.Times, p.Times[i])
		}
		if len(p.PositionSigmas) == len(p.Points) {
			q.PositionSigmas = append(q.PositionSigmas, p.PositionSigmas[i])
		}
	}
	return q
}

// isAC reports whether the problem carries phasors.
func (p *Problem) isAC() bool { return p.Phasors != nil }

// validate checks the problem and names the first offending reading.
func (p *Problem) validate() error {
	n := len(p.Points)
	switch {
	case p.Fields != nil && p.Phasors != nil:
		return fmt.Errorf("inverse: problem has both Fields and Phasors; give one")
	case p.Fields == nil && p.Phasors == nil:
		return fmt.Errorf("inverse: problem has neither Fields nor Phasors")
	case p.Fields != nil && len(p.Fields) != n:
		return fmt.Errorf("inverse: %d points but %d field readings", n, len(p.Fields))
	case p.Phasors != nil && len(p.Phasors) != n:
		return fmt.Errorf("inverse: %d points but %d phasor readings", n, len(p.Phasors))
	case p.Travel != nil && len(p.Travel) != n:
		return fmt.Errorf("inverse: %d points but %d travel vectors", n, len(p.Travel))
	case p.Scale != nil && len(p.Scale) != n:
		return fmt.Errorf("inverse: %d points but %d scale factors", n, len(p.Scale))
	case p.Sigma < 0 || math.IsNaN(p.Sigma) || math.IsInf(p.Sigma, 0):
		return fmt.Errorf("inverse: reading noise Sigma = %v must be finite and not negative", p.Sigma)
	}
	for i, v := range p.Scale {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("inverse: reading %d: scale factor %v must be finite and positive", i, v)
		}
	}
	if p.PositionSigmas != nil && len(p.PositionSigmas) != n {
		return fmt.Errorf("inverse: %d points but %d position sigmas", n, len(p.PositionSigmas))
	}
	for i, v := range p.PositionSigmas {
		for j, s := range v {
			if s < 0 || math.IsInf(s, 0) {
				return fmt.Errorf("inverse: reading %d: position sigma %s %v must be finite and not negative (NaN for none)", i, [2]string{"across the plan", "in height"}[j], s)
			}
		}
	}
	if p.allFinite() {
		return nil
	}
	axes := [3]string{"east", "north", "up"}
	for i, r := range p.Points {
		for j, v := range r {
			if !finite(v) {
				return fmt.Errorf("inverse: reading %d: position %s is %v", i, axes[j], v)
			}
			if p.Travel != nil && !finite(p.Travel[i][j]) {
				return fmt.Errorf("inverse: reading %d: travel %s is %v", i, axes[j], p.Travel[i][j])
			}
		}
		if p.Fields != nil {
			for j, v := range p.Fields[i] {
				if !finite(v) {
					return fmt.Errorf("inverse: reading %d: field %s is %v", i, axes[j], v)
				}
			}
		} else {
			for j, v := range p.Phasors[i] {
				if cmplx.IsNaN(v) || cmplx.IsInf(v) {
					return fmt.Errorf("inverse: reading %d: phasor %s is %v", i, axes[j], v)
				}
			}
		}
	}
	return nil
}

// allFinite reports whether every position, travel and reading of p is finite, in
// one pass without branches: x - x is 0 for finite x and NaN otherwise, so the sum of
// these differences is 0 exactly when all are finite. validate looks for the
// offending value only when it is not.
func (p *Problem) allFinite() bool {
	var z float64
	for i := range p.Points {
		r := &p.Points[i]
		z += (r[0] - r[0]) + (r[1] - r[1]) + (r[2] - r[2])
	}
	for i := range p.Travel {
		r := &p.Travel[i]
		z += (r[0] - r[0]) + (r[1] - r[1]) + (r[2] - r[2])
	}
	for i := range p.Fields {
		r := &p.Fields[i]
		z += (r[0] - r[0]) + (r[1] - r[1]) + (r[2] - r[2])
	}
	for i := range p.Phasors {
		for _, c := range p.Phasors[i] {
			re, im := real(c), imag(c)
			z += (re - re) + (im - im)
		}
	}
	return z == 0
}

// BackgroundModel says which background terms are fitted with the sources.
type BackgroundModel int

const (
	// BackgroundUniform fits a constant field per axis (the zero value): the Earth's
	// field and sensor offsets for DC, pickup common to the survey for AC.
	BackgroundUniform BackgroundModel = iota
	// BackgroundNone fits no background.
	BackgroundNone
	// BackgroundGradient fits a constant field and a source-free linear gradient about
	// the centroid of the readings (see Background); needs an areal survey.
	BackgroundGradient
	// BackgroundAlong fits a constant field and, per axis, a term linear in the
	// distance along the readings' principal horizontal direction from their
	// centroid (six columns): the field of a distant source to the side, a
	// traction return or another cable tens of metres away, whose 1/r falloff a
	// uniform field cannot hold over a traverse. Of the five gradient terms only
	// these three, dB/du for u along the traverse, are seen by a single traverse
	// (the other two multiply the distance across it, which is about zero there),
	// so this is the identifiable part of BackgroundGradient on one traverse.
	// Result.Along holds the three terms (DC only).
	BackgroundAlong
)

func (b BackgroundModel) columns() int {
	switch b {
	case BackgroundNone:
		return 0
	case BackgroundGradient:
		return 8
	case BackgroundAlong:
		return 6
	}
	return 3
}

// Criterion selects the information criterion used to choose the number of lines.
type Criterion int

const (
	// BIC is the Bayesian information criterion (the zero value), chi2 + k ln N, or
	// N ln(RSS/N) + k ln N when the noise is estimated.
	BIC Criterion = iota
	// AIC is Akaike's criterion, chi2 + 2k, or N ln(RSS/N) + 2k.
	AIC
)

// Settings tune a fit. The zero value (or nil) is usable; each field documents its
// default.
type Settings struct {
	// Count is the number of lines to fit (at most 8); 0 chooses 1..MaxCount by
	// Criterion.
	Count int
	// MaxCount bounds the automatic choice; 0 means 4. A choice that stops
	// at it is fitted with one line more, and noted (MoreLinesNote) when the
	// count would have gone on.
	MaxCount int
	// FirmMaxCount leaves out that fit of one line more: a refit of lines
	// already found, bounded by their number on purpose.
	FirmMaxCount bool
	// Criterion for the automatic choice; the zero value is BIC.
	Criterion Criterion
	// ReferenceZ, when set, is the height (m, up) below which depths are reported, for
	// example the ground surface. When nil depths are below the mean sensor height.
	ReferenceZ *float64
	// Background selects the background terms; the zero value fits a uniform field.
	Background BackgroundModel
	// Azimuth, when set, holds every line at this azimuth (degrees clockwise from
	// north). When nil the azimuth is fitted, for a single traverse too (the three-axis
	// field determines it, see the package documentation; there it is seeded
	// perpendicular to the traverse and searched within 80 degrees of that; the strongest
	// line, where it crosses the traverse's line beyond the readings' ends, within 60).
	// Only when the
	// fit does not determine it (rank loss, sigma above 15 degrees) is it held
	// perpendicular to the traverse and reported as not identifiable. Angles held
	// here are checked against a fit with them free: when the readings reject them
	// the Result's notes carry HeldAnglesRejectedNote (see FitLines), since a wrong
	// held angle biases the current and depth beyond their sigmas.
	Azimuth *float64
	// Dip, when set, holds every line at this dip (degrees, positive when the line
	// descends along its direction). When nil the dip is fitted, for a single traverse
	// too (seeded at 0, and held at 0 with the azimuth when not determined).
	Dip *float64
	// Dipoles is the number of point dipoles (ferrous objects: a valve, a buried drum)
	// fitted together with the lines, so that their fields are not mistaken for
	// currents; 0 fits none, and at most 4 (FitLines refuses more). Each is seeded under the peak of the residual of the
	// fit without it. A dipole whose moment the readings do not set apart from zero
	// (DipoleMomentNotSignificantNote) has no identifiable position and the Result's
	// notes carry UnsupportedCountNote; one above ReferenceZ is noted
	// (DipoleAboveReferenceNote).
	Dipoles int
	// MinDepth keeps each conductor at least this far (m) below the lowest sensor; 0
	// means 0.02 m.
	MinDepth float64
	// Above, when not empty, are lines fitted ABOVE the sensors (an overhead
	// line, a cable tray, cables under a deck) together with Count lines
	// below them: each is started from its Line (a point on it and its
	// direction) and its height bounded to at least MinDepth above the
	// highest sensor, the bound of the lines below flipped; the lines below
	// are fitted as with Count alone and then polished with those above.
	// Count must be given, with Count plus the lines above at most 8, and no
	// Dipoles. The Result lists every line; those above have Point above the
	// sensors and a negative Depth. Without it (nil, the default) every line
	// is held below the sensors and the fit is as before. A conductor above
	// the sensors is the mirror image of one below in the sensors' height
	// with the horizontal field components reversed, so three-axis readings
	// tell the two apart; a fit that holds it below misses by far more
	// than the noise and biases the lines below (see report's aboveFit).
	Above []Line
	// Starts are further starting geometries, each a set of lines (a point on
	// each and its direction, in the readings' frame): a fit of as many lines as
	// a set holds, at the automatic count or at Count, is also started from it
	// (the lines moved along themselves to where they pass nearest the
	// readings' centroid; on a single traverse only their crossing and depth
	// are taken, the angles held and released as for the fit's own starts), and
	// takes it when its sum of squares is lower and its lines have not
	// collapsed onto one another. A caller that fits traverses one by one can
	// give the lines fitted at the neighbouring traverses: a traverse whose own
	// starts all end in a worse local minimum is then fitted as its neighbours
	// were (cmd/undercurrent refitFromNeighbours). Nil, the default, adds none.
	Starts [][]Line
	// Robust enables Huber weights by iterative reweighting (Huber 1964; Holland &
	// Welsch 1977), for data with outliers.
	Robust bool
	// HuberC is the Huber threshold in units of the robust scale (1.4826 MAD); 0 means
	// 1.345.
	HuberC float64
	// PositionSigmaPlan and PositionSigmaUp are the one-sigma uncertainty of every
	// reading's logged position, m: across the plan (east and north, each) and in
	// height (a sensor height that wanders unlogged: a walked pole, rough ground).
	// Zero, the default, takes the positions as exact. Otherwise the field a
	// reading would have at a position off by that much enters its variance: once
	// the count of lines is chosen, each reading axis's variance is taken as
	//
	//	s^2 + (dB/dx PositionSigmaPlan)^2 + (dB/dy PositionSigmaPlan)^2 + (dB/dz PositionSigmaUp)^2
	//
	// with the gradient that of the fitted model at the reading (and a term of
	// its curvature), the readings are corrected by the mean change the scatter
	// makes, the fit is redone with weights s^2 over that variance, and so on to
	// a fixed point (positionWeights; an errors-in-variables approximation, see
	// positions.go), and the covariance is taken with each reading's three axes
	// moving together (positionSandwich, DC), so that the sigmas of current,
	// depth, offset and the rest include the positioning error. s is
	// Problem.Sigma, or, unknown, the reading noise the residuals leave (the
	// root of sum r^2/(s^2 + g^2) = DOF, at most the readings' own noise from
	// their differences), the weighted residuals then scaling the whole
	// variance. The count of lines is chosen before, as without them.
	// The Result's notes carry PositionSigmaNote. Not with Robust, whose Huber
	// weights and sandwich covariance stand on the residuals alone: the position
	// sigmas are then not used and the notes say so (PositionSigmaRobustNote).
	PositionSigmaPlan, PositionSigmaUp float64
	// MaxIter bounds the Levenberg-Marquardt iterations per start; 0 means 200.
	MaxIter int
	// FTol, XTol and GTol are the relative convergence tolerances (sum of squares,
	// step, gradient); 0 means 1e-10, 1e-10 and 1e-12. A relative reduction of 1e-10
	// of the sum of squares of N readings leaves the parameters within about
	// sqrt(1e-10 N) standard errors of the minimum, far inside their uncertainty. A fit
	// also stops when a step changes chi-square by less than 1e-4 (within about 0.015
	// standard errors of the minimum): converged to the noise floor.
	FTol, XTol, GTol float64
}

// check refuses settings outside the ranges their documentation gives: a
// NaN or infinite height, azimuth or dip, a dip beyond ±90 degrees, an
// unknown criterion or background, and negative (or NaN) bounds and
// tolerances, whose zero alone means the default. Before, these were taken
// without a word: a NaN ReferenceZ gave NaN depths marked identifiable, a
// NaN azimuth an error blaming the readings, a dip of 95 degrees a fit.
func (s *Settings) check() error {
	if s == nil {
		return nil
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	if s.ReferenceZ != nil && !finite(*s.ReferenceZ) {
		return fmt.Errorf("inverse: Settings.ReferenceZ is %v, want a finite height (m)", *s.ReferenceZ)
	}
	if s.Azimuth != nil && !finite(*s.Azimuth) {
		return fmt.Errorf("inverse: Settings.Azimuth is %v, want a finite angle (degrees)", *s.Azimuth)
	}
	if s.Dip != nil && !(*s.Dip >= -90 && *s.Dip <= 90) {
		return fmt.Errorf("inverse: Settings.Dip = %v, want -90 to 90 degrees", *s.Dip)
	}
	if s.Criterion != BIC && s.Criterion != AIC {
		return fmt.Errorf("inverse: unknown Settings.Criterion %d (BIC or AIC)", int(s.Criterion))
	}
	switch s.Background {
	case BackgroundUniform, BackgroundNone, BackgroundGradient, BackgroundAlong:
	default:
		return fmt.Errorf("inverse: unknown Settings.Background %d (BackgroundUniform, BackgroundNone, BackgroundGradient or BackgroundAlong)", int(s.Background))
	}
	if s.MaxCount < 0 || s.MaxCount > 8 {
		return fmt.Errorf("inverse: Settings.MaxCount = %d, want 0 (meaning 4) to 8", s.MaxCount)
	}
	if len(s.Above) > 0 {
		if s.Count < 1 || s.Count+len(s.Above) > 8 {
			return fmt.Errorf("inverse: Settings.Above has %d lines with Settings.Count = %d: give Count, the lines below (1 or more), with Count plus the lines above at most 8", len(s.Above), s.Count)
		}
		if s.Dipoles != 0 {
			return errors.New("inverse: Settings.Above is not fitted with Settings.Dipoles")
		}
		for i, l := range s.Above {
			ok := l.Dir[0] != 0 || l.Dir[1] != 0 || l.Dir[2] != 0
			for j := 0; j < 3; j++ {
				ok = ok && finite(l.Point[j]) && finite(l.Dir[j])
			}
			if !ok {
				return fmt.Errorf("inverse: Settings.Above[%d] needs a finite point and a non-zero finite direction", i)
			}
		}
	}
	for i, set := range s.Starts {
		if len(set) == 0 || len(set) > 8 {
			return fmt.Errorf("inverse: Settings.Starts[%d] has %d lines, want 1 to 8", i, len(set))
		}
		for j, l := range set {
			ok := l.Dir[0] != 0 || l.Dir[1] != 0 || l.Dir[2] != 0
			for k := 0; k < 3; k++ {
				ok = ok && finite(l.Point[k]) && finite(l.Dir[k])
			}
			if !ok {
				return fmt.Errorf("inverse: Settings.Starts[%d][%d] needs a finite point and a non-zero finite direction", i, j)
			}
		}
	}
	if s.MaxIter < 0 {
		return fmt.Errorf("inverse: Settings.MaxIter = %d, want 0 (meaning 200) or more", s.MaxIter)
	}
	for _, v := range []struct {
		name string
		v    float64
	}{{"MinDepth", s.MinDepth}, {"HuberC", s.HuberC}, {"PositionSigmaPlan", s.PositionSigmaPlan}, {"PositionSigmaUp", s.PositionSigmaUp}, {"FTol", s.FTol}, {"XTol", s.XTol}, {"GTol", s.GTol}} {
		if !(v.v >= 0) || math.IsInf(v.v, 0) {
			return fmt.Errorf("inverse: Settings.%s = %v, want 0 (the default) or a finite positive value", v.name, v.v)
		}
	}
	return nil
}

func (s *Settings) orDefault() Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.MaxCount <= 0 {
		out.MaxCount = 4
	}
	if out.MinDepth <= 0 {
		out.MinDepth = 0.02
	}
	if out.FTol <= 0 {
		out.FTol = 1e-10
	}
	if out.XTol <= 0 {
		out.XTol = 1e-10
	}
	if out.GTol <= 0 {
		out.GTol = 1e-12
	}
	if out.HuberC <= 0 {
		out.HuberC = 1.345
	}
	return out
}

func (s *Settings) lm() lmSettings {
	return lmSettings{maxIter: s.MaxIter, ftol: s.FTol, xtol: s.XTol, gtol: s.GTol, chi2Tol: chi2Tol}
}

// chi2Tol ends a line fit when a step changes chi-square by less than this: the
// parameters are then within about 0.015 standard errors of the minimum, far inside
// their uncertainty, and further iterations would only polish digits that the noise
// does not support.
const chi2Tol = 1e-4

// Identifiable records, per reported quantity, whether the data determine it. A false
// entry means the value was held or is not resolved; its sigma is then zero and must not
// be printed as an uncertainty.
type Identifiable struct {
	Current, Phase, Depth, Offset, Azimuth, Dip bool
}

// SourceEstimate is one fitted source with its uncertainties (one sigma).
type SourceEstimate struct {
	// Kind is "line" or "dipole".
	Kind string
	// Point is, for readings along one traverse, the line's point where it crosses
	// the traverse's track in plan (the principal axis of the readings' plan
	// positions through their centroid; AtTrackCrossing), else the line's point whose
	// horizontal position is nearest the centroid of the readings (the point nearest
	// in space for a line dipping more than 60 degrees), m ENU, or the dipole's
	// position; Dir is the unit direction along which
	// positive current flows, oriented so that the azimuth lies in [0, 180) (zero for
	// a dipole).
	Point, Dir [3]float64
	// Moment of a dipole in A m^2 (east, north, up) with one-sigma uncertainties; for
	// AC the magnitude per axis. Zero for lines.
	Moment, MomentSigma [3]float64
	// Current in A along Dir (DC), or RMS current (AC, always >= 0).
	Current, CurrentSigma float64
	// Phase in degrees of the AC current phasor along Dir, in the time reference of the
	// readings, in (-180, 180]; RelativePhase is relative to the first (strongest)
	// source. Zero for DC.
	Phase, PhaseSigma                 float64
	RelativePhase, RelativePhaseSigma float64
	// Depth of Point below the depth reference (Result.DepthReference), m. For a
	// dipole, Depth and Offset (east of the centroid) are its position; Offset north
	// is Point[1].
	Depth, DepthSigma float64
	// Offset is the signed horizontal distance from the centroid of the readings to the
	// line, positive to the right of Dir (east of a line running north), m.
	Offset, OffsetSigma float64
	// PointSigma is, for a dipole, the one-sigma uncertainty of Point (east, north,
	// up), m; zero for a line (its position across itself is Offset and Depth).
	PointSigma [3]float64
	// Azimuth of Dir in degrees clockwise from north, [0, 180).
	Azimuth, AzimuthSigma float64
	// Dip in degrees, positive when the line descends along Dir.
	Dip, DipSigma float64
	// Identifiable says which quantities the data determine.
	Identifiable Identifiable
	// Notes explain held or unresolved quantities and other cautions.
	Notes []string
	// AtTrackCrossing is true when a line's Point (and Depth) is where it crosses
	// the traverse the readings lie along; false when Point lies under the
	// readings' centroid in plan: readings not along one traverse (fixed sensors, a
	// compact group), a traverse within 20 degrees of the line, a line steeper than
	// 60 degrees, or a dipole.
	AtTrackCrossing bool
}

// ModelScore is the information criterion for one candidate number of lines.
type ModelScore struct {
	Count    int     // lines
	Params   int     // fitted parameters (geometry and strengths)
	RSS      float64 // residual sum of squares, nT^2
	AIC, BIC float64
	// Rejected, when not empty, says why this count was not accepted although its
	// criterion may be lower (the over-fitting guard).
	Rejected string
	Chosen   bool
}

// Result is the outcome of FitLines or FitStrengths.
type Result struct {
	// Sources are the fitted lines, strongest first, then the dipoles.
	Sources []SourceEstimate
	// Background is the fitted uniform field in nT (east, north, up) with one-sigma
	// uncertainties; for AC, BackgroundPhasor holds the complex background and
	// Background its magnitude per axis.
	Background, BackgroundSigma [3]float64
	BackgroundPhasor            [3]complex128
	// Gradient holds the gradient terms in nT/m (Gee, Gen, Geu, Gnn, Gnu) when
	// Settings.Background is BackgroundGradient (DC only).
	Gradient []float64
	// Along and AlongSigma hold the terms of BackgroundAlong in nT/m (east,
	// north, up: each axis's change per metre along AlongAxis) with their
	// one-sigma uncertainties, when Settings.Background is BackgroundAlong (DC
	// only); AlongAxis is that unit horizontal direction (east, north, up).
	Along, AlongSigma []float64
	AlongAxis         [3]float64
	// Strengths and StrengthSigmas are the fitted linear strengths of FitStrengths in
	// the sources' units (A, A m^2), in the order of the sources; StrengthPhasors for
	// AC. Nil for FitLines.
	Strengths, StrengthSigmas []float64
	StrengthPhasors           []complex128
	// RMS is the root-mean-square residual per axis reading, nT: for AC the modulus
	// of each axis's complex residual, so that a fit at the noise has RMS near
	// sqrt(2) Sigma (Sigma is per real part); for DC, RMS near Sigma.
	RMS float64
	// Sigma is the noise used for the uncertainties: Problem.Sigma or, when that is
	// zero, the estimate sqrt(RSS/DOF).
	Sigma float64
	// Chi2 = RSS/Sigma^2 and DOF = readings - parameters. With Sigma estimated Chi2
	// equals DOF by construction.
	Chi2 float64
	DOF  int
	// Status says why the final fit stopped; Iterations and Starts count its work.
	Status     Status
	Iterations int
	Starts     int
	// Criteria lists the score of every count tried by the automatic choice.
	Criteria []ModelScore
	// Predicted and Residuals (readings minus model) per point, nT; for AC the
	// phasor versions are set instead.
	Predicted, Residuals              [][3]float64
	PredictedPhasors, ResidualPhasors [][3]complex128
	// Weights are the final robust weights per reading axis (3 per point), nil unless
	// Settings.Robust.
	Weights []float64
	// Covariance of the fitted parameters, named in ParamNames (geometry in m and
	// radians, strengths in A or nT).
	Covariance *mat.SymDense
	ParamNames []string
	// LineCurrents are, for an AC FitLines fit, the lines' fitted complex
	// currents as parametrised, A RMS, in the order of the covariance's
	// lines (lineK.current.re and .im in ParamNames): each line's
	// Sources entry reads the same phasor, negated where its Dir was
	// turned to an azimuth in [0, 180). A caller that reorders Sources can
	// find a line's covariance by its current's magnitude. Nil for DC and
	// FitStrengths.
	LineCurrents []complex128
	// DepthReference says what depths are measured from: "ReferenceZ" or "mean sensor
	// height"; ReferenceZ is that height (m).
	DepthReference string
	ReferenceZ     float64
	// SingleTraverse is true when the readings lie along one line. Azimuth and dip are
	// then fitted from the three-axis field like over an areal survey (see
	// Identifiable), or held perpendicular and level when the traverse did not
	// determine them, with a note in Notes saying why.
	SingleTraverse bool
	// Pairs are go-and-return pairs among the lines whose currents and spacing the
	// data do not separate (see PairEstimate); nil when there are none.
	Pairs []PairEstimate
	// Opposed pairs the strongest line with each line the fit resolved that runs
	// beside it (within 10 degrees) carrying an opposite current, nearest first:
	// the two cores of a go-and-return circuit seen apart, with their centre,
	// spacing and net current (the current that does not return through the pair)
	// and its sigma from the covariance, as for Pairs; the lines keep their own
	// currents. Nil when there is none, or when an unresolved pair (Pairs) holds the
	// strongest line.
	Opposed []PairEstimate
	// SameWay pairs the strongest line with a line the fit found beside it (within
	// sameWayMaxAngle degrees, nearer than 0.7 of the deeper one's distance below
	// the mean sensor height, whatever the datum, or up to three such distances
	// when the weaker one's current is not resolved) carrying current
	// the same way, in shares the readings do not part: the sum of the two currents
	// is known several times better than either (see sameWayOf). One conductor
	// bending in depth or direction under the readings (where it dives under a road)
	// is often fitted so, as are two cables laid together. NetCurrent is their sum,
	// the current of the bundle, with its sigma from the covariance; Spacing the
	// distance between the lines. Nil when there is none.
	SameWay []PairEstimate
	// SerialCorrelation is the lag-1 autocorrelation of a DC fit's residuals
	// along the readings (pooled over the axes, within traverses), and
	// SigmaWidening the factor by which the first line's current's sigma
	// was widened for it (the greatest of the sources' when there is no
	// line) when it exceeds twice its standard error under white noise,
	// else 1 (the note SerialNotePrefix says so, with the range of the other
	// sigmas' widening). The Covariance is then the sandwich of
	// serialSandwich, each parameter widened by its own factor, none
	// below the covariance under independence. Both 0 for AC.
	SerialCorrelation, SigmaWidening float64
	// CurrentRamp is, for a DC traverse fit with CurrentRampNote, the
	// relative change of the line's current over the traverse (the ramp's
	// rate times the traverse's time span over the mean current), and
	// CurrentRampSigma its sigma; 0 otherwise.
	CurrentRamp, CurrentRampSigma float64
	// CurrentRampEnds are, with CurrentRamp, the current the ramp gives at
	// the traverse's first and last reading (each as a fraction of the mean
	// current, less 1) and its rate of change there (fractions of the mean
	// per second): a survey can check that one traverse's ramp runs on into
	// the next's across the turn.
	CurrentRampEnds [4]float64
	// Notes are cautions about the whole fit.
	Notes []string
}
