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
		c, sc := p.Depth-set.SensorHeight, coverSigma(p, set)
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

// coverSigma is the one-sigma uncertainty of a station's cover: its depth
// sigma and Settings.GroundSigma in quadrature.
func coverSigma(p *Placed, set *Settings) float64 {
	return math.Hypot(p.DepthSigma, set.GroundSigma)
}

func coverFinding(run []*Placed, sev Severity, set *Settings, single bool) Finding {
	low := run[0]
	for _, p := range run[1:] {
		if p.Depth < low.Depth {
			low = p
		}
	}
	c, sc := low.Depth-set.SensorHeight, coverSigma(low, set)
	code := "given (no code named)"
	if set.CoverCode != "" {
		code = "of " + set.CoverCode
	}
	where := "at " + at(low, single)
	if len(run) > 1 {
		where = fmt.Sprintf("from %s (chainage %.1f m) to %s (%.1f m), shallowest at %s",
			label(run[0]), run[0].Chainage, label(run[len(run)-1]), run[len(run)-1].Chainage, label(low))
	}
	verdict := "may be shallower than"
	if sev == SeverityWarning {
		verdict = "is shallower than"
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
		Message: fmt.Sprintf("cover %s m %s %s the %.2f m minimum %s",
			pm(c, sc), where, verdict, math.Abs(set.MinCover), code),
		Values: []Value{
			{Name: "cover", Value: c, Sigma: sc, Unit: "m"},
			{Name: "minimum cover", Value: set.MinCover, Unit: "m"},
		},
	}
}

// pm formats v ± s with s to two significant digits and v to the same
// decimals (at least two).
func pm(v, s float64) string {
	if s <= 0 || math.IsInf(s, 0) {
		return fmt.Sprintf("%.2f", v)
	}
	d := max(2, 1-int(math.Floor(math.Log10(s))))
	return fmt.Sprintf("%.*f ± %.*f", d, v, d, s)
}
