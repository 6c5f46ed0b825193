package report

import (
	"math"

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
// centre or the split's sum there. A swapped fit is a copy of the caller's
// Result with its two lines exchanged (RelativePhase, not reported, stays
// relative to the fit's strongest line).

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
		len(res.Opposed) > 0 || len(res.SameWay) > 0 {
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
		r := *res
		r.Sources = append([]inverse.SourceEstimate(nil), res.Sources...)
		r.Sources[0], r.Sources[pick] = r.Sources[pick], r.Sources[0]
		fits[bi].Result = &r
	}
}
