package report

import (
	"fmt"
	"math"
	"strings"
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
	pair         bool // a further conductor that is a go-and-return pair (Route.PairNet)
	// precise, when not empty, gives the best determined station beside a
	// loosely fitted shallowest one (preciseCoverOf): "T06: 0.347 ± 0.005".
	precise string
	// sound marks conductor 1's shallowest station among those for which
	// routeCoverDoubt finds nothing, given beside a doubtful shallowest.
	sound bool
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
// than inconsistentCurrent times); or, stated apart from those, that its
// cover at s is within one sigma of the ground or above it, so that the
// readings hardly fix it. "" when none: "a weak line that may
// be a model artefact (2.9% of the strongest current in its group; its
// current runs from 0.549 A to 6.5 A along its track)".
func coverDoubt(d *Document, t *Track, s Station) string {
	var why []string
	weak := false
	if strongest := strongestCurrent(d, s.Key); strongest > 0 {
		if share := math.Abs(s.Current) / strongest; share < weakCoverShare {
			weak = true
			why = append(why, fmt.Sprintf("%.2g%% of the strongest current in its group", 100*share))
		}
	}
	lo, hi, n := math.Inf(1), 0.0, 0
	for _, u := range t.Route.Stations {
		if u.Used {
			lo, hi, n = math.Min(lo, math.Abs(u.Current)), math.Max(hi, math.Abs(u.Current)), n+1
		}
	}
	if n >= 2 && hi > inconsistentCurrent*lo {
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
			loose = fmt.Sprintf("its cover there, %s m, is within one sigma of the ground or above it: the readings hardly fix its depth", PlusMinus(c, sg))
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
