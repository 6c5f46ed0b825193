package report

import (
	"math"
	"sort"

	"undercurrent/inverse"
)

// Conductor 1 among lines of equal current.
//
// inverse lists a fit's lines strongest first, and the route follows the
// first line of each group (buildGroup), the others being linked to it by
// their offsets (tracks.go). When two lines carry currents the readings do
// not tell apart (two cables of one feed laid side by side, the two return
// rails of a tramway), which of them is "strongest" is decided by the noise
// and changes from traverse to traverse: conductor 1 then jumped between
// the cables, its route zigzagged across them (setting off 117 degrees from
// north for cables running east, its chainage 28.8 m over traverses 27 m
// apart), the further cable became two half-length "conductors" 1.5 m to
// either side, and on a tramway the 4 A cable carrying stray current beside
// the rails was followed by no conductor at the traverses where the rails
// swapped (found in review).
//
// leadByPosition therefore picks conductor 1 by where it lies where the
// currents do not pick it. A group is ambiguous when a further line whose
// current is found lies within leadK combined sigmas of the strongest in
// |current| (the two sigmas taken as independent; a difference the
// readings resolve keeps the strongest first, as before). The groups that
// are not ambiguous keep their strongest line; the ambiguous ones are then
// settled one at a time, nearest (by the readings' centres) to a settled
// group first, each taking of its strongest and the lines tied with it the
// one nearest the settled neighbour's conductor 1, the neighbour's fitted
// line carried on to it (the distance from the candidate's point to that
// line in space, so that depth counts as well as offset). With no group
// settled by its currents, the first usable group in the fits' order keeps
// its strongest line and the others follow it.
//
// A group whose strongest line belongs to a go-and-return pair or a
// same-way split (inverse.Result.Pairs, Opposed, SameWay, which inverse
// forms about the strongest line) keeps it: the route follows the pair's
// centre or the split's sum there. At AC an Opposed line counts so only
// within polyphaseReturnDeg of anti-phase (opposedReturn): the cores of a
// balanced three-phase circuit, 120 degrees apart, are each "opposed" to
// the strongest, and conductor 1 was whichever core the noise made the
// strongest, 0.3-0.6 m from traverse to traverse on a flat circuit, no
// three-phase set named (review rv28c). A swapped fit is a copy of the
// caller's Result with its two lines exchanged (withLead: Opposed and
// SameWay, formed about the line moved, dropped; RelativePhase, not
// reported, stays relative to the fit's strongest line).

// leadK is the number of combined sigmas within which two lines' currents
// are taken as not told apart (leadByPosition).
const leadK = 3

// leadCandidates returns the lines of f, the first (the strongest) among
// them, that may be conductor 1 at this group: the strongest and the lines
// whose |current| lies within leadK sigmas of it; nil when the fit is not
// usable, or its strongest line may not be exchanged (see leadByPosition).
func leadCandidates(f *Fit, ac bool) []int {
	res := f.Result
	if res == nil || f.Dipole || f.object != nil || f.sumSplit || len(res.Sources) < 2 ||
		!(res.Status.Converged() || res.Status == inverse.Stalled) ||
		opposedReturn(res, ac) || len(res.SameWay) > 0 {
		return nil
	}
	s0 := &res.Sources[0]
	if s0.Kind == KindDipole || !sound(s0) || NoCurrent(s0, ac) {
		return nil
	}
	inPair := map[int]bool{}
	for _, p := range res.Pairs {
		inPair[p.Lines[0]], inPair[p.Lines[1]] = true, true
	}
	if inPair[0] {
		return nil
	}
	out := []int{0}
	for j := 1; j < len(res.Sources); j++ {
		s := &res.Sources[j]
		if s.Kind == KindDipole || inPair[j] || !sound(s) || NoCurrent(s, ac) {
			continue
		}
		if math.Abs(math.Abs(s0.Current)-math.Abs(s.Current)) <= leadK*math.Hypot(s0.CurrentSigma, s.CurrentSigma) {
			out = append(out, j)
		}
	}
	return out
}

// polyphaseReturnDeg is the angle, degrees, from anti-phase to the
// strongest line within which an AC line that inverse pairs with it as
// carrying the opposite current (Result.Opposed: over 90 degrees apart)
// may be its return, and keeps the fit's lines in their order
// (opposedReturn). It is the angle within which addTrackPhases words a
// conductor not read as a return as one that an inductive path may turn
// so far; the cores of a three-phase circuit lie 120 degrees apart, 60
// from anti-phase.
const polyphaseReturnDeg = 45.0

// opposedReturn reports whether the strongest line of res has a line
// beside it carrying the opposite current that may be its return, the
// two a go-and-return pair the route follows by its centre (circuitOf):
// for DC any such line (Result.Opposed), for AC one whose phase lies
// within polyphaseReturnDeg of anti-phase to the strongest's (each read
// along its own direction, turned where the two directions differ in
// sense). The cores of a three-phase circuit are 120 degrees apart, so
// inverse pairs each two of them as opposed; taken as a go-and-return
// pair, their order was never changed, and where their currents are
// balanced conductor 1 was whichever core the noise made the strongest,
// moving between cores from traverse to traverse (leadByPosition).
func opposedReturn(res *inverse.Result, ac bool) bool {
	if len(res.Opposed) == 0 {
		return false
	}
	if !ac {
		return true
	}
	s0 := &res.Sources[0]
	for _, p := range res.Opposed {
		j := p.Lines[0] + p.Lines[1] // one of them is 0, the strongest
		if j <= 0 || j >= len(res.Sources) {
			return true
		}
		o := &res.Sources[j]
		rel := o.Phase - s0.Phase
		if s0.Dir[0]*o.Dir[0]+s0.Dir[1]*o.Dir[1]+s0.Dir[2]*o.Dir[2] < 0 {
			rel += 180
		}
		if 180-math.Abs(wrapDeg(rel)) <= polyphaseReturnDeg {
			return true
		}
	}
	return false
}

// pointToLine is the distance in space from point p to the line through q
// along unit direction u, m.
func pointToLine(p, q, u [3]float64) float64 {
	d := [3]float64{p[0] - q[0], p[1] - q[1], p[2] - q[2]}
	t := d[0]*u[0] + d[1]*u[1] + d[2]*u[2]
	return math.Sqrt(math.Max(d[0]*d[0]+d[1]*d[1]+d[2]*d[2]-t*t, 0))
}

// leadByPosition makes the first line of each fit the one that continues
// conductor 1 where the currents of its strongest lines are not told apart
// (see above), replacing such a fit's Result by a copy with the chosen line
// first. fits is changed in place: the caller passes its own copy.
func leadByPosition(fits []Fit, ac bool) {
	cands := make([][]int, len(fits))
	settled := make([]bool, len(fits))
	usable, open := 0, 0
	first := -1
	for i := range fits {
		c := leadCandidates(&fits[i], ac)
		switch {
		case c == nil:
			// Not usable, or its lead is not to be exchanged; it still
			// guides its neighbours when its first line's current is found.
			if r := fits[i].Result; r != nil && len(r.Sources) > 0 && r.Sources[0].Kind != KindDipole &&
				(r.Status.Converged() || r.Status == inverse.Stalled) && !fits[i].Dipole &&
				sound(&r.Sources[0]) && !NoCurrent(&r.Sources[0], ac) {
				settled[i] = true
				usable++
			}
		case len(c) == 1:
			settled[i] = true
			usable++
		default:
			cands[i] = c
			open++
			if first < 0 {
				first = i
			}
		}
	}
	if open == 0 {
		return
	}
	if usable == 0 {
		settled[first] = true
		open--
	}
	cent := make([][3]float64, len(fits))
	for i := range fits {
		cent[i] = centroid(fits[i].Problem.Points)
	}
	for ; open > 0; open-- {
		// The open group nearest a settled one, and that one.
		bi, bref, best := -1, -1, math.Inf(1)
		for i := range fits {
			if settled[i] || cands[i] == nil {
				continue
			}
			for j := range fits {
				if !settled[j] {
					continue
				}
				if d := math.Hypot(cent[i][0]-cent[j][0], cent[i][1]-cent[j][1]); d < best {
					bi, bref, best = i, j, d
				}
			}
		}
		if bi < 0 {
			return
		}
		settled[bi] = true
		ref := &fits[bref].Result.Sources[0]
		res := fits[bi].Result
		pick, near := 0, math.Inf(1)
		for _, j := range cands[bi] {
			if d := pointToLine(res.Sources[j].Point, ref.Point, ref.Dir); d < near {
				pick, near = j, d
			}
		}
		if pick == 0 {
			continue
		}
		// withLead drops the lines inverse paired with the strongest as
		// opposed (Result.Opposed, here none that may be its return:
		// leadCandidates); they describe the line now moved.
		fits[bi].Result = withLead(res, pick)
	}
}

// Conductor 1 at a crossing.
//
// A line crossing the route (a service, a go-and-return feed) whose
// current is larger than the surveyed conductor's is the strongest line
// of the fit at its traverse, and leadCandidates offers the others only
// where the currents tie: the route then took the crossing as conductor
// 1's station there. In review a +15/-14.6 A feed pair crossing a 2.2 A
// pipe at 58 degrees gave false "current joining" and "current leaving"
// warnings of 13-16 A, a shallow-cover warning on conductor 1 at the
// pair's depth, no word of the crossing, and hid a drum at the next
// traverse; a 15 A service across a 3 A feeder read as a "local
// disturbance" on conductor 1.
//
// leadByContinuity therefore keeps conductor 1 on the line that continues
// it from the neighbouring traverses, before current size: where the
// strongest line of a group runs over crossAngle degrees in plan from the
// direction the neighbours' conductor 1 agrees on (continuityNeighbours),
// or carries over continuityLevel times their median current and lies
// off their track (a -10 A line of a crossing pair fitted near the
// route's direction 12 m beside a 2.2 A pipe), and a further line runs
// within crossAngle of it at every one of them, lies near one of their
// lines carried on (pointToLine within continuityReach; for a strongest
// line running off, within half the plan distance to that group when that
// is more) and carries a current of that conductor's level (within a
// factor continuityLevel of their median) the same way, that line becomes
// the first. A strongest line along the direction that lies on their
// track (within continuityReach of one of their lines carried on) is the
// conductor itself, whatever its current: a fault or a bond between
// traverses changes the conductor's current, not where it lies, and near
// a route's end most of the six neighbours lie on the far side of it (a
// 25 A bond between the last traverses but one of a 5 A pipe, a 5 A cable
// 3 m beside it: the 30 A pipe at the last two traverses was taken for a
// crossing and conductor 1 moved onto the cable, the bond's warning lost
// and the cable said to end; found in review). The strongest stays a further line, reported as
// one (a crossing service: the tracks and the lone-line findings); an
// unresolved go-and-return pair it belongs to keeps its pair
// (Result.Pairs, their indices carried over), and a resolved one
// (Result.Opposed, which inverse forms about the strongest line) is kept
// apart (Fit.crossPairs): the tracks follow it as one source, a pair, and
// the lone-line findings name it.

// continuityNeighbours is how many of the nearest groups (by the readings'
// centres) are asked for conductor 1's direction; at least two of them
// must agree within crossAngle, and more of them than on any other
// direction. Six outvote a crossing captured at up to two neighbouring
// traverses (a crossing feed pair seen at three successive traverses 5 m
// apart: with four, the two captured neighbours tied with the conductor's
// two, and the nearest set, the crossing's, won).
const continuityNeighbours = 6

// continuityLevel bounds the ratio of a continuing line's |current| to the
// median of the agreeing neighbours' conductor 1: a tee or a fault between
// traverses changes the current, a stray weak line is not the conductor.
const continuityLevel = 4.0

// continuityReach is the distance in space, m, within which a continuing
// line must pass one of the agreeing neighbours' conductor 1 carried on,
// or, where the strongest line runs off their direction, half the plan
// distance between the two groups' readings when that is more (a route
// bending by up to crossAngle between them). A strongest line along their
// direction within it of one of their lines lies on their track.
const continuityReach = 2.0

// planAgree reports whether plan directions a and b (unit, either sense)
// lie within crossAngle of each other.
func planAgree(a, b [2]float64) bool {
	return math.Abs(a[0]*b[0]+a[1]*b[1]) >= math.Cos(crossAngle*math.Pi/180)
}

// leadByContinuity makes the first line of each fit whose strongest line
// crosses the route the line that continues conductor 1 from the
// neighbouring groups (see above), replacing such a fit's Result by a copy
// with the chosen line first. fits is changed in place: the caller passes
// its own copy. Run before leadByPosition.
func leadByContinuity(fits []Fit, ac bool) {
	type lead struct {
		ok          bool
		dir         [2]float64
		cur, signed float64 // |current|, and the current along dir
		point, dir3 [3]float64
	}
	n := len(fits)
	if n < 3 {
		return
	}
	leads := make([]lead, n)
	cent := make([][3]float64, n)
	leadOf := func(i int) lead {
		f := &fits[i]
		r := f.Result
		if r == nil || len(r.Sources) == 0 || f.Dipole || !(r.Status.Converged() || r.Status == inverse.Stalled) {
			return lead{}
		}
		s := &r.Sources[0]
		if s.Kind == KindDipole || !sound(s) || NoCurrent(s, ac) || !s.Identifiable.Azimuth {
			return lead{}
		}
		v, ok := planUnit(s.Dir)
		if !ok {
			return lead{}
		}
		return lead{ok: true, dir: v, cur: math.Abs(s.Current), signed: s.Current, point: s.Point, dir3: s.Dir}
	}
	for i := range fits {
		if p := fits[i].Problem; p != nil && len(p.Points) > 0 {
			cent[i] = centroid(p.Points)
			leads[i] = leadOf(i)
		}
	}
	planDist := func(a, b int) float64 {
		return math.Hypot(cent[a][0]-cent[b][0], cent[a][1]-cent[b][1])
	}
	// A group settled here guides its neighbours in the next pass; a few
	// passes settle a crossing seen at two traverses side by side.
	for pass := 0; pass < 3; pass++ {
		changed := false
		for i := range fits {
			f := &fits[i]
			res := f.Result
			if !leads[i].ok || f.object != nil || f.sumSplit || len(res.Sources) < 2 {
				continue
			}
			// The nearest groups with a conductor 1 to go by.
			var nb []int
			for j := range fits {
				if j != i && leads[j].ok {
					nb = append(nb, j)
				}
			}
			sort.SliceStable(nb, func(a, b int) bool { return planDist(i, nb[a]) < planDist(i, nb[b]) })
			if len(nb) > continuityNeighbours {
				nb = nb[:continuityNeighbours]
			}
			// The direction most of them agree on: the agreeing set of
			// the nearest neighbour that has the most others with it;
			// none when another direction has as many.
			var agree []int
			tied := false
			for _, a := range nb {
				var with []int
				for _, b := range nb {
					if planAgree(leads[a].dir, leads[b].dir) {
						with = append(with, b)
					}
				}
				switch {
				case len(with) > len(agree):
					agree, tied = with, false
				case len(with) == len(agree) && !planAgree(leads[a].dir, leads[agree[0]].dir):
					tied = true
				}
			}
			if len(agree) < 2 || tied {
				continue
			}
			// Their level, and which way their current flows along the
			// first one's direction.
			ref := leads[agree[0]].dir
			along := func(d [2]float64, cur float64) float64 {
				if d[0]*ref[0]+d[1]*ref[1] < 0 {
					return -cur
				}
				return cur
			}
			var levels, ways []float64
			for _, a := range agree {
				levels = append(levels, leads[a].cur)
				ways = append(ways, along(leads[a].dir, leads[a].signed))
			}
			level, way := median(levels), median(ways)
			// The strongest line breaks the continuity when it runs off
			// the agreed direction, or carries far more than their level
			// and lies off their track: not within continuityReach of any
			// of their lines carried on. A line on their track with more
			// current is the conductor itself, current joining it (a bond,
			// a drain point, a tee feeding in) or leaving it between
			// traverses (a fault), and keeps its place: taken by current
			// alone, a 30 A pipe at the traverse past a 25 A bond near the
			// route's end was moved off for a 5 A cable 3 m beside it,
			// the bond's warning lost and the cable said to end.
			onTrack := func(p [3]float64) bool {
				for _, a := range agree {
					if pointToLine(p, leads[a].point, leads[a].dir3) <= continuityReach {
						return true
					}
				}
				return false
			}
			off := true
			for _, a := range agree {
				if planAgree(leads[i].dir, leads[a].dir) {
					off = false
				}
			}
			if !off && (leads[i].cur <= continuityLevel*level || onTrack(leads[i].point)) {
				continue
			}
			pick, best := -1, math.Inf(1)
			for j := 1; j < len(res.Sources); j++ {
				s := &res.Sources[j]
				if s.Kind == KindDipole || !sound(s) || NoCurrent(s, ac) || !s.Identifiable.Azimuth {
					continue
				}
				v, ok := planUnit(s.Dir)
				if !ok {
					continue
				}
				runs := true
				for _, a := range agree {
					if !planAgree(v, leads[a].dir) {
						runs = false
					}
				}
				// Of their level, flowing their way (a DC line carrying
				// current against them is another conductor; an AC
				// current is an RMS, its sense in the phase, not asked).
				c := math.Abs(s.Current)
				if !runs || !(c*continuityLevel >= level && c <= continuityLevel*level) || !ac && along(v, s.Current)*way < 0 {
					continue
				}
				// Near one of their lines carried on: within half the plan
				// distance to that group when the strongest runs off (the
				// route may bend there), on their track when it runs along.
				for _, a := range agree {
					reach := continuityReach
					if off {
						reach = math.Max(continuityReach, planDist(i, a)/2)
					}
					if d := pointToLine(s.Point, leads[a].point, leads[a].dir3); d <= reach && d < best {
						pick, best = j, d
					}
				}
			}
			if pick < 0 {
				continue
			}
			f.Result = withLead(res, pick)
			// The crossing's own partner core, when the fit resolved one:
			// the lone-line findings name the pair (addLoneCover).
			f.crossPairs = nil
			for _, q := range res.Opposed {
				a, b := q.Lines[0], q.Lines[1]
				if a == pick || b == pick || (a != 0 && b != 0) {
					continue
				}
				if a == 0 {
					a = pick
				} else {
					b = pick
				}
				q.Lines = [2]int{a, b}
				f.crossPairs = append(f.crossPairs, crossPair{q: q, cur: [2]float64{f.Result.Sources[a].Current, f.Result.Sources[b].Current}})
			}
			leads[i] = leadOf(i)
			changed = true
		}
		if !changed {
			break
		}
	}
}

// withLead is a copy of res with line pick first and the first line in
// its place; the go-and-return pairs keep their lines (their indices
// exchanged likewise). Opposed and SameWay, which inverse forms about the
// strongest line, are dropped: they describe the line now moved.
func withLead(res *inverse.Result, pick int) *inverse.Result {
	r := *res
	r.Sources = append([]inverse.SourceEstimate(nil), res.Sources...)
	r.Sources[0], r.Sources[pick] = r.Sources[pick], r.Sources[0]
	swap := func(k int) int {
		switch k {
		case 0:
			return pick
		case pick:
			return 0
		}
		return k
	}
	r.Pairs = append([]inverse.PairEstimate(nil), res.Pairs...)
	for k := range r.Pairs {
		r.Pairs[k].Lines = [2]int{swap(r.Pairs[k].Lines[0]), swap(r.Pairs[k].Lines[1])}
	}
	r.Opposed, r.SameWay = nil, nil
	return &r
}
