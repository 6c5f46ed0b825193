package route

import "math"

// Stations either side of a fault that both read part of it.
//
// A fault midway between traverses a few depths apart is seen in part by
// both traverses beside it: each sees a semi-infinite conductor (plateau.go),
// and a traverse's fit, its azimuth and dip free, across readings to
// either side of the conductor spreads the change wider still. A 1 A
// fault on a 5 A line at 1 m, midway between traverses 4 m apart and 10 m
// long, gave 4.94, 4.91, 4.74 | 4.22, 4.04, 4.00, 3.99 A with fit sigmas
// of 0.014 A (simulated, the mean of 30 seeds at 1 nT): the two stations
// beside it read a quarter of the step each, and the next ones still a
// few per cent, a transition about 3.5 m wide. Two things went wrong
// (found in review, 30 seeds each):
//
//   - On a short route the excess of the stations about the one step of
//     stepscatter.go was taken as scatter and widened 6.4 times for the
//     two degrees of freedom seven stations leave: 0.06-0.16 A, and the
//     fall of 70 fit sigmas was not reported on 9 seeds of 30 (5 nT
//     noise). When the two stations beside the step both read part of it
//     (partialFit, below), the scatter is now also taken about the levels
//     beyond them, and the smaller kept. The levels beyond still carry
//     the transition's tails, so an excess, widened as much, remains on
//     some routes (5 of 30 seeds at 5 nT; taking no scatter when its own
//     chi-square test did not find it, as shortScatter's gate does, found
//     all 30, but at 1 nT left the few per cent by which the straight-line
//     model misses the transition out of the sigmas, with pulls up to 12).
//
//   - Where the noise hides the transition's shape, a gradual transition
//     did not earn its keep (sharpZ), the sharp step took the two partial
//     stations as levels, and a shared slope took up the rest: at 20 nT
//     the step read 0.39-0.59 ± 0.08-0.14 A for 1 A. Now, when a sharp
//     step's two neighbours both lean toward the other level (each from
//     the level of the fit without them, extrapolated to it), the best
//     transition, sharp or gradual, is kept and the profile interval of the size runs over both:
//     the width the stations leave open is in the sigma. A wide interval no
//     longer hides the step itself: it is reported when either the size or
//     the best sharp step (which partial readings only make smaller) is
//     beyond StepK of its sigma (levels.z).
//
// Where the noise hides that both stations lean inward, the sharp step
// stands, and the change that leaving both out makes, beyond the noise,
// widens its sigma as a single one does (nearStation).
// partialSide is the fewest stations left on each side of a step
// fitted without the two beside it.
const partialSide = 2

// partial is the fit of a sharp step at x_f without the two stations
// beside it (at least partialSide left on each side): the fit, the
// stations it used, the indices in pts of the two left out, and their
// leans toward the other level in their sigmas.
type partial struct {
	fit          lvFit
	rest         []lvPoint
	kb, ka       int
	leanB, leanA float64
}

// reads reports whether both stations left out lean toward the other
// level, as partial readings of the step do. (Asking more of them, a joint
// lean of half a sigma or more, let more fits at 20 nT keep a sharp step
// sized from the partial readings: the pulls' sd rose from 1.6 to 2.0 in
// TestFaultBetweenPartialStations. Asking less, either one leaning, or
// both together by a quarter sigma, widened the sigma of smeared steps
// beyond their error: sd of z 0.79 in TestStepSigmaMonteCarlo.)
func (p *partial) reads() bool {
	return p.leanB > 0 && p.leanA > 0
}

// partialFit fits the stations pts (route order, weights set) with a
// sharp step at xf, the station just before xf and the one just after it
// left out; ok is false when fewer than partialSide stations are left on
// either side or the fit is not determined.
func partialFit(pts []lvPoint, xf float64) (p partial, ok bool) {
	p.kb, p.ka = -1, -1
	nb, na := 0, 0
	for k, q := range pts {
		if q.x < xf {
			nb++
			if p.kb < 0 || q.x > pts[p.kb].x {
				p.kb = k
			}
		} else {
			na++
			if p.ka < 0 || q.x < pts[p.ka].x {
				p.ka = k
			}
		}
	}
	if p.kb < 0 || p.ka < 0 || nb-1 < partialSide || na-1 < partialSide {
		return p, false
	}
	p.rest = make([]lvPoint, 0, len(pts)-2)
	for k, q := range pts {
		if k != p.kb && k != p.ka {
			p.rest = append(p.rest, q)
		}
	}
	p.fit = solveLevels(p.rest, xf, 0, true)
	if !finite(p.fit.chi2) || !finite(stepVar(&p.fit)) || !determined(p.rest, p.fit) {
		return p, false
	}
	f := &p.fit
	lean := func(k, side int) float64 {
		q := pts[k]
		dx := q.x - xf
		own, other := f.c[side], f.c[1-side]
		v := f.cov[side][side] + 2*dx*f.cov[side][2] + dx*dx*f.cov[2][2]
		if !f.slope {
			v = f.cov[side][side]
		} else {
			own += f.c[2] * dx
			other += f.c[2] * dx
		}
		s := math.Sqrt(1/q.w + math.Max(v, 0))
		if other < own {
			return (own - q.y) / s
		}
		return (q.y - own) / s
	}
	p.leanB, p.leanA = lean(p.kb, 0), lean(p.ka, 1)
	return p, true
}
