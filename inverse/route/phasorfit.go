package route

import (
	"math"
	"math/cmplx"
)

// The transition fit of a phasor step, in real components.
//
// A station's phasor is read with two different errors: its RMS current
// (along the phasor, radial) with CurrentSigma and its phase (across it,
// tangential) with |I|·PhaseSigma. On a long AC line at a few nanotesla
// of noise the two differ by a factor of two or more (0.005 A radial,
// 0.002 A tangential at 10 A, simulated); weighting both components with
// their mean variance overstated the tangential one, which carries an
// out-of-phase loss and the turn of phase, and understated the radial
// one, so the phasor steps' sigmas were some twice their spread (pulls'
// sd 0.4-0.5 over 200 seeds, simulated truth). Each station is weighted
// here with its 2x2 covariance, radial and tangential, and the model's
// six real parameters (U, D and the shared trend g, complex) are fitted
// with the transition's place xf and width h: eight parameters, whose
// covariance from the linearised model carries the trade between the
// levels and the transition's place and width into the sizes' sigmas.

// phasorObs is a station's phasor in the transition fit: its chainage x,
// phasor p (A, the phase turned back by the route's ramp), time t from
// the run's middle (s, or m of chainage when the times are not known),
// and the inverse of its 2x2 covariance (real, imaginary).
type phasorObs struct {
	x, t   float64
	p      complex128
	vr, vt float64 // radial and tangential variances, A²
	w      [2][2]float64
	rr     []float64 // the station's Reach over the fit's reference; nil: one reading straight above
}

// newPhasorObs returns the observation of phasor p at chainage x and time
// t read with radial variance vr and tangential vt, A².
func newPhasorObs(x, t float64, p complex128, vr, vt float64) phasorObs {
	o := phasorObs{x: x, t: t, p: p}
	o.weigh(vr, vt)
	return o
}

// weigh sets o's variances to vr (radial) and vt (tangential), A².
func (o *phasorObs) weigh(vr, vt float64) {
	o.vr, o.vt = vr, vt
	p := o.p
	c, s := 1.0, 0.0
	if a := cmplx.Abs(p); a > 0 {
		c, s = real(p)/a, imag(p)/a
	}
	// W = r r'/vr + q q'/vt with r = (c, s), q = (-s, c).
	o.w = [2][2]float64{
		{c*c/vr + s*s/vt, c*s/vr - c*s/vt},
		{c*s/vr - c*s/vt, s*s/vr + c*c/vt},
	}
}

// componentChi2 returns the chi-squares of f's residuals along (radial)
// and across (tangential) each station's phasor.
func (f *phasorFit) componentChi2(obs []phasorObs) (cr, ct float64) {
	for i := range obs {
		o := &obs[i]
		m, _ := phasorModel(&f.th, o)
		u := o.p / complex(cmplx.Abs(o.p), 0)
		if cmplx.Abs(o.p) == 0 {
			u = 1
		}
		r := (o.p - m) * cmplx.Conj(u)
		cr += real(r) * real(r) / o.vr
		ct += imag(r) * imag(r) / o.vt
	}
	return cr, ct
}

// phasorNP is the number of parameters of the transition fit: U, D and g
// (real and imaginary parts), the transition's place xf and its width h.
const phasorNP = 8

// phasorFit is the transition model fitted to the phasors of a run's
// stations and their neighbours: P(x) = D + (U - D) f(x_f - x; H) +
// g (x - x_f), f the share of a semi-infinite line (plateau.go), U and D
// the levels either side (complex, A) and g a shared complex trend. The
// parameters are th = (Re U, Im U, Re D, Im D, Re g, Im g, xf, h); cov is
// their covariance (before any Birge widening) when free (xf and h
// fitted; else the first six with xf and h held).
type phasorFit struct {
	th      [phasorNP]float64
	cov     [phasorNP][phasorNP]float64
	free    bool
	chi2    float64
	n       int
	nBefore int
	nAfter  int
}

func (f *phasorFit) xf() float64         { return f.th[6] }
func (f *phasorFit) h() float64          { return f.th[7] }
func (f *phasorFit) up() complex128      { return complex(f.th[0], f.th[1]) }
func (f *phasorFit) down() complex128    { return complex(f.th[2], f.th[3]) }
func (f *phasorFit) leaving() complex128 { return f.up() - f.down() }

// phasorShare is the share f of the upstream current a station at x reads
// for a transition at xf of width h, with its derivatives by xf and h: the
// share of a semi-infinite line read at distance h (Biot-Savart, readings
// straight above), or with the station's reach rr (Station.Reach over a
// reference distance) the mean of those shares at distances h·rr.
func phasorShare(x, xf, h float64, rr []float64) (f, dxf, dh float64) {
	d := xf - x
	if h <= 0 {
		switch {
		case d > 0:
			return 1, 0, 0
		case d < 0:
			return 0, 0, 0
		}
		return 0.5, 0, 0
	}
	if len(rr) == 0 {
		r := math.Hypot(d, h)
		r3 := r * r * r
		return (1 + d/r) / 2, h * h / (2 * r3), -d * h / (2 * r3)
	}
	for _, q := range rr {
		hq := h * q
		r := math.Hypot(d, hq)
		r3 := r * r * r
		f += (1 + d/r) / 2
		dxf += hq * hq / (2 * r3)
		dh += -d * hq * q / (2 * r3)
	}
	n := float64(len(rr))
	return f / n, dxf / n, dh / n
}

// phasorModel returns the model's phasor at o and its derivatives by the
// eight parameters th (complex: real and imaginary components).
func phasorModel(th *[phasorNP]float64, o *phasorObs) (m complex128, j [phasorNP]complex128) {
	U, D, g := complex(th[0], th[1]), complex(th[2], th[3]), complex(th[4], th[5])
	f, dxf, dh := phasorShare(o.x, th[6], th[7], o.rr)
	dx := o.x - th[6]
	m = D + (U-D)*complex(f, 0) + g*complex(dx, 0)
	j[0], j[1] = complex(f, 0), complex(0, f)
	j[2], j[3] = complex(1-f, 0), complex(0, 1-f)
	j[4], j[5] = complex(dx, 0), complex(0, dx)
	j[6] = (U-D)*complex(dxf, 0) - g
	j[7] = (U - D) * complex(dh, 0)
	return m, j
}

// phasorNormal accumulates the normal equations of the first np
// parameters at th: a = J'WJ, b = J'W r (r the residuals), and chi2.
func phasorNormal(obs []phasorObs, th *[phasorNP]float64, np int) (a [phasorNP][phasorNP]float64, b [phasorNP]float64, chi2 float64) {
	for i := range obs {
		o := &obs[i]
		m, j := phasorModel(th, o)
		r := o.p - m
		rr := [2]float64{real(r), imag(r)}
		var wr [2]float64
		for p := 0; p < 2; p++ {
			wr[p] = o.w[p][0]*rr[0] + o.w[p][1]*rr[1]
		}
		chi2 += rr[0]*wr[0] + rr[1]*wr[1]
		var wj [phasorNP][2]float64
		for k := 0; k < np; k++ {
			jk := [2]float64{real(j[k]), imag(j[k])}
			wj[k][0] = o.w[0][0]*jk[0] + o.w[0][1]*jk[1]
			wj[k][1] = o.w[1][0]*jk[0] + o.w[1][1]*jk[1]
			b[k] += jk[0]*wr[0] + jk[1]*wr[1]
		}
		for k := 0; k < np; k++ {
			for l := 0; l < np; l++ {
				a[k][l] += real(j[l])*wj[k][0] + imag(j[l])*wj[k][1]
			}
		}
	}
	return a, b, chi2
}

// fitPhasorLevels fits U, D and g (linear) to obs with the transition at
// xf of width h held; false when singular.
func fitPhasorLevels(obs []phasorObs, xf, h float64) (phasorFit, bool) {
	f := phasorFit{n: len(obs)}
	f.th[6], f.th[7] = xf, h
	a, b, _ := phasorNormal(obs, &f.th, 6)
	inv, ok := invertN(a, 6)
	if !ok {
		return f, false
	}
	for k := 0; k < 6; k++ {
		for l := 0; l < 6; l++ {
			f.th[k] += inv[k][l] * b[l]
		}
	}
	f.cov = inv
	_, _, f.chi2 = phasorNormal(obs, &f.th, 6)
	for _, o := range obs {
		if s, _, _ := phasorShare(o.x, xf, h, o.rr); s > 0.5 {
			f.nBefore++
		} else {
			f.nAfter++
		}
	}
	return f, true
}

// refinePhasorFit refines the place and width of a transition fitted on
// the grid (fit0, width above zero) within xf in [xa, xb] and h in (0,
// hMax], by Levenberg-Marquardt on all eight parameters, and returns the
// fit with the eight parameters' covariance (free); false when it cannot
// (singular, or the optimum on a bound, where the linearised covariance
// does not hold).
func refinePhasorFit(obs []phasorObs, fit0 phasorFit, xa, xb, hMax float64) (phasorFit, bool) {
	th := fit0.th
	_, _, chi := phasorNormal(obs, &th, phasorNP)
	lambda := 1e-3
	for it := 0; it < 60; it++ {
		a, b, _ := phasorNormal(obs, &th, phasorNP)
		var m [phasorNP][phasorNP]float64
		for k := range m {
			m[k] = a[k]
			m[k][k] = a[k][k] * (1 + lambda)
		}
		inv, ok := invertN(m, phasorNP)
		if !ok {
			return fit0, false
		}
		var next [phasorNP]float64
		for k := range next {
			next[k] = th[k]
			for l := 0; l < phasorNP; l++ {
				next[k] += inv[k][l] * b[l]
			}
		}
		next[6] = math.Min(xb, math.Max(xa, next[6]))
		next[7] = math.Min(hMax, math.Max(th[7]/4, next[7]))
		_, _, c := phasorNormal(obs, &next, phasorNP)
		if c <= chi {
			done := chi-c < 1e-9*(1+chi)
			th, chi = next, c
			lambda = math.Max(lambda/10, 1e-9)
			if done {
				break
			}
		} else {
			lambda *= 10
			if lambda > 1e8 {
				break
			}
		}
	}
	if th[6] <= xa || th[6] >= xb || th[7] >= hMax {
		return fit0, false
	}
	a, _, _ := phasorNormal(obs, &th, phasorNP)
	cov, ok := invertN(a, phasorNP)
	if !ok || !(cov[6][6] > 0) || !(cov[7][7] > 0) {
		return fit0, false
	}
	f := fit0
	f.th, f.cov, f.chi2, f.free = th, cov, chi, true
	f.nBefore, f.nAfter = 0, 0
	for _, o := range obs {
		if s, _, _ := phasorShare(o.x, th[6], th[7], o.rr); s > 0.5 {
			f.nBefore++
		} else {
			f.nAfter++
		}
	}
	return f, true
}

// phasorVar is the variance g' C g of a function of the fit's parameters
// with gradient g (over the first six, or all eight when free).
func (f *phasorFit) phasorVar(g [phasorNP]float64) float64 {
	np := 6
	if f.free {
		np = phasorNP
	}
	var v float64
	for k := 0; k < np; k++ {
		for l := 0; l < np; l++ {
			v += g[k] * f.cov[k][l] * g[l]
		}
	}
	return math.Max(v, 0)
}

// argGrad is the gradient of arg z (radians) by (Re z, Im z).
func argGrad(z complex128) (float64, float64) {
	a2 := real(z)*real(z) + imag(z)*imag(z)
	return -imag(z) / a2, real(z) / a2
}

// absGrad is the gradient of |z| by (Re z, Im z).
func absGrad(z complex128) (float64, float64) {
	a := cmplx.Abs(z)
	return real(z) / a, imag(z) / a
}

// invertN inverts the leading n x n block of a by Gauss-Jordan elimination
// with partial pivoting; false when singular.
func invertN(a [phasorNP][phasorNP]float64, n int) (inv [phasorNP][phasorNP]float64, ok bool) {
	for i := 0; i < n; i++ {
		inv[i][i] = 1
	}
	scale := 0.0
	for i := 0; i < n; i++ {
		scale = math.Max(scale, math.Abs(a[i][i]))
	}
	if scale == 0 {
		return inv, false
	}
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		if math.Abs(a[p][c]) <= 1e-14*scale {
			return inv, false
		}
		a[c], a[p] = a[p], a[c]
		inv[c], inv[p] = inv[p], inv[c]
		d := a[c][c]
		for k := 0; k < n; k++ {
			a[c][k] /= d
			inv[c][k] /= d
		}
		for r := 0; r < n; r++ {
			if r == c || a[r][c] == 0 {
				continue
			}
			m := a[r][c]
			for k := 0; k < n; k++ {
				a[r][k] -= m * a[c][k]
				inv[r][k] -= m * inv[c][k]
			}
		}
	}
	return inv, true
}

// addRampError adds to the fit's covariance the error of the phase ramp
// the phases were turned back by, sigma degrees per second (or per metre
// of chainage: obs' t unit): the fitted parameters move by C J'W j per
// unit of ramp error, j the model's change with it (a turn of every phasor
// by the ramp times the station's time from the run's middle). A shared
// complex trend takes up most of it (a turn growing along the route), so
// what is added is the part it does not.
func (f *phasorFit) addRampError(obs []phasorObs, sigma float64) {
	if !(sigma > 0) {
		return
	}
	np := 6
	if f.free {
		np = phasorNP
	}
	var b [phasorNP]float64
	for i := range obs {
		o := &obs[i]
		m, j := phasorModel(&f.th, o)
		jr := complex(0, o.t*math.Pi/180) * m
		w0 := o.w[0][0]*real(jr) + o.w[0][1]*imag(jr)
		w1 := o.w[1][0]*real(jr) + o.w[1][1]*imag(jr)
		for k := 0; k < np; k++ {
			b[k] += real(j[k])*w0 + imag(j[k])*w1
		}
	}
	var s [phasorNP]float64
	for k := 0; k < np; k++ {
		for l := 0; l < np; l++ {
			s[k] += f.cov[k][l] * b[l]
		}
	}
	for k := 0; k < np; k++ {
		for l := 0; l < np; l++ {
			f.cov[k][l] += s[k] * s[l] * sigma * sigma
		}
	}
}
