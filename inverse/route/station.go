package route

import (
	"math"
	"sort"
	"time"
)

// Station is the fit of one group (a traverse, a sensor or a time window),
// reduced to the conductor the route follows. Positions are metres in a
// local east, north, up frame; currents in amperes, signed along Dir (RMS
// for AC); depths in metres below the fit's depth reference.
type Station struct {
	// Key names the group ("T07", a sensor id, a time window).
	Key string
	// Point is a point on the fitted conductor near the group's readings
	// (inverse.SourceEstimate.Point: where it crosses their traverse in
	// plan, or under their centroid). When the fit failed (OK false) it should hold
	// the centroid of the readings, so the station can still be placed.
	Point [3]float64
	// UnderCentre is true when Point is the conductor's point under the
	// readings' centroid in plan, not where it crosses their traverse
	// (inverse.SourceEstimate.AtTrackCrossing false): the readings do not
	// lie along one traverse, or it runs nearly along the conductor. The
	// route only passes it on to the report's wording.
	UnderCentre bool
	// Dir is the conductor's direction. It need not be a unit vector; a
	// zero Dir is taken from the route.
	Dir [3]float64
	// Current and CurrentSigma are the current along Dir and its one-sigma
	// uncertainty, A. Every change in current is weighed against it; a zero
	// on a station whose current is used (OK and not Dipole) is read as
	// exact, a sigma of one part in a billion of the current (as a fit of
	// noise-free readings gives), so that any real change is a step. For a
	// current not fitted (a site plan, a clamp meter), give its
	// uncertainty or at least the meter's resolution.
	Current, CurrentSigma float64
	// AC is true when Current is the RMS of a phasor whose phase is Phase
	// (degrees), with PhaseSigma.
	AC                bool
	Phase, PhaseSigma float64
	// PhaseRampHz, when not zero, is the frequency offset, Hz, of the
	// phase ramp the station's group was fitted with (the AC frequency
	// differed from the one demodulated at), and PhaseRampSigmaHz its
	// one-sigma; the phasor step search does not compare phases across
	// stations whose frequencies differ (phasorstep.go).
	PhaseRampHz, PhaseRampSigmaHz float64
	// PairNet is true when Current is a go-and-return pair's net current
	// (the sum of its cores' currents, the current that does not return
	// through the pair) rather than one conductor's. A step in it is
	// then worded as current passing between the circuit and earth or
	// another path (a fault, a leak), not as a tee or a source joining,
	// and no direction of feed is read from its sign.
	PairNet bool
	// SummedSplit is true when Current is the sum of two same-way lines
	// that the fit could not part (the caller took their sum for one
	// conductor bending or diving under the traverse). Such a sum reads
	// several per cent off the current either side (a bore's exit bend:
	// 18.4 A for 20 A, many times its sigma), so a step that only it makes
	// is reported as information, not as current leaving or joining
	// (steps.go, hinges).
	SummedSplit bool
	// Depth and DepthSigma are the depth below the depth reference and its
	// one-sigma uncertainty, m.
	Depth, DepthSigma float64
	// DipSigma is the one-sigma uncertainty of the line's dip (the angle
	// of Dir below horizontal), degrees; zero when the dip was held or is
	// not known, and then the station's dip is not compared with its
	// neighbours' depths (bend.go).
	DipSigma float64
	// RMS is the fit's root-mean-square residual, nT.
	RMS float64
	// Signal is the root-mean-square of the fitted sources' field over the
	// station's readings (the fitted field less the background), nT; zero
	// when unknown. It grades a poor fit: a misfit that is large against the
	// noise but small against the signal is reported as information.
	Signal float64
	// Noise is the reading noise per component measured apart from the
	// fit, nT (for DC readings, from the fourth differences of successive
	// readings); zero when not measured. With SigmasPerMisfit it tells a
	// fit the model misses from one the noise explains, however the
	// route's other fits do (see strain.go).
	Noise float64
	// SigmasPerMisfit is, in each fitted value's own sigma, the most a
	// field error of 1 nT RMS over the station's readings can move it:
	// sqrt(N) / sigma for N values fitted with a reading noise sigma
	// (Cauchy-Schwarz, see strain.go), per nT; zero when unknown. It is
	// the group's, whichever of its lines the station follows.
	SigmasPerMisfit float64
	// Widening is the factor by which the fit widened its sigmas for
	// residuals correlated along the readings (inverse.Result.SigmaWidening,
	// the first line's current's; a DC fit widens each parameter by its own
	// factor, the depth's under AR(1) noise within a few per cent of the
	// current's; 0 or 1 when it did not). A strained station's misfit is the model's
	// error, which its shift counts (strain.go): its current's sigma is
	// then taken unwidened beside the shift (misfitSigma), not counted
	// twice. SigmasPerMisfit is per the unwidened sigma.
	Widening float64
	// Chi2 and DOF are the fit's chi-square and degrees of freedom; when
	// DOF > 0 and Settings.MaxReducedChi2 > 0 a large Chi2/DOF is reported
	// as a poor fit. Leave them zero when the noise was estimated from the
	// residuals (Chi2/DOF is then 1 by construction).
	Chi2 float64
	DOF  int
	// SigmaFromResiduals is true when the fit estimated its reading noise
	// from its own residuals (none was given), so that its sigmas grow
	// with its misfit, and Chi2 and DOF are taken against a reference
	// noise measured apart: the sigmas at that noise are then its own
	// over sqrt(Chi2/DOF). A station beside a phasor step, whose misfit
	// is the change's own field, is read at that noise where the
	// transition explains it (phasorstep.go).
	SigmaFromResiduals bool
	// OK is false when the fit failed or is unusable; such a station is
	// placed on the route and reported, but not used for steps or cover.
	OK bool
	// Problem says why the fit is poor or ambiguous ("two conductors fit
	// as well as one", "azimuth unidentifiable"), empty when it is sound.
	// A station with OK true and a Problem is used but reported.
	Problem string
	// Unplaced is true, with OK false, when the fit converged but is too
	// poorly determined to place the conductor (a traverse of a handful of
	// readings, whose noise and every sigma rest on too few residuals):
	// like a failed fit's, the station takes no part in the route's line,
	// chainage or direction, and none in steps or cover (Point should be
	// the centroid of its readings); unlike one, its Current (signed along
	// Dir) is an estimate, and its poor-fit finding compares it with the
	// usable stations either side, so that it is neither taken into the
	// profile nor passed over in silence. Problem says why.
	Unplaced bool
	// Dipole is true when the caller found the group's field better
	// explained by a point dipole (a magnetised object) than by a current.
	// Such a station is reported and not used for steps or cover.
	Dipole bool
	// Object describes the magnetised object when Dipole is true (nil
	// when the caller has no estimate of it).
	Object *Object
	// Walk names the walk the group's readings were taken on (the survey
	// log, when a run reads several), and Start is the time of its first
	// reading (zero when not known). They name the walks whose repeats
	// of one station disagree (walks.go); with no Walk the repeats of a
	// station are taken as walks in the order given.
	Walk  string
	Start time.Time
	// Traverse names the traverse the group's readings walk, when the
	// caller knows it (the group value its walks share: "T04" for T04,
	// "T04 (walk 2)" and "day2.csv:T04"); empty when not known. Two
	// stations of one Traverse less than half the route's spacing apart
	// along it are repeats of one station whatever their distance
	// (repeats.go walkedAgain); without it, repeats are told by chainage
	// alone.
	Traverse string
	// Reach lists the distances (m) from the group's readings to the line
	// it follows, as ReachQuantiles values that each carry an equal share
	// of the fit's weight (a reading's weight in a line's current goes
	// as 1/distance², the square of the field it reads); nil when not
	// known. A station beside a change of current along the line, at d
	// before it, reads the mean over them of a semi-infinite line's
	// share, (1 + d/sqrt(d² + r²))/2 (Biot-Savart): a traverse that
	// reaches several depths to the side reads a wider change, and
	// further from it, than readings straight above (phasorfit.go).
	Reach []float64
	// Further lists the other line sources of the group's fit, besides
	// the conductor the route follows (dipoles are not listed): a second
	// conductor, or a source the fit added to absorb the main conductor's
	// departure from a straight line. They enter neither steps nor cover;
	// one that is weak and steep is reported (see weakSources).
	Further []Line
}

// Line is a further line source of a station's fit.
type Line struct {
	// Point is a point on the line, m ENU, and Dir its direction (not
	// necessarily a unit vector).
	Point, Dir [3]float64
	// Current and CurrentSigma are its current (RMS for AC; the sign is
	// ignored) and one-sigma uncertainty, A.
	Current, CurrentSigma float64
	// Depth and DepthSigma are its depth below the depth reference at
	// Point and one-sigma uncertainty, m.
	Depth, DepthSigma float64
	// AzimuthSigma is the one-sigma uncertainty of its azimuth, degrees;
	// 0 when the azimuth was held or is not known.
	AzimuthSigma float64
	// InLineWith names the other groups whose fits hold a further line
	// that no track follows either and that lies along this one (the
	// same conductor seen there: LoneCover says so); empty when none.
	InLineWith []string
	// TrackMin is the fewest groups at which the caller follows a line
	// as a conductor of its own, 0 when not known: LoneRunCover says the
	// line was seen at too few groups only when fewer than that show it.
	TrackMin int
}

// Object is a magnetised object found beside the conductor: a point dipole
// fitted with the line.
type Object struct {
	// Point is its position, m ENU, and PointSigma the one-sigma
	// uncertainty of each coordinate (zero when not resolved).
	Point, PointSigma [3]float64
	// Depth is its depth below the depth reference, m.
	Depth, DepthSigma float64
	// Moment is the magnitude of its dipole moment, A m^2 (RMS per axis
	// combined for AC).
	Moment, MomentSigma float64
	// Distance is its horizontal distance from the conductor, m.
	Distance float64
	// Evidence is how much lower the information criterion (BIC) is with
	// the dipole than without it.
	Evidence float64
}

// usable reports whether the station's current and depth may be used for
// steps and cover.
func (s *Station) usable() bool { return s.OK && !s.Dipole }

// ReachQuantiles is the number of distances Station.Reach holds.
const ReachQuantiles = 8

// ReachOf returns the distances from the readings pts to the line through
// point along dir as Station.Reach: ReachQuantiles distances at the
// middles of equal shares of the readings' weights 1/distance² taken in
// order of distance; nil when there are no readings or the line has no
// direction.
func ReachOf(pts [][3]float64, point, dir [3]float64) []float64 {
	n := math.Sqrt(dir[0]*dir[0] + dir[1]*dir[1] + dir[2]*dir[2])
	if len(pts) == 0 || !(n > 0) {
		return nil
	}
	u := [3]float64{dir[0] / n, dir[1] / n, dir[2] / n}
	rs := make([]float64, 0, len(pts))
	for _, p := range pts {
		d := [3]float64{p[0] - point[0], p[1] - point[1], p[2] - point[2]}
		a := d[0]*u[0] + d[1]*u[1] + d[2]*u[2]
		r := math.Sqrt(math.Max(0, d[0]*d[0]+d[1]*d[1]+d[2]*d[2]-a*a))
		if r > 0 {
			rs = append(rs, r)
		}
	}
	if len(rs) == 0 {
		return nil
	}
	sort.Float64s(rs)
	var total float64
	for _, r := range rs {
		total += 1 / (r * r)
	}
	out := make([]float64, 0, ReachQuantiles)
	var cum float64
	k := 0
	for _, r := range rs {
		w := 1 / (r * r)
		for k < ReachQuantiles && cum+w >= (float64(k)+0.5)/ReachQuantiles*total {
			out = append(out, r)
			k++
		}
		cum += w
	}
	for len(out) < ReachQuantiles {
		out = append(out, rs[len(rs)-1])
	}
	return out
}
