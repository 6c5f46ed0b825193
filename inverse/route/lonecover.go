package route

import (
	"fmt"
	"math"
	"strings"
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
	if LoneMark(p, l, set) != MarkShort {
		return Finding{}, false
	}
	k := set.coverK()
	c, sc := set.cover(l.Depth, l.DepthSigma)
	sev, verdict := SeverityCaution, "may be less than"
	if c+k*sc < set.MinCover {
		sev, verdict = SeverityWarning, "is less than"
	}
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
	why := "too few groups show it: a crossing service, or a conductor the other fits do not resolve"
	if n := len(l.InLineWith); n > 0 {
		// Two or more groups do show it, in line (found in review: the
		// same service at four traverses was "too few groups" four times).
		others := strings.Join(l.InLineWith, " and ")
		if n > 2 {
			others = strings.Join(l.InLineWith[:n-1], ", ") + " and " + l.InLineWith[n-1]
		}
		fits, show := "fits", "show"
		if n == 1 {
			fits, show = "fit", "shows"
		}
		why = fmt.Sprintf("the %s at %s %s a line along it too, but too few groups to follow it as a conductor: a crossing service, for example", fits, others, show)
	}
	msg := fmt.Sprintf("a further line source in the fit at %s, %s A running at azimuth %s degrees, is not followed along the route (%s); its cover, %s m, %s the %.2f m minimum (%s): confirm before digging here",
		at(p, single), pm(math.Abs(l.Current), l.CurrentSigma), azText, why, pm(c, sc), verdict, math.Abs(set.MinCover), code)
	return Finding{
		Kind:     KindShallowCover,
		Severity: sev,
		From:     p.Chainage,
		To:       p.Chainage,
		Position: l.Point,
		Keys:     []string{p.Key},
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
