package main

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"sync"

	"undercurrent/inverse"
)

// Frequency drift.
//
// A transmitter whose frequency drifts steadily during the walk (a tracer
// warming up, +1 mHz/s at 640 Hz: 640.000 to 640.066 Hz over a minute)
// turns each group's phasors by 2π (δf τ + ḟ τ²/2) about the group's
// middle: the phase ramp (phaseramp.go) takes out the first term, the
// frequency at the middle, but not the second, which on 10 s traverses is
// 4.5° at their ends. On a 2 A cable read to 0.003 A that is many sigmas:
// every group was called sound while reading the cable 5-15 sigmas off, a
// search stopped short of the last group's offset (0.049 Hz for 0.061),
// phantom conductors were followed and false current steps reported
// (found in review).
//
// followDrift looks, log by log, at the ramps once every group is fitted:
// when freqDriftMinGroups groups or more kept one, the ramps do not agree
// on one offset (steadyRamps' test) and they change steadily with the
// groups' middle times (a line through them, weighted by their sigmas,
// with a slope freqDriftSigmas of its sigma from 0), each group of the log is
// demodulated again along a frequency that follows that line: its
// phasors turned back by the drift within the group (group.chirp) and its
// ramp searched afresh, from the line's offset at its middle. The line is
// then fitted again to the new ramps, up to freqDriftPasses times, until its
// slope settles within its sigma. The refits are kept only when they
// lower the log's residual by more than the one parameter costs
// (Bayesian information criterion, as the ramps themselves); otherwise
// the groups keep their fits. The drift is linear: a frequency that
// wanders back and forth is left to the ramps alone.

const (
	// freqDriftMinGroups is the fewest ramped groups a drift is fitted from.
	freqDriftMinGroups = 3
	// freqDriftSigmas is how many of its sigmas the drift's slope must be
	// from 0 to be followed.
	freqDriftSigmas = 5
	// freqDriftPasses bounds the refits along the drift.
	freqDriftPasses = 3
)

// driftLaw is the drift followed in one log's groups.
type driftLaw struct {
	rate, sigma float64 // Hz/s and its one-sigma
	keys        []string
	from, to    float64 // the offsets, Hz, at the first and last group's middle
	fromKey     string
	toKey       string
}

// lineThrough fits hz = a + b (t - t0) to the ramps of gs, weighted by
// their sigmas, t0 the weighted mean time: a, b and b's sigma (widened by
// the square root of the line's reduced chi-square when above 1), the
// chi-square about the line and about the weighted mean. ok is false when
// a group has no ramp or the times do not spread.
func lineThrough(gs []*group) (t0, a, b, sb, c1, c0 float64, ok bool) {
	var sw, st, sy float64
	ts := make([]float64, len(gs))
	for i, g := range gs {
		if g.ramp == nil || !(g.ramp.sigma > 0) {
			return 0, 0, 0, 0, 0, 0, false
		}
		ts[i], _ = timesMidSpan(g.times)
		w := 1 / (g.ramp.sigma * g.ramp.sigma)
		sw += w
		st += w * ts[i]
		sy += w * g.ramp.hz
	}
	t0, a = st/sw, sy/sw
	var stt, sty float64
	for i, g := range gs {
		w := 1 / (g.ramp.sigma * g.ramp.sigma)
		stt += w * (ts[i] - t0) * (ts[i] - t0)
		sty += w * (ts[i] - t0) * (g.ramp.hz - a)
	}
	if !(stt > 0) {
		return 0, 0, 0, 0, 0, 0, false
	}
	b = sty / stt
	for i, g := range gs {
		w := 1 / (g.ramp.sigma * g.ramp.sigma)
		d0 := g.ramp.hz - a
		d1 := d0 - b*(ts[i]-t0)
		c0 += w * d0 * d0
		c1 += w * d1 * d1
	}
	sb = math.Sqrt(math.Max(1, c1/float64(len(gs)-2)) / stt)
	return t0, a, b, sb, c1, c0, true
}

// followDrift refits, log by log, the groups whose ramps drift steadily
// (see above); noiseOf gives a group's noise for its fit. The drifts
// followed are kept in sv.drifts for the warning (driftWarning).
func followDrift(sv *survey, set *inverse.Settings, noiseOf func(*group) float64, workers int) {
	byLog := map[string][]*group{}
	var logs []string
	for _, g := range sv.groups {
		if g.err != nil || g.res == nil || len(g.times) < rampMinWindows || len(g.phasors) != len(g.times) {
			continue
		}
		if _, ok := byLog[g.from]; !ok {
			logs = append(logs, g.from)
		}
		byLog[g.from] = append(byLog[g.from], g)
	}
	sort.Strings(logs)
	for _, l := range logs {
		gs := byLog[l]
		if len(gs) < freqDriftMinGroups {
			continue
		}
		ramped := rampedOf(gs)
		if len(ramped) < freqDriftMinGroups {
			continue
		}
		_, _, b, sb, _, c0, ok := lineThrough(ramped)
		dof0 := float64(len(ramped) - 1)
		if !ok || c0/dof0 <= 1+3*math.Sqrt(2/dof0) || !(math.Abs(b) > freqDriftSigmas*sb) {
			continue
		}
		if law, ok := refitAlongDrift(gs, b, set, noiseOf, workers); ok {
			sv.drifts = append(sv.drifts, law)
		}
	}
}

// rampedOf is the groups of gs that kept a ramp.
func rampedOf(gs []*group) []*group {
	var out []*group
	for _, g := range gs {
		if g.ramp != nil && g.ramp.sigma > 0 {
			out = append(out, g)
		}
	}
	return out
}

// groupState is what a refit along a drift changes in a group.
type groupState struct {
	res, res0 *inverse.Result
	ramp      *groupRamp
	chirp     float64
	hint      float64
	bound     float64
}

// refitAlongDrift refits gs along a drift of b Hz/s (see followDrift) and
// keeps the refits when they pay; ok reports whether they were kept.
func refitAlongDrift(gs []*group, b float64, set *inverse.Settings, noiseOf func(*group) float64, workers int) (driftLaw, bool) {
	saved := make([]groupState, len(gs))
	var before, costN float64
	for i, g := range gs {
		saved[i] = groupState{g.res, g.res0, g.ramp, g.chirp, g.hint, g.rampBound}
		s := g.res.Sigma
		if !(s > 0) {
			return driftLaw{}, false
		}
		before += rss(g.res) / (s * s)
		costN += float64(6 * len(g.phasors))
	}
	restore := func() {
		for i, g := range gs {
			st := saved[i]
			g.res, g.res0, g.ramp, g.chirp, g.hint, g.rampBound = st.res, st.res0, st.ramp, st.chirp, st.hint, st.bound
		}
	}
	t0, a, _, _, _, _, _ := lineThrough(rampedOf(gs))
	var sb float64
	for range freqDriftPasses {
		refitChirped(gs, a, b, t0, set, noiseOf, workers)
		var ok bool
		var nb float64
		var nt0, na float64
		ramped := rampedOf(gs)
		if len(ramped) < freqDriftMinGroups {
			restore()
			return driftLaw{}, false
		}
		nt0, na, nb, sb, _, _, ok = lineThrough(ramped)
		if !ok {
			restore()
			return driftLaw{}, false
		}
		settled := math.Abs(nb-b) <= sb
		t0, a, b = nt0, na, nb
		if settled {
			break
		}
	}
	var after float64
	for i, g := range gs {
		s := saved[i].res.Sigma
		if g.err != nil || g.res == nil {
			restore()
			return driftLaw{}, false
		}
		after += rss(g.res) / (s * s)
	}
	if !(before-after > math.Log(costN)) {
		restore()
		return driftLaw{}, false
	}
	law := driftLaw{rate: b, sigma: sb}
	ramped := rampedOf(gs)
	if len(ramped) == 0 {
		restore()
		return driftLaw{}, false
	}
	first, last := ramped[0], ramped[0]
	for _, g := range ramped {
		law.keys = append(law.keys, g.key)
		m, _ := timesMidSpan(g.times)
		if mf, _ := timesMidSpan(first.times); m < mf {
			first = g
		}
		if ml, _ := timesMidSpan(last.times); m > ml {
			last = g
		}
	}
	law.fromKey, law.from = first.key, first.ramp.hz
	law.toKey, law.to = last.key, last.ramp.hz
	return law, true
}

// refitChirped fits each of gs again with its phasors turned back by a
// drift of b Hz/s about its middle and its ramp searched from the offset
// a + b (t - t0) at its middle t.
func refitChirped(gs []*group, a, b, t0 float64, set *inverse.Settings, noiseOf func(*group) float64, workers int) {
	jobs := make(chan *group)
	var wg sync.WaitGroup
	for range max(1, min(workers, len(gs))) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for g := range jobs {
				mid, _ := timesMidSpan(g.times)
				g.chirp, g.hint = b, a+b*(mid-t0)
				// The search may reach past the line's offset (at 7.5 mHz/s
				// the first group's, 0.21 Hz, lay ten times beyond its
				// usual bound, and the search fell back from it).
				g.rampBound = math.Max(g.rampBound, math.Abs(g.hint)+2*freqCheckUntrustedHz)
				g.ramp, g.res0 = nil, nil
				noise := noiseOf(g)
				g.res, g.err = inverse.FitLines(g.problem(true, noise), set)
				fitRamp(g, set, noise)
				if g.ramp != nil && g.res != nil {
					n := len(g.res.Notes) - 1
					g.res.Notes[n] += fmt.Sprintf("; the frequency drifting at %+.4g mHz/s followed within the group", b*1000)
				}
			}
		}()
	}
	for _, g := range gs {
		jobs <- g
	}
	close(jobs)
	wg.Wait()
}

// driftFollowedWarning names the drifts followed (followDrift); "" for none.
func driftFollowedWarning(sv *survey) string {
	var out []string
	for _, d := range sv.drifts {
		keys := d.keys
		if len(keys) > 8 {
			keys = append(keys[:8:8], "...")
		}
		out = append(out, fmt.Sprintf("the AC frequency drifted steadily during the walk, by %s mHz/s (from %+.4f Hz off the frequency demodulated at, at %s, to %+.4f Hz at %s): each group was demodulated again along a frequency following that drift (a phase ramp and the drift within the group, in the group's notes: %s); the fits assume a steady drift, so a steadier transmitter, or shorter walks between checks of its frequency, make them surer",
			plusMinusHz(d.rate*1000, d.sigma*1000), d.from, d.fromKey, d.to, d.toKey, strings.Join(keys, ", ")))
	}
	return strings.Join(out, "; ")
}
