package report

import (
	"fmt"
	"math"

	"undercurrent/inverse/route"
)

// PairCoreNote says what a go-and-return pair's cover is: its centre's,
// the cores' spacing being unknown where the readings do not part them.
const PairCoreNote = "a core may lie shallower by up to half the cores' spacing, which the readings do not give"

// sidePair returns group g's go-and-return pair when it lies beside the
// group's conductor 1 (neither of Pair.Sources is source 0) and no
// further conductor's track follows it (its lines carry no
// Source.Conductor: seen at too few groups to follow): reported with the
// group only, so that neither the route's cover check nor a track's sees
// it. Nil when g has no such pair, its fit is not usable (used false:
// failed, or left out of the route for an object), the pair is followed,
// or the pair's depth is not a number.
func sidePair(g *Group, used bool) *Pair {
	p := g.Pair
	if p == nil || !used || !g.OK || p.Sources[0] == 0 || p.Sources[1] == 0 {
		return nil
	}
	for _, j := range p.Sources {
		if j < 0 || j >= len(g.Sources) || g.Sources[j].Conductor > 0 {
			return nil // followed as a further conductor (tracks.go)
		}
	}
	if !finite(p.Depth) || !finite(p.DepthSigma) || p.DepthSigma < 0 {
		return nil
	}
	return p
}

// groupUsed tells, by group key, whether conductor 1's station of the
// group entered the route's checks (Station.Used); without a route,
// whether the group's fit is usable.
func (d *Document) groupUsed(g *Group) bool {
	if d.Route == nil {
		return g.OK
	}
	for _, s := range d.Route.Stations {
		if s.Key == g.Key {
			return s.Used
		}
	}
	return false
}

// sidePairs lists the groups, in the document's order, with a
// go-and-return pair beside conductor 1 (sidePair).
func (d *Document) sidePairs() []int {
	var out []int
	for i := range d.Groups {
		if sidePair(&d.Groups[i], d.groupUsed(&d.Groups[i])) != nil {
			out = append(out, i)
		}
	}
	return out
}

// addPairCover checks the cover of the go-and-return pairs that lie
// beside a stronger conductor (sidePair) against rs.MinCover, as the
// route checks conductor 1's stations (route cover): a warning when the
// pair's centre lies shallower than the minimum by CoverK sigma, a
// caution when it may, for each run of successive groups (in route
// order) whose pair does; a group without such a pair, or whose pair is
// clear, ends a run. Each run's chainage range is bracketed as the
// route's own runs are (route.CoverRuns, route.Bracket): to the nearest
// usable groups either side where the pair is seen with enough cover, or
// where it is not seen beside conductor 1, which bounds the run but says
// nothing of its cover there (the message tells which). Before, the range
// was the run's own end groups while the route's findings gave the
// bracket, two meanings for one kind (found in review). The findings are
// shallow-cover ones marked Lone (no
// conductor's track follows the pair), sorted with SortFindings. Before,
// a balanced 10 A pair at 0.6 m, 2 m from a 6 A cable at 1.0 m, was
// fitted right on every traverse, yet with a 0.8 m minimum the summary
// gave the cable's 1.00 m as the least cover and "no findings".
func (d *Document) addPairCover(rs *route.Settings) {
	if rs == nil || rs.MinCover <= 0 {
		return
	}
	k := rs.CoverK
	if k <= 0 {
		k = 2
	}
	cover := func(p *Pair) (float64, float64) {
		return p.Depth - rs.SensorHeight, math.Hypot(p.DepthSigma, rs.GroundSigma)
	}
	single := len(d.Groups) == 1
	marks := make([]route.Mark, len(d.Groups))
	for i := range d.Groups {
		g := &d.Groups[i]
		if !d.groupUsed(g) || !g.OK {
			continue // as the route skips stations it does not use
		}
		p := sidePair(g, true)
		if p == nil {
			// Not seen beside conductor 1 (or followed, or conductor 1
			// itself): that bounds a run, but says nothing of the pair's
			// cover there.
			marks[i] = route.MarkUnseen
			continue
		}
		marks[i] = route.MarkClear
		if c, sc := cover(p); c-k*sc < rs.MinCover {
			marks[i] = route.MarkShort
		}
	}
	stop := func(i int, unseen bool) route.Stop {
		g := &d.Groups[i]
		s := route.Stop{Name: g.Key, Unseen: unseen}
		if g.Chainage != nil {
			s.Chainage = *g.Chainage
		}
		return s
	}
	runs := route.CoverRuns(marks)
	for _, r := range runs {
		warn := false
		for _, i := range r.Members {
			if c, sc := cover(d.Groups[i].Pair); c+k*sc < rs.MinCover {
				warn = true
			}
		}
		var br *route.Bracket
		if !single && d.Route != nil {
			b := route.BracketOf(r, stop, marks, "the pair")
			br = &b
		}
		d.Findings = append(d.Findings, d.pairCoverFinding(r.Members, br, warn, single, rs, cover))
	}
	if len(runs) > 0 {
		SortFindings(d.Findings)
	}
}

// pairCoverFinding is the shallow-cover finding for the run of groups
// (indices into d.Groups) whose side pair lies shallower than the minimum,
// its chainage range and the message's reach given by br, as the route's
// own cover check brackets a run (route.Bracket); nil without a route or
// with one group, when the range is the run's own.
func (d *Document) pairCoverFinding(run []int, br *route.Bracket, warn, single bool, rs *route.Settings, cover func(*Pair) (float64, float64)) Finding {
	chain := func(g *Group) float64 {
		if g.Chainage != nil {
			return *g.Chainage
		}
		return 0
	}
	at := func(g *Group) string {
		if single || g.Chainage == nil {
			return g.Key
		}
		return fmt.Sprintf("%s (chainage %.1f m)", g.Key, *g.Chainage)
	}
	low := &d.Groups[run[0]]
	for _, i := range run[1:] {
		if g := &d.Groups[i]; g.Pair.Depth < low.Pair.Depth {
			low = g
		}
	}
	c, sc := cover(low.Pair)
	sev, verdict := SeverityCaution, "may be less than"
	if warn {
		sev, verdict = SeverityWarning, "is less than"
	}
	code := "no code named"
	if rs.CoverCode != "" {
		code = rs.CoverCode
	}
	minimum := fmt.Sprintf("the %.2f m minimum (%s)", math.Abs(rs.MinCover), code)
	const what = "a go-and-return pair beside conductor 1, reported with its group but not followed along the route"
	var msg string
	if len(run) == 1 {
		msg = fmt.Sprintf("%s, lies at %s with current times spacing %s A·m; the cover of its centre, %s m, %s %s, and %s: confirm before digging here",
			what, at(low), pm(low.Pair.CurrentTimesSpacing, low.Pair.CurrentTimesSpacingSigma), pm(c, sc), verdict, minimum, PairCoreNote)
	} else {
		first, last := &d.Groups[run[0]], &d.Groups[run[len(run)-1]]
		msg = fmt.Sprintf("%s: the cover of its centre %s %s from %s (chainage %.1f m) to %s (%.1f m); shallowest at %s: %s m, current times spacing %s A·m; %s: confirm before digging here",
			what, verdict, minimum, first.Key, chain(first), last.Key, chain(last), at(low), pm(c, sc),
			pm(low.Pair.CurrentTimesSpacing, low.Pair.CurrentTimesSpacingSigma), PairCoreNote)
	}
	from, to := chain(&d.Groups[run[0]]), chain(&d.Groups[run[len(run)-1]])
	if br != nil {
		msg += "; " + br.Reach()
		from, to = br.Range()
	}
	keys := make([]string, len(run))
	for j, i := range run {
		keys[j] = d.Groups[i].Key
	}
	return Finding{
		Kind:         string(route.KindShallowCover),
		Severity:     sev,
		ChainageFrom: from,
		ChainageTo:   to,
		Position:     low.Pair.Point,
		Groups:       keys,
		Message:      msg,
		Values: []Value{
			{Name: "cover", Value: c, Sigma: sc, Unit: "m"},
			{Name: "minimum cover", Value: rs.MinCover, Unit: "m"},
			{Name: "current times spacing", Value: low.Pair.CurrentTimesSpacing, Sigma: low.Pair.CurrentTimesSpacingSigma, Unit: "A m"},
		},
		Lone: true,
	}
}
