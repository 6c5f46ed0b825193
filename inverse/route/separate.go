package route

import (
	"math"
	"sort"
)

// separateLevel reports whether the stations of run r (bracketing station
// indices in u) show a level change of their own beside the transition of
// neighbouring run n, rather than its tail: over the stations that may set
// n's levels between u[lo] and u[hi] (levelStations, which take in r's),
// the level model of n's step (two levels, a shared slope, and the
// transition's location and width searched over n's bracket as plateau
// does) is fitted with and without a further sharp step between two
// successive stations of r's bracket. The further step is r's own when it
// lowers chi-square by more than StepK^2 in units of the Birge scale of
// the fit with it (an F test of one added parameter, as sharpZ is used in
// search).
//
// explained (steps.go) once merged r into n whenever n's levels, refitted
// over r's stations, gave r's change; with a free width and slope the
// refit can bend to take in a second loss several spacings on: a 2 A loss
// at 31.5 m and 0.8 A at 43.5 m were reported as one step of 3.36 A at
// 34.0 ± 0.5 m (simulated, found in review; TestSecondLossKeptOnSimulatedRoutes).
// The tail of a leak's transition read by the stations before it needs
// no step of its own, and is still merged (TestLeakStartNoFalseRise,
// TestSmearedLossNoSplitStep).
func separateLevel(u []*Placed, set *Settings, n, r [2]int, lo, hi int) bool {
	idx := levelStations(u, set, n[0], n[1], lo, hi)
	pts := make([]lvPoint, 0, len(idx))
	var cuts []float64
	prev := math.NaN()
	xr0, xr1 := u[r[0]].Chainage, u[r[1]].Chainage
	var in0, in1 bool
	for _, i := range idx {
		pts = append(pts, lvPoint{x: u[i].Chainage, y: u[i].Current, s: misfitSigma(u[i], set)})
		in0 = in0 || i == r[0]
		in1 = in1 || i == r[1]
	}
	if !in0 || !in1 {
		return false
	}
	weigh(pts)
	xs := make([]float64, len(pts))
	for k, p := range pts {
		xs[k] = p.x
	}
	sort.Float64s(xs)
	for _, x := range xs {
		if x > xr0 && x <= xr1 && prev >= xr0 {
			cuts = append(cuts, (prev+x)/2)
		}
		prev = x
	}
	dof := len(pts) - 6 // two levels, slope, further step, location, width
	if len(cuts) == 0 || dof < 1 {
		return false
	}
	xa, xb := u[n[0]].Chainage, u[n[1]].Chainage
	sp := (xb - xa) / float64(n[1]-n[0])
	if sp <= 0 {
		sp = 1
	}
	chi0, chi1 := math.Inf(1), math.Inf(1)
	for i := range gridX {
		xf := xa + (xb-xa)*(float64(i)+0.5)/gridX
		for j := range gridH {
			h := 0.0
			if j > 0 {
				h = minWidth * sp * math.Pow(maxWidth/minWidth, float64(j-1)/(gridH-2))
			}
			chi0 = math.Min(chi0, solveLevels(pts, xf, h, true).chi2)
			for _, c := range cuts {
				chi1 = math.Min(chi1, levelsWithStep(pts, xf, h, c))
			}
		}
	}
	if !finite(chi0) || !finite(chi1) {
		return false
	}
	k := set.stepK()
	return chi0-chi1 > k*k*math.Max(1, chi1/float64(dof))
}

// levelsWithStep is the chi-square of the level model (plateau.go: two
// levels, a shared slope, transition at xf of width h) with a further
// sharp step at chainage c, by weighted least squares; +Inf when the
// normal equations are singular.
func levelsWithStep(pts []lvPoint, xf, h, c float64) float64 {
	f := lvFit{xf: xf, h: h}
	var a [4][4]float64
	var b [4]float64
	row := func(x float64) [4]float64 {
		w := f.frac(x)
		e := 0.0
		if x > c {
			e = 1
		}
		return [4]float64{w, 1 - w, x - xf, e}
	}
	for _, p := range pts {
		r := row(p.x)
		for i := range 4 {
			b[i] += p.w * r[i] * p.y
			for j := range 4 {
				a[i][j] += p.w * r[i] * r[j]
			}
		}
	}
	// Gaussian elimination with partial pivoting; a pivot lost to
	// rounding (the further step the same column as a sharp transition's)
	// is singular.
	var diag float64
	for i := range 4 {
		diag = math.Max(diag, a[i][i])
	}
	for col := range 4 {
		piv := col
		for i := col + 1; i < 4; i++ {
			if math.Abs(a[i][col]) > math.Abs(a[piv][col]) {
				piv = i
			}
		}
		if !(math.Abs(a[piv][col]) > 1e-10*diag) || !finite(a[piv][col]) {
			return math.Inf(1)
		}
		a[col], a[piv] = a[piv], a[col]
		b[col], b[piv] = b[piv], b[col]
		for i := col + 1; i < 4; i++ {
			m := a[i][col] / a[col][col]
			for j := col; j < 4; j++ {
				a[i][j] -= m * a[col][j]
			}
			b[i] -= m * b[col]
		}
	}
	var x [4]float64
	for i := 3; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < 4; j++ {
			s -= a[i][j] * x[j]
		}
		x[i] = s / a[i][i]
	}
	var chi2 float64
	for _, p := range pts {
		r := row(p.x)
		d := p.y - (x[0]*r[0] + x[1]*r[1] + x[2]*r[2] + x[3]*r[3])
		chi2 += p.w * d * d
	}
	if !finite(chi2) {
		return math.Inf(1)
	}
	return chi2
}
