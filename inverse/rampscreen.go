package inverse

import (
	"math"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"
)

// rampScreen predicts, without iterating, what checkRamp's fits of the
// one-line fit c1 can gain: the residual sum of squares of the fit
// linearised at c1's geometry x0 (the line's unit-current field g, the
// uniform background, g's derivatives in the free geometry, which span the
// first-order change of the current times the field), with the ramp columns
// (t - tc) g, and (t - tc)^2 g, added. One QR of that basis, not pivoted,
// gives all three in sequence: Q^T y's entries past the base columns are
// the falls of the residual the ramp columns bring in turn, the geometry
// free to first order (the score test of the ramp). It returns the base
// residual and the predictions for order 1 and 2; ok false when the check
// does not apply (checkRamp would return nil at once) or the basis cannot
// be formed.
func (f *fitter) rampScreen(c1 *candidate) (base, rss1, rss2 float64, ok bool) {
	p := f.prob
	if c1 == nil || p.Fields == nil || p.Scale != nil || len(p.Times) != len(p.Points) || !f.sv.single ||
		len(c1.sp.geom) != 1 || len(c1.sp.dips) != 0 || f.set.Background != BackgroundUniform || c1.sp.nrhs != 1 {
		return 0, 0, 0, false
	}
	n := len(p.Points)
	tmin, tmax, tc := math.Inf(1), math.Inf(-1), 0.0
	for _, t := range p.Times {
		if !finite(t) {
			return 0, 0, 0, false
		}
		tmin, tmax = math.Min(tmin, t), math.Max(tmax, t)
		tc += t
	}
	tc /= float64(n)
	if !(tmax-tmin > 0) || n < 8 {
		return 0, 0, 0, false
	}
	tmp := &separable{geom: []lineGeom{c1.sp.geom[0]}}
	x0, _, _ := tmp.pack()
	np := len(x0)
	m := 3 * n
	nb := 4 + np // g, the background, g's derivatives
	nc := nb + 2
	if m <= nc {
		return 0, 0, 0, false
	}
	// The data are a further last column: R's last column is then Q^T y.
	a := mat.NewDense(m, nc+1, nil)
	var yy float64
	tmp.unpack(x0)
	ln := tmp.geom[0].line()
	for i := range n {
		g := ln.Field(p.Points[i], 1)
		dt := p.Times[i] - tc
		for c := range 3 {
			row := 3*i + c
			w := c1.sp.weight(row)
			v := p.Fields[i][c] * w
			a.Set(row, nc, v)
			yy += v * v
			a.Set(row, 0, w*g[c])
			a.Set(row, 1+c, w)
			a.Set(row, nb, w*dt*g[c])
			a.Set(row, nb+1, w*dt*dt*g[c])
		}
	}
	xt := append([]float64(nil), x0...)
	for j := range np {
		h := 1e-6 * math.Max(1, math.Abs(x0[j]))
		xt[j] = x0[j] + h
		tmp.unpack(xt)
		lp := tmp.geom[0].line()
		xt[j] = x0[j] - h
		tmp.unpack(xt)
		lm := tmp.geom[0].line()
		xt[j] = x0[j]
		for i := range n {
			gp, gm := lp.Field(p.Points[i], 1), lm.Field(p.Points[i], 1)
			for c := range 3 {
				row := 3*i + c
				a.Set(row, 4+j, c1.sp.weight(row)*(gp[c]-gm[c])/(2*h))
			}
		}
	}
	tmp.unpack(x0)
	var qr mat.QR
	qr.Factorize(a)
	var r mat.Dense
	qr.RTo(&r)
	var s float64
	for k := range nb {
		s += r.At(k, nc) * r.At(k, nc)
	}
	e1, e2 := r.At(nb, nc)*r.At(nb, nc), r.At(nb+1, nc)*r.At(nb+1, nc)
	base = math.Max(yy-s, 0)
	rss1, rss2 = math.Max(base-e1, 0), math.Max(base-e1-e2, 0)
	if !finite(base) || !finite(rss1) || !finite(rss2) {
		return 0, 0, 0, false
	}
	return base, rss1, rss2, true
}

// rampScreenSlack and rampScreenFrac set how near the ceiling the screen's
// predicted criterion must come for the full fits to run: within 2 plus 5 %
// of the fall it predicts. Over the ramp tests and a 100-traverse steady DC
// survey (1,332 checks, orders 1 and 2) the full fit's criterion was never
// more than 0.11, or 3 % of the fall, above the prediction (the prediction
// is a first-order one; the fit iterates the geometry), and it was below it
// by up to 4 on a 10 % swing.
const (
	rampScreenSlack = 2.0
	rampScreenFrac  = 0.05
)

// rampScreenOn lets findRamp skip checkRamp's fits by rampMayPass; the
// tests turn it off to compare with the fits run on every traverse, and
// count with rampFullChecks the traverses whose fits ran.
var (
	rampScreenOn   = true
	rampFullChecks atomic.Int64
)

// rampMayPass reports whether a ramp fit of c1 (order 1 or 2) may lower
// the criterion below ceiling, by the screen rampScreen: false only when
// both predictions stay above it by more than the margin. A ramp the screen
// passes is checked by checkRamp's full fits of both orders, as before the
// screen; true too when the screen cannot be formed.
func (f *fitter) rampMayPass(c1 *candidate, ceiling float64) bool {
	base, rss1, rss2, ok := f.rampScreen(c1)
	if !ok {
		return true
	}
	n, k := c1.counts()
	crit := func(rss float64, o int) float64 {
		aic, bic := f.criteria(rss, n, k+o)
		if f.set.Criterion == AIC {
			return aic
		}
		return bic
	}
	c0 := crit(base, 0)
	for o, rss := range []float64{rss1, rss2} {
		pc := crit(rss, o+1)
		if pc < ceiling+rampScreenSlack+rampScreenFrac*math.Abs(c0-pc) {
			return true
		}
	}
	return false
}
