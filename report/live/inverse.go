package live

import (
	"errors"
	"fmt"
	"gonum.org/v1/gonum/mat"
	"math"
	"math/cmplx"
	"strings"

	"undercurrent/inverse"
)

func init() {
	defaultEstimator = NewInverseEstimator
	defaultCommissioner = InverseCommissioner{}
}

// inverseEstimator is the fast path: the inverse package's fixed-geometry
// linear least squares (FitStrengths) with a uniform background.
type inverseEstimator struct {
	sources []inverse.Source
}

// NewInverseEstimator returns the Estimator built on inverse.FitStrengths
// for the conductors: a "line" is an inverse.Line, a "segment" an
// inverse.Segment; a uniform background is fitted with the currents.
func NewInverseEstimator(mode string, conds []ConductorConfig) (Estimator, error) {
	if len(conds) == 0 {
		return nil, fmt.Errorf("no conductors")
	}
	e := &inverseEstimator{}
	for _, c := range conds {
		switch c.Kind {
		case "", "line":
			e.sources = append(e.sources, inverse.Line{Point: c.Point, Dir: c.Direction})
		case "segment":
			e.sources = append(e.sources, inverse.Segment{A: c.From, B: c.To})
		default:
			return nil, fmt.Errorf("conductor %q: kind %q", c.Name, c.Kind)
		}
	}
	return e, nil
}

// Solve runs FitStrengths. For AC the current is the magnitude of the
// strength phasor (RMS) and the phase its argument; the phase sigma is
// sigma_I/|I| radians to first order.
func (e *inverseEstimator) Solve(in *SolveInput) (*SolveOutput, error) {
	if unequal(in.Sigmas) {
		return e.solveWeighted(in)
	}
	if len(in.Sigmas) > 0 {
		in = &SolveInput{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors, Sigma: in.Sigmas[0]}
	}
	p := &inverse.Problem{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors, Sigma: in.Sigma}
	res, err := inverse.FitStrengths(p, e.sources, nil)
	if err != nil {
		return nil, err
	}
	out := &SolveOutput{RMS: res.RMS, Chi2: res.Chi2, DOF: res.DOF}
	n := len(e.sources)
	out.CurrentSigma = append([]float64(nil), res.StrengthSigmas[:n]...)
	if res.Covariance != nil {
		out.CurrentCov = strengthCovariance(res.Covariance, n)
	}
	if in.Phasors != nil {
		for i := range n {
			z := res.StrengthPhasors[i]
			mag := cmplx.Abs(z)
			out.Current = append(out.Current, mag)
			out.Phase = append(out.Phase, cmplx.Phase(z)*180/math.Pi)
			ps := 180.0
			if mag > 0 {
				ps = math.Min(180, res.StrengthSigmas[i]/mag*180/math.Pi)
			}
			out.PhaseSigma = append(out.PhaseSigma, ps)
		}
		if out.CurrentCov != nil {
			out.CurrentCov = magnitudeCovariance(out.CurrentCov, out.Phase)
		}
	} else {
		out.Current = append([]float64(nil), res.Strengths[:n]...)
		bg := res.Background
		out.Background = &bg
	}
	return out, nil
}

// unequal reports whether the sigmas are not all the same.
func unequal(sig []float64) bool {
	for _, v := range sig {
		if v != sig[0] {
			return true
		}
	}
	return false
}

// solveWeighted is Solve for readings of unequal sigma: the same model
// (the conductors' fields from inverse.ReadingBasis and a uniform
// background) fitted by weighted least squares, each row divided by its
// reading's sigma (Aitken's generalised least squares for independent
// errors), solved by QR. The covariance of the strengths is
// (A' W A)^-1 with W = diag(1/sigma_i^2) and chi-square the weighted
// residual sum of squares.
func (e *inverseEstimator) solveWeighted(in *SolveInput) (*SolveOutput, error) {
	A, Y, ns, err := e.weightedSystem(in, in.Sigmas)
	if err != nil {
		return nil, err
	}
	ac := in.Phasors != nil
	m, q := A.Dims()
	_, nr := Y.Dims()
	var qr mat.QR
	qr.Factorize(A)
	var coef mat.Dense
	if err := qr.SolveTo(&coef, false, Y); err != nil {
		return nil, fmt.Errorf("the currents cannot be separated with these readings: %w", err)
	}
	var ata mat.SymDense
	ata.SymOuterK(1, A.T())
	var ch mat.Cholesky
	if !ch.Factorize(&ata) {
		return nil, fmt.Errorf("the currents cannot be separated with these readings")
	}
	var cov mat.SymDense
	if err := ch.InverseTo(&cov); err != nil {
		return nil, err
	}
	var pred mat.Dense
	pred.Mul(A, &coef)
	var chi2, rss float64
	for row := range m {
		s := in.Sigmas[row/3]
		for k := range nr {
			r := Y.At(row, k) - pred.At(row, k)
			chi2 += r * r
			rss += r * r * s * s
		}
	}
	out := &SolveOutput{RMS: math.Sqrt(rss / float64(m)), Chi2: chi2, DOF: m*nr - q*nr}
	for j := range ns {
		sig := math.Sqrt(math.Max(cov.At(j, j), 0))
		out.CurrentSigma = append(out.CurrentSigma, sig)
		if ac {
			z := complex(coef.At(j, 0), coef.At(j, 1))
			mag := cmplx.Abs(z)
			out.Current = append(out.Current, mag)
			out.Phase = append(out.Phase, cmplx.Phase(z)*180/math.Pi)
			ps := 180.0
			if mag > 0 {
				ps = math.Min(180, sig/mag*180/math.Pi)
			}
			out.PhaseSigma = append(out.PhaseSigma, ps)
		} else {
			out.Current = append(out.Current, coef.At(j, 0))
		}
	}
	if !ac {
		bg := [3]float64{coef.At(ns, 0), coef.At(ns+1, 0), coef.At(ns+2, 0)}
		out.Background = &bg
	}
	out.CurrentCov = strengthCovariance(&cov, ns)
	if ac {
		out.CurrentCov = magnitudeCovariance(out.CurrentCov, out.Phase)
	}
	return out, nil
}

// strengthCovariance returns the leading n by n block of a fit's
// covariance (the strengths', before the background's), A^2.
func strengthCovariance(cov *mat.SymDense, n int) [][]float64 {
	out := make([][]float64, n)
	for i := range out {
		out[i] = make([]float64, n)
		for j := range n {
			out[i][j] = cov.At(i, j)
		}
	}
	return out
}

// magnitudeCovariance turns the covariance c of AC strength phasors'
// real parts (which their imaginary parts share, uncorrelated with them:
// one design matrix for both) into that of their magnitudes, to first
// order: d|z_i| = (x_i dx_i + y_i dy_i) / |z_i|, so
// cov(|z_i|, |z_j|) = c_ij cos(phase_i - phase_j), phases in degrees.
// Its diagonal is c_ii, the magnitude's variance that CurrentSigma gives.
func magnitudeCovariance(c [][]float64, phase []float64) [][]float64 {
	for i := range c {
		for j := range c[i] {
			if i != j {
				c[i][j] *= math.Cos((phase[i] - phase[j]) * math.Pi / 180)
			}
		}
	}
	return c
}

// weightedSystem is the design matrix A (the conductors' fields from
// inverse.ReadingBasis and a uniform background, one column per strength
// and background component) and the readings Y (one column, DC; real and
// imaginary parts, AC) of in, each row divided by its reading's sigma in
// sig; ns is the number of strengths.
func (e *inverseEstimator) weightedSystem(in *SolveInput, sig []float64) (A, Y *mat.Dense, ns int, err error) {
	n := len(in.Points)
	ac := in.Phasors != nil
	switch {
	case len(sig) != n:
		return nil, nil, 0, fmt.Errorf("%d sigmas for %d readings", len(sig), n)
	case ac && len(in.Phasors) != n, !ac && len(in.Fields) != n:
		return nil, nil, 0, fmt.Errorf("readings and points differ in number")
	}
	p := &inverse.Problem{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors}
	var bases [][][][3]float64
	for _, src := range e.sources {
		b, err := inverse.ReadingBasis(p, src)
		if err != nil {
			return nil, nil, 0, err
		}
		bases = append(bases, b)
		ns += src.NumStrengths()
	}
	m, q, nr := 3*n, ns+3, 1
	if ac {
		nr = 2
	}
	if m <= q {
		return nil, nil, 0, fmt.Errorf("%d readings (3 axes each) are too few for %d strengths", n, q)
	}
	A = mat.NewDense(m, q, nil)
	Y = mat.NewDense(m, nr, nil)
	for i := range n {
		s := sig[i]
		if !(s > 0) || math.IsInf(s, 0) {
			return nil, nil, 0, fmt.Errorf("reading %d: sigma %v is not positive", i+1, s)
		}
		for j := range 3 {
			row := 3*i + j
			col := 0
			for si, src := range e.sources {
				for c := range src.NumStrengths() {
					A.Set(row, col, bases[si][i][c][j]/s)
					col++
				}
			}
			A.Set(row, ns+j, 1/s)
			if ac {
				Y.Set(row, 0, real(in.Phasors[i][j])/s)
				Y.Set(row, 1, imag(in.Phasors[i][j])/s)
			} else {
				Y.Set(row, 0, in.Fields[i][j]/s)
			}
		}
	}
	return A, Y, ns, nil
}

// InverseCommissioner fits infinite lines with inverse.FitLines to the
// commissioning readings.
type InverseCommissioner struct{}

// Commission fits as many lines as the site file lists conductors (none
// listed: the count chosen by BIC) and returns them named after the
// conductors, matched by geometry, with their directions made consistent;
// see commissionLines for the rules. When the site file gives every
// conductor's point the lines are also fitted from those points
// (commissionFromPoints), and that geometry is kept unless the free fit
// misses the readings by clearly less (chi-square lower by more than
// minPairDeltaChi2): the readings of a go-and-return pair with a third
// conductor can be matched about as well by lines far from where the
// cores run, with currents ten times too small.
//
// The geometry returned is one the readings resolve (resolved): lines
// fitted to readings in which no conductor's field stands out of the
// noise (the currents off) are refused with an unresolvedError, which the
// worker meets by waiting for windows with current; lines the sensors'
// layout does not fix (their place or bearing sigmas too large, or their
// covariance not to be found) with one marked layout, which the worker
// counts and stops on.
func (c InverseCommissioner) Commission(in *SolveInput, stated []ConductorConfig) ([]ConductorConfig, error) {
	conds, err := c.fit(in, stated)
	if err != nil {
		return nil, err
	}
	if err := resolved(in, conds); err != nil {
		return nil, err
	}
	return conds, nil
}

// fit is Commission without the check that the readings resolve the
// geometry.
func (InverseCommissioner) fit(in *SolveInput, stated []ConductorConfig) ([]ConductorConfig, error) {
	p := &inverse.Problem{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors, Sigma: in.Sigma}
	res, err := inverse.FitLines(p, &inverse.Settings{Count: len(stated)})
	if n := len(stated); err == nil && res.DOF <= 0 || err != nil && n > 0 && len(p.Points)*readingsPerSensor(p) <= freeLineUnknowns(p, n) {
		// As many unknowns as readings or more: any lines fit (or the
		// fit refuses to start). The readings' count does not grow with
		// more windows: stop until the site file is mended.
		if res != nil {
			n = len(res.Sources)
		}
		err = &needsSiteError{fmt.Errorf("%d sensors give %d readings, too few for %d free lines (where each runs, its current, and the background field): "+
			"add sensors, or give the conductors' points, or hold them where they run with model = \"fixed\"", len(p.Points), len(p.Points)*readingsPerSensor(p), n)}
	}
	var conds []ConductorConfig
	if err == nil {
		conds, err = commissionLines(p, res, stated)
	}
	if err == nil {
		err = commissionMisfit(p, in.WindowSigma, conds)
	}
	if len(stated) > 0 && stated[0].pointSet {
		var start [3]float64
		if res != nil && len(res.Sources) > 0 {
			start = res.Sources[0].Dir
		}
		alt, aerr := commissionFromPoints(p, stated, start)
		if aerr == nil {
			aerr = commissionMisfit(p, in.WindowSigma, alt)
		}
		if aerr == nil && (err != nil || !clearlyBetter(in, conds, alt)) {
			return alt, nil
		}
		if err != nil {
			// Both refused: say the diagnosis once. When both miss the
			// readings, the free fit's refusal is given with how far the
			// lines through the site file's points miss them.
			var m1, m2 *misfitError
			var site *needsSiteError
			switch {
			case aerr.Error() == err.Error():
				return nil, err
			case errors.As(aerr, &site) || errors.As(err, &site):
				// Too few readings for the lines from their points (or
				// freely): more windows do not add readings.
				return nil, &needsSiteError{fmt.Errorf("%w (fitted from the site file's points: %v)", err, aerr)}
			case errors.As(err, &m1) && errors.As(aerr, &m2):
				if strings.Contains(aerr.Error(), misfitAtSensor) && !strings.Contains(err.Error(), misfitAtSensor) {
					// The lines through the points find the sensor.
					return nil, &misfitError{err: fmt.Errorf("%w (fitted freely, the lines miss them by %.3g nT RMS)", aerr, m1.rms), rms: m2.rms}
				}
				return nil, &misfitError{err: fmt.Errorf("%w (the lines fitted from the site file's points miss them by %.3g nT RMS)", err, m2.rms), rms: m1.rms}
			}
			return nil, fmt.Errorf("%w (fitted from the site file's points: %v)", err, aerr)
		}
		return conds, nil
	}
	var mis *misfitError
	if len(stated) == 1 && errors.As(err, &mis) {
		// One line without its point that the free fit puts where it
		// misses the readings: the fit from a few plain starts under the
		// sensors may find a better one (the free fit of a line near the
		// sensors can stop far from it).
		var start [3]float64
		if res != nil && len(res.Sources) > 0 {
			start = res.Sources[0].Dir
		}
		if alt, aerr := seededLine(p, in, stated[0].Name, start); aerr == nil {
			if merr := commissionMisfit(p, in.WindowSigma, alt); merr == nil {
				return alt, nil
			} else if clearlyBetter(in, alt, conds) {
				err = merr
			}
		}
	}
	var site *needsSiteError
	if err != nil && len(stated) > 1 && !errors.As(err, &site) {
		err = fmt.Errorf("%w; giving each [[asset.conductor]] its point (where it runs, roughly) lets a go-and-return pair be fitted at its spacing", err)
		// Lines that miss the readings without points miss them the same
		// with more readings: stop until the site file gives the points.
		var mis *misfitError
		if errors.As(err, &mis) {
			err = &needsSiteError{err}
		}
	}
	if err != nil {
		return nil, err
	}
	return conds, nil
}

// clearlyBetter reports whether the conductors a miss the readings of in
// by clearly less than b: chi-square lower by more than
// minPairDeltaChi2, or, with the noise not known, RMS lower by a fifth.
func clearlyBetter(in *SolveInput, a, b []ConductorConfig) bool {
	fit := func(c []ConductorConfig) *SolveOutput {
		est, err := NewInverseEstimator("", c)
		if err != nil {
			return nil
		}
		out, err := est.Solve(in)
		if err != nil {
			return nil
		}
		return out
	}
	fa, fb := fit(a), fit(b)
	switch {
	case fa == nil:
		return false
	case fb == nil:
		return true
	case in.Sigma > 0 || len(in.Sigmas) > 0:
		return fa.Chi2+minPairDeltaChi2 < fb.Chi2
	}
	return fa.RMS < 0.8*fb.RMS
}

// readingsPerSensor is the number of real readings one sensor gives: three
// field components, each a real and an imaginary part for AC.
// freeLineUnknowns is the unknowns of n free lines fitted to p: where
// each runs (four), its current, and the background field, each current
// and background component complex for AC.
func freeLineUnknowns(p *inverse.Problem, n int) int {
	if p.Phasors != nil {
		return 4*n + 2*(n+3)
	}
	return 4*n + n + 3
}

func readingsPerSensor(p *inverse.Problem) int {
	if p.Phasors != nil {
		return 6
	}
	return 3
}

// minLineDeltaChi2 is the least rise of the commissioning fit's
// chi-square when any one of its lines is left out (the others and the
// background fitted again) for the geometry to be taken as resolved:
// each line's field must stand out of the readings' noise by about ten
// sigma. A line fitted to pure noise lowers the chi-square by what its
// five free parameters (place, direction, current) can take from the
// noise, a chi-square with about five degrees of freedom, above 100 with
// a probability near 1e-19 (the likelihood-ratio test, Wilks 1938).
const minLineDeltaChi2 = 100

// maxPlaceSigmaRatio and maxAzimuthSigmaDeg bound the one-sigma errors of
// a resolved commissioned line (geometryCovariance): its place across
// the line within this fraction of its mean distance from the sensors,
// its bearing within this many degrees. Beyond them the fit does not say
// where the line runs, whatever its chi-square.
const (
	maxPlaceSigmaRatio = 0.5
	maxAzimuthSigmaDeg = 30
)

// unresolvedError is a commissioning fit whose conductors' fields the
// readings do not resolve (their currents off, or too small for the
// noise): readings with current would mend it. layout marks the other
// kind: every line's field stands out of the noise, but the sensors'
// layout does not fix where the lines run (their places or bearings
// trade against each other); more readings hardly mend that, so the
// worker counts such fits and stops after commissionLimit of them.
type unresolvedError struct {
	err    error
	layout bool
}

func (e *unresolvedError) Error() string { return e.err.Error() }
func (e *unresolvedError) Unwrap() error { return e.err }

// resolved refuses, with an unresolvedError, conductors conds fitted to
// the commissioning readings in whose fields do not stand out of the
// noise: a line whose leaving out raises the chi-square by less than
// minLineDeltaChi2 (against the readings' sigmas, or with none given the
// fit's own residual variance), or whose place or bearing has a sigma
// beyond maxPlaceSigmaRatio or maxAzimuthSigmaDeg. A geometry whose
// covariance cannot be found (geometryCovariance: no more readings than
// unknowns, or a singular information matrix) is refused as a layout
// that does not fix the lines (unfixedWhy says why).
func resolved(in *SolveInput, conds []ConductorConfig) error {
	n := len(in.Points)
	sig := in.Sigmas
	if len(sig) != n {
		s := in.Sigma
		if !(s > 0) {
			s = 1
		}
		sig = make([]float64, n)
		for i := range sig {
			sig[i] = s
		}
	}
	chi2 := func(cs []ConductorConfig) (float64, int, error) {
		e := &inverseEstimator{}
		for _, c := range cs {
			e.sources = append(e.sources, inverse.Line{Point: c.Point, Dir: c.Direction})
		}
		A, Y, _, err := e.weightedSystem(in, sig)
		if err != nil {
			return 0, 0, err
		}
		var qr mat.QR
		qr.Factorize(A)
		var coef, pred mat.Dense
		if err := qr.SolveTo(&coef, false, Y); err != nil {
			return 0, 0, err
		}
		pred.Mul(A, &coef)
		m, nr := Y.Dims()
		_, q := A.Dims()
		var s float64
		for i := range m {
			for k := range nr {
				r := Y.At(i, k) - pred.At(i, k)
				s += r * r
			}
		}
		return s, (m - q) * nr, nil
	}
	all, dof, err := chi2(conds)
	if err != nil {
		return nil // not judged here: the windows' solve will say
	}
	scale := 1.0 // the readings' variance in units of sig^2
	known := len(in.Sigmas) == n || in.Sigma > 0
	if !known && dof > 0 {
		scale = all / float64(dof)
	}
	var weak, rises []string
	for k, c := range conds {
		rest := append(append([]ConductorConfig(nil), conds[:k]...), conds[k+1:]...)
		without, _, err := chi2(rest)
		if err != nil {
			continue
		}
		if d := (without - all) / scale; !(d >= minLineDeltaChi2) {
			weak = append(weak, fmt.Sprintf("%s (its field lowers the chi-square by %.3g, against %d needed)", c.Name, d, minLineDeltaChi2))
		} else {
			rises = append(rises, fmt.Sprintf("%s by %.3g", c.Name, d))
		}
	}
	if len(weak) > 0 {
		return &unresolvedError{err: fmt.Errorf("the commissioning readings do not resolve the field of %s: the currents are off or too small for the noise; a geometry fitted to them would be the noise's", strings.Join(weak, ", "))}
	}
	unc, err := geometryCovariance(in, conds)
	if err != nil {
		// The readings do not fix the geometry: fewer readings than
		// unknowns, or an information matrix that is singular. The fit
		// matches the readings (often exactly) with lines that can be far
		// from where the conductors run, and no sigma says so; the
		// windows' currents would be as wrong, with sigmas that leave the
		// geometry out.
		return &unresolvedError{err: fmt.Errorf("the sensor layout does not fix where the lines run, though every line's field stands out of the noise (leaving it out raises the chi-square: %s): %s; "+
			"add sensors across the lines (a second row along them, or more in the row), or hold the geometry with model = \"fixed\"",
			strings.Join(rises, ", "), unfixedWhy(in, conds, err)), layout: true}
	}
	if unc == nil {
		return nil
	}
	var sensors []SensorConfig
	for _, pt := range in.Points {
		sensors = append(sensors, SensorConfig{Position: pt})
	}
	pub := publishedGeometry(&storedGeometry{Conductors: conds, Uncertainty: unc}, sensors)
	for i, pc := range pub.Conductors {
		if pc.PointSigmaM == nil {
			continue
		}
		d := unit(conds[i].Direction)
		var dist float64
		for _, pt := range in.Points {
			dist += norm(perp(sub(pt, conds[i].Point), d)) / float64(len(in.Points))
		}
		ps := norm(*pc.PointSigmaM)
		if ps > maxPlaceSigmaRatio*dist || *pc.AzimuthSigmaDeg > maxAzimuthSigmaDeg {
			weak = append(weak, fmt.Sprintf("%s (depth %.3g m, place +- %.3g m, %.3g m from the sensors on average; bearing +- %.3g degrees)", pc.Name, pc.DepthM, ps, dist, *pc.AzimuthSigmaDeg))
		}
	}
	if len(weak) > 0 {
		// Every line's field stands out (it lowers the chi-square by
		// minLineDeltaChi2 or more): the currents flow, and it is the
		// sensors' layout that does not fix the places.
		return &unresolvedError{err: fmt.Errorf("the sensor layout does not fix where %s run, though every line's field stands out of the noise (leaving it out raises the chi-square: %s, against %d needed): "+
			"the sensors do not see the lines from enough places across them to tell one line's place from another's; add sensors across the lines, or hold the geometry with model = \"fixed\"",
			strings.Join(weak, ", "), strings.Join(rises, ", "), minLineDeltaChi2), layout: true}
	}
	return nil
}

// unfixedWhy says why the readings of in do not fix the lines conds,
// whose covariance geometryCovariance refused with err. Sensors in one
// row crossed by the lines see them in one cross-section: the field of a
// line has no component along it, so the readings along the lines carry
// nothing of where they run (only of their tilts), and each sensor gives
// two readings across the lines (four for AC, real and imaginary parts)
// for each line's place across and depth, its current and the
// background across the lines. For DC that count refuses no layout the
// whole count (3 readings a sensor against 5 unknowns a line and 3 of
// background) passes, and for AC the two agree; it is named when it
// refuses, being the one a site's drawing shows.
func unfixedWhy(in *SolveInput, conds []ConductorConfig, err error) string {
	why := "the geometry's uncertainty cannot be found (" + err.Error() + "; each line's place across it, bearing and dip, its current, and the background field)"
	n := len(in.Points)
	if n < 2 {
		return why
	}
	// The row: the line through the two sensors farthest apart.
	var a, b [3]float64
	span := -1.0
	for i := range in.Points {
		for j := i + 1; j < n; j++ {
			if d := norm(sub(in.Points[i], in.Points[j])); d > span {
				a, b, span = in.Points[i], in.Points[j], d
			}
		}
	}
	if !(span > 0) {
		return why
	}
	u := unit(sub(b, a))
	for _, pt := range in.Points {
		if norm(perp(sub(pt, a), u)) > rowTolerance*span {
			return why
		}
	}
	for _, c := range conds {
		if d := unit(c.Direction); norm(d) == 0 || math.Abs(dot(d, u)) > math.Cos(math.Pi/4) {
			return why // a line along the row rather than across it
		}
	}
	per, bg, lin := 2, 2, 3 // DC: Bx, Bz across; place 2 + current 1 a line
	if in.Phasors != nil {
		per, bg, lin = 4, 4, 4
	}
	readings, unknowns := per*n, lin*len(conds)+bg
	if readings > unknowns {
		return "the sensors lie in one row across the lines; " + why
	}
	return fmt.Sprintf("the sensors lie in one row across the lines: their readings along the lines carry nothing of where the lines run, leaving %d readings across them (%d sensors) for %d unknowns "+
		"(each line's place across the row and depth, its current, and the background across the lines), so that other lines fit them as well; %s", readings, n, unknowns, why)
}

// rowTolerance is the largest distance of a sensor from the line through
// the two farthest apart, as a fraction of their distance, for the
// sensors to be taken as one row (unfixedWhy): a centimetre in a metre,
// the accuracy of a taped layout.
const rowTolerance = 0.01

// seededLine fits one line, named name, to the readings of p from plain
// starts (commissionFromPoints from a point, along start when given, and
// along north and east): at the sensors' centroid and at 0.5, 1, 2 and 4
// times their spread below it; and level with it and 0.5 and 1 times the
// spread above it, there and one spread east, west, north and south. It returns the fit that misses the
// readings least.
func seededLine(p *inverse.Problem, in *SolveInput, name string, start [3]float64) ([]ConductorConfig, error) {
	var c [3]float64
	for _, pt := range p.Points {
		c = add(c, scale(pt, 1/float64(len(p.Points))))
	}
	var spread float64
	for _, pt := range p.Points {
		d := sub(pt, c)
		spread += dot(d, d) / float64(len(p.Points))
	}
	spread = math.Sqrt(spread)
	dirs := [][3]float64{{0, 1, 0}, {1, 0, 0}}
	if norm(start) > 0 {
		dirs = append([][3]float64{start}, dirs...)
	}
	var best []ConductorConfig
	var bestRMS float64
	var lastErr error
	var starts [][3]float64
	for _, f := range []float64{0, 0.5, 1, 2, 4} {
		starts = append(starts, sub(c, [3]float64{0, 0, f * spread}))
	}
	// Level with the sensors and above them, beside the readings as well
	// as over them: a line beside a wall's rows of sensors, level with
	// them or up to 0.3 m above, was refused from the starts below (its
	// fit stopped 1.5e3-2e3 nT off: found in review).
	for _, f := range []float64{0, -0.5, -1} {
		for _, off := range [][2]float64{{1, 0}, {-1, 0}, {0, 1}, {0, -1}, {0, 0}} {
			if f == 0 && off == [2]float64{} {
				continue
			}
			starts = append(starts, add(c, [3]float64{off[0] * spread, off[1] * spread, -f * spread}))
		}
	}
	for _, pt := range starts {
		for _, d := range dirs {
			conds, err := commissionFromPoints(p, []ConductorConfig{{Name: name, Point: pt, pointSet: true}}, d)
			if err != nil {
				lastErr = err
				continue
			}
			est, err := NewInverseEstimator("", conds)
			if err != nil {
				lastErr = err
				continue
			}
			out, err := est.Solve(in)
			if err != nil {
				lastErr = err
				continue
			}
			if best == nil || out.RMS < bestRMS {
				best, bestRMS = conds, out.RMS
			}
		}
	}
	if best == nil {
		return nil, lastErr
	}
	return best, nil
}
