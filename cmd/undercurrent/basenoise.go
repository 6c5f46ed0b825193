package main

import (
	"fmt"
	"math"
	"reflect"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
)

// The base record's own noise in the fits' sigmas.
//
// The base-station correction subtracts the base's departure, interpolated
// at each survey reading's time, from every reading: the base
// magnetometer's noise goes into the corrected readings, shared by every
// reading taken between the same two base readings. The fits assume
// independent reading noise, and their sigmas counted the survey's noise
// only: under a 250 Hz log with 2 nT of noise, a base read once a second
// with 0.2 nT of noise gave pulls (fit minus truth over sigma) of spread
// 1.8, and 1 nT gave 7.2, all "sound", no warning (found in review).
//
// The base's share is worked out per group from the fit's own linearised
// model. For each line fitted, the columns of its current, depth (the line
// moved up) and horizontal offset (moved across its direction) are taken
// with a uniform background per axis (the fit's own); the least-squares
// weights a_p of parameter p over the readings (the rows of (XᵀX)⁻¹Xᵀ)
// then give its variance from the survey's white noise, sigma_s² |a_p|²,
// and from the base's, sum over base readings j and axes k of
// sigma_b,k² (sum over survey readings i of a_p,ik w_ij)², where w_ij are
// the linear interpolation weights of reading i's time between the base
// readings (the correction's own). When the weights vary slowly over a
// base interval the ratio is r sigma_b² / sigma_s², r the survey readings
// per base interval; when the anomaly is crossed faster than the base
// samples, the base's error over it is nearly a straight line, mostly
// taken up by the background, and the ratio is smaller. Every sigma of the
// group's fit is widened by sqrt(1 + the largest ratio). The base noise
// itself is measured from the record's fourth differences
// (calibrate.BaseNoise).

// baseNoiseWarnFactor is the widening of a group's sigmas from which the
// base's noise is warned of: sigmas 25% wider, the base adding over half
// the survey's own variance.
const baseNoiseWarnFactor = 1.25

// coarseBaseStep is the base sample interval, s, from which the warning
// says that the base's "noise" is mostly the field's own change between
// readings: a record read every 10 s or less slowly (one-minute
// observatory values above all) misses the geomagnetic pulsations of
// class Pc3 and longer (periods from 10 s; IAGA classification, Jacobs et
// al., J. Geophys. Res. 69, 1964), which its fourth differences then see.
const coarseBaseStep = 10.0

// baseNoise is what the widening needs of the base record.
type baseNoise struct {
	name  string
	t     []float64 // times of the base readings with all three components, s
	sigma [3]float64
	step  float64
}

// newBaseNoise measures the base record's noise; nil when it is not
// measured (too few readings in runs).
func newBaseNoise(name string, base *ingest.Samples) *baseNoise {
	cols := [3][]float64{base.Bx, base.By, base.Bz}
	sigma, step := calibrate.BaseNoise(base.Time, cols)
	if sigma == [3]float64{} || step <= 0 {
		return nil
	}
	bn := &baseNoise{name: name, sigma: sigma, step: step}
	for i, t := range base.Time {
		if math.IsNaN(t) || math.IsNaN(cols[0][i]) || math.IsNaN(cols[1][i]) || math.IsNaN(cols[2][i]) {
			continue
		}
		if n := len(bn.t); n > 0 && !(t > bn.t[n-1]) {
			continue
		}
		bn.t = append(bn.t, t)
	}
	if len(bn.t) < 2 {
		return nil
	}
	return bn
}

// widen returns the factor by which the sigmas of group g's DC fit are
// widened for the base's noise, 1 when there is nothing to widen.
func (bn *baseNoise) widen(g *group) float64 {
	r := g.res
	if r == nil || len(r.Sources) == 0 || len(r.Predicted) != len(g.points) || len(g.stamps) != len(g.points) || !(r.Sigma > 0) {
		return 1
	}
	for _, t := range g.stamps {
		if math.IsNaN(t) {
			return 1
		}
	}
	// The columns: a background per axis, then per line its current,
	// depth and offset; one for the anomaly of any other source.
	n := len(g.points)
	var cols [][]float64 // each n*3 long, nT per unit
	var params []int     // the columns whose sigmas are compared
	for k := range 3 {
		c := make([]float64, 3*n)
		for i := range n {
			c[3*i+k] = 1
		}
		cols = append(cols, c)
	}
	other := false
	rest := make([]float64, 3*n)
	for i := range n {
		for k := range 3 {
			rest[3*i+k] = r.Predicted[i][k] - r.Background[k]
		}
	}
	for _, s := range r.Sources {
		if s.Kind != "line" || s.Current == 0 {
			other = true
			continue
		}
		up := [3]float64{0, 0, 1}
		across := [3]float64{s.Dir[1]*up[2] - s.Dir[2]*up[1], s.Dir[2]*up[0] - s.Dir[0]*up[2], s.Dir[0]*up[1] - s.Dir[1]*up[0]}
		an := math.Sqrt(across[0]*across[0] + across[1]*across[1] + across[2]*across[2])
		line := inverse.Line{Point: s.Point, Dir: s.Dir}
		cur := make([]float64, 3*n)
		for i, p := range g.points {
			b := line.Field(p, 1)
			for k := range 3 {
				cur[3*i+k] = b[k] * 1e9
				rest[3*i+k] -= b[k] * 1e9 * s.Current
			}
		}
		params = append(params, len(cols))
		cols = append(cols, cur)
		moves := [][3]float64{up}
		if an > 1e-6 {
			moves = append(moves, [3]float64{across[0] / an, across[1] / an, across[2] / an})
		}
		const h = 1e-3 // m
		for _, m := range moves {
			lp := inverse.Line{Point: [3]float64{s.Point[0] + h*m[0], s.Point[1] + h*m[1], s.Point[2] + h*m[2]}, Dir: s.Dir}
			lm := inverse.Line{Point: [3]float64{s.Point[0] - h*m[0], s.Point[1] - h*m[1], s.Point[2] - h*m[2]}, Dir: s.Dir}
			c := make([]float64, 3*n)
			for i, p := range g.points {
				bp, bm := lp.Field(p, s.Current), lm.Field(p, s.Current)
				for k := range 3 {
					c[3*i+k] = (bp[k] - bm[k]) / (2 * h) * 1e9
				}
			}
			params = append(params, len(cols))
			cols = append(cols, c)
		}
	}
	if other {
		params = append(params, len(cols))
		cols = append(cols, rest)
	}
	if len(params) == 0 {
		return 1
	}
	// Columns scaled to unit length; the Gram matrix inverted.
	q := len(cols)
	scale := make([]float64, q)
	for j, c := range cols {
		var s float64
		for _, v := range c {
			s += v * v
		}
		if s == 0 {
			return 1
		}
		scale[j] = math.Sqrt(s)
		for i := range c {
			c[i] /= scale[j]
		}
	}
	gram := mat.NewSymDense(q, nil)
	for a := range q {
		for b := a; b < q; b++ {
			var s float64
			for i, v := range cols[a] {
				s += v * cols[b][i]
			}
			gram.SetSym(a, b, s)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(gram) {
		return 1 // parameters the readings do not separate: the fit says so
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return 1
	}
	// The base readings the group's times fall between.
	lo := max(0, sort.SearchFloat64s(bn.t, slicesMin(g.stamps))-1)
	hi := min(len(bn.t)-1, sort.SearchFloat64s(bn.t, slicesMax(g.stamps)))
	// Each reading's interpolation weights between base readings.
	j0s, j1s := make([]int, n), make([]int, n)
	fs := make([]float64, n)
	for i, t := range g.stamps {
		j := sort.SearchFloat64s(bn.t, t)
		switch {
		case j < len(bn.t) && bn.t[j] == t, j == 0:
			j0s[i], j1s[i] = j-lo, j-lo
		case j == len(bn.t):
			j0s[i], j1s[i] = j-1-lo, j-1-lo
		default:
			j0s[i], j1s[i] = j-1-lo, j-lo
			fs[i] = (t - bn.t[j-1]) / (bn.t[j] - bn.t[j-1])
		}
	}
	c := make([][3]float64, hi-lo+1)
	w := make([]float64, q)
	worst := 0.0
	for _, p := range params {
		clear(c)
		for b := range q {
			w[b] = inv.At(b, p)
		}
		// a_p = X (XᵀX)⁻¹ e_p, accumulated onto the base readings.
		for i := range n {
			f := fs[i]
			for k := range 3 {
				var a float64
				for b, x := range w {
					a += cols[b][3*i+k] * x
				}
				c[j0s[i]][k] += a * (1 - f)
				c[j1s[i]][k] += a * f
			}
		}
		var base float64
		for _, v := range c {
			for k := range 3 {
				base += bn.sigma[k] * bn.sigma[k] * v[k] * v[k]
			}
		}
		survey := r.Sigma * r.Sigma * inv.At(p, p)
		worst = math.Max(worst, base/survey)
	}
	return math.Sqrt(1 + worst)
}

func slicesMin(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}

func slicesMax(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// widenForBaseNoise widens the sigmas of every DC fit for the base's
// noise, warns when the base adds much to them and notes the widening in
// the base summary.
func widenForBaseNoise(sv *survey) {
	bn := sv.baseNoise
	if bn == nil || sv.ac {
		return
	}
	var ks []float64
	var rpb []float64 // survey readings per base interval
	for _, g := range sv.groups {
		if g.err != nil || g.res == nil {
			continue
		}
		k := bn.widen(g)
		if k <= 1 {
			continue
		}
		scaleSigmas(g.res, k)
		ks = append(ks, k)
		if len(g.stamps) > 1 {
			if span := slicesMax(g.stamps) - slicesMin(g.stamps); span > 0 {
				rpb = append(rpb, float64(len(g.stamps)-1)/span*bn.step)
			}
		}
	}
	if len(ks) == 0 {
		return
	}
	sort.Float64s(ks)
	med, top := medianOf(ks), ks[len(ks)-1]
	nt := func(v float64) string {
		if v < 0.1 {
			return fmt.Sprintf("%.2g", v)
		}
		return fmt.Sprintf("%.2f", v)
	}
	noise := nt(bn.sigma[0]) + "/" + nt(bn.sigma[1]) + "/" + nt(bn.sigma[2]) + " nT (east/north/up)"
	if sv.doc.BaseStation != nil {
		sv.doc.BaseStation.Summary += fmt.Sprintf("; the base's own noise, %s, widened the fits' sigmas by x%.2f (median; up to x%.2f)", noise, med, top)
	}
	if top < baseNoiseWarnFactor {
		return
	}
	share := ""
	if r := medianOf(rpb); r > 1.5 {
		share = fmt.Sprintf(" shared by the %.0f survey readings taken between two base readings (%g s apart),", r, math.Round(bn.step*1e6)/1e6)
	}
	coarse := ""
	if bn.step >= coarseBaseStep {
		coarse = fmt.Sprintf(" (read every %g s, most of it is the field's own change between readings, which the straight line drawn between them misses)", math.Round(bn.step*1e6)/1e6)
	}
	how := "on some groups it adds over half as much again to their variance as the survey's own noise"
	if med >= math.Sqrt2 {
		how = "on most groups it moves the fits more than the survey's own noise does"
	}
	sv.warnings = append(sv.warnings, fmt.Sprintf("base record %s: its own noise, %s measured from its fourth differences%s, goes into every survey reading it corrects,%s and moves the fits as drift would: the fits' sigmas were widened for it by x%.2f (median of the groups; up to x%.2f), and %s. A quieter base magnetometer, or one read more often, would give tighter results",
		bn.name, noise, coarse, share, med, top, how))
}

// scaleSigmas multiplies every uncertainty of a fit by k: the fields whose
// names end in Sigma or Sigmas (but not the reading noise Result.Sigma),
// in the result and its sources and pairs, and the covariance by k².
func scaleSigmas(r *inverse.Result, k float64) {
	v := reflect.ValueOf(r).Elem()
	scaleValue(v, k, true)
	if r.Covariance != nil {
		r.Covariance.ScaleSym(k*k, r.Covariance)
	}
}

func scaleValue(v reflect.Value, k float64, top bool) {
	t := v.Type()
	for i := range v.NumField() {
		f, name := v.Field(i), t.Field(i).Name
		if !f.CanSet() {
			continue
		}
		sigma := strings.HasSuffix(name, "Sigma") || strings.HasSuffix(name, "Sigmas")
		if top && name == "Sigma" {
			sigma = false
		}
		scaleField(f, k, sigma)
	}
}

func scaleField(f reflect.Value, k float64, sigma bool) {
	switch f.Kind() {
	case reflect.Float64:
		if sigma {
			f.SetFloat(f.Float() * k)
		}
	case reflect.Array, reflect.Slice:
		for j := range f.Len() {
			scaleField(f.Index(j), k, sigma)
		}
	case reflect.Pointer:
		if !f.IsNil() && f.Elem().Kind() != reflect.Struct {
			scaleField(f.Elem(), k, sigma)
		} else if !f.IsNil() && f.Elem().Kind() == reflect.Struct && f.Type().Elem().PkgPath() == "undercurrent/inverse" {
			scaleValue(f.Elem(), k, false)
		}
	case reflect.Struct:
		if f.Type().PkgPath() == "undercurrent/inverse" {
			scaleValue(f, k, false)
		}
	}
}
