package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse/route"
)

// coverAt is one conductor's least cover for LeastCover: number is the
// conductor's (Track.Number, 1 for the route's), 0 for a go-and-return
// pair beside conductor 1; key and chainage name its station; doubt, when
// not empty, says why it may be a model artefact (coverDoubt).
type coverAt struct {
	number       int
	key          string
	chainage     float64
	cover, sigma float64
	doubt        string
	current      float64 // a further line's current, A (shallowLoneLine)
	pair         bool    // a further conductor that is a go-and-return pair (Route.PairNet)
	// precise, when not empty, gives the best determined station beside a
	// loosely fitted shallowest one (preciseCoverOf): "T06: 0.347 ± 0.005".
	precise string
	// sound marks conductor 1's shallowest station among those for which
	// routeCoverDoubt finds nothing, given beside a doubtful shallowest.
	sound bool
	// along marks a lone further line (shallowLoneLine) running along
	// conductor 1 (within route.AlongAngle in plan) rather than across it.
	along bool
}

// where names the station: "conductor 2 at T05 (chainage 20 m along
// conductor 2)".
func (c coverAt) where() string {
	switch c.number {
	case 0:
		return fmt.Sprintf("the go-and-return pair's centre at %s (chainage %.0f m); %s", c.key, c.chainage, PairCoreNote)
	case 1:
		return fmt.Sprintf("conductor 1 at %s (chainage %.0f m)", c.key, c.chainage)
	}
	if c.pair {
		return fmt.Sprintf("the centre of conductor %d, a go-and-return pair, at %s (chainage %.0f m along conductor %d); %s", c.number, c.key, c.chainage, c.number, PairCoreNote)
	}
	return fmt.Sprintf("conductor %d at %s (chainage %.0f m along conductor %d)", c.number, c.key, c.chainage, c.number)
}

// weakCoverShare is the share of the strongest current of its group under
// which a further conductor's station counts as a weak line for the least
// cover (coverDoubt). inverse notes lines under 2% of the strongest as
// weak, and the report's object search leaves out lines under 5% as the
// kind that absorb a field the model does not describe (dipole.go); in
// review, lines of 2.2% and 2.9% of a 19 A cable, 0.10-0.25 m under the
// ground, were absorbing the field of a go-and-return pair the fit did
// not part, and set the survey's least cover.
const weakCoverShare = 0.05

// inconsistentCurrent is the ratio of the largest to the smallest current
// along a track above which its current is not taken as consistent: one
// conductor keeps its current between tees and faults, while a line
// absorbing misfit takes whatever current the misfit needs (0.55 A at four
// stations and 6.5 A at the fifth, in review).
const inconsistentCurrent = 2.0

// coverDoubt says why further conductor t's least cover, at its station
// s, may be a model artefact rather than a conductor: s is a weak line
// (under weakCoverShare of the strongest current in its group), or t's
// current is not consistent along its used stations (it changes by more
// than inconsistentCurrent times, and its own reported steps do not
// account for that: stepsExplain); the currents are taken at the first
// walk's level on a route walked more than once (Station.levelCurrent),
// as its steps and ends are; or, stated apart from those, that its
// cover at s is within one sigma of the ground or above it, so that the
// readings hardly fix it. "" when none: "a weak line that may
// be a model artefact (2.9% of the strongest current in its group; its
// current runs from 0.549 A to 6.5 A along its track)".
func coverDoubt(d *Document, t *Track, s Station) string {
	var why []string
	weak := false
	// The current's range along the track, and whether it changes by more
	// than inconsistentCurrent times where the stations tell it: a
	// station within wanderK of its own sigma of the track's median
	// |current| keeps the median's current for the test. A tracer steady
	// at 0.80-0.99 A over 11 of its 13 stations, two near a crossing
	// reading 2.6 ± 0.8 and 3.3 ± 0.8 A, was said to run "from 0.803 A to
	// 3.27 A along its track" (review rv28b).
	var cur, sig []float64
	for i := range t.Route.Stations {
		if u := &t.Route.Stations[i]; u.Used {
			c, sg := u.levelCurrent()
			cur, sig = append(cur, math.Abs(c)), append(sig, sg)
		}
	}
	lo, hi := math.Inf(1), 0.0
	tlo, thi := math.Inf(1), 0.0
	if len(cur) > 0 {
		med := median(cur)
		for i, c := range cur {
			lo, hi = math.Min(lo, c), math.Max(hi, c)
			if math.Abs(c-med) <= wanderK*sig[i] {
				c = med
			}
			tlo, thi = math.Min(tlo, c), math.Max(thi, c)
		}
	}
	inconsistent := len(cur) >= 2 && thi > inconsistentCurrent*tlo && !stepsExplain(d, t)
	st := steadyAt(t, s)
	if strongest := strongestCurrent(d, s.Key); strongest > 0 {
		if share := math.Abs(s.Current) / strongest; share < weakCoverShare {
			weak = true
			w := fmt.Sprintf("%.2g%% of the strongest current in its group", 100*share)
			if st.ok && !inconsistent {
				// Said as the counts are: a steady weak line may be a
				// conductor of its own (a tracer wire, a bond) as well as
				// a line absorbing the field of conductors the fit does
				// not part, which keeps its current so too.
				w += fmt.Sprintf(", though steady at %s to %s A over %d of its %d stations: a weak conductor of its own (a tracer wire, a bond) keeps its current so, and so does a line absorbing the field of conductors the fit does not part", num(st.lo), num(st.hi), st.k, st.n)
			}
			why = append(why, w)
		}
	}
	if inconsistent {
		why = append(why, fmt.Sprintf("its current runs from %s A to %s A along its track", num(lo), num(hi)))
	}
	// A cover within one sigma of the ground (or above it) is not fixed by
	// the readings: a cable crossing 10.8 m beyond a 12 m traverse's end was
	// read 0.66 ± 0.67 m down (truth 0.7), and before its station was placed
	// on the traverse, -0.20 ± 0.52 m, which the sentence gave as the
	// survey's least cover.
	loose := ""
	if c, ok := d.cover(s.Depth); ok {
		if sg := d.coverSigma(s.DepthSigma); !(c > sg) {
			loose = fmt.Sprintf("its cover there, %s m, is within its uncertainty of the ground or above it: the readings hardly fix its depth", PlusMinus(c, sg))
		}
	}
	if len(why) == 0 {
		if loose == "" {
			return ""
		}
		return "a line whose depth is loosely fitted (" + loose + ")"
	}
	if loose != "" {
		why = append(why, loose)
	}
	what := "a line"
	if weak {
		what = "a weak line"
	}
	return what + " that may be a model artefact (" + strings.Join(why, "; ") + ")"
}

// steadyAt tells whether further conductor t keeps one current along
// its track, station s among the stations that keep it (ok): at least
// steadyStations used stations, three quarters of them or more (s one of
// them) within steadyBand of their median |current| (at the first walk's
// level, as coverDoubt takes them), and how many (k of n) and between
// which currents (lo to hi, A). One conductor keeps its current between
// tees and faults; a line absorbing misfit at a few stations takes
// whatever current the misfit needs at each. A telecom tracer seen at 13
// of 15 traverses at 0.80-0.99 A beside 60 A feeders, two stations near a
// crossing reading 2.6 and 3.3 A, was called "a weak line that may be a
// model artefact (...; its current runs from 0.803 A to 3.27 A along its
// track)" in the least cover, as though its current wandered (review
// rv28b).
func steadyAt(t *Track, s Station) (st steady) {
	var cur []float64
	for i := range t.Route.Stations {
		if u := &t.Route.Stations[i]; u.Used {
			c, _ := u.levelCurrent()
			cur = append(cur, math.Abs(c))
		}
	}
	st.n = len(cur)
	if st.n < steadyStations {
		return st
	}
	med := median(cur)
	if !(med > 0) {
		return st
	}
	in := func(c float64) bool { return c <= steadyBand*med && c*steadyBand >= med }
	st.lo = math.Inf(1)
	for _, c := range cur {
		if in(c) {
			st.k++
			st.lo, st.hi = math.Min(st.lo, c), math.Max(st.hi, c)
		}
	}
	c, _ := s.levelCurrent()
	st.ok = 4*st.k >= 3*st.n && in(math.Abs(c))
	return st
}

// steady is what steadyAt finds.
type steady struct {
	ok     bool
	k, n   int
	lo, hi float64
}

// wanderK is how many of its own sigmas a station's current may lie from
// its track's median and still count as that current for coverDoubt's
// test of a current that is not consistent along the track.
const wanderK = 3.5

// steadyStations and steadyBand set steadyAt: five stations at the least,
// and a current within 25% of the median (a conductor's current, fitted
// beside stronger ones, wanders by some tens of per cent between
// traverses; a line absorbing misfit by factors).
const (
	steadyStations = 5
	steadyBand     = 1.25
)

// stepsExplain reports whether the current steps reported on further
// conductor t (its current-step findings; a current-change, under
// route.Settings.MinStep of the current, cannot account for a doubling) account for
// how its current changes along its track: between one step and the next
// (and before the first, after the last) the currents of its used
// stations, at the first walk's level, stay within inconsistentCurrent
// times of each other, and the levels of those stretches run one way
// along the track, as current leaving a conductor at faults and tees (or
// joining it) gives. A station between a step's two stations reads
// between the levels, as a loss spread between them gives, and belongs
// to neither stretch. A line absorbing misfit takes whatever current the
// misfit needs and drops back (0.55 A at four stations and 6.5 A at the
// fifth, in review), which two steps of opposite sense describe but do
// not explain; false when t has no step. Without this, a 25 A feeder losing
// 13 A beside an 18 A supply was called a line that may be a model
// artefact because its current ran from 12 A to 25 A, the step the same
// run reported.
func stepsExplain(d *Document, t *Track) bool {
	type span struct{ from, to float64 }
	var steps []span
	for i := range d.Findings {
		f := &d.Findings[i]
		if f.Conductor == t.Number && !f.Lone && f.Kind == string(route.KindCurrentStep) {
			steps = append(steps, span{math.Min(f.ChainageFrom, f.ChainageTo), math.Max(f.ChainageFrom, f.ChainageTo)})
		}
	}
	if len(steps) == 0 {
		return false
	}
	sort.Slice(steps, func(i, j int) bool { return steps[i].from < steps[j].from })
	// Repeats of one station (a route walked again) lie within RepeatGap
	// of each other: a repeat of a step's station is on that station's side.
	tol := math.Max(t.Route.RepeatGap, 1e-6)
	stretch := func(c float64) int {
		k := 0
		for _, st := range steps {
			switch {
			case c <= st.from+tol:
				return k
			case c < st.to-tol:
				return -1 // between the step's stations
			}
			k++
		}
		return k
	}
	lo := make([]float64, len(steps)+1)
	hi := make([]float64, len(steps)+1)
	sum := make([]float64, len(steps)+1)
	cnt := make([]int, len(steps)+1)
	for k := range lo {
		lo[k] = math.Inf(1)
	}
	for i := range t.Route.Stations {
		u := &t.Route.Stations[i]
		if !u.Used {
			continue
		}
		k := stretch(u.Chainage)
		if k < 0 {
			continue
		}
		c, _ := u.levelCurrent()
		c = math.Abs(c)
		lo[k], hi[k], sum[k], cnt[k] = math.Min(lo[k], c), math.Max(hi[k], c), sum[k]+c, cnt[k]+1
	}
	sense, last := 0.0, math.NaN()
	for k := range lo {
		if cnt[k] == 0 {
			continue
		}
		if hi[k] > inconsistentCurrent*lo[k] {
			return false
		}
		level := sum[k] / float64(cnt[k])
		if !math.IsNaN(last) && level != last {
			dir := math.Copysign(1, level-last)
			if sense != 0 && dir != sense {
				return false
			}
			sense = dir
		}
		last = level
	}
	return true
}

// strongestCurrent is the largest magnitude of current among the line
// sources of group key whose current the readings determine; zero when
// there is none.
func strongestCurrent(d *Document, key string) float64 {
	for i := range d.Groups {
		g := &d.Groups[i]
		if g.Key != key {
			continue
		}
		top := 0.0
		for j := range g.Sources {
			src := &g.Sources[j]
			if src.Kind == KindDipole || unresolved(src, "current") {
				continue
			}
			top = math.Max(top, math.Abs(src.Current))
		}
		return top
	}
	return 0
}
