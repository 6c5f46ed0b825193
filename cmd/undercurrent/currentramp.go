package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse"
)

// A survey-level guard on the DC current-ramp check.
//
// Each DC traverse's one-line fit is checked for a current changing in
// time while it was walked (inverse.CurrentRampNote): the column
// (t - tc) g(x) as a further strength. Along one traverse time and place
// go together, so that column can as well absorb a spatial misfit shaped
// like (y - yc) g(y): an uncalibrated sensor, a tilt, a tee, a cable's end
// or a bend near the traverse. On steady simulated surveys it did, a
// "current changed by about 1%" caution appearing on traverses whose
// misfit other checks (the tee's step, the calibration's effect, the
// end's bracket) rely on.
//
// The guard looks at each log's ramped traverses together (one log, one
// sensor: see guardTimeRamps for why not across logs). A ramp in
// time expressed per metre along a common axis (its sign times the
// direction the traverse was walked along that axis) follows the load's
// swings: on a survey of several traverses it comes out of both signs. A
// spatial cause gives the same per-metre shape on every traverse it
// touches: one sign. A current changing in time runs on across the turns,
// one traverse's ramp ending near where the next one's starts, while a
// spatial shape starts afresh on each traverse (rampJoins): on the steady
// simulated surveys that a tee, an end, a bend or an uncalibrated sensor
// ramped, the joins missed by 1.5-15 times the changes within the
// traverses; on a slow ±5 % or ±10 % swing by 0.02-0.03. And a load swing
// that matters changes the current by more than rampSurveyMin on some
// traverse. Only where all hold in a log are its ramps kept; otherwise
// every group of that log is fitted without its times, and the ramped
// ones again (guardTimeRamps).

// rampSurveyMin is the least largest change of current over a traverse, a
// fraction of its mean, for which the survey's ramps are kept: the steady
// simulated surveys' spatial misfits gave about 1%.
const rampSurveyMin = 0.02

// rampSurveyLeast is the fewest traverses with a ramp for a survey to be
// judged as varying in time: one or two are a local feature's misfit as
// likely.
const rampSurveyLeast = 3

// rampMinority is the least share of the ramped traverses whose per-metre
// ramp has the less common sign.
const rampMinority = 0.2

// rampedGroups are the groups whose fit found a current ramp.
func rampedGroups(gs []*group) []*group {
	var out []*group
	for _, g := range gs {
		if g.err != nil || g.res == nil {
			continue
		}
		for _, n := range g.res.Notes {
			if strings.HasPrefix(n, inverse.CurrentRampNote) {
				out = append(out, g)
				break
			}
		}
	}
	return out
}

// walkAxis is the horizontal direction along which g's readings spread
// most (a unit vector), and whether it could be found.
func walkAxis(g *group) ([2]float64, bool) {
	n := len(g.points)
	if n < 2 {
		return [2]float64{}, false
	}
	var mx, my float64
	for _, p := range g.points {
		mx += p[0]
		my += p[1]
	}
	mx /= float64(n)
	my /= float64(n)
	var sxx, syy, sxy float64
	for _, p := range g.points {
		dx, dy := p[0]-mx, p[1]-my
		sxx += dx * dx
		syy += dy * dy
		sxy += dx * dy
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	a := [2]float64{math.Cos(th), math.Sin(th)}
	if !finite(th) || sxx+syy == 0 {
		return a, false
	}
	return a, true
}

// walkSense is +1 when g was walked along axis a as time went on, -1 when
// against it, 0 when its stamps do not tell.
func walkSense(g *group, a [2]float64) float64 {
	n := len(g.points)
	if len(g.stamps) != n || n < 2 {
		return 0
	}
	var ms, mt float64
	for i, p := range g.points {
		if !finite(g.stamps[i]) {
			return 0
		}
		ms += p[0]*a[0] + p[1]*a[1]
		mt += g.stamps[i]
	}
	ms /= float64(n)
	mt /= float64(n)
	var c float64
	for i, p := range g.points {
		c += (p[0]*a[0] + p[1]*a[1] - ms) * (g.stamps[i] - mt)
	}
	switch {
	case c > 0:
		return 1
	case c < 0:
		return -1
	}
	return 0
}

// timeRampsHold tells whether the survey's ramped groups rs show a current
// varying in time rather than a spatial shape (see above), and why not.
func timeRampsHold(rs []*group) (bool, string) {
	if len(rs) < rampSurveyLeast {
		return false, fmt.Sprintf("%d traverses", len(rs))
	}
	var worst float64
	for _, g := range rs {
		worst = math.Max(worst, math.Abs(g.res.CurrentRamp))
	}
	if worst < rampSurveyMin {
		return false, fmt.Sprintf("largest change %.3g", worst)
	}
	var ref [2]float64
	haveRef := false
	var plus, minus int
	for _, g := range rs {
		a, ok := walkAxis(g)
		if !ok {
			continue
		}
		if !haveRef {
			ref, haveRef = a, true
		}
		if a[0]*ref[0]+a[1]*ref[1] < 0 {
			a = [2]float64{-a[0], -a[1]}
		}
		r := g.res
		if !(math.Abs(r.CurrentRamp) > 2*r.CurrentRampSigma) {
			continue
		}
		s := walkSense(g, a) * math.Copysign(1, r.CurrentRamp)
		switch {
		case s > 0:
			plus++
		case s < 0:
			minus++
		}
	}
	if k := plus + minus; k < rampSurveyLeast || float64(min(plus, minus)) < rampMinority*float64(k) {
		return false, fmt.Sprintf("per-metre signs %d/%d", plus, minus)
	}
	pairs, misfit := rampJoins(rs)
	if pairs < rampSurveyLeast-1 || !(misfit <= rampJoinMisfit) {
		return false, fmt.Sprintf("joins %d misfit %.3g", pairs, misfit)
	}
	return true, ""
}

// rampJoinMisfit is the most that the currents the ramps give at the ends of
// traverses walked one after the other may miss each other, across the turn
// between them, as a share of the changes within the two traverses
// (rampJoins).
const rampJoinMisfit = 0.35

// rampJoins checks that the ramps of the groups rs follow one current in
// time. For each two ramped groups walked one after the other (the second
// begun within the two's time spans of the first's end), the current the
// first's ramp gives at its last reading and the second's at its first
// should differ by what their mean rate of change gives over the turn
// between them: a current changing in time runs on through the turn,
// while a spatial shape read as a ramp starts afresh on each traverse. It
// returns the number of such joins and the sum of their misses over the
// sum of the changes within their traverses.
func rampJoins(rs []*group) (int, float64) {
	type span struct {
		t0, t1, mean float64
		ends         [4]float64
	}
	var ss []span
	for _, g := range rs {
		if len(g.stamps) < 2 || len(g.res.Sources) == 0 {
			continue
		}
		t0, t1 := math.Inf(1), math.Inf(-1)
		for _, t := range g.stamps {
			t0, t1 = math.Min(t0, t), math.Max(t1, t)
		}
		if !(t1 > t0) {
			continue
		}
		ss = append(ss, span{t0, t1, g.res.Sources[0].Current, g.res.CurrentRampEnds})
	}
	sort.Slice(ss, func(i, j int) bool { return ss[i].t0 < ss[j].t0 })
	var n int
	var miss, scale float64
	for i := 0; i+1 < len(ss); i++ {
		a, b := ss[i], ss[i+1]
		gap := b.t0 - a.t1
		if gap < 0 || gap > (a.t1-a.t0)+(b.t1-b.t0) {
			continue
		}
		m := (a.mean + b.mean) / 2
		if m == 0 {
			continue
		}
		end := a.mean * (1 + a.ends[1])
		start := b.mean * (1 + b.ends[0])
		rate := (a.mean*a.ends[3] + b.mean*b.ends[2]) / 2
		e := (start - end - rate*gap) / m
		miss += math.Abs(e)
		scale += (math.Abs(a.ends[1]-a.ends[0]) + math.Abs(b.ends[1]-b.ends[0])) / 2
		n++
	}
	if scale == 0 {
		return n, math.Inf(1)
	}
	return n, miss / scale
}

// guardTimeRamps keeps the DC groups' current ramps only where the ramped
// traverses of one log show a current varying in time (timeRampsHold),
// judged log by log (group.from); for every other log it marks the log's
// groups to be fitted without their times (group.noTimes) and fits its
// ramped ones again. A log is one sensor's: two uncalibrated sensors'
// spatial misfits, one per-metre sign each, had passed the sign test
// together as a load swing, and their ramps had joined within each log,
// so a merged two-crew survey took a false "current changed by about
// 14%" caution (and widened sigmas that hid a real loss) that neither log
// alone had (found in review). A swing must now show in one log's own
// traverses: at least rampSurveyLeast of them.
func guardTimeRamps(sv *survey, set *inverse.Settings, noise float64) {
	if sv.ac {
		return
	}
	rs := rampedGroups(sv.groups)
	if len(rs) == 0 {
		return
	}
	held := heldLogs(rs)
	all := true
	for _, g := range sv.groups {
		all = all && held[g.from]
	}
	if all {
		return
	}
	for _, g := range sv.groups {
		if !held[g.from] {
			g.noTimes = true
		}
	}
	for _, g := range rs {
		if !held[g.from] {
			g.res, g.err = inverse.FitLines(g.problem(false, sv.groupNoise(g, noise)), set)
		}
	}
}

// heldLogs is the set of logs (group.from) whose own ramped groups among
// rs show a current varying in time (timeRampsHold).
func heldLogs(rs []*group) map[string]bool {
	byLog := map[string][]*group{}
	for _, g := range rs {
		byLog[g.from] = append(byLog[g.from], g)
	}
	held := map[string]bool{}
	for log, lrs := range byLog {
		if ok, _ := timeRampsHold(lrs); ok {
			held[log] = true
		}
	}
	return held
}
