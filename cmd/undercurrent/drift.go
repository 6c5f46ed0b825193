package main

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"undercurrent/inverse"
)

// Drift of the Earth's field with no base station.
//
// Without a base log (--base) the Earth's field's own variation stays in
// the DC readings. Over a traverse it is a trend in time, which along the
// traverse is a trend in position: the fit's uniform background cannot
// take it, and the fit takes it for part of the conductor's field. At a
// storm's rate (300, -900, 600 nT/h; invented scenario, 5 A at 1 m, 2 nT
// noise, 20 s traverses) every fit was sound, but the currents were 3.5
// sigma off (rms), the dips 5.6 (the sign of the error following the
// walking direction), with no word (found in review). The drift shows in
// the fits themselves: each group's fitted background is the field at its
// own time, and they step steadily from traverse to traverse (north
// -7.4 nT a traverse there).
//
// driftWarning fits a straight line in time to the groups' backgrounds,
// axis by axis (least squares over the groups' mean times), and warns
// when all of these hold:
//
//   - the slope is significant on some axis: over driftT sigmas of its own
//     (its sigma from the groups' scatter about the line, Student's t with
//     n-2 degrees of freedom; the 99.5% point for at least 4 groups);
//   - over the median traverse's duration T the drift, |b| T, exceeds
//     driftK times what a traverse resolves of a linear trend in time: a
//     least-squares slope over N readings evenly spread over T with noise
//     sigma has sigma sigma sqrt(12/N) / T (the variance of a regression
//     slope, sigma² / sum (t - mean t)², with sum (t - mean t)² = N T²/12;
//     common practice), so a trend of |b| T against sigma sqrt(12/N);
//   - taking that drift out of each group's readings (b (t - mean t) per
//     axis) and fitting again lowers the chi-square summed over the groups
//     by more than driftGain. A steady change of the Earth's field along
//     the route (the site's own gradient), walked in order, gives the
//     backgrounds the same trend but none within a traverse: taken out, it
//     puts one in, and the fits get worse, not better.
//
// The warning asks for a base station log. AC runs are not checked: the
// demodulation takes out the slow field.
const (
	driftK    = 3
	driftGain = 25 // chi-square: 5 sigma for the one rate per axis taken from elsewhere
	// driftMinGroups is the fewest groups whose backgrounds make a trend.
	driftMinGroups = 4
)

// driftGroup is what driftWarning needs of a group.
type driftGroup struct {
	g          *group
	mean, span float64 // mean time and duration, s
	noise      float64 // the readings' noise, nT
}

// detrended returns the group's DC problem p and a copy q whose fields have
// a drift at rate (nT/s per axis) about the group's mean time taken out.
func (d driftGroup) detrended(sv *survey, o *locateOptions, rate [3]float64) (p, q *inverse.Problem) {
	p = d.g.problem(false, sv.groupNoise(d.g, o.noise))
	c := *p
	c.Fields = make([][3]float64, len(p.Fields))
	for i, f := range p.Fields {
		for a := range 3 {
			c.Fields[i][a] = f[a] - rate[a]*(d.g.stamps[i]-d.mean)
		}
	}
	return p, &c
}

// driftWarning returns the warning above, or "" (a base log given, an AC
// survey, no times, too few groups or no drift).
func driftWarning(o *locateOptions, sv *survey) string {
	if o.base != "" || sv.ac {
		return ""
	}
	gs, ok := driftGroups(sv)
	if !ok {
		return ""
	}
	n := len(gs)
	if n < driftMinGroups {
		return ""
	}
	// The slope of each axis's background against the groups' mean times.
	var tm float64
	for _, d := range gs {
		tm += d.mean / float64(n)
	}
	var stt float64
	for _, d := range gs {
		stt += (d.mean - tm) * (d.mean - tm)
	}
	if !(stt > 0) {
		return ""
	}
	tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 2)}.Quantile(0.995)
	var rate [3]float64
	significant := false
	for a := range 3 {
		var bm, sbt float64
		for _, d := range gs {
			bm += d.g.res.Background[a] / float64(n)
		}
		for _, d := range gs {
			sbt += (d.mean - tm) * (d.g.res.Background[a] - bm)
		}
		b := sbt / stt
		var rss float64
		for _, d := range gs {
			e := d.g.res.Background[a] - bm - b*(d.mean-tm)
			rss += e * e
		}
		sb := math.Sqrt(rss / float64(n-2) / stt)
		rate[a] = b
		if math.Abs(b) > tq*sb {
			significant = true
		}
	}
	if !significant {
		return ""
	}
	// Over the median traverse, against what it resolves.
	spans, res := make([]float64, n), make([]float64, n)
	for i, d := range gs {
		spans[i] = d.span
		res[i] = d.noise * math.Sqrt(12/float64(len(d.g.fields)))
	}
	T, resolved := medianOf(spans), medianOf(res)
	speed := math.Sqrt(rate[0]*rate[0] + rate[1]*rate[1] + rate[2]*rate[2])
	if !(speed*T > driftK*resolved) {
		return ""
	}
	// The fits with the drift taken out.
	set := o.fitSettings()
	var gain, shift float64
	for _, d := range gs {
		p, q := d.detrended(sv, o, rate)
		r, err := inverse.FitLines(q, set)
		if err != nil {
			return ""
		}
		rss0 := d.g.res.RMS * d.g.res.RMS * float64(3*len(p.Fields))
		rss1 := r.RMS * r.RMS * float64(3*len(p.Fields))
		gain += (rss0 - rss1) / (d.g.res.Sigma * d.g.res.Sigma)
		shift = math.Max(shift, driftShift(d.g.res, r))
	}
	// Warned of only when taking the drift out moves the strongest line's
	// current, depth or offset by more than driftShiftK of its sigmas:
	// logged at 500 Hz, a quiet day's 20 nT an hour was significant
	// (chi-square lower by far more than driftGain over 10,000 readings a
	// traverse) while the currents and depths stood within their sigmas
	// of the truth (found in review).
	if !(gain > driftGain) || !(shift > driftShiftK) {
		return ""
	}
	perMin := func(v float64) float64 { return 60 * v }
	return fmt.Sprintf("no base station log was given (--base), and the Earth's field drifted while the traverses were walked: the groups' backgrounds change steadily through the survey, by %.3g nT a minute (east %+.3g, north %+.3g, up %+.3g), %.3g nT over a traverse's %.3g s, %.3g times what a traverse's readings resolve, and with that drift taken out of the readings the fits miss them by less (chi-square lower by %.3g over %d groups); the fits take the drift along each traverse for part of the conductor's field (the error changing sign with the walking direction), and taking it out moves a conductor's current, depth or offset by up to %.2g times its uncertainty, so the results are off by more than their uncertainties say; log a base station and give it with --base",
		perMin(speed), perMin(rate[0]), perMin(rate[1]), perMin(rate[2]), speed*T, T, speed*T/resolved, gain, n, shift)
}

// driftGroups returns the DC groups fitted with a line and enough readings
// for the drift checks, with their times; ok is false when a group's
// readings have no times (or not finite ones).
func driftGroups(sv *survey) (gs []driftGroup, ok bool) {
	for _, g := range sv.groups {
		res := g.res
		if res == nil || len(res.Sources) == 0 || len(g.stamps) != len(g.fields) || len(g.fields) < minDiffReadings || !(res.Sigma > 0) {
			continue
		}
		lo, hi, sum := math.Inf(1), math.Inf(-1), 0.0
		for _, t := range g.stamps {
			lo, hi, sum = math.Min(lo, t), math.Max(hi, t), sum+t
		}
		if !(hi > lo) || math.IsInf(hi-lo, 0) {
			return nil, false // no times (or not finite)
		}
		noise := g.measuredNoise(false)
		if !(noise > 0) {
			noise = res.Sigma
		}
		gs = append(gs, driftGroup{g: g, mean: sum / float64(len(g.stamps)), span: hi - lo, noise: noise})
	}
	return gs, true
}

// driftShiftK is the least move, in sigmas, of a strongest line's current,
// depth or offset when the drift is taken out for the drift to be warned of.
const driftShiftK = 1

// driftShift is the largest move, in the first fit's sigmas, of the
// strongest line's current (its size), depth and offset from fit a to fit
// b of the same readings; 0 when either has no line or a sigma is missing.
func driftShift(a, b *inverse.Result) float64 {
	if a == nil || b == nil || len(a.Sources) == 0 || len(b.Sources) == 0 {
		return 0
	}
	s, t := a.Sources[0], b.Sources[0]
	var z float64
	for _, q := range [][3]float64{
		{math.Abs(s.Current), math.Abs(t.Current), s.CurrentSigma},
		{s.Depth, t.Depth, s.DepthSigma},
		{s.Offset, t.Offset, s.OffsetSigma},
	} {
		if q[2] > 0 {
			z = math.Max(z, math.Abs(q[1]-q[0])/q[2])
		}
	}
	return z
}
