package route

import "math"

// A step spread over several stations is not scatter.
//
// On a short route the between-station scatter is taken from the
// differences of current between successive stations about one slope for
// the whole route (shortScatter). The MAD it uses is robust to a step
// that moves one difference, but a step whose transition spans several
// stations moves several, and on seven to nine stations that is half the
// intervals or more. The median slope then takes up part of the step,
// every interval, the flat ones too, departs from it by many of its
// sigmas, the gate finds "scatter", and the scatter estimated (widened
// several times for the few intervals) swallows the step it came from.
// Near the point where current leaves a go-and-return pair, the pair's net
// current (the current not returning through the pair; by Kirchhoff's
// current law the current lost is the change of that net along the route)
// is fitted from the far field across the whole traverse, so its change
// spreads over several traverses: with 3 A lost between traverses 5 m
// apart the net read -0.07, -0.20, -0.86, -2.14 and -2.80 A at five
// successive stations (DC, cores at 1 m; fit sigmas 0.004-0.03 A), the
// scatter came out 0.12 A, widened 3.1 times to 0.36 A, and no step was
// reported although the levels either side differ by 3.15 ± 0.16 A.
//
// So when the gate finds scatter, the route is also fitted with one step:
// the level model of plateau.go (two levels, a shared slope, a transition
// at x_f of width H, searched on a grid over the whole route), against the
// straight line the scatter is measured about. Whether the step explains
// the excess is the extra-sum-of-squares F test of nested models (Seber &
// Wild, Nonlinear Regression, Wiley 1989, section 5.3), both fitted with
// the weights the scatter found gives,
//
//	F = ((RSS_line - RSS_step) / 3) / (RSS_step / (n - 5))
//
// which does not depend on the scale of a scatter shared by every station,
// so that a route whose excess is scatter alone passes it at the rate
// chosen whatever that scatter is. The grid search over x_f and H makes its
// distribution other than Fisher's: the critical values (stepFCrit) are
// found by simulation. When F passes, the scatter is estimated again about
// the step (the DerSimonian-Laird moment estimate of plateau.go's excess,
// with the n - 5 degrees of freedom the step model leaves, zero when the
// stations do not scatter about it beyond their sigmas) and widened for
// those few degrees of freedom (shortWidening); it replaces the first when
// smaller. Where the two stations beside the step both read part of it,
// the scatter is taken about whichever of the step and the levels beyond
// those two (partial.go) leaves less.
//
// Each station is weighed here as the levels weigh it (misfitSigma): a
// poor fit's sigma widened by the square root of its reduced chi-square.
// The stations nearest a change of current are poor straight-line fits
// (the field changes along their traverse), and at their own sigmas
// their misfit came out as scatter shared by every station: with 3 A
// leaving 10 A under traverses 5 m apart at 5 nT, the two beside the
// change (reduced chi-square 120, sigmas 0.012 A) gave a scatter of
// 0.039-0.041 A on every one of 30 seeds where the sound stations agree
// with the level model to 0.002 A, and the step's sigma, 0.06 A, was six
// times its error (simulated through locate,
// TestInPhaseACStepSigmasThroughLocate, TestScatterNotFromPoorFitsBesideLoss).
//
// That holds for a poor fit whose current lies between the step's levels
// at its place: a straight-line fit over a current that changes along the
// traverse reads part of the change, and its misfit is the change's own.
// A poor fit reading above the higher level or below the lower one (by
// more than StepK of its own sigma) reads no part of this change: its
// misfit is the model's error (a branch's field, a bend), which the
// stations whose fits pass share in smaller measure, so it is weighed at
// its own sigma and its departure counts as scatter (outsideLevels). On
// tee.toml (a 15 A branch leaving a 40 A DC feeder) T06 and T07 read up
// to 0.57 A above the upstream level and T09, T12-T15 up to 0.94 A below the
// downstream one; all weighed by their misfit, the scatter fell from
// 0.12-0.24 A to 0.001-0.06 A, the fall's pulls' RMS over seeds 201-213
// rose from 0.5 to 1.6 (-3.4 sigma on seed 201), and the intervals beside
// the tee passed as steps of their own, bracketing the fall over 12-24 m
// instead of T07-T08 (TestLocateTeeFallBracketAndPull). The in-phase AC
// loss's poor fits all lie between its levels and are weighed as before.

// stepGridX and stepGridH are the grid of the one-step fit: positions of
// x_f within each interval, and widths (0, a sharp step, and a logarithmic
// grid from minWidth to maxWidth station spacings).
const stepGridX, stepGridH = 9, 13

// stepAlpha is the rate at which a route whose stations scatter about a
// straight line, with no step, passes the F test.
const stepAlpha = 0.01

// stepFCrit holds, for n = minShortIntervals+1 ... minScatterIntervals
// stations, the 1-stepAlpha point of F with no step, by simulation:
// 30,000 routes of n evenly spaced stations with independent normal
// currents of equal sigma, fitted as stepFit fits them.
// TestStepFPassRate checks it with other draws.
var stepFCrit = [minScatterIntervals - minShortIntervals]float64{
	42.28, 21.35, 14.08, 11.22, 9.51, 8.43, 7.93, 7.27, 6.88,
}

// stepScatter returns the between-station scatter of the stations u (at
// least minShortIntervals+1, in route order; each weighed by misfitSigma)
// taken about one step, widened
// for its degrees of freedom, and the widening; ok is false when the step
// does not explain the excess (the F test above). raw is the scatter
// shortScatter estimated, before its widening.
func stepScatter(u []*Placed, raw float64, set *Settings) (tau, widen float64, ok bool) {
	n := len(u)
	if n-1 < minShortIntervals || n-1 >= minScatterIntervals {
		return 0, 1, false
	}
	k := set.stepK()
	pts := make([]lvPoint, n)
	for i, p := range u {
		s := misfitSigma(p, set)
		pts[i] = lvPoint{x: p.Chainage, y: p.Current, s: s, w: 1 / (s*s + raw*raw)}
	}
	rss0, rss1, best := stepFit(pts)
	if outsideLevels(u, pts, &best, raw, set) {
		rss0, rss1, _ = stepFit(pts)
	}
	dof := n - 5
	f := (rss0 - rss1) / 3 / (rss1 / float64(dof))
	if !(f > stepFCrit[n-1-minShortIntervals]) {
		return 0, 1, false
	}
	// The scatter about the step: fitted to the stations' own sigmas,
	// then again with the scatter found added to them. Where the two
	// stations beside a sharp step read part of it (partial.go), the
	// scatter is also taken about the levels beyond them (the same n - 5
	// degrees of freedom), and the smaller kept: those two stations'
	// partial readings are the step's, not scatter.
	about := func(t2 float64) float64 {
		for i := range pts {
			pts[i].w = 1 / (pts[i].s*pts[i].s + t2)
		}
		_, _, best := stepFit(pts)
		p, ok := partialFit(pts, best.xf)
		ok = ok && p.reads()
		for i := range pts {
			pts[i].w = 1 / (pts[i].s * pts[i].s)
		}
		t := excessDOF(pts, &best, dof)
		if ok {
			for i := range p.rest {
				p.rest[i].w = 1 / (p.rest[i].s * p.rest[i].s)
			}
			t = math.Min(t, excessDOF(p.rest, &p.fit, dof))
		}
		return t
	}
	t2 := about(0)
	if t2 > 0 {
		t2 = about(t2)
	}
	if !(t2 > 0) {
		return 0, 1, true
	}
	widen = shortWidening(float64(dof), k)
	return math.Sqrt(t2) * widen, widen, true
}

// stepFit fits the stations pts (chainage, current, weight; in route
// order) with a straight line and with one step (the level model of
// plateau.go: two levels and a shared slope, the transition's location
// x_f and width H searched on the grid stepGridX by stepGridH within every
// interval). It returns the weighted residual sums of squares of both and
// the best step.
func stepFit(pts []lvPoint) (rss0, rss1 float64, best lvFit) {
	n := len(pts)
	var sw, swx, swy, swxx, swxy float64
	for _, p := range pts {
		sw += p.w
		swx += p.w * p.x
		swy += p.w * p.y
		swxx += p.w * p.x * p.x
		swxy += p.w * p.x * p.y
	}
	b := (sw*swxy - swx*swy) / (sw*swxx - swx*swx)
	a := (swy - b*swx) / sw
	for _, p := range pts {
		r := p.y - a - b*p.x
		rss0 += p.w * r * r
	}
	sp := (pts[n-1].x - pts[0].x) / float64(n-1)
	rss1 = math.Inf(1)
	for i := 0; i+1 < n; i++ {
		for gi := range stepGridX {
			xf := pts[i].x + (pts[i+1].x-pts[i].x)*(float64(gi)+0.5)/stepGridX
			for j := range stepGridH {
				h := 0.0
				if j > 0 {
					h = minWidth * sp * math.Pow(maxWidth/minWidth, float64(j-1)/(stepGridH-2))
				}
				if f := solveLevels(pts, xf, h, true); f.chi2 < rss1 {
					rss1, best = f.chi2, f
				}
			}
		}
	}
	return rss0, rss1, best
}

// excessDOF is excess (plateau.go) with the degrees of freedom given: the
// variance tau^2 that, added to every station's, makes the weighted
// chi-square of f about the stations equal dof; zero when it does not
// exceed dof.
func excessDOF(pts []lvPoint, f *lvFit, dof int) float64 {
	r2 := make([]float64, len(pts))
	var hi, c0 float64
	for k, p := range pts {
		r := p.y - f.at(p.x)
		r2[k] = r * r
		hi = math.Max(hi, r*r)
		c0 += r * r * p.w
	}
	if dof <= 0 || !(c0 > float64(dof)) {
		return 0
	}
	// c(t) <= n max(r^2) / t, which is dof at the upper bound.
	return bisectDown(hi*float64(len(pts))/float64(dof), func(t float64) bool {
		var c float64
		for k, p := range pts {
			c += r2[k] / (1/p.w + t)
		}
		return c > float64(dof)
	})
}

// outsideLevels weighs at its own sigma each station of u whose fit is
// poor but whose current lies outside the levels of the step f at its
// place (above the higher, below the lower, by more than StepK of its own
// sigma), setting pts[i].s and pts[i].w (with the scatter raw) again, and
// reports whether it did so for any station.
func outsideLevels(u []*Placed, pts []lvPoint, f *lvFit, raw float64, set *Settings) bool {
	k := set.stepK()
	moved := false
	for i, p := range u {
		own := p.CurrentSigma
		if !(own > 0) || pts[i].s == own {
			continue
		}
		t := f.c[2] * (pts[i].x - f.xf)
		lo, hi := math.Min(f.c[0], f.c[1])+t, math.Max(f.c[0], f.c[1])+t
		if pts[i].y >= lo-k*own && pts[i].y <= hi+k*own {
			continue
		}
		pts[i].s, pts[i].w = own, 1/(own*own+raw*raw)
		moved = true
	}
	return moved
}
