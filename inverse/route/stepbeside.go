package route

import "math"

// StepBeside is a current step found on another conductor beside the
// route's: its place along the route (Lo to Hi, the route's chainage, m;
// the location's sigma about it, within its bracket), its size DI (A),
// and that conductor's current Current (A), its depth Below the route's
// conductor (m, negative when shallower) and its horizontal offset Offset
// from it across the route (m).
type StepBeside struct {
	Lo, Hi, DI             float64
	Current, Below, Offset float64
}

// WidenForStepsBeside widens the current and depth sigmas of r's stations
// near a step on another conductor, as stepDoubt does for the route's
// own: by the error that step's field gives the station's fit
// (stepBiasBeside), scaled by the share of it the fit's misfit shows
// (stepSeen). A station already widened for a step keeps the larger.
//
// In review (rg26a, s9-step-on-c2: a 25 A feeder 1 m down and a supply
// cable 3 m beside it, 0.8 m down, falling from 18 to 8 A) the cable's
// step was found and its own stations widened, while the feeder's
// stations beside it read 5-7 sigma off in current (about 1%) and depth
// (8 mm) on three seeds, unwidened.
func (r *Route) WidenForStepsBeside(steps []StepBeside) {
	if r == nil || len(steps) == 0 {
		return
	}
	for k := range r.Stations {
		p := &r.Stations[k]
		cur := math.Abs(p.Current)
		if !p.usable() || !(cur > 0) {
			continue
		}
		reach := p.Reach
		if len(reach) == 0 {
			reach = []float64{math.Abs(p.Depth)}
		}
		var best *StepNear
		for _, s := range steps {
			if !(s.DI > 0) || !finite(s.DI) {
				continue
			}
			d := math.Max(0, math.Max(s.Lo-p.Chainage, p.Chainage-s.Hi))
			dc, dd, pred := stepBiasBeside(reach, d, s.DI, cur, math.Abs(s.Current), reach[0]+s.Below, s.Offset)
			seen := stepSeen(p, pred)
			sn := &StepNear{Step: s.DI, Distance: d, Seen: seen, Share: seen * math.Abs(dc) / cur, Beside: true}
			if dep := math.Abs(p.Depth); dep > 0 {
				sn.DepthShare = seen * math.Abs(dd) / dep
			}
			if best == nil || sn.Share > best.Share {
				best = sn
			}
		}
		if best == nil {
			continue
		}
		sigma, depthSigma := p.CurrentSigma, p.DepthSigma
		if o := p.StepNear; o != nil {
			if o.Share >= best.Share && o.DepthShare >= best.DepthShare {
				continue
			}
			sigma, depthSigma = o.FitCurrentSigma, o.FitDepthSigma
		}
		if !widenForStep(p, best, sigma, depthSigma) {
			continue
		}
		p.CurrentSigma, p.DepthSigma = best.CurrentSigma, best.DepthSigma
		p.StepNear = best
	}
}

// stepBiasBeside is stepBias for a step of dI on another conductor, of
// current I2, at depth h2 under the readings and horizontal offset off
// from the station's line (current I, at the depth of the nearest reach): the field of a
// half-line's end against an infinite line's (Biot-Savart, as stepBias)
// read at each reading's distance from that conductor, and the fit of
// both lines (current, depth and horizontal place each) and a uniform
// background, linearised about the two lines. It returns the change of
// the station's current (A) and depth (m), and the share of the
// station's line's field the fit is left missing.
func stepBiasBeside(reach []float64, d, dI, I, I2, h2, off float64) (dCur, dDepth, resid float64) {
	if len(reach) == 0 || !(reach[0] > 0) || !(I > 0) || !(h2 > 0) || !finite(off) {
		return 0, 0, 0
	}
	h := reach[0]
	const n = 8
	var a [n][n]float64
	var b [n]float64
	var ee, sig float64
	line := func(cur, xc, hc, x float64) (col [3][2]float64) {
		dx := x - xc
		r2 := dx*dx + hc*hc
		col[0] = [2]float64{hc / r2, -dx / r2}                                                // d/dI
		col[1] = [2]float64{cur * (r2 - 2*hc*hc) / (r2 * r2), 2 * cur * hc * dx / (r2 * r2)}  // d/dh
		col[2] = [2]float64{2 * cur * hc * dx / (r2 * r2), cur * (hc*hc - dx*dx) / (r2 * r2)} // d/dxc
		return col
	}
	for _, r := range reach {
		if !(r >= h) {
			r = h
		}
		r2 := r * r
		x := math.Sqrt(math.Max(0, r2-h*h))
		for _, sx := range [2]float64{x, -x} {
			w := r2 / 2
			dx2 := sx - off
			q2 := dx2*dx2 + h2*h2
			g := 1 - d/math.Hypot(d, math.Sqrt(q2))
			e := [2]float64{-dI / 2 * g * h2 / q2, dI / 2 * g * dx2 / q2}
			c1, c2 := line(I, 0, h, sx), line(I2, off, h2, sx)
			cols := [n][2]float64{c1[0], c1[1], c1[2], c2[0], c2[1], c2[2], {1, 0}, {0, 1}}
			for m := range n {
				for k := range n {
					a[m][k] += w * (cols[m][0]*cols[k][0] + cols[m][1]*cols[k][1])
				}
				b[m] += w * (cols[m][0]*e[0] + cols[m][1]*e[1])
			}
			ee += w * (e[0]*e[0] + e[1]*e[1])
			sig += w * I * I / r2
		}
	}
	sol, ok := solveN(a, b)
	if !ok {
		return 0, 0, 0
	}
	left := ee
	for m := range n {
		left -= sol[m] * b[m]
	}
	return sol[0], sol[1], math.Sqrt(math.Max(0, left) / sig)
}

// solveN solves a x = b for 8 unknowns by Gaussian elimination with
// partial pivoting, relative to the largest pivot; false when a is
// singular (a line the readings do not fix).
func solveN(a [8][8]float64, b [8]float64) ([8]float64, bool) {
	const n = 8
	var x [n]float64
	var scale float64
	for i := range n {
		scale = math.Max(scale, math.Abs(a[i][i]))
	}
	for c := range n {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		if !(math.Abs(a[p][c]) > 1e-12*scale) {
			return x, false
		}
		a[c], a[p] = a[p], a[c]
		b[c], b[p] = b[p], b[c]
		for r := c + 1; r < n; r++ {
			f := a[r][c] / a[c][c]
			for k := c; k < n; k++ {
				a[r][k] -= f * a[c][k]
			}
			b[r] -= f * b[c]
		}
	}
	for c := n - 1; c >= 0; c-- {
		v := b[c]
		for k := c + 1; k < n; k++ {
			v -= a[c][k] * x[k]
		}
		x[c] = v / a[c][c]
	}
	return x, true
}
