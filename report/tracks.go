package report

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// Conductor tracks.
//
// The route follows the strongest source of each group: that is the
// primary track, conductor 1, reported in Document.Route. A group may hold
// further line sources (a parallel pipe, a second circuit, a return). Build
// follows them too, as further tracks, so that a fault or a shallow stretch
// on a weaker conductor is reported as well:
//
//   - Each further line source of a group the primary route uses (its fit
//     converged and is not taken for a magnetised object) is placed by its
//     signed horizontal offset from the primary conductor, measured in the
//     vertical plane through the primary's point square to the primary's
//     direction, positive to the right looking along increasing chainage.
//     A line within 60 degrees of the primary's direction in plan is met
//     in that plane; a line more nearly square to it is placed by its own
//     point. Dipole sources are not conductors and are skipped.
//   - A go-and-return pair found beside conductor 1 (a Result.Pairs entry
//     whose lines do not include the strongest; Group.Pair) is offered as
//     one source at its centre, its net current as its current (for AC
//     with the net current's phase), and its two lines, whose currents
//     and positions the readings do not determine, are not offered. A
//     pair joins only a track of pairs and a line only a track of lines:
//     a pair's net current and one core's own current are not one
//     profile, and a track mixing them would show false steps. The kept
//     track of a pair is analysed from its centre, direction, net current
//     and centre depth, as conductor 1 is when the route follows a pair
//     (circuitOf); its findings say so (PairTrackNote), its Route.PairNet
//     is true, and both lines of each group's pair carry its number.
//   - The groups are walked in route order. Each open track predicts the
//     offset at the group: its last offset, carried on by the slope between
//     its last two stations (per metre of chainage) when it has two, so
//     that two conductors whose offsets approach, meet and part again keep
//     their own tracks instead of swapping at the meeting. A track of one
//     station carries its offset on by the slope of its source's own
//     fitted direction: a line at angle theta in plan to conductor 1 moves
//     across it by tan(theta) per metre of chainage (plane geometry), so
//     a cable crossing conductor 1 at 15 degrees moves 1.07 m between
//     traverses 4 m apart and, predicted flat, never reached the 1 m gate
//     of its next station (found in review: such a cable, fitted on all
//     15 traverses, was followed on none, and the least cover named the
//     deeper conductor 1). Either slope is held to at most tan 60 degrees
//     in magnitude, the angle beyond which crossOffset places a line by
//     its own point rather than where it meets the cross section. Over
//     the chainage dc to the group the one-station prediction is
//     uncertain by dc times the slope's sigma (from the source's azimuth
//     sigma), which widens the gate below in quadrature (twice that
//     sigma), so that a weak line with a poorly fitted direction is not
//     lost for it; a line parallel to conductor 1 has slope about 0 and
//     is predicted flat, as before. A source's distance from a track is
//     taken in the cross section, from the predicted offset and the
//     track's last depth, each depth here the line's distance below its
//     group's mean sensor height, not the depth reported (see below):
//
//     distance = hypot(offset - predicted offset, depth - last depth)
//
//     so that a deep, weak source (a fit absorbing some misfit) is not
//     taken for a shallow conductor above it. The source may join the track
//     when the distance is within the gate
//
//     gate = max(1 m, 1.5 min(depth of the source, last depth of the track))
//
//     The field of a line spreads across the traverse over about its depth,
//     so the fitted position of one conductor wanders by a fraction of its
//     depth from group to group, while conductors laid side by side are
//     usually further apart than that. The shallower of the two depths
//     keeps a deep, poorly placed source from opening a wide gate; the
//     metre floor keeps shallow conductors from losing their track to
//     fitting noise. How far a fitted position wanders goes with the
//     line's distance from the sensors, whatever level the depths are
//     reported below, so the gate takes that distance: taken in the depths
//     reported, the same fits of Lattice Drove with cable B 1.0 m beside A
//     (seed 202) gave one further conductor with no datum and two, each
//     said to end, with the ground 0.3 m below the sensors as datum (gates
//     of 1.5 m against 1.95 m; TestCloseCablesTracksAnyDatum).
//   - Within a group, the pairs of source and track within their gate are
//     taken nearest first (ties by track number, then by source), so the
//     order in which the fit lists its sources does not matter and a group
//     gives a track at most one source. A source left over starts a new
//     track. A group with no source for a track leaves a gap in it; after
//     more than maxTrackGap groups in a row without one the track is
//     closed, and a source beyond starts a new track: a conductor missed
//     on that many traverses is no longer followed, and without the limit
//     weak, deep sources that fits far apart each take up (a fit absorbing
//     a bend or a change of depth) were linked across 13 traverses into a
//     "conductor" with a step of its own.
//   - Tracks with fewer than BuildSettings.TrackMinStations stations (3 by
//     default) are dropped: a weak spurious source in one group starts a
//     track but does not make one. The others are numbered 2, 3, ... by
//     decreasing median |current| (ties by their first station along the
//     route, then by median offset).
//
// Each kept track is analysed by route.Build with the primary's settings:
// a line's station lies where it crosses the group's traverse, with its
// depth there, as the primary's does, or, where the fit's point is not at
// a traverse's crossing, where its offset was measured (where it meets
// the primary's cross section, with its depth there; see trackStation), and
// its stations carry the group's fit statistics, so steps, cover and
// anomalies are judged as on the primary. A track's chainage is measured
// along its own stations from its first one, as route.Build measures it.
// Poor fits are a property of a group's fit, shared by all its conductors:
// they are reported once, on the primary route, and a track's poor-fit
// findings for the same groups are not repeated. A magnetised object found
// beside a further conductor (checkTrackDipoles, dipole.go) is reported on
// that conductor's track, whose station there it marks as an object.

// trackSource is one line source offered for association: the fit and
// source it comes from and where it lies across the primary conductor.
// It may instead be a go-and-return pair found beside conductor 1 (pair
// not nil, one of the fit's Result.Pairs whose lines do not include the
// strongest): the pair is offered as one conductor, at its centre, with
// its net current (the sum of its cores' currents, the current that does
// not return through it) as its current, and source is -1, since neither
// of the pair's lines is a conductor the readings determine (use lines).
type trackSource struct {
	fit, source int     // indices into the fits and the fit's sources
	pos         int     // the group's position along the primary route
	chainage    float64 // the group's chainage on the primary route, m
	offset      float64 // signed offset from the primary conductor, m
	depth       float64 // distance below the group's mean sensor height, m (sensorsLevel)
	current     float64 // |current|, A (a pair's |net current|)
	// slope is the change of offset per metre of chainage along the
	// source's own fitted direction, tan of its angle in plan to the
	// primary conductor held within maxTrackSlope, and slopeSigma its
	// one-sigma uncertainty (0 when not known): see predict.
	slope, slopeSigma float64
	pair              *inverse.PairEstimate
	// steep is true for a line whose fitted direction (determined by the
	// readings) lies more than crossAngle in plan from the primary's:
	// linePoint and lineDir are its fitted point (nearest the readings'
	// centre), direction and distance below the group's mean sensor
	// height there (as depth), and azSigma its azimuth sigma,
	// degrees (see lineDistance).
	steep              bool
	linePoint, lineDir [3]float64
	lineDepth, azSigma float64
}

// lines are the indices of the fit's sources that m stands for: its
// source, or a pair's two lines.
func (m *trackSource) lines() []int {
	if m.pair != nil {
		return m.pair.Lines[:]
	}
	return []int{m.source}
}

// trackGate is the largest distance, m, of a source from a track for the
// source to join it (see above).
func trackGate(depthA, depthB float64) float64 {
	return math.Max(1, 1.5*math.Min(depthA, depthB))
}

// maxTrackGap is the most groups in a row a track may miss and still be
// continued (see above).
const maxTrackGap = 3

// maxTrackSlope bounds the change of a track's offset per metre of
// chainage used to predict its next offset: tan 60 degrees, the angle in
// plan beyond which crossOffset places a line by its own point.
var maxTrackSlope = math.Sqrt(3)

// maxSlopeSigma bounds the slope sigma used to widen a one-station
// track's gate: a direction known no better than that (about 45 degrees
// of azimuth near parallel) is no direction.
const maxSlopeSigma = 1.0

// openTrack is a track being built by associate.
type openTrack struct {
	members []trackSource
	// gap is the chainage within which the primary route's stations are
	// repeats of one station (a route walked again: route.RepeatGap),
	// zero for none.
	gap float64
}

// predict is the track's offset expected at chainage c, and the
// uncertainty of that prediction, m, by which the gate is widened (zero
// for a track of two or more stations).
//
// The slope is taken from the last member and the latest one before it
// at least gap before it along the route: a repeat of the last station
// (a route walked again) lies a fraction of a millimetre from it, and the
// slope between them, the two fits' offsets differing by their noise over
// no length, was held only by maxTrackSlope, so the prediction at the
// next traverse missed by up to 1.7 times the spacing and a route walked
// twice followed no further conductor (two-conductors-fault walked twice
// lost conductor 2 and its 7 A fault; found in review). With every
// member a repeat of the last, the track is carried on as one station.
func (t *openTrack) predict(c float64) (offset, sigma float64) {
	n := len(t.members)
	last := t.members[n-1]
	dc := c - last.chainage
	k := n - 2
	for k >= 0 && last.chainage-t.members[k].chainage < t.gap {
		k--
	}
	if k < 0 {
		// One station: carried on along its own fitted direction.
		slope := clampSlope(last.slope)
		return last.offset + slope*dc, math.Abs(dc) * math.Min(last.slopeSigma, maxSlopeSigma)
	}
	prev := t.members[k]
	span := last.chainage - prev.chainage
	if span <= 0 {
		return last.offset, 0
	}
	slope := clampSlope((last.offset - prev.offset) / span)
	return last.offset + slope*dc, 0
}

func clampSlope(v float64) float64 {
	if !finite(v) {
		return 0
	}
	return math.Max(-maxTrackSlope, math.Min(maxTrackSlope, v))
}

// offsetSlope is the change per metre along u of the offset to the right
// of u at which a line with direction dir meets the vertical plane square
// to u, the tangent of their angle in plan (held within maxTrackSlope),
// and its sigma for an azimuth sigma of sigmaDeg degrees.
func offsetSlope(u, right [2]float64, dir [3]float64, sigmaDeg float64) (slope, sigma float64) {
	along := dir[0]*u[0] + dir[1]*u[1]
	across := dir[0]*right[0] + dir[1]*right[1]
	h := math.Hypot(along, across)
	if !(h > 0) || !finite(h) {
		return 0, 0
	}
	if math.Abs(along) < 1e-9*h {
		slope = math.Copysign(maxTrackSlope, across)
	} else {
		slope = clampSlope(across / along)
	}
	if sigmaDeg > 0 && finite(sigmaDeg) {
		// d tan(theta) / d theta = 1 + tan^2(theta).
		sigma = (1 + slope*slope) * sigmaDeg * math.Pi / 180
	}
	return slope, sigma
}

// lineDistance is how far steep line c lies from steep line a, the last
// station of a track, taken as lines rather than by their offsets across
// the primary conductor: the distance in plan from each one's fitted point
// to the other's line (the larger of the two), with the difference of their
// depths there, and whether c may join a's track by it. It is for lines
// crossing conductor 1 at a wide angle (steep: more than crossAngle in
// plan), whose offsets the one-station prediction (predict) may miss: a
// line within 30 degrees of square to conductor 1 is placed by its own
// point (crossOffset), whose offset moves by sin cos of the angle per metre
// of chainage, not by the tangent predict assumes, and one near 60 degrees
// is placed by its own point at one traverse and where it meets the cross
// section at the next, metres apart. So the crossing service of
// crossing-service.toml, 10 A at 0.35 m running at 60 degrees to the
// feeder and fitted at 28-30 degrees of azimuth on four traverses, was
// followed on none and reported four times as a lone line "too few groups
// show it", with no crossing summarised (found in review). c may join when
// their azimuths agree within max(10 degrees, 3 sigma) and the distance is
// within the track gate widened, as predict's is, by the distance along a
// between the two points times the azimuths' sigma (at most 10 degrees).
func lineDistance(a, c *trackSource) (float64, bool) {
	if !a.steep || !c.steep || a.pair != nil || c.pair != nil {
		return 0, false
	}
	ua, okA := planUnit(a.lineDir)
	uc, okC := planUnit(c.lineDir)
	if !okA || !okC {
		return 0, false
	}
	cos := math.Min(1, math.Abs(ua[0]*uc[0]+ua[1]*uc[1]))
	dAz := math.Acos(cos) * 180 / math.Pi
	sAz := math.Hypot(a.azSigma, c.azSigma)
	if !finite(sAz) || dAz > math.Max(10, 3*sAz) {
		return 0, false
	}
	dx := [2]float64{c.linePoint[0] - a.linePoint[0], c.linePoint[1] - a.linePoint[1]}
	acrossA := math.Abs(dx[0]*ua[1] - dx[1]*ua[0])
	acrossC := math.Abs(dx[0]*uc[1] - dx[1]*uc[0])
	along := math.Abs(dx[0]*ua[0] + dx[1]*ua[1])
	d := math.Hypot(math.Max(acrossA, acrossC), c.lineDepth-a.lineDepth)
	sp := along * math.Min(sAz, 10) * math.Pi / 180
	gate := math.Hypot(trackGate(c.lineDepth, a.lineDepth), 2*sp)
	if !finite(d) || d > gate {
		return 0, false
	}
	return d, true
}

// associate links the candidate sources of the groups, given in route
// order, into tracks (see the rules above) and returns the tracks with at
// least minStations stations, in the order they are numbered (2, 3, ...).
func associate(groups [][]trackSource, minStations int) [][]trackSource {
	return associateRepeats(groups, minStations, 0)
}

// associateRepeats is associate on a primary route whose stations less
// than gap apart along it are repeats of one station (openTrack.predict).
func associateRepeats(groups [][]trackSource, minStations int, gap float64) [][]trackSource {
	var tracks []*openTrack
	for _, cands := range groups {
		if len(cands) == 0 {
			continue
		}
		type pair struct {
			track, cand int
			dist        float64
		}
		var pairs []pair
		for ti, t := range tracks {
			last := t.members[len(t.members)-1]
			if cands[0].pos-last.pos > maxTrackGap+1 {
				continue // closed
			}
			for ci, c := range cands {
				if (c.pair == nil) != (last.pair == nil) {
					// A pair's net current and a line's own current
					// are not one profile: a track takes one kind.
					continue
				}
				pred, sp := t.predict(c.chainage)
				gate := math.Hypot(trackGate(c.depth, last.depth), 2*sp)
				if d := math.Hypot(c.offset-pred, c.depth-last.depth); d <= gate {
					pairs = append(pairs, pair{ti, ci, d})
				} else if d, ok := lineDistance(&last, &c); ok {
					pairs = append(pairs, pair{ti, ci, d})
				}
			}
		}
		sort.SliceStable(pairs, func(i, j int) bool {
			a, b := pairs[i], pairs[j]
			if a.dist != b.dist {
				return a.dist < b.dist
			}
			if a.track != b.track {
				return a.track < b.track
			}
			return a.cand < b.cand
		})
		usedTrack := make([]bool, len(tracks))
		usedCand := make([]bool, len(cands))
		for _, p := range pairs {
			if usedTrack[p.track] || usedCand[p.cand] {
				continue
			}
			usedTrack[p.track], usedCand[p.cand] = true, true
			tracks[p.track].members = append(tracks[p.track].members, cands[p.cand])
		}
		// Sources left over start tracks, in order across the route so
		// that the fit's order of sources does not matter.
		var rest []trackSource
		for ci, c := range cands {
			if !usedCand[ci] {
				rest = append(rest, c)
			}
		}
		sort.SliceStable(rest, func(i, j int) bool { return rest[i].offset < rest[j].offset })
		for _, c := range rest {
			tracks = append(tracks, &openTrack{members: []trackSource{c}, gap: gap})
		}
	}
	type kept struct {
		members          []trackSource
		current, offset  float64
		first, createdAt int
	}
	var out []kept
	for i, t := range tracks {
		if trackPlaces(t.members, gap) < minStations {
			continue
		}
		cur := make([]float64, len(t.members))
		off := make([]float64, len(t.members))
		for k, m := range t.members {
			cur[k], off[k] = m.current, m.offset
		}
		out = append(out, kept{t.members, median(cur), median(off), t.members[0].pos, i})
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i], out[j]
		if a.current != b.current {
			return a.current > b.current
		}
		if a.first != b.first {
			return a.first < b.first
		}
		if a.offset != b.offset {
			return a.offset < b.offset
		}
		return a.createdAt < b.createdAt
	})
	res := make([][]trackSource, len(out))
	for i, k := range out {
		res[i] = k.members
	}
	return res
}

// trackCandidates lists, for each station of the primary route r in route
// order, the further line sources of its fit that may belong to a track,
// placed across the primary conductor. Groups whose fit failed give none;
// a group refitted with a magnetised object (Dipole) gives its further
// lines, fitted beside the object, like any other.
//
// When the route follows a go-and-return pair (pairRoute, circuitOf) the
// line paired with each group's strongest is part of conductor 1 and is
// not offered. A go-and-return pair beside conductor 1 is offered as one
// source (trackSource.pair), and its lines are not.
//
// A line over 3 sigma above the ground (lineAboveGround, the ground known
// from sensorHeight or the fits' reference level) is no buried conductor
// and is not offered.
func trackCandidates(fits []Fit, r *route.Route, pairRoute, ac bool, sensorHeight float64) [][]trackSource {
	out := make([][]trackSource, len(r.Stations))
	for k := range r.Stations {
		p := &r.Stations[k]
		if !p.OK || p.Index < 0 || p.Index >= len(fits) {
			continue
		}
		res := fits[p.Index].Result
		if res == nil || len(res.Sources) < 2 {
			continue
		}
		uh := math.Hypot(p.Dir[0], p.Dir[1])
		if uh == 0 {
			continue
		}
		u := [2]float64{p.Dir[0] / uh, p.Dir[1] / uh}
		right := [2]float64{u[1], -u[0]}
		zs := sensorsLevel(&fits[p.Index])
		partner := circuitPartner(&fits[p.Index], ac, pairRoute)
		if sw := sameWayOf(res); partner < 0 && sw != nil && fits[p.Index].sumSplit {
			partner = sw.Lines[1] // summed into the station (sameway.go)
		}
		inPair := map[int]bool{}
		// A crossing pair whose cores the fit resolved, moved from first
		// place (Fit.crossPairs), is offered as one source too, so that
		// its cores are not linked as lines with other lines (a crossing
		// pair's core and the pair's field fitted as one line at the next
		// traverse read as a 16 A "current leaving" a further conductor).
		pairs := append(slices.Clone(res.Pairs), fits[p.Index].validCrossPairs()...)
		for i := range pairs {
			q := &pairs[i]
			a, b := q.Lines[0], q.Lines[1]
			if a == 0 || b == 0 || a == partner || b == partner {
				continue // conductor 1's own pair (circuitOf)
			}
			off, depth := crossBelow(p.Point, u, right, inverse.SourceEstimate{Point: q.Point, Dir: q.Dir, Depth: q.Depth}, zs)
			if !soundPair(q, ac) || !finite(off) || !finite(depth) {
				continue
			}
			inPair[a], inPair[b] = true, true
			slope, slopeSigma := offsetSlope(u, right, q.Dir, q.AzimuthSigma)
			out[k] = append(out[k], trackSource{
				fit: p.Index, source: -1, pos: k, chainage: p.Chainage,
				offset: off, depth: depth, current: math.Abs(q.NetCurrent), pair: q,
				slope: slope, slopeSigma: slopeSigma,
			})
		}
		for j, s := range res.Sources[1:] {
			if s.Kind == KindDipole || j+1 == partner || inPair[j+1] {
				continue
			}
			// A line whose current the readings do not set apart from zero
			// (NoCurrent) is no conductor to follow: its position is not
			// determined. Such phantoms of a forced --count (a line 130 m
			// down at -1580 ± 7570 A beside a main with a traction return
			// 40 m off) were linked into conductors 2 to 6, with bends.
			if !sound(&s) || NoCurrent(&s, ac) || lineAboveGround(res, j+1, sensorHeight) {
				continue
			}
			off, depth := crossBelow(p.Point, u, right, s, zs)
			if !finite(off) || !finite(depth) {
				continue
			}
			var slope, slopeSigma float64
			steep := false
			if s.Identifiable.Azimuth {
				// A held direction (a single traverse that did not
				// determine it) says nothing: predicted flat.
				slope, slopeSigma = offsetSlope(u, right, s.Dir, s.AzimuthSigma)
				if v, ok := planUnit(s.Dir); ok {
					steep = math.Abs(v[0]*u[0]+v[1]*u[1]) < math.Cos(crossAngle*math.Pi/180)
				}
			}
			out[k] = append(out[k], trackSource{
				fit: p.Index, source: j + 1, pos: k, chainage: p.Chainage,
				offset: off, depth: depth, current: math.Abs(s.Current),
				slope: slope, slopeSigma: slopeSigma,
				steep: steep, linePoint: s.Point, lineDir: s.Dir,
				lineDepth: zs - s.Point[2], azSigma: s.AzimuthSigma,
			})
		}
	}
	return out
}

// crossOffset places line s across the primary conductor through p with
// horizontal unit direction u: its signed offset to the right, and its
// depth, where it meets the vertical plane through p square to u (or at its
// own point when it runs within 30 degrees of square to u in plan).
func crossOffset(p [3]float64, u, right [2]float64, s inverse.SourceEstimate) (offset, depth float64) {
	q, depth, _ := crossAt(p, u, s)
	return (q[0]-p[0])*right[0] + (q[1]-p[1])*right[1], depth
}

// crossBelow is crossOffset with, in place of the depth, the line's distance
// there below zs, its group's mean sensor height (sensorsLevel).
func crossBelow(p [3]float64, u, right [2]float64, s inverse.SourceEstimate, zs float64) (offset, below float64) {
	q, _, _ := crossAt(p, u, s)
	return (q[0]-p[0])*right[0] + (q[1]-p[1])*right[1], zs - q[2]
}

// sensorsLevel is the height, m (up), that fit f's lines' distance below the
// sensors is measured from: the mean height of its readings, as the fit's own
// (inverse.Result.ReferenceZ when its depths are below the mean sensor
// height). Without readings it is the level its depths are reported below.
func sensorsLevel(f *Fit) float64 {
	res := f.Result
	if res != nil && res.DepthReference == "mean sensor height" {
		return res.ReferenceZ
	}
	if f.Problem != nil && len(f.Problem.Points) > 0 {
		var s float64
		for _, q := range f.Problem.Points {
			s += q[2]
		}
		return s / float64(len(f.Problem.Points))
	}
	if res != nil {
		return res.ReferenceZ
	}
	return 0
}

// crossAt is where crossOffset places line s: the point q where it meets
// the vertical plane through p square to u, its depth there, and t, how
// far q lies along s.Dir from s.Point (0 when the line runs within 30
// degrees of square to u in plan and is placed at its own point).
func crossAt(p [3]float64, u [2]float64, s inverse.SourceEstimate) (q [3]float64, depth, t float64) {
	q, depth = s.Point, s.Depth
	if den := s.Dir[0]*u[0] + s.Dir[1]*u[1]; math.Abs(den) > 0.5 {
		t = -((q[0]-p[0])*u[0] + (q[1]-p[1])*u[1]) / den
		q = along(q, s.Dir, t)
		depth -= t * s.Dir[2]
	}
	return q, depth, t
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// sound reports whether a source's numbers can enter a route analysis:
// finite, with sigmas that are not negative.
func sound(s *inverse.SourceEstimate) bool {
	if s.Kind != KindDipole && !s.Identifiable.Current {
		// A line of an unresolved go-and-return pair (Group.Pair), or one
		// whose current the data do not determine: no conductor to follow.
		return false
	}
	vals := []float64{s.Point[0], s.Point[1], s.Point[2], s.Dir[0], s.Dir[1], s.Dir[2], s.Current, s.Phase, s.Depth}
	for _, v := range vals {
		if !finite(v) {
			return false
		}
	}
	for _, v := range []float64{s.CurrentSigma, s.PhaseSigma, s.DepthSigma} {
		if !finite(v) || v < 0 {
			return false
		}
	}
	return true
}

// soundPair reports whether a go-and-return pair's numbers can enter a
// route analysis as a conductor's (trackStation): finite, with sigmas
// that are not negative. An AC pair whose net current is within its
// noise has no phase to speak of: its phase sigma may be anything, and
// the route then learns nothing from it.
func soundPair(q *inverse.PairEstimate, ac bool) bool {
	vals := []float64{q.Point[0], q.Point[1], q.Point[2], q.Dir[0], q.Dir[1], q.Dir[2], q.NetCurrent, q.NetCurrentPhase, q.Depth}
	for _, v := range vals {
		if !finite(v) {
			return false
		}
	}
	sig := []float64{q.NetCurrentSigma, q.DepthSigma}
	if ac {
		sig = append(sig, q.NetCurrentPhaseSigma)
	}
	for _, v := range sig {
		if !finite(v) || v < 0 {
			return false
		}
	}
	return true
}

// trackStation is the route station of track member m: the primary's
// station of the group with m's conductor in place of the strongest one,
// and the group's fit statistics. A go-and-return pair (m.pair) gives its
// centre and direction, its net current with its phase (AC), and its
// centre's depth, as conductor 1's station does when the route follows a
// pair (buildGroup).
//
// A line lies at its fitted point when that is where it crosses the
// group's traverse (inverse.SourceEstimate.AtTrackCrossing), else where
// it meets the primary's cross section (crossAt). ownPoint places a line
// at its own fitted point whatever its angle to the primary
// (ownPointTrack): the track's placement is then the same at every
// station.
func trackStation(f *Fit, m *trackSource, primary *route.Placed, ownPoint bool) route.Station {
	if q := m.pair; q != nil {
		st := primary.Station
		st.Point, st.Dir = q.Point, q.Dir
		st.Current, st.CurrentSigma = q.NetCurrent, q.NetCurrentSigma
		st.Phase, st.PhaseSigma = q.NetCurrentPhase, q.NetCurrentPhaseSigma
		st.Depth, st.DepthSigma = q.Depth, q.DepthSigma
		st.Dipole, st.Object = false, nil
		st.Further = nil
		st.PairNet = true
		return st
	}
	j := m.source
	s := f.Result.Sources[j]
	st := primary.Station
	st.Point, st.Dir = s.Point, s.Dir
	st.Depth, st.DepthSigma = s.Depth, s.DepthSigma
	if s.AtTrackCrossing {
		// The fit's own point is where the line crosses the group's
		// traverse in plan (inverse.SourceEstimate.AtTrackCrossing), with
		// the depth and its sigma there, as conductor 1's station is.
		// Placed where the line meets conductor 1's cross section instead
		// (below), an oblique traverse's station lay off the traverse by
		// (the two conductors' distance apart along it) x cos(its angle to
		// conductor 1), and its depth was the line's there: two cables
		// 4-7 m apart along traverses at 65 degrees to the first, the
		// second dipping 1.7 degrees, had the second's stations 2.1-3.9 m
		// from its crossings, its chainages 8% short and its depths 25-100
		// sigma shallow (TestBuildObliqueTraverseFurtherStations). Where
		// crossAt would place the line by its own point, that point is the
		// crossing too. The offset that links the track (crossOffset) is
		// still measured in conductor 1's cross section.
		st.UnderCentre = false
	} else if uh := math.Hypot(primary.Dir[0], primary.Dir[1]); uh > 0 && !ownPoint {
		// Not at a traverse's crossing (fixed sensors, a compact group, a
		// traverse within 20 degrees of the line, a line steeper than 60
		// degrees): the station lies where the line meets the primary's
		// cross section (crossOffset), not at the fit's own point, the
		// line's point nearest the readings' centre: for a line crossing
		// the readings' line obliquely beyond their ends that point lies
		// metres off it, along the route, and moves there with the
		// azimuth's error. route.Build orients a station's current by
		// the points of its neighbours, and a cable crossing conductor 1
		// at 40 degrees, fitted 59 ± 11 degrees from square to a 12 m
		// traverse whose line it crosses 10.8 m beyond the end, had its
		// point 7 m behind the traverse and 4 m behind the previous
		// station's: its +5.1 A was turned to -5.1 A, and read as 13 A
		// leaving the cable (TestLocateObliqueCrossingBeyondEnds, found
		// while points lay under the readings' centre). The depth is the
		// line's there, its sigma widened by the dip's over the distance
		// along the line (the two taken as independent).
		u := [2]float64{primary.Dir[0] / uh, primary.Dir[1] / uh}
		q, depth, t := crossAt(primary.Point, u, s)
		if finite(q[0]) && finite(q[1]) && finite(q[2]) && finite(depth) {
			st.Point, st.Depth = q, depth
			if s.Identifiable.Dip && finite(s.DipSigma) && s.DipSigma > 0 {
				ds := t * math.Hypot(s.Dir[0], s.Dir[1]) * s.DipSigma * math.Pi / 180
				st.DepthSigma = math.Hypot(s.DepthSigma, ds)
			}
		}
	}
	st.Current, st.CurrentSigma = s.Current, s.CurrentSigma
	st.Phase, st.PhaseSigma = s.Phase, s.PhaseSigma
	st.Dipole, st.Object = false, nil
	st.Further = nil // the primary's further sources, judged on the primary route
	// One line's own current, not a pair's net current.
	st.PairNet = false
	if f.lineObject != nil && j == f.objectLine {
		// The object found beside this conductor (checkTrackDipoles):
		// reported on its track and left out of its current and cover.
		st.Dipole, st.Object = true, f.lineObject
	}
	return st
}

// planCos is |cos| of the angle in plan between directions a and b, or 1
// when either is vertical or not a number.
func planCos(a, b [3]float64) float64 {
	u, okU := planUnit(a)
	v, okV := planUnit(b)
	if !okU || !okV {
		return 1
	}
	return math.Abs(u[0]*v[0] + u[1]*v[1])
}

// ownPointTrack tells whether a track of lines whose directions make
// angles in plan with conductor 1 of the given |cosines| (one per station)
// is placed at every station by its own fitted point: when crossAt would
// place some of them by their own point (within 30 degrees of square to
// conductor 1) and others where they meet its cross section, and the
// first are at least half. A line crossing conductor 1 at about 60 degrees
// falls on either side of that rule from traverse to traverse, and the two
// placements lie metres apart along it (7 m for the service of
// crossing-service.toml at a traverse 26 m along the feeder): its stations
// then went back and forth along the track, and the crossing's chainage
// and length were wrong. A track placed mostly in the cross sections keeps
// the per-station rule, as before.
func ownPointTrack(cosines []float64) bool {
	own := 0
	for _, c := range cosines {
		if !(c > 0.5) {
			own++
		}
	}
	return own > 0 && own < len(cosines) && 2*own >= len(cosines)
}

// builtTrack is one kept track with its route analysis.
type builtTrack struct {
	number  int
	members []trackSource
	offset  float64
	route   *route.Route
	pair    bool // a go-and-return pair beside conductor 1 (trackSource.pair)
}

// buildTracks associates the further sources of the fits into tracks
// along the primary route r and analyses each kept one with route.Build
// and settings rs; pairRoute and ac as for trackCandidates.
func buildTracks(fits []Fit, r *route.Route, rs *route.Settings, minStations int, pairRoute, ac bool) ([]builtTrack, error) {
	if minStations < 1 {
		return nil, nil
	}
	tracks := associateRepeats(trackCandidates(fits, r, pairRoute, ac, rs.SensorHeight), minStations, r.RepeatGap())
	out := make([]builtTrack, 0, len(tracks))
	for i, members := range tracks {
		n := i + 2
		st := make([]route.Station, len(members))
		off := make([]float64, len(members))
		cosines := make([]float64, 0, len(members))
		for _, m := range members {
			if m.pair == nil {
				cosines = append(cosines, planCos(r.Stations[m.pos].Dir, fits[m.fit].Result.Sources[m.source].Dir))
			}
		}
		own := ownPointTrack(cosines)
		for k, m := range members {
			st[k] = trackStation(&fits[m.fit], &m, &r.Stations[m.pos], own)
			off[k] = m.offset
		}
		tr, err := route.Build(st, rs)
		if err != nil {
			return nil, fmt.Errorf("report: conductor %d: %w", n, err)
		}
		if pairRoute {
			caveatWeakTrackSteps(tr, fits, members, ac)
			caveatTradedTrackSteps(tr, r, fits, members, ac)
		}
		out = append(out, builtTrack{number: n, members: members, offset: median(off), route: tr, pair: members[0].pair != nil})
	}
	return out, nil
}

// addTracks records the tracks in d: each as a Track in d.Conductors with
// its Route, and its findings in d.Findings marked with the conductor's
// number and prefixed "conductor N: " (poor fits, which the primary route
// reports for the group, are not repeated), sorted with SortFindings.
func (d *Document) addTracks(tracks []builtTrack) {
	if len(tracks) == 0 {
		return
	}
	poor := map[string]bool{}
	for _, f := range d.Findings {
		if f.Kind == string(route.KindPoorFit) && f.Conductor == 0 {
			for _, k := range f.Groups {
				poor[k] = true
			}
		}
	}
	groups := map[string]*Group{}
	for i := range d.Groups {
		if _, dup := groups[d.Groups[i].Key]; !dup {
			groups[d.Groups[i].Key] = &d.Groups[i]
		}
	}
	for _, t := range tracks {
		// The track's stations widened for the model's error (a misfit,
		// a step nearby): the line each stands for, in its group's
		// results, as for conductor 1's (SetRoute). A pair's net current
		// stands for two lines and is left.
		if !t.pair {
			for k := range t.route.Stations {
				p := &t.route.Stations[k]
				if p.Model == nil && p.StepNear == nil {
					continue
				}
				if s := trackLine(groups[p.Key], t.number); s != nil {
					widenForModel(s, p)
				}
			}
		}
		tr := Track{Number: t.number, Offset: t.offset, Route: *d.routeOf(t.route)}
		tr.Route.PairNet = t.pair
		d.Conductors = append(d.Conductors, tr)
		for _, f := range t.route.Findings {
			if f.Kind == route.KindPoorFit && allIn(f.Keys, poor) {
				continue
			}
			nf := findingOf(f)
			nf.Conductor = t.number
			if t.pair {
				nf.Message = fmt.Sprintf("conductor %d: %s: %s", t.number, PairTrackNote, nf.Message)
				if f.Kind == route.KindShallowCover {
					nf.Message += "; " + PairCoreNote
				}
			} else {
				nf.Message = fmt.Sprintf("conductor %d: %s", t.number, nf.Message)
			}
			d.Findings = append(d.Findings, nf)
		}
	}
	SortFindings(d.Findings)
}

// PairTrackNote says, in a further conductor's findings, what its current
// and depth are when it is a go-and-return pair beside conductor 1
// (Track.Route.PairNet).
const PairTrackNote = "a go-and-return pair (its current is the pair's net current, the sum of its two cores' currents, so a step in it is current leaving or joining that circuit; its depth and cover are the pair's centre's)"

func allIn(keys []string, set map[string]bool) bool {
	for _, k := range keys {
		if !set[k] {
			return false
		}
	}
	return true
}

// trackPlaces counts the places along the route that a track's members
// stand at: members closer in chainage than gap (repeats of one station,
// a route walked again) are one place. A track must stand at minStations
// places to be followed: on pair-beside-cable-loss.toml walked twice
// (seeds 1 and 2 of 6) the stray shallow lines of a poor fit and of its
// repeat, with one more 20 m on, were followed as further conductors and
// headlined a false 0.08 m least cover (found in regression review); a
// single walk never followed them. With gap 0 every member counts.
func trackPlaces(members []trackSource, gap float64) int {
	if gap <= 0 {
		return len(members)
	}
	ch := make([]float64, len(members))
	for i, m := range members {
		ch[i] = m.chainage
	}
	sort.Float64s(ch)
	n := 0
	for i, c := range ch {
		if i == 0 || c-ch[i-1] >= gap {
			n++
		}
	}
	return n
}

// trackLine is g's one line source of conductor n, or nil when g has none
// or more than one (a sum of lines).
func trackLine(g *Group, n int) *Source {
	if g == nil {
		return nil
	}
	var line *Source
	for j := range g.Sources {
		if s := &g.Sources[j]; s.Kind == KindLine && s.Conductor == n {
			if line != nil {
				return nil
			}
			line = s
		}
	}
	return line
}

// widenBesideSteps widens the sigmas of conductor 1's stations (r) for
// the current steps found on the further conductors' tracks beside it
// (route.Route.WidenForStepsBeside), as each track's own stations are
// widened for its steps: a step's field biases the fits of both lines at
// the traverses near it. Each step is placed on r by the stations the
// two routes share (its location's sigma about it, within its bracket),
// with the track's current, depth and offset across r at its bracketing
// stations. Go-and-return pairs' tracks are left (a pair's net current
// stands for two lines).
func widenBesideSteps(r *route.Route, tracks []builtTrack) {
	if r == nil {
		return
	}
	at := make(map[string]*route.Placed, len(r.Stations))
	for k := range r.Stations {
		at[r.Stations[k].Key] = &r.Stations[k]
	}
	var steps []route.StepBeside
	for _, t := range tracks {
		if t.pair || t.route == nil {
			continue
		}
		ts := t.route.Stations
		var xs, cs []float64 // the track's chainage and r's, at the stations both have
		byKey := map[string]*route.Placed{}
		for k := range ts {
			byKey[ts[k].Key] = &ts[k]
			if p := at[ts[k].Key]; p != nil && (len(xs) == 0 || ts[k].Chainage > xs[len(xs)-1]) {
				xs, cs = append(xs, ts[k].Chainage), append(cs, p.Chainage)
			}
		}
		if len(xs) < 2 {
			continue
		}
		onR := func(x float64) float64 {
			i := sort.SearchFloat64s(xs, x)
			i = min(max(i, 1), len(xs)-1)
			return cs[i-1] + (x-xs[i-1])*(cs[i]-cs[i-1])/(xs[i]-xs[i-1])
		}
		for _, f := range t.route.Findings {
			if f.Kind != route.KindCurrentStep || len(f.Keys) < 2 {
				continue
			}
			var dI, loc, locSigma float64
			hasLoc := false
			for _, v := range f.Values {
				switch v.Name {
				case "step":
					dI = math.Abs(v.Value)
				case "location (chainage)":
					loc, locSigma, hasLoc = v.Value, math.Abs(v.Sigma), finite(v.Value)
				}
			}
			a, b := byKey[f.Keys[0]], byKey[f.Keys[len(f.Keys)-1]]
			if !(dI > 0) || a == nil || b == nil || at[a.Key] == nil || at[b.Key] == nil {
				continue
			}
			lo, hi := f.From, f.To
			if hasLoc {
				lo, hi = math.Max(loc-locSigma, f.From), math.Min(loc+locSigma, f.To)
				if lo > hi {
					lo, hi = loc, loc
				}
			}
			lo, hi = onR(lo), onR(hi)
			if lo > hi {
				lo, hi = hi, lo
			}
			var off, below float64
			for _, q := range []*route.Placed{a, b} {
				p := at[q.Key]
				u := math.Hypot(p.Dir[0], p.Dir[1])
				if u > 0 {
					off += math.Abs((q.Point[0]-p.Point[0])*p.Dir[1]/u-(q.Point[1]-p.Point[1])*p.Dir[0]/u) / 2
				}
				below += (q.Depth - p.Depth) / 2
			}
			steps = append(steps, route.StepBeside{Lo: lo, Hi: hi, DI: dI,
				Current: math.Max(math.Abs(a.Current), math.Abs(b.Current)), Below: below, Offset: off})
		}
	}
	r.WidenForStepsBeside(steps)
}
