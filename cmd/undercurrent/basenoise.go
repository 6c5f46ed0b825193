package main

import (
	"fmt"
	"math"
	"reflect"
	"runtime"
	"sort"
	"strings"
	"sync"

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
// widened for the base's noise, 1 when there is nothing to widen. The
// columns are computed reading by reading, twice (for XᵀX, then for the
// weights), not stored: a log of a million readings in one group would
// otherwise hold a dozen columns of three million values.
func (bn *baseNoise) widen(g *group) float64 {
	r := g.res
	n := len(g.points)
	if r == nil || len(r.Sources) == 0 || len(r.Predicted) != n || len(g.stamps) != n || !(r.Sigma > 0) {
		return 1
	}
	for _, t := range g.stamps {
		if math.IsNaN(t) {
			return 1
		}
	}
	// The columns: a background per axis, then per line its current,
	// depth and offset (the line moved up, and across its direction);
	// one for the field of any other source.
	type move struct {
		plus, minus inverse.Line
		current     float64
	}
	var lines []inverse.Line
	var currents []float64
	var moves [][]move
	other := false
	for _, s := range r.Sources {
		if s.Kind != "line" || s.Current == 0 {
			other = true
			continue
		}
		const h = 1e-3 // m
		dirs := [][3]float64{{0, 0, 1}}
		across := [3]float64{s.Dir[1], -s.Dir[0], 0} // Dir x up
		if an := math.Hypot(across[0], across[1]); an > 1e-6 {
			dirs = append(dirs, [3]float64{across[0] / an, across[1] / an, 0})
		}
		var ms []move
		for _, m := range dirs {
			ms = append(ms, move{
				plus:    inverse.Line{Point: [3]float64{s.Point[0] + h*m[0], s.Point[1] + h*m[1], s.Point[2] + h*m[2]}, Dir: s.Dir},
				minus:   inverse.Line{Point: [3]float64{s.Point[0] - h*m[0], s.Point[1] - h*m[1], s.Point[2] - h*m[2]}, Dir: s.Dir},
				current: s.Current / (2 * h),
			})
		}
		lines = append(lines, inverse.Line{Point: s.Point, Dir: s.Dir})
		currents = append(currents, s.Current)
		moves = append(moves, ms)
	}
	var params []int // the columns whose sigmas are compared
	q := 3
	for l := range lines {
		for range 1 + len(moves[l]) {
			params = append(params, q)
			q++
		}
	}
	if other {
		params = append(params, q)
		q++
	}
	if len(params) == 0 {
		return 1
	}
	// row writes reading i's row of each column, per axis, nT per unit.
	row := func(i int, x [][3]float64) {
		p := g.points[i]
		for b := range x {
			x[b] = [3]float64{}
		}
		x[0][0], x[1][1], x[2][2] = 1, 1, 1
		rest := [3]float64{}
		for k := range 3 {
			rest[k] = r.Predicted[i][k] - r.Background[k]
		}
		c := 3
		for l, line := range lines {
			b := line.Field(p, 1)
			for k := range 3 {
				x[c][k] = b[k] * 1e9
				rest[k] -= b[k] * 1e9 * currents[l]
			}
			c++
			for _, m := range moves[l] {
				bp, bm := m.plus.Field(p, m.current), m.minus.Field(p, m.current)
				for k := range 3 {
					x[c][k] = (bp[k] - bm[k]) * 1e9
				}
				c++
			}
		}
		if other {
			x[c] = rest
		}
	}
	x := make([][3]float64, q)
	xtx := make([]float64, q*q) // upper triangle
	for i := range n {
		row(i, x)
		for a := range q {
			for b := a; b < q; b++ {
				xtx[a*q+b] += x[a][0]*x[b][0] + x[a][1]*x[b][1] + x[a][2]*x[b][2]
			}
		}
	}
	// Columns scaled to unit length before the inverse.
	scale := make([]float64, q)
	for a := range q {
		if scale[a] = math.Sqrt(xtx[a*q+a]); scale[a] == 0 {
			return 1
		}
	}
	gram := mat.NewSymDense(q, nil)
	for a := range q {
		for b := a; b < q; b++ {
			gram.SetSym(a, b, xtx[a*q+b]/(scale[a]*scale[b]))
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
	// The weights of each parameter compared, on the unscaled columns:
	// a_p = X (XᵀX)⁻¹ e_p, w[p][b] the coefficient of column b:
	// (XᵀX)⁻¹ = D⁻¹ inv D⁻¹ for the scales D.
	w := make([][]float64, len(params))
	for pi, p := range params {
		w[pi] = make([]float64, q)
		for b := range q {
			w[pi][b] = inv.At(b, p) / (scale[b] * scale[p])
		}
	}
	// The base readings the group's times fall between, and each
	// parameter's weights summed onto them with the interpolation's.
	lo := max(0, sort.SearchFloat64s(bn.t, slicesMin(g.stamps))-1)
	hi := min(len(bn.t)-1, sort.SearchFloat64s(bn.t, slicesMax(g.stamps)))
	c := make([][][3]float64, len(params))
	for pi := range c {
		c[pi] = make([][3]float64, hi-lo+1)
	}
	for i, t := range g.stamps {
		j := sort.SearchFloat64s(bn.t, t)
		var j0, j1 int
		var f float64
		switch {
		case j < len(bn.t) && bn.t[j] == t, j == 0:
			j0, j1 = j, j
		case j == len(bn.t):
			j0, j1 = j-1, j-1
		default:
			j0, j1 = j-1, j
			f = (t - bn.t[j-1]) / (bn.t[j] - bn.t[j-1])
		}
		j0, j1 = j0-lo, j1-lo
		row(i, x)
		for pi, wp := range w {
			for k := range 3 {
				var a float64
				for b, v := range wp {
					a += x[b][k] * v
				}
				c[pi][j0][k] += a * (1 - f)
				c[pi][j1][k] += a * f
			}
		}
	}
	worst := 0.0
	for pi, p := range params {
		var base float64
		for _, v := range c[pi] {
			for k := range 3 {
				base += bn.sigma[k] * bn.sigma[k] * v[k] * v[k]
			}
		}
		// |a_p|² = [(XᵀX)⁻¹]_pp on the unscaled columns.
		survey := r.Sigma * r.Sigma * inv.At(p, p) / (scale[p] * scale[p])
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
// The groups are worked on by workers goroutines at once (0: one per
// processor), as they are fitted.
func widenForBaseNoise(sv *survey, workers int) {
	bn := sv.baseNoise
	if bn == nil || sv.ac {
		return
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	factors := make([]float64, len(sv.groups))
	var wg sync.WaitGroup
	next := make(chan int)
	for range min(workers, len(sv.groups)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				factors[i] = bn.widen(sv.groups[i])
			}
		}()
	}
	for i, g := range sv.groups {
		if g.err == nil && g.res != nil {
			next <- i
		}
	}
	close(next)
	wg.Wait()
	var ks []float64
	var rpb []float64 // survey readings per base interval
	for i, g := range sv.groups {
		k := factors[i]
		if g.err != nil || g.res == nil || k <= 1 {
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
		sv.doc.BaseStation.Summary += fmt.Sprintf("; the base's own noise, %s, widened the fits' uncertainties by x%.2f (median; up to x%.2f)", noise, med, top)
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
	sv.warnings = append(sv.warnings, fmt.Sprintf("base record %s: its own noise, %s measured from its fourth differences%s, goes into every survey reading it corrects,%s and moves the fits as drift would: the fits' uncertainties were widened for it by x%.2f (median of the groups; up to x%.2f), and %s. A quieter base magnetometer, or one read more often, would give tighter results",
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
