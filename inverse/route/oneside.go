package route

import "math"

// A step with one station on a side.
//
// Where a step's bracket starts at a route's first station (or ends at its
// last), that station is the only one on its side, and it reads part of
// the transition: the first of traverses 3 m apart, 1.5 m before a loss
// on a line 1.3 m below the sensors, still reads about 71% of the current
// that leaves there (simulated; 72% by plateau.go's f(d) with the fits'
// effective width near 3 m). Its
// level is then known only through the transition's shape,
//
//	y_0 = I_before f(x_0) + I_after (1 - f(x_0)) + g (x_0 - x_f),
//
// and f(x_0) only through the tail of the transition that the stations on
// the long side read, a few per cent of the step at the second and third
// station past it. Chi-square is then a long curved valley in (x_f, H):
// x_f near the second station with a narrow transition takes the lone
// station for the whole level before it and halves the step; x_f at the
// lone station with a wide one doubles it. The best point wanders along
// the valley with the noise, and the profile interval about it (Delta
// chi-square of one Birge scale, plateau.go) is far too narrow: over 60
// simulated routes with a 0.5 A loss at 1.5 m (testdata/scenarios/open/
// end-loss-trend.toml, 5 nT, with and without a trend of 0.03 A/m either
// way) the sizes ran 0.10-0.81 A, within one sigma on 55% and two on 81%,
// and the locations on 29% and 61%. The review's seed 3 read 0.34 ± 0.04 A
// at 2.89 ± 0.17 m.
//
// Such a step is therefore sized by averaging over the valley rather than
// from its lowest point: each point (x_f, H) of plateau.go's grid of
// gradual transitions (x_f uniform across the bracket, H uniform in ln H
// over the grid's widths, the sharp step being their narrow limit) is
// weighted by its likelihood, exp(-Delta chi^2 / 2s) with s the Birge scale
// of the best point (the levels and slope at their best fit for each
// point: the profile likelihood; the weighted means are then posterior
// means under flat priors in x_f and ln H). The levels, the step and x_f
// are the weighted means; their sigmas the weighted spread, each point's own
// variance (its covariance, in the scale s) included (the law of total
// variance). Points whose levels the slope can stand in for (determined,
// plateau.go) are left out, as the best fit would be. On the same 60
// routes the sizes then fall within one sigma on 78% and two on 95%, the
// locations on 75% and 96%; with 1 A, or at the route's other end, 63-82%
// and 88-97% (TestOneSidedLossSized checks the rates on routes of the
// level model's own shape).
const oneSideLong = 3 // stations the long side needs for the average

// oneSided reports whether one side of the bracket [xa, xb] holds a single
// station of pts and the other at least oneSideLong: the lone station's
// level then rests on the shape of the transition (see above).
func oneSided(pts []lvPoint, xa, xb float64) bool {
	nb, na := 0, 0
	for _, p := range pts {
		if p.x <= xa {
			nb++
		}
		if p.x >= xb {
			na++
		}
	}
	return nb == 1 && na >= oneSideLong || na == 1 && nb >= oneSideLong
}

// valleyMean is the likelihood-weighted mean of a one-sided step's levels
// and location over the grid (see above), with their spreads as sigmas.
type valleyMean struct {
	before, after, sigmaBefore, sigmaAfter float64
	step, sigma, at, atSigma               float64
}

// overValley averages the level model over the grid of gradual
// transitions of the bracket [xa, xb] (station spacing sp), the slope
// fitted or not as slope says; ok is false when no grid point is
// determined.
func overValley(pts []lvPoint, xa, xb, sp float64, slope bool) (m valleyMean, ok bool) {
	fits := make([]lvFit, 0, gridX*(gridH-1))
	best := -1
	for i := range gridX {
		xf := xa + (xb-xa)*(float64(i)+0.5)/gridX
		for j := 1; j < gridH; j++ {
			h := minWidth * sp * math.Pow(maxWidth/minWidth, float64(j-1)/(gridH-2))
			f := solveLevels(pts, xf, h, slope)
			if !finite(f.chi2) || !determined(pts, f) {
				continue
			}
			fits = append(fits, f)
			if best < 0 || f.chi2 < fits[best].chi2 {
				best = len(fits) - 1
			}
		}
	}
	if best < 0 {
		return m, false
	}
	s := fits[best].scale
	cell := (xb - xa) / gridX
	var w, b, a, x, bb, aa, ss, xx float64
	for k := range fits {
		f := &fits[k]
		wk := math.Exp(-(f.chi2 - fits[best].chi2) / (2 * s))
		r := s / f.scale // each point's covariance in the scale s
		step := f.c[1] - f.c[0]
		w += wk
		b += wk * f.c[0]
		a += wk * f.c[1]
		x += wk * f.xf
		bb += wk * (f.c[0]*f.c[0] + f.cov[0][0]*r)
		aa += wk * (f.c[1]*f.c[1] + f.cov[1][1]*r)
		ss += wk * (step*step + stepVar(f)*r)
		xx += wk * (f.xf*f.xf + cell*cell/12) // uniform within its cell
	}
	m.before, m.after, m.at = b/w, a/w, x/w
	m.step = m.after - m.before
	spread := func(sq, mean float64) float64 { return math.Sqrt(math.Max(sq/w-mean*mean, 0)) }
	m.sigmaBefore, m.sigmaAfter = spread(bb, m.before), spread(aa, m.after)
	m.sigma, m.atSigma = spread(ss, m.step), spread(xx, m.at)
	ok = finite(m.step) && finite(m.sigma) && finite(m.atSigma) && m.sigma > 0
	return m, ok
}
