package route

import (
	"fmt"
	"math"
)

// cover reports runs of usable stations whose cover may be shallower than
// Settings.MinCover.
func cover(ps []Placed, set *Settings) []Finding {
	if set == nil || set.MinCover <= 0 {
		return nil
	}
	k := set.coverK()
	var out []Finding
	var run []*Placed
	sev := SeverityCaution
	flush := func() {
		if len(run) == 0 {
			return
		}
		out = append(out, coverFinding(run, sev, set, len(ps) == 1))
		run, sev = nil, SeverityCaution
	}
	for i := range ps {
		p := &ps[i]
		if !p.usable() {
			continue
		}
		c, sc := set.cover(p.Depth, p.DepthSigma)
		if c-k*sc >= set.MinCover {
			flush()
			continue
		}
		run = append(run, p)
		if c+k*sc < set.MinCover {
			sev = SeverityWarning
		}
	}
	flush()
	return out
}

func coverFinding(run []*Placed, sev Severity, set *Settings, single bool) Finding {
	low := run[0]
	for _, p := range run[1:] {
		if p.Depth < low.Depth {
			low = p
		}
	}
	c, sc := set.cover(low.Depth, low.DepthSigma)
	code := "no code named"
	if set.CoverCode != "" {
		code = set.CoverCode
	}
	verdict := "may be less than"
	if sev == SeverityWarning {
		verdict = "is less than"
	}
	minimum := fmt.Sprintf("the %.2f m minimum (%s)", math.Abs(set.MinCover), code)
	msg := fmt.Sprintf("cover at %s is %s m: it %s %s", at(low, single), pm(c, sc), verdict, minimum)
	if len(run) > 1 {
		msg = fmt.Sprintf("cover %s %s from %s (chainage %.1f m) to %s (%.1f m); shallowest at %s (chainage %.1f m): %s m",
			verdict, minimum, label(run[0]), run[0].Chainage, label(run[len(run)-1]), run[len(run)-1].Chainage,
			label(low), low.Chainage, pm(c, sc))
	}
	if len(run) > 1 {
		covers, sigmas, lowAt := make([]float64, len(run)), make([]float64, len(run)), 0
		for i, p := range run {
			covers[i], sigmas[i] = set.cover(p.Depth, p.DepthSigma)
			if p == low {
				lowAt = i
			}
		}
		if b, ok := BestDetermined(covers, sigmas, lowAt); ok {
			msg += fmt.Sprintf("; best determined at %s (chainage %.1f m): %s m", label(run[b]), run[b].Chainage, pm(covers[b], sigmas[b]))
		}
	}
	keys := make([]string, len(run))
	for i, p := range run {
		keys[i] = p.Key
	}
	return Finding{
		Kind:     KindShallowCover,
		Severity: sev,
		From:     run[0].Chainage,
		To:       run[len(run)-1].Chainage,
		Position: low.Point,
		Keys:     keys,
		Message:  msg,
		Values: []Value{
			{Name: "cover", Value: c, Sigma: sc, Unit: "m"},
			{Name: "minimum cover", Value: set.MinCover, Unit: "m"},
		},
	}
}

// pm formats v ± s as PlusMinus does (s to two significant digits, v to
// the same decimal place); without a sigma, v to two decimals.
func pm(v, s float64) string {
	if !(s > 0) || math.IsInf(s, 0) {
		return fmt.Sprintf("%.2f", v)
	}
	return PlusMinus(v, s)
}
