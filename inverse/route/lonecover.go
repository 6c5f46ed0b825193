package route

import (
	"fmt"
	"math"
	"slices"
)

// LoneCover checks the cover of l, a further line source of the fit at
// usable station p that is followed along no track of its own (a service
// crossing the route seen at one traverse, or a conductor seen at too few
// to follow). Tracked conductors get the cover check of their own route,
// and weak, steep sources their own finding (KindWeakSource); a lone line
// would otherwise get none, and a crossing cable 0.35 m down would go
// unmentioned beside a route whose cover is fine. It returns a
// KindShallowCover finding, a warning when the cover is less than
// Settings.MinCover by CoverK sigma and a caution when it may be, and false
// when the minimum is not checked, l is weak and steep, or its cover is
// clear. single is true when the route has one station.
//
// The finding's chainage range is p's alone; a caller that knows what the
// other stations' fits show of l brackets it as the route's runs are
// (LoneMark, CoverRuns, Bracket).
func LoneCover(p *Placed, l Line, set *Settings, single bool) (Finding, bool) {
	return LoneRunCover([]*Placed{p}, []Line{l}, set, single)
}

// LoneRunCover is LoneCover for one lone line seen in line at successive
// usable stations, each ls[i] at ps[i] in route order (a station may come
// twice where its fit holds two lines in line with the others): one
// finding for the run, as the route's own shallow runs get one (cover),
// naming its stations and giving the least cover, its sigma and the
// station where it is least, with that line's current and azimuth. A crew
// read two or three shallow-cover rows for one service under successive
// traverses, each with the same bracket (found in review). Which lines
// are in line is the caller's to judge; InLineWith of the lines names the
// other stations that show the line (not those of the run). It returns
// false, as LoneCover does, when any line's cover is not short
// (LoneMark). With one line its finding is LoneCover's.
func LoneRunCover(ps []*Placed, ls []Line, set *Settings, single bool) (Finding, bool) {
	if len(ps) == 0 || len(ps) != len(ls) {
		return Finding{}, false
	}
	k := set.coverK()
	low, sev := 0, SeverityCaution
	var keys, inLine []string
	for i := range ps {
		if LoneMark(ps[i], ls[i], set) != MarkShort {
			return Finding{}, false
		}
		c, sc := set.cover(ls[i].Depth, ls[i].DepthSigma)
		if c+k*sc < set.MinCover {
			sev = SeverityWarning
		}
		if lc, _ := set.cover(ls[low].Depth, ls[low].DepthSigma); c < lc {
			low = i
		}
		if len(keys) == 0 || keys[len(keys)-1] != ps[i].Key {
			keys = append(keys, ps[i].Key)
		}
		for _, o := range ls[i].InLineWith {
			if !slices.Contains(inLine, o) {
				inLine = append(inLine, o)
			}
		}
	}
	verdict := "may be less than"
	if sev == SeverityWarning {
		verdict = "is less than"
	}
	p, l := ps[low], ls[low]
	c, sc := set.cover(l.Depth, l.DepthSigma)
	code := "no code named"
	if set.CoverCode != "" {
		code = set.CoverCode
	}
	az := math.Mod(math.Atan2(l.Dir[0], l.Dir[1])*180/math.Pi+360, 180)
	azText := pm(az, l.AzimuthSigma)
	if !(l.AzimuthSigma > 0) {
		// Rounded to whole degrees; 179.7 is the line at 0 (an azimuth is
		// taken in [0, 180)).
		azText = fmt.Sprintf("%.0f", math.Mod(math.Round(az), 180))
	}
	why := loneWhy(keys, inLine, l, p.Dir)
	minimum := fmt.Sprintf("the %.2f m minimum (%s)", math.Abs(set.MinCover), code)
	var msg string
	if len(keys) == 1 {
		msg = fmt.Sprintf("a further line source in the fit at %s, %s A running at azimuth %s degrees, is not followed along the route (%s); its cover, %s m, %s %s: confirm before digging here",
			at(p, single), pm(math.Abs(l.Current), l.CurrentSigma), azText, why, pm(c, sc), verdict, minimum)
	} else {
		first, last := ps[0], ps[len(ps)-1]
		msg = fmt.Sprintf("a further line source, seen in line in the fits at %s, is not followed along the route (%s); its cover %s %s from %s (chainage %.1f m) to %s (%.1f m); least at %s (chainage %.1f m): %s m, where it carries %s A running at azimuth %s degrees: confirm before digging here",
			andList(keys), why, verdict, minimum, first.Key, first.Chainage, last.Key, last.Chainage,
			p.Key, p.Chainage, pm(c, sc), pm(math.Abs(l.Current), l.CurrentSigma), azText)
	}
	return Finding{
		Kind:     KindShallowCover,
		Severity: sev,
		From:     ps[0].Chainage,
		To:       ps[len(ps)-1].Chainage,
		Position: l.Point,
		Keys:     keys,
		Message:  msg,
		Values: []Value{
			{Name: "cover", Value: c, Sigma: sc, Unit: "m"},
			{Name: "minimum cover", Value: set.MinCover, Unit: "m"},
			{Name: "current", Value: math.Abs(l.Current), Sigma: l.CurrentSigma, Unit: "A"},
			{Name: "azimuth", Value: az, Sigma: l.AzimuthSigma, Unit: "deg"},
		},
	}, true
}

// LoneMark is what LoneCover's check makes of l at p: MarkShort when it
// gives a finding, MarkClear when l's cover is enough, and MarkUnseen when
// its cover is not checked (no minimum, p not usable, l weak and steep,
// which weakSources reports, or not a finite line).
func LoneMark(p *Placed, l Line, set *Settings) Mark {
	if set == nil || set.MinCover <= 0 || !p.usable() || !l.finite() || WeakSteep(p.Current, l.Current, l.dip()) {
		return MarkUnseen
	}
	c, sc := set.cover(l.Depth, l.DepthSigma)
	if c-set.coverK()*sc >= set.MinCover {
		return MarkClear
	}
	return MarkShort
}

// loneWhy says why a lone line seen at the stations keys, and in line at
// the stations inLine, is not followed along the route, as the counts and
// its direction are. "Too few groups" only where fewer than the caller's
// least for a track (Line.TrackMin, when given) show it; and "a crossing
// service" only for a line crossing the route (over AlongAngle in plan
// from dir, the route's direction at its station): a line along it is a
// parallel conductor the fits do not follow. A feeder running along the
// street, seen at 8 of 15 traverses, was "too few groups to follow it as a
// conductor: a crossing service, for example" (review rv28b): the fits
// between took it into a go-and-return pair with its neighbour, or the
// conductor the route follows moved between them, and no track linked its
// stations.
func loneWhy(keys, inLine []string, l Line, dir [3]float64) string {
	along := false
	if a, ok := PlanAngle(l.Dir, dir); ok && a < AlongAngle {
		along = true
	}
	n := len(keys) + len(inLine)
	what := "a crossing service, for example"
	if along {
		what = "a cable or pipe along the route, for example"
	}
	if w := ShallowStrong(l.Current, l.Depth); w != "" {
		// Review rv29c: two rails of a DC railway, 75 A each 0.05 m down,
		// were "a crossing service, for example".
		what = w
		if len(keys) == 1 && len(inLine) == 0 {
			return "too few groups show it: " + w
		}
	}
	if l.TrackMin > 0 && n >= l.TrackMin {
		return fmt.Sprintf("the fits at %s show a line in line with it too, %d groups in all, enough to follow it, but their fitted positions do not link into one track from group to group: the fits between place it elsewhere, miss it or take it into a go-and-return pair or the conductor followed (%s)", andList(inLine), n, what)
	}
	if len(inLine) > 0 {
		// Two or more groups do show it, in line (found in review: the
		// same service at four traverses was "too few groups" four times).
		fits, show := "fits", "show"
		if len(inLine) == 1 {
			fits, show = "fit", "shows"
		}
		return fmt.Sprintf("the %s at %s %s a line along it too, but too few groups to follow it as a conductor: %s", fits, andList(inLine), show, what)
	}
	if len(keys) > 1 {
		return "too few groups to follow it as a conductor: " + what
	}
	if along {
		return "too few groups show it: a conductor along the route that the other fits do not resolve, for example"
	}
	return "too few groups show it: a crossing service, or a conductor the other fits do not resolve"
}

// ShallowStrongCurrent (A) and ShallowStrongDepth (m) are the least current and
// the greatest depth below the depth reference of a shallow strong line
// (ShallowStrong): tens of amperes within 0.2 m of the ground is no buried
// service's return current, but rails or a cable on or at the surface.
const (
	ShallowStrongCurrent = 10.0
	ShallowStrongDepth   = 0.2
)

// ShallowStrong words a further line carrying current (A, the sign ignored) at
// depth (m below the depth reference) when it carries ShallowStrongCurrent or
// more within ShallowStrongDepth of the ground, and returns "" otherwise: such a
// line is rails or a cable at the surface, to be treated as live, not "a
// crossing service". Review rv29c: a DC railway's rails, 75 A each 0.05 m down,
// fitted right beside a CP pipe, were worded "a crossing service, for example".
func ShallowStrong(current, depth float64) string {
	if !(math.Abs(current) >= ShallowStrongCurrent) || !(depth <= ShallowStrongDepth) {
		return ""
	}
	return fmt.Sprintf("a shallow line carrying %.0f A: rails or a cable at the surface; treat it as live", math.Abs(current))
}

// AlongAngle is the angle in plan, degrees, within which a lone line runs
// along the route rather than crossing it (loneWhy; the report's least
// cover headline).
const AlongAngle = 20.0

// PlanAngle is the angle in plan between lines a and b, degrees in [0,
// 90], and false when either is vertical or not a number.
func PlanAngle(a, b [3]float64) (float64, bool) {
	ha, hb := math.Hypot(a[0], a[1]), math.Hypot(b[0], b[1])
	if !(ha > 0) || !(hb > 0) || !finite(ha) || !finite(hb) {
		return 0, false
	}
	c := math.Min(1, math.Abs(a[0]*b[0]+a[1]*b[1])/(ha*hb))
	return math.Acos(c) * 180 / math.Pi, true
}
