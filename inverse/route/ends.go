package route

import (
	"fmt"
	"math"
)

// Where the conductor ends.
//
// Beyond the end of a conductor (a bond cable ending at an earth rod, a
// feeder whose current leaves at a fault and does not come back) there is
// no line to fit, but there is still the field of its end: at a distance d
// past the end of a half-line at depth h a point above it sees the fraction
// (1 - d/sqrt(d^2 + h^2))/2 of the full line's field (Biot-Savart over the
// half-line), falling off as h^2/(4 d^2) and spread wide across the
// traverse. One straight line fitted to that field comes out deeper and
// weaker the farther past the end the traverse lies, and fits it well: a
// 10 A cable 1.1 m below the sensors that ended at an earth rod gave sound
// lines of 4.5, 3.6 and 5.0 A at 3.0, 5.8 and 12 m on the three traverses
// past it, used in the profile as the conductor's continuation, with no
// word of where the 10 A went (found in review).
//
// A conductor that dives (under a road, a river) keeps its current, and
// one that merely loses some keeps its depth. So a run of usable stations
// at either end of the route whose lines are all more than endDepth times
// as deep as the sound stations before them and carry less than endCurrent
// of their current (each by endK sigma, the reference's spread counted) is
// taken as lying past the conductor's end: those stations are left out of
// the current and cover profile (OK false, with the reason), and a current
// step finding says that the conductor appears to end, or its current to
// leave it, between the last station before them and the first of them.
// The reference is the median depth and current of the up to endRef sound
// (clean) usable stations before the run, at least two.
const (
	endDepth   = 2.0
	endCurrent = 0.75
	endK       = 3.0
	endRef     = 5
)

// conductorEnds marks the stations of ps (in route order) that lie past an
// end of the conductor and returns a finding for each end found.
func conductorEnds(ps []Placed, set *Settings) []Finding {
	var u []int
	for i := range ps {
		if ps[i].usable() {
			u = append(u, i)
		}
	}
	var out []Finding
	for _, rev := range []bool{false, true} {
		idx := append([]int(nil), u...)
		if rev {
			for i, j := 0, len(idx)-1; i < j; i, j = i+1, j-1 {
				idx[i], idx[j] = idx[j], idx[i]
			}
		}
		if f, ok := endOf(ps, idx, set); ok {
			out = append(out, f)
		}
	}
	return out
}

// endRefOf is the reference of a run past an end: the median depth and
// current magnitude of the sound stations before it, and the spread of
// each (1.4826 times the median absolute deviation, the normal scale).
type endRefOf struct {
	depth, current, depthSpread, currentSpread float64
	n                                          int
}

// reference returns the reference for a run starting at idx[k].
func reference(ps []Placed, idx []int, k int, set *Settings) endRefOf {
	var d, c []float64
	for j := k - 1; j >= 0 && len(d) < endRef; j-- {
		p := &ps[idx[j]]
		if clean(p, set) {
			d = append(d, p.Depth)
			c = append(c, math.Abs(p.Current))
		}
	}
	if len(d) < 2 {
		return endRefOf{}
	}
	r := endRefOf{depth: medianOf(d), current: medianOf(c), n: len(d)}
	r.depthSpread, r.currentSpread = madSpread(d, r.depth), madSpread(c, r.current)
	return r
}

// past reports whether station p's line is deep and weak enough, against
// r, to lie past the conductor's end.
func past(p *Placed, r endRefOf) bool {
	c := math.Abs(p.Current)
	deep := p.Depth > endDepth*r.depth && p.Depth-r.depth > endK*math.Hypot(p.DepthSigma, r.depthSpread)
	weak := c < endCurrent*r.current && r.current-c > endK*math.Hypot(p.CurrentSigma, r.currentSpread)
	return deep && weak
}

// endOf looks for the run past an end at the far end of idx (station
// indices into ps, the end to search last), marks it and returns its
// finding.
func endOf(ps []Placed, idx []int, set *Settings) (Finding, bool) {
	start := -1 // first index in idx of the run past the end
	var ref endRefOf
	for k := 1; k < len(idx) && start < 0; k++ {
		r := reference(ps, idx, k, set)
		if r.n == 0 {
			continue
		}
		all := true
		for _, i := range idx[k:] {
			if !past(&ps[i], r) {
				all = false
				break
			}
		}
		if all {
			start, ref = k, r
		}
	}
	if start < 0 {
		return Finding{}, false
	}
	a, b := &ps[idx[start-1]], &ps[idx[start]]
	lo, hi := math.Inf(1), math.Inf(-1)
	clo, chi := math.Inf(1), math.Inf(-1)
	var keys []string
	keys = append(keys, a.Key)
	for _, i := range idx[start:] {
		p := &ps[i]
		lo, hi = math.Min(lo, p.Depth), math.Max(hi, p.Depth)
		clo, chi = math.Min(clo, math.Abs(p.Current)), math.Max(chi, math.Abs(p.Current))
		keys = append(keys, p.Key)
		p.Problem = fmt.Sprintf("the fit finds only a line %s m deep carrying %s A, over %.0f times as deep as the conductor before it (%.3g m) with under %.0f%% of its current (%.3g A): the field beyond the conductor's end, not the conductor",
			pm(p.Depth, p.DepthSigma), pm(math.Abs(p.Current), p.CurrentSigma), endDepth, ref.depth, 100*endCurrent, ref.current)
		p.OK = false
	}
	first, second := a, b
	if second.Chainage < first.Chainage {
		first, second = second, first
	}
	depthRange := fmt.Sprintf("%.3g m", lo)
	if hi > lo {
		depthRange = fmt.Sprintf("%.3g to %.3g m", lo, hi)
	}
	curRange := fmt.Sprintf("%.3g A", clo)
	if chi > clo {
		curRange = fmt.Sprintf("%.3g to %.3g A", clo, chi)
	}
	sigma := ref.currentSpread
	return Finding{
		Kind:     KindCurrentStep,
		Severity: SeverityWarning,
		From:     first.Chainage,
		To:       second.Chainage,
		Position: mid(a.Point, b.Point),
		Keys:     keys,
		Message: fmt.Sprintf("the conductor appears to end, or its current to leave it, between %s (chainage %.1f m) and %s (%.1f m): beyond, the fits find only lines far deeper and weaker (%s deep, %s) than the %.3g m and %.3g A of the sound stations before, the field past a conductor's end; those stations are left out of the current and cover profile (an end of the survey's conductor at an earth electrode, a fault or a joint to something else; check where it goes)",
			label(first), first.Chainage, label(second), second.Chainage, depthRange, curRange, ref.depth, ref.current),
		Values: []Value{
			{Name: "current before", Value: ref.current, Sigma: sigma, Unit: "A"},
			{Name: "depth before", Value: ref.depth, Sigma: ref.depthSpread, Unit: "m"},
		},
	}, true
}

// madSpread is 1.4826 times the median absolute deviation of v from m.
func madSpread(v []float64, m float64) float64 {
	dev := make([]float64, len(v))
	for i, x := range v {
		dev[i] = math.Abs(x - m)
	}
	return 1.4826 * medianOf(dev)
}
