package report

import (
	"fmt"
	"math"

	"undercurrent/inverse/route"
)

// Logs without heights on ground that is not level (found in review).
//
// A log with no z column (read as 0), a constant z (local flat
// coordinates) or latitude and longitude without a height (z follows the
// ellipsoid) gives the fits no ground: each traverse's ground is taken as
// level at the sensors' height less --sensor-height (or at --reference-z).
// Ground that rises or falls across a traverse is then, to the fit, the
// sensor turned about the conductor's axis by the slope's angle with the
// positions flattened onto the level: in review a 10% side slope read
// 27.88 ± 0.99 A for 25 A and cover 0.977 ± 0.016 m for 0.900 (too deep,
// the unsafe way) with a phantom return beside it, a pipe under a road
// embankment with a ditch 27.63 ± 0.09 A and cover 2.889 ± 0.011 m for
// 2.700, every traverse sound and no word about heights; where a misfit
// was flagged, the causes named were others (close conductors, a line
// above, an object, a tilted sensor). The same logs with heights read
// right. The tool cannot know the ground it was not given; it now says
// that it took it as level (levelGroundNote) and names the ground among
// the causes of a misfit shared by the traverses (groundMisfitCause).
//
// On a hillside without heights the conductor follows the ground, so every
// traverse fits a steady dip while the route's elevations (the sensors'
// constant height less level depths) stay flat; the route's slope and the
// fits disagree by hundreds of sigmas, with no word (bend-near needs a
// route slope of 5 degrees). climbUnlogged says so.

// flatHeightTol is the most, m, the survey's logged heights may spread
// (max less min, over every group whose readings cross ground) for the
// survey to count as having no heights: a constant z or none reads 0, and
// so does a latitude/longitude log with no height (up is each reading's
// height above the origin's); a 1% slope across an 8 m traverse is 8 cm,
// GNSS heights scatter by centimetres. The whole survey is judged, not
// each traverse: traverses walked along the contours of a hillside with
// heights logged are level each, at heights that differ.
const flatHeightTol = 0.01

// flatMinSpan is the least plan extent, m, of a group's readings for its
// heights to be judged: a fixed sensor, or readings at one place, cross
// no ground.
const flatMinSpan = 1.0

// heightsUnlogged reports whether the logged heights of every group whose
// readings cross at least flatMinSpan of ground lie within flatHeightTol
// of one another, over at least one such group: the log holds no heights
// (or only a constant one).
func heightsUnlogged(fits []Fit) bool {
	lo, hi := math.Inf(1), math.Inf(-1)
	judged := 0
	for _, f := range fits {
		if f.Problem == nil || len(f.Problem.Points) < 2 {
			continue
		}
		pts := f.Problem.Points
		var span float64
		for _, p := range pts {
			span = math.Max(span, math.Hypot(p[0]-pts[0][0], p[1]-pts[0][1]))
		}
		if !(span >= flatMinSpan) {
			continue
		}
		judged++
		for _, p := range pts {
			if math.IsNaN(p[2]) {
				return false
			}
			lo, hi = math.Min(lo, p[2]), math.Max(hi, p[2])
		}
	}
	return judged > 0 && hi-lo <= flatHeightTol
}

// levelGroundNote is the document's note when cover is reported (a ground
// reference: --sensor-height or --reference-z) and the log holds no
// heights (heightsUnlogged).
func levelGroundNote(sensorHeight float64, belowGround bool) string {
	level := "at the --reference-z level given"
	if !belowGround {
		level = fmt.Sprintf("%.2f m (--sensor-height) below the sensors", sensorHeight)
	}
	return fmt.Sprintf("no heights logged: the sensors' heights do not change anywhere in the survey (no z logged, or a constant z), so the ground under each traverse is taken as level, %s, and cover is measured from there. "+
		"Ground that rises or falls across a traverse (a side slope, a ditch, a road embankment) biases the depth (deep: the unsafe way) and the current without showing in the fit: "+
		"in review a 10%% side slope read the cover 0.08 m deep (5 sigma) and the current 11%% high, and a pipe under an embankment with a ditch 0.19 m deep and 10%% high, every traverse sound. "+
		"Where the ground is not level across the traverses, log the heights (GNSS, or levelled heights) as z",
		level)
}

// groundMisfitCause is added to the causes a shared-misfit warning names
// when the log holds no heights (heightsUnlogged).
const groundMisfitCause = "; no heights are logged (z does not change anywhere in the survey), so ground rising or falling across the traverses (a side slope, a ditch, a road embankment) is another cause: the fits take it as level, which turns the conductor's field as a sensor turned about the conductor's axis would and reads the depth deep and the current high; log the heights (GNSS, or levelled heights) as z"

// groundLoneCause is groundMisfitCause for one group's misfit
// (markLoneMisfits).
const groundLoneCause = "; no heights are logged, so ground rising or falling across this traverse (a side slope, a ditch, an embankment), which the fit takes as level, may also do it: log the heights as z"

// Limits of climbUnlogged: at least climbMinStations stations with a
// fitted dip; their median dip climbMinDeg or more from the slope of the
// route's elevations, beyond climbK of the combined sigmas (the median
// dip's spread, the slope's own); and climbShare of those stations
// departing on the same side by climbK of their own sigma. A bore's dive
// on level ground deepens the route as its fits dip, and agrees; a bend
// tilts a few stations, not the median.
const (
	climbMinStations = 4
	climbMinDeg      = 3.0
	climbK           = 5.0
	climbShare       = 0.75
)

// climbUnlogged returns a warning when the stations' fitted dips agree on
// a steady climb (or fall) that the route's elevations (the conductor's
// points: the sensors' logged heights less the depths) do not follow; ""
// otherwise. flat says the log holds no heights (heightsUnlogged).
func climbUnlogged(r *route.Route, flat bool) string {
	if r == nil {
		return ""
	}
	type st struct{ c, z, zs, dip, ds float64 }
	var ss []st
	for _, p := range r.Stations {
		if !p.OK || p.Dipole || !(p.DipSigma > 0) {
			continue
		}
		h := math.Hypot(p.Dir[0], p.Dir[1])
		if !(h > 0) {
			continue
		}
		dip := math.Atan2(-p.Dir[2], h) * 180 / math.Pi // positive: deepening along the chainage
		ss = append(ss, st{p.Chainage, p.Point[2], p.DepthSigma, dip, p.DipSigma})
	}
	if len(ss) < climbMinStations {
		return ""
	}
	// Slope of the elevations over the chainage, weighted least squares.
	var sw, sc, sz, scc, scz float64
	for _, s := range ss {
		w := 1.0
		if s.zs > 0 {
			w = 1 / (s.zs * s.zs)
		}
		sw += w
		sc += w * s.c
		sz += w * s.z
		scc += w * s.c * s.c
		scz += w * s.c * s.z
	}
	den := sw*scc - sc*sc
	if !(den > 0) {
		return ""
	}
	g := -(sw*scz - sc*sz) / den // positive: deepening
	gs := math.Sqrt(sw / den)
	if math.IsInf(gs, 0) || math.IsNaN(gs) {
		gs = 0
	}
	slope := math.Atan(g) * 180 / math.Pi
	slopeSigma := gs / (1 + g*g) * 180 / math.Pi
	dips := make([]float64, len(ss))
	sigs := make([]float64, len(ss))
	for i, s := range ss {
		dips[i], sigs[i] = s.dip, s.ds
	}
	med := median(dips)
	d := med - slope
	if math.Abs(slope) < 0.05 {
		slope = 0 // not "-0.0 deg"
	}
	medSigma := median(sigs) * math.Sqrt(math.Pi/2/float64(len(ss)))
	if !(math.Abs(d) >= climbMinDeg) || !(math.Abs(d) > climbK*math.Hypot(medSigma, slopeSigma)) {
		return ""
	}
	same := 0
	for _, s := range ss {
		if e := s.dip - slope; e*d > 0 && math.Abs(e) > climbK*math.Hypot(s.ds, slopeSigma) {
			same++
		}
	}
	if float64(same) < climbShare*float64(len(ss)) {
		return ""
	}
	way := "climbs"
	if med > 0 {
		way = "falls"
	}
	lead := fmt.Sprintf("the fitted dips say the conductor %s steadily along the route (median dip %.1f deg over %d stations, %d of them beyond %g sigmas on that side of the route's slope; dip positive where the conductor deepens along the chainage), but the route's elevations (the sensors' heights less the depths) slope at %.1f deg in the same sense, %.1f deg apart: ",
		way, med, len(ss), same, climbK, slope, math.Abs(d))
	if flat {
		return lead + "the heights look missing (z does not change anywhere in the survey). On a hillside the conductor follows the ground: its elevations along the route (route point_m, results.csv up_m, route.geojson) are not the conductor's, and the chainage is the plan distance, shorter than the distance along the slope. The cover can still be right where the ground is level across each traverse; log the heights (GNSS, or levelled heights) as z. A sensor pitched by the same angle along the whole route would also do it"
	}
	return lead + "the logged heights do not follow the ground the conductor follows (check that z is the sensors' height, in metres, up), or the sensor was pitched along the route by that angle with no attitude logged; until then the route's elevations are not the conductor's"
}
