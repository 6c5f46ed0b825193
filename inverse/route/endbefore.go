package route

import (
	"fmt"
	"math"
)

// The conductor's current and depth before its end.
//
// Approaching an end, a traverse sees a semi-infinite conductor: at a
// distance d before the end the fraction f(d) = (1 + d/sqrt(d^2 + H^2))/2
// of the line's field (Biot-Savart over the half-line, as plateau.go's
// transition, H an effective width that the traverse's length widens
// beyond the depth). The fits there read that share of the current, and
// lines a little shallower: 11, 7 and 3 m before the end of a 10 A line
// 1 m deep, under 8 m traverses, 9.81, 9.58 and 8.56 A at 0.983, 0.962 and
// 0.893 m (means over 40 simulated seeds), which f gives with H = 3.0-3.1
// m at all three. The median of those stations, with their spread as the
// sigma, read 9.69 ± 0.17 A and 0.975 ± 0.013 m on every seed, 1.8 and
// 1.9 sigma short (found in review).
//
// So the current is fitted as I0 f(d_i) over the reference stations, with
// d_i their distance from the last station before the end plus the end's
// place t past it (within the bracket) and H on the grid of the level
// model (sharp, or 0.02 to 3 station spacings), I0 by weighted least
// squares at each grid point; its sigma is the profile interval over the
// grid (the steps of plateau.go's search: the I0 whose chi-square,
// minimised over t and H, lies within the Birge scale of the minimum).
// The depth is fitted as D0 - c (1 - f(d_i)) at the best t and H (the
// missing share of the field making the fitted line shallower in
// proportion, as the means above do to within a few millimetres), its
// sigma the larger of its own (Birge-scaled) and its spread over the grid
// points the current's interval takes in.
type beforeEnd struct {
	current, currentSigma, depth, depthSigma float64
	fitted                                   bool
	// t and h are the best fit's place of the end past the last station
	// before it and the share's width, and within the (t, h) of the grid
	// points inside the current's profile interval; reach is the distance
	// from the last station before the end to the farthest station the fit
	// used (see endShares).
	t, h, reach float64
	within      [][2]float64
	// chi2 is the best fit's chi-square of the currents, over n stations.
	chi2 float64
	n    int
}

// text says what the fit of the levels before the end gives.
func (b beforeEnd) text() string {
	if !b.fitted {
		return fmt.Sprintf("the stations before read %s A at %s m (median and spread)", pm(b.current, b.currentSigma), pm(b.depth, b.depthSigma))
	}
	return fmt.Sprintf("allowing for the share of the field that the stations nearest the end miss (a line's end, Biot-Savart), the conductor carries %s A at %s m deep before it", pm(b.current, b.currentSigma), pm(b.depth, b.depthSigma))
}

// endBefore fits the current and depth before the end whose first station
// past it is idx[start] (see beforeEnd); with fewer than two reference
// stations, or none with sigmas, it returns the reference's median and
// spread.
func endBefore(ps []Placed, idx []int, start int, set *Settings, ref endRefOf) beforeEnd {
	return endFit(ps, idx, start, set, ref, math.Inf(1))
}

// endFit is endBefore with the share's width H at most hmax.
func endFit(ps []Placed, idx []int, start int, set *Settings, ref endRefOf, hmax float64) beforeEnd {
	out := beforeEnd{current: ref.current, currentSigma: ref.currentSpread, depth: ref.depth, depthSigma: ref.depthSpread}
	a, b := &ps[idx[start-1]], &ps[idx[start]]
	gap := math.Abs(b.Chainage - a.Chainage)
	var st []*Placed
	for j := start - 1; j >= 0 && len(st) < endRef; j-- {
		if p := &ps[idx[j]]; clean(p, set) {
			if !(p.CurrentSigma > 0) || !(p.DepthSigma > 0) {
				return out
			}
			st = append(st, p)
		}
	}
	n := len(st)
	if n < 2 || !(gap > 0) {
		return out
	}
	type point struct {
		i0, v, chi2, d0, d0var, dchi2, t, h float64
	}
	frac := make([]float64, n)
	fit := func(t, h float64) point {
		var sw, swy float64
		for k, p := range st {
			frac[k] = 1
			if h > 0 {
				d := math.Abs(a.Chainage-p.Chainage) + t
				frac[k] = (1 + d/math.Hypot(d, h)) / 2
			}
			w := 1 / (p.CurrentSigma * p.CurrentSigma)
			sw += w * frac[k] * frac[k]
			swy += w * frac[k] * math.Abs(p.Current)
		}
		q := point{i0: swy / sw, v: 1 / sw}
		// Depth: D0 - c (1 - f), weighted least squares in (D0, c).
		var s0, s1, s2, sy, sxy float64
		for k, p := range st {
			r := math.Abs(p.Current) - q.i0*frac[k]
			q.chi2 += r * r / (p.CurrentSigma * p.CurrentSigma)
			w := 1 / (p.DepthSigma * p.DepthSigma)
			x := -(1 - frac[k])
			s0, s1, s2 = s0+w, s1+w*x, s2+w*x*x
			sy, sxy = sy+w*p.Depth, sxy+w*x*p.Depth
		}
		if det := s0*s2 - s1*s1; det > 1e-12*s0*s2 {
			c := (s0*sxy - s1*sy) / det
			q.d0, q.d0var = (s2*sy-s1*sxy)/det, s2/det
			for k, p := range st {
				r := p.Depth - q.d0 - c*(-(1 - frac[k]))
				q.dchi2 += r * r / (p.DepthSigma * p.DepthSigma)
			}
			if dof := float64(n - 2); dof > 0 && q.dchi2 > dof {
				q.d0var *= q.dchi2 / dof
			}
		} else {
			// No station sees the end (a sharp end): their mean.
			q.d0, q.d0var = sy/s0, 1/s0
			if n > 1 {
				for _, p := range st {
					r := p.Depth - q.d0
					q.dchi2 += r * r / (p.DepthSigma * p.DepthSigma)
				}
				if dof := float64(n - 1); q.dchi2 > dof {
					q.d0var *= q.dchi2 / dof
				}
			}
		}
		return q
	}
	sp := gap
	var pts []point
	best := -1
	for i := range gridX {
		t := gap * (float64(i) + 0.5) / gridX
		for j := range gridH {
			h := 0.0
			if j > 0 {
				h = minWidth * sp * math.Pow(maxWidth/minWidth, float64(j-1)/(gridH-2))
			}
			if h > hmax {
				continue
			}
			q := fit(t, h)
			q.t, q.h = t, h
			if !finite(q.i0) || !finite(q.chi2) || !finite(q.d0) || !finite(q.d0var) {
				continue
			}
			pts = append(pts, q)
			if best < 0 || q.chi2 < pts[best].chi2 {
				best = len(pts) - 1
			}
		}
	}
	if best < 0 {
		return out
	}
	q := pts[best]
	scale := 1.0
	if dof := float64(n - 3); dof > 0 {
		scale = math.Max(1, q.chi2/dof)
	}
	lim := q.chi2 + scale
	var cs, ds float64
	var within [][2]float64
	for _, p := range pts {
		if p.chi2 > lim {
			continue
		}
		within = append(within, [2]float64{p.t, p.h})
		hw := math.Sqrt((lim - p.chi2) * p.v)
		cs = math.Max(cs, math.Max(p.i0+hw-q.i0, q.i0-(p.i0-hw)))
		ds = math.Max(ds, math.Abs(p.d0-q.d0))
	}
	// The share's model error: a part of the correction it makes to the
	// station farthest from the end (endShareError).
	far := st[n-1]
	cs = math.Hypot(cs, endShareError*(q.i0-math.Abs(far.Current)))
	dsig := math.Hypot(math.Max(ds, math.Sqrt(q.d0var)), endShareError*(q.d0-far.Depth))
	return beforeEnd{current: q.i0, currentSigma: cs, depth: q.d0, depthSigma: dsig, fitted: true,
		t: q.t, h: q.h, reach: math.Abs(a.Chainage - far.Chainage), within: within, chi2: q.chi2, n: n}
}

// endShareError is the fraction of the correction made by the end's share
// of the field (beforeEnd) taken as the model's error, added to the
// sigmas in quadrature. f is the share seen directly above the line, and
// a traverse's readings to either side see less; H, fitted, stands in for
// that, and the depth's proportion to the missing share is only roughly
// so. Without it, on TestEndFarStationNamed's simulated stations (three
// before the end, none left over to measure scatter) the current's z had
// a standard deviation of 1.33 and the depth's a mean of -0.71 and 84%
// within two sigma; with a third of the correction the current's sd is
// 0.4-0.5 (conservative) and the depth's mean z -0.5 to -0.6, 79-80%
// within one sigma and 95-99% within two.
const endShareError = 1.0 / 3
