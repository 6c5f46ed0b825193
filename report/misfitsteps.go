package report

import (
	"fmt"
	"sort"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// Changes in current that rest on fits the model misses.
//
// The route sizes a step from the levels of the stations either side of
// it, and weighs them by their sigmas; those sigmas say nothing of a model
// that does not describe the field. Two cases were found in review:
//
//   - over a healthy three-core AC cable the traverses that fitted the
//     cores as one go-and-return pair (missing by 227 times the noise, which
//     the run's shared-misfit warning names) set a net current of 3.6 A,
//     the traverses that resolved three cores 96.6 A, and the route warned
//     of a 93 A earth fault;
//   - between two same-way DC cables 0.3 m apart, fitted as one line on
//     most traverses (16.1 A, 15 sigma above the 16 A the two carry, each
//     fit with inverse.UnresolvedLinesNote) and as two whose sum the route
//     took on one, that one was a caution, "0.13 A below both neighbours".
//
// Such a step, change or anomaly now names the fits it rests on and says
// that it may be the model's error. The fits counted are those the
// shared-misfit check names, and, only where the finding sets a station
// whose same-way split the route summed (markSplitSums) against one, those
// carrying UnresolvedLinesNote: that note alone is common (a log read
// without its base station's drift removed carries it on most traverses,
// and the Kestrel Moor coating defect's true step lies between such fits).
// The fits named are the bracketing stations (and an anomaly's own; an
// anomaly's neighbours fitted with fewer lines only when both are such
// fits, since it is set against both), and the whole of a side when every station that sets its level is one: a
// level with one such fit among sound ones (the demo's bend station beside
// its earth fault) is not named. When a side's every station is one (or,
// for an anomaly, the station itself or both its neighbours), the finding
// is also one severity lower, so a crew is not sent to dig for a fault on
// the word of fits the report itself doubts.

// misfitLevelStations is how many usable stations either side of a step
// (from its bracketing station outward) are looked at for fits the model
// misses: the stations that set a level (plateau: up to five sound ones,
// three on most routes).
const misfitLevelStations = 3

// The kinds of fit modelMisses returns.
const (
	fitMisses     = "miss"       // named by the shared-misfit check
	fitUnresolved = "unresolved" // inverse.UnresolvedLinesNote
	fitSplitSum   = "split"      // the route took a same-way split's sum
)

// modelMisses returns, by group key, the kind of each fit that bears on
// caveatMisfitSteps: fitMisses for the groups the shared-misfit check names
// (given warned: the check's warning was given, or the route's own
// poor-fit check is off and lone misfits are named), fitUnresolved for
// those whose automatic count kept fewer lines than the readings ask for,
// fitSplitSum for those whose same-way split the route sums.
func modelMisses(fits []Fit, bs *BuildSettings, rs *route.Settings, warned bool) map[string]string {
	out := map[string]string{}
	if warned {
		_, misses := measuredMisfits(fits, bs, rs)
		for _, m := range misses {
			out[m.key] = fitMisses
		}
	}
	for _, f := range fits {
		if f.Result == nil {
			continue
		}
		if _, ok := out[f.Key]; ok {
			continue
		}
		if f.sumSplit && sameWayOf(f.Result) != nil {
			out[f.Key] = fitSplitSum
			continue
		}
		for _, n := range f.Result.Notes {
			if strings.HasPrefix(n, inverse.UnresolvedLinesNote) {
				out[f.Key] = fitUnresolved
				break
			}
		}
	}
	return out
}

// caveatMisfitSteps words the current steps, changes and anomalies of r
// that rest on fits the model misses (kinds from modelMisses), and lowers
// the severity of those resting on them alone (see above).
func caveatMisfitSteps(r *route.Route, kind map[string]string) {
	if r == nil || len(kind) == 0 {
		return
	}
	var u []*route.Placed
	for i := range r.Stations {
		p := &r.Stations[i]
		if p.OK && !p.Dipole {
			u = append(u, p)
		}
	}
	at := map[string]int{}
	for i, p := range u {
		if _, dup := at[p.Key]; !dup {
			at[p.Key] = i
		}
	}
	demoted := false
	for fi := range r.Findings {
		f := &r.Findings[fi]
		if f.Kind != route.KindCurrentStep && f.Kind != route.KindCurrentChange && f.Kind != route.KindCurrentAnomaly || len(f.Keys) == 0 {
			continue
		}
		lo, okLo := at[f.Keys[0]]
		hi, okHi := at[f.Keys[len(f.Keys)-1]]
		if !okLo || !okHi || hi < lo {
			continue
		}
		mid := -1
		if f.Kind == route.KindCurrentAnomaly && len(f.Keys) == 3 {
			m, ok := at[f.Keys[1]]
			if !ok {
				continue
			}
			mid = m
		}
		look := []*route.Placed{u[lo], u[hi]}
		if mid >= 0 {
			look = append(look, u[mid])
		}
		split := false
		for _, p := range look {
			split = split || kind[p.Key] == fitSplitSum
		}
		bad := func(p *route.Placed) bool {
			k := kind[p.Key]
			return k == fitMisses || split && k == fitUnresolved
		}
		all := func(s []*route.Placed) bool {
			for _, p := range s {
				if !bad(p) {
					return false
				}
			}
			return len(s) > 0
		}
		var rests bool
		if mid >= 0 {
			rests = bad(u[mid]) || bad(u[lo]) && bad(u[hi])
			if !(bad(u[lo]) && bad(u[hi])) {
				// An anomaly is set against both neighbours: one fitted
				// with fewer lines beside a sound one that agrees with it
				// does not explain it. On wrenbeck-dive seed 1 the
				// anomaly was the summed split at T05 itself (a dive's
				// start taken for two same-way lines) and the text blamed
				// T06, a single cable 6 m down (found in review).
				keep := look[:0]
				for _, p := range look {
					if p == u[mid] || kind[p.Key] != fitUnresolved {
						keep = append(keep, p)
					}
				}
				look = keep
			}
		} else {
			// A step's levels: the stations of each side, from the
			// bracket outward.
			side := func(from, dir int) []*route.Placed {
				var s []*route.Placed
				for k := from; k >= 0 && k < len(u) && len(s) < misfitLevelStations; k += dir {
					s = append(s, u[k])
				}
				return s
			}
			for _, sd := range [][]*route.Placed{side(lo, -1), side(hi, 1)} {
				if all(sd) {
					look = append(look, sd...)
					rests = true
				}
			}
		}
		seen := map[string]bool{}
		kinds := map[string]bool{}
		for _, p := range look {
			if bad(p) {
				seen[p.Key] = true
				kinds[kind[p.Key]] = true
			}
		}
		var named []string
		for _, p := range u {
			if seen[p.Key] {
				named = append(named, p.Key)
			}
		}
		if len(named) == 0 {
			continue
		}
		var why []string
		if kinds[fitMisses] {
			why = append(why, "miss their readings by far more than the noise the readings themselves show (the run's warning that the fitted lines do not describe the field)")
		}
		if kinds[fitUnresolved] {
			why = append(why, "were fitted with fewer lines than the readings ask for (conductors closer together than the fit can part may lie there, where another traverse parted two lines and the route took their sum), which can move a current by more than its uncertainty")
		}
		f.Message += fmt.Sprintf("; it rests on fits that %s: %s, so it may be the model's error rather than a change in the current",
			strings.Join(why, " or "), keyList(named))
		if rests && f.Severity != route.SeverityInfo {
			demoteFinding(f)
			demoted = true
		}
	}
	if demoted {
		sortFindings(r.Findings)
	}
}

// keyList words group keys as "A", "A and B" or "A, B and C".
func keyList(k []string) string {
	switch len(k) {
	case 0:
		return ""
	case 1:
		return k[0]
	}
	return strings.Join(k[:len(k)-1], ", ") + " and " + k[len(k)-1]
}

// demoteFinding reports f a severity lower (a warning becomes a caution,
// anything else information) and says so in its message.
func demoteFinding(f *route.Finding) {
	f.Message += " (reported a severity lower for it)"
	if f.Severity == route.SeverityWarning {
		f.Severity = route.SeverityCaution
	} else {
		f.Severity = route.SeverityInfo
	}
}

// sortFindings puts findings back in route.Build's order after severities
// changed: by chainage, the most pressing first at equal chainage.
func sortFindings(fs []route.Finding) {
	sort.SliceStable(fs, func(i, j int) bool {
		a, b := &fs[i], &fs[j]
		if a.From != b.From {
			return a.From < b.From
		}
		return severityRank(string(a.Severity)) < severityRank(string(b.Severity))
	})
}
