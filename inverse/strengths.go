package inverse

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// FitStrengths estimates the strengths of sources whose geometry is known (the
// conductors of a survey already fitted, or of a site plan), with a background chosen by
// set.Background: a linear least-squares problem solved by Householder QR, with the
// covariance of the strengths. It is the fast path of the live pipeline, which calls it
// for every demodulated window.
//
// Strengths are in each source's units (A for lines and segments, A m^2 for dipoles,
// tesla for a Background source; do not combine a Background source with
// set.Background, which would make the basis singular). Result.Strengths lists them in
// the order of sources (AC: Result.StrengthPhasors, with StrengthSigmas the one-sigma of
// each real and imaginary part, equal to that of the magnitude to first order).
// Result.Sources has, in the order of the sources and with the geometry held, one
// entry per Line, one of Kind "line" per Segment and per leg of a Polyline (its line,
// with a note beginning SegmentAsLineNote), and one of Kind "dipole" per Dipole (the
// moment fitted, the position held); pointers to them likewise. A nil source is
// refused. The fit's notes begin with HeldGeometryMissNote when the residual is
// beyond twice the readings' noise floor, which does not come from the fit
// (heldMiss): with the noise estimated chi-square per degree of freedom is 1 however
// wrong the geometry.
// Only set.Background and set.ReferenceZ are used from the settings. With p.Travel set
// the sources' fields are averaged along each reading's path (see Problem.Travel).
func FitStrengths(p *Problem, sources []Source, set *Settings) (*Result, error) {
	if p == nil {
		return nil, errors.New("inverse: nil problem")
	}
	if err := p.validate(); err != nil {
		return nil, err
	}
	if err := set.check(); err != nil {
		return nil, err
	}
	if len(sources) == 0 {
		return nil, errors.New("inverse: FitStrengths needs at least one source")
	}
	if err := checkSources("FitStrengths", "sources", sources); err != nil {
		return nil, err
	}
	s := set.orDefault()
	sv := newSurvey(p)
	n, nr := len(p.Points), sv.nrhs
	phi, m, q, ns, nb, err := strengthsBasis(p, "sources", sources, s, sv)
	if err != nil {
		return nil, err
	}
	phiCopy := append([]float64(nil), phi...)
	coef, err := solveLinear(phi, m, q, sv.y, nr)
	if k, ok := err.(inseparableColumn); ok {
		return nil, inseparable("sources", sources, int(k))
	}
	if err != nil {
		return nil, err
	}
	// Residuals.
	res := make([]float64, m*nr)
	var rss float64
	for row := range m {
		for k := range nr {
			v := sv.y[row*nr+k]
			for j := range q {
				v -= phiCopy[row*q+j] * coef[j*nr+k]
			}
			res[row*nr+k] = v
			rss += v * v
		}
	}
	cov, unres, err := covariance(mat.NewDense(m, q, phiCopy))
	if err != nil {
		return nil, err
	}
	r := &Result{Status: Linear, DOF: m*nr - q*nr}
	switch {
	case p.Sigma > 0:
		r.Sigma = p.Sigma
	case r.DOF > 0:
		r.Sigma = math.Sqrt(rss / float64(r.DOF))
	}
	if r.Sigma > 0 {
		r.Chi2 = rss / (r.Sigma * r.Sigma)
	}
	cov.ScaleSym(r.Sigma*r.Sigma, cov)
	r.Covariance = cov
	for j := range q {
		if unres[j] {
			return nil, inseparable("sources", sources, j)
		}
	}
	sig := func(j int) float64 { return math.Sqrt(math.Max(cov.At(j, j), 0)) }
	for j := range ns {
		r.StrengthSigmas = append(r.StrengthSigmas, sig(j))
		if nr == 1 {
			r.Strengths = append(r.Strengths, coef[j])
		} else {
			r.StrengthPhasors = append(r.StrengthPhasors, complex(coef[j*2], coef[j*2+1]))
		}
		r.ParamNames = append(r.ParamNames, fmt.Sprintf("strength%d", j+1))
	}
	for j := range nb {
		r.ParamNames = append(r.ParamNames, backgroundName(s.Background, j))
	}
	for j := range min(nb, 3) {
		if nr == 1 {
			r.Background[j], r.BackgroundSigma[j] = coef[ns+j], sig(ns+j)
		} else {
			c := complex(coef[(ns+j)*2], coef[(ns+j)*2+1])
			r.BackgroundPhasor[j] = c
			r.Background[j] = math.Hypot(real(c), imag(c))
			r.BackgroundSigma[j] = sig(ns + j)
		}
	}
	if nb == 8 && nr == 1 {
		r.Gradient = append([]float64(nil), coef[ns+3:ns+8]...)
	}
	if nb == 6 && nr == 1 {
		r.Along = append([]float64(nil), coef[ns+3:ns+6]...)
		r.AlongSigma = []float64{sig(ns + 3), sig(ns + 4), sig(ns + 5)}
		r.AlongAxis = alongAxis(p.Points, sv.centroid)
	}
	r.DepthReference, r.ReferenceZ = "mean sensor height", sv.zmean
	if s.ReferenceZ != nil {
		r.DepthReference, r.ReferenceZ = "ReferenceZ", *s.ReferenceZ
	}
	// Summaries with the geometry held: lines, segments and polylines' legs as
	// lines, dipoles as dipoles.
	col := 0
	addLine := func(ln Line, c int, note string) {
		e := heldLine(ln, sv, r.ReferenceZ)
		if note != "" {
			e.Notes = append(e.Notes, note)
		}
		if nr == 1 {
			e.Current = coef[c]
		} else {
			z := complex(coef[c*2], coef[c*2+1])
			e.Current = math.Hypot(real(z), imag(z))
			e.Phase = math.Atan2(imag(z), real(z)) * 180 / math.Pi
			e.Identifiable.Phase = true
		}
		if e.flip {
			e.Current, e.Phase = flipCurrent(e.Current, e.Phase, nr)
		}
		e.CurrentSigma = sig(c)
		e.PhaseSigma = 0
		if nr == 2 && e.Current > 0 {
			e.PhaseSigma = sig(c) / e.Current * 180 / math.Pi
		}
		r.Sources = append(r.Sources, e.SourceEstimate)
	}
	addSegment := func(a, b [3]float64, c int) {
		if norm(sub(b, a)) == 0 {
			return
		}
		addLine(Line{Point: a, Dir: sub(b, a)}, c, fmt.Sprintf("%s (%.3g, %.3g, %.3g) to (%.3g, %.3g, %.3g) m: Point and Depth are on its line, which may cross the readings' track beyond the segment's ends", SegmentAsLineNote, a[0], a[1], a[2], b[0], b[1], b[2]))
	}
	for _, src := range sources {
		// A pointer is the value too (its methods take the value): before, only
		// a Line value got its summary, and lines given as pointers were solved
		// and then left out of Result.Sources without a word; segments,
		// polylines and dipoles had none, and report.Build called a group of
		// them "no conductor was fitted".
		switch v := src.(type) {
		case Line:
			addLine(v, col, "")
		case *Line:
			addLine(*v, col, "")
		case Segment:
			addSegment(v.A, v.B, col)
		case *Segment:
			addSegment(v.A, v.B, col)
		case Polyline:
			for k := 1; k < len(v.Vertices); k++ {
				addSegment(v.Vertices[k-1], v.Vertices[k], col+k-1)
			}
		case *Polyline:
			for k := 1; k < len(v.Vertices); k++ {
				addSegment(v.Vertices[k-1], v.Vertices[k], col+k-1)
			}
		case Dipole:
			r.Sources = append(r.Sources, heldDipole(v.Pos, coef, sig, col, nr, sv, r.ReferenceZ))
		case *Dipole:
			r.Sources = append(r.Sources, heldDipole(v.Pos, coef, sig, col, nr, sv, r.ReferenceZ))
		}
		col += src.NumStrengths()
	}
	var ss float64
	if nr == 1 {
		r.Residuals, r.Predicted = make([][3]float64, n), make([][3]float64, n)
		for i := range n {
			for j := range 3 {
				e := res[3*i+j]
				r.Residuals[i][j], r.Predicted[i][j] = e, p.Fields[i][j]-e
				ss += e * e
			}
		}
	} else {
		r.ResidualPhasors, r.PredictedPhasors = make([][3]complex128, n), make([][3]complex128, n)
		for i := range n {
			for j := range 3 {
				e := complex(res[(3*i+j)*2], res[(3*i+j)*2+1])
				r.ResidualPhasors[i][j], r.PredictedPhasors[i][j] = e, p.Phasors[i][j]-e
				ss += real(e)*real(e) + imag(e)*imag(e)
			}
		}
	}
	r.RMS = math.Sqrt(ss / float64(m))
	if note := heldMiss(p, sv, res, rss, r.DOF); note != "" {
		r.Notes = append(r.Notes, note)
	}
	if r.Sigma == 0 {
		r.StrengthSigmas = nil
		r.Notes = append(r.Notes, "too few readings to estimate the noise (no degrees of freedom) and Problem.Sigma is zero: uncertainties are not available")
		for i := range r.Sources {
			r.Sources[i].Identifiable = Identifiable{}
		}
	}
	return r, nil
}

// HeldGeometryMissNote begins the note (Result.Notes) of a FitStrengths fit whose held
// geometry misses the readings by more than heldMissFactor times their noise floor
// (heldMiss). report takes it as a failed fit.
const HeldGeometryMissNote = "the geometry held misses the readings"

// heldMissFactor is how many times the readings' noise floor the residual RMS per
// degree of freedom of a held-geometry fit may reach before heldMiss says so.
// Fourth differences of white noise alone put the floor within 10% of the noise on
// 300 values (see fitter.noiseFloor), and a conductor's own curvature can only raise
// it, so twice the floor is not reached by noise; a site-plan position 0.5 m off a
// 20 A line 1 m down misses by tens of times the noise.
const heldMissFactor = 2

// heldMissMinReadings is the fewest readings for heldMiss to estimate the floor from
// their differences.
const heldMissMinReadings = 10

// heldMiss returns the note that a held-geometry fit misses its readings (see
// HeldGeometryMissNote), or "". FitStrengths fits strengths only; with the noise
// estimated from its residuals (Problem.Sigma zero) its chi-square per degree of
// freedom is 1 by construction, however far the geometry held lies from the
// conductors, and a site-plan line 0.5 m off read a wrong current with tight sigmas
// and no word. So the residual is judged against a noise floor that does not come
// from the fit: Problem.Sigma when given, else the readings' own differences along
// the readings (diffNoise: fourth differences for DC, second for AC phasors, as
// FitLines' noiseFloor), which see the noise and little of a conductor's smooth
// field. Readings not in order along the walk raise that floor, and the check then
// says less, never more. res holds the residuals (rows by parts), rss their sum of
// squares, dof the degrees of freedom.
func heldMiss(p *Problem, sv *survey, res []float64, rss float64, dof int) string {
	if dof <= 0 || len(p.Points) < heldMissMinReadings {
		return ""
	}
	floor, from := p.Sigma, "Problem.Sigma"
	if !(floor > 0) {
		// res is spent: its room holds the differences.
		floor = diffNoise(sv.y, sv.nrhs, res)
		from = "from differences of successive readings"
	}
	if !(floor > 0) {
		return ""
	}
	rms := math.Sqrt(rss / float64(dof))
	if !(rms > heldMissFactor*floor) {
		return ""
	}
	return fmt.Sprintf("%s: the fit misses the readings by %.3g times their noise floor, more than the %g that noise allows (residual %.3g nT RMS per degree of freedom; floor %.3g nT, %s): a conductor lies elsewhere than the geometry given, or one is missing from it; the strengths and their uncertainties hold only for the geometry given, not for the conductors",
		HeldGeometryMissNote, rms/floor, float64(heldMissFactor), rms, floor, from)
}

// SegmentAsLineNote begins the note (SourceEstimate.Notes) of a segment, or a
// polyline's leg, held in FitStrengths: it is summarised as its line.
const SegmentAsLineNote = "a segment held, summarised as its line: it runs from"

// heldDipole summarises a dipole held at pos in FitStrengths, its moment from the
// strengths from column c (coef, sig; nr parts), in the reporting conventions of
// FitLines: AC moments are each axis's magnitude.
func heldDipole(pos [3]float64, coef []float64, sig func(int) float64, c, nr int, sv *survey, zref float64) SourceEstimate {
	e := SourceEstimate{Kind: "dipole", Point: pos,
		Depth:  zref - pos[2],
		Offset: pos[0] - sv.centroid[0],
		Notes:  []string{"a magnetised (ferrous) object, not a current; position held: only its strength was fitted (a point dipole's moment)"},
	}
	for k := range 3 {
		if nr == 1 {
			e.Moment[k] = coef[c+k]
		} else {
			e.Moment[k] = math.Hypot(coef[(c+k)*2], coef[(c+k)*2+1])
		}
		e.MomentSigma[k] = sig(c + k)
	}
	return e
}

type heldEstimate struct {
	SourceEstimate
	flip bool
}

// heldLine describes a line of known geometry in the reporting conventions of FitLines.
func heldLine(ln Line, sv *survey, zref float64) heldEstimate {
	u := scale(ln.Dir, 1/norm(ln.Dir))
	az := math.Atan2(u[0], u[1])
	flip := false
	if az < 0 || az >= math.Pi {
		flip = true
		u = scale(u, -1)
		az = math.Atan2(u[0], u[1])
	}
	if az >= math.Pi || az < 0 { // vertical or exactly south after rounding
		az = math.Mod(az+2*math.Pi, math.Pi)
	}
	// The line's point where it crosses the traverse in plan, or under the
	// readings' centroid, as FitLines reports it (stationAlong).
	along, crossing := sv.stationAlong(sub(sv.centroid, ln.Point), u)
	pt := add(ln.Point, scale(u, along))
	right := [3]float64{math.Cos(az), -math.Sin(az), 0}
	e := SourceEstimate{
		Kind: "line", Point: pt, Dir: u,
		Depth:           zref - pt[2],
		Offset:          dot(sub(pt, sv.centroid), right),
		Azimuth:         az * 180 / math.Pi,
		Dip:             -math.Asin(math.Max(-1, math.Min(1, u[2]))) * 180 / math.Pi,
		Identifiable:    Identifiable{Current: true},
		Notes:           []string{"geometry held: only the current was fitted"},
		AtTrackCrossing: crossing,
	}
	return heldEstimate{e, flip}
}

func flipCurrent(cur, phase float64, nr int) (float64, float64) {
	if nr == 1 {
		return -cur, phase
	}
	phase += 180
	if phase > 180 {
		phase -= 360
	}
	return cur, phase
}

// strengthsBasis builds the design matrix of a fixed-geometry fit: m = 3 n rows
// (readings by axis), q = ns + nb columns (source strengths, then background), in
// nanotesla per unit strength, row-major.
func strengthsBasis(p *Problem, list string, sources []Source, s Settings, sv *survey) (phi []float64, m, q, ns, nb int, err error) {
	n := len(p.Points)
	m = 3 * n
	for _, src := range sources {
		ns += src.NumStrengths()
	}
	nb = s.Background.columns()
	q = ns + nb
	if m <= q {
		return nil, 0, 0, 0, 0, fmt.Errorf("inverse: %d readings (3 axes each) are too few for %d strengths", n, q)
	}
	phi = make([]float64, m*q)
	col := 0
	for si, src := range sources {
		if err := sourceBasis(p, src, phi, q, 1, col); err != nil {
			return nil, 0, 0, 0, 0, nameOnSource(err, sourceLabel(list, si, src))
		}
		col += src.NumStrengths()
	}
	basis := make([][3]float64, 8)
	bgc := Background{Origin: sv.centroid, Gradient: s.Background == BackgroundGradient}
	if s.Background == BackgroundAlong {
		bgc.Along = alongAxis(p.Points, sv.centroid)
	}
	// The background is linear in position, so its value at a reading is its average
	// along the reading's path.
	for i, r := range p.Points {
		if nb > 0 {
			bgc.Basis(r, basis[:nb])
			for c := range nb {
				for j := range 3 {
					phi[(3*i+j)*q+ns+c] = basis[c][j]
				}
			}
		}
	}
	return phi, m, q, ns, nb, nil
}

// ReadingBasis returns the field per unit strength of src, in nanotesla, at every
// reading of p as the fits model it: at the reading's position, or averaged along its
// path when p.Travel is set (three-point Gauss-Legendre, see Problem.Travel). Element
// [i][c] is the field at reading i of unit strength c. It is for callers that add or
// remove a source's field from readings and fit the rest (so that the two agree).
func ReadingBasis(p *Problem, src Source) ([][][3]float64, error) {
	if p == nil || src == nil {
		return nil, errors.New("inverse: ReadingBasis needs a problem and a source")
	}
	if err := checkSources("ReadingBasis", "", []Source{src}); err != nil {
		return nil, err
	}
	if p.Travel != nil && len(p.Travel) != len(p.Points) {
		return nil, fmt.Errorf("inverse: %d travels for %d readings", len(p.Travel), len(p.Points))
	}
	n, k := len(p.Points), src.NumStrengths()
	m := 3 * n
	col := make([]float64, m*k)
	if err := sourceBasis(p, src, col, 1, m, 0); err != nil {
		return nil, nameOnSource(err, sourceLabel("", 0, src))
	}
	out := make([][][3]float64, n)
	flat := make([][3]float64, n*k)
	for i := range n {
		out[i] = flat[i*k : (i+1)*k]
		for c := range k {
			for j := range 3 {
				out[i][c][j] = col[c*m+3*i+j]
			}
		}
	}
	return out, nil
}

// sourceBasis writes the field per unit strength of src, in nanotesla, at every
// reading into phi: element (row 3i+j, strength c) goes to phi[row*rs + (col+c)*cs].
// Point readings take the basis at the point; path-averaged readings (Problem.Travel)
// its three-point Gauss-Legendre mean over the path (pathMean), times the reading's
// Problem.Scale when it is set and src carries a current (carriesCurrent). When the field is not
// finite at a reading the error is an *onSourceError, for the caller to name the source.
func sourceBasis(p *Problem, src Source, phi []float64, rs, cs, col int) error {
	nodes := []struct {
		off float64
		w   float64
	}{{0, 1}}
	wsum := 1.0
	if p.Travel != nil {
		nodes = append(nodes[:1:1], struct{ off, w float64 }{-gaussNode, 5}, struct{ off, w float64 }{gaussNode, 5})
		nodes[0].w, wsum = 8, 18
	}
	k := src.NumStrengths()
	var bacc, sacc [8][3]float64
	b, sum := bacc[:], sacc[:]
	if k > len(bacc) {
		b, sum = make([][3]float64, k), make([][3]float64, k)
	}
	b, sum = b[:k], sum[:k]
	for i, r := range p.Points {
		clear(sum)
		for _, nd := range nodes {
			at := r
			if nd.off != 0 {
				at = add(r, scale(p.Travel[i], nd.off))
			}
			src.Basis(at, b)
			for c := range k {
				for j := range 3 {
					sum[c][j] += nd.w * b[c][j]
				}
			}
		}
		for c := range k {
			for j := range 3 {
				v := sum[c][j] / wsum * nT
				if p.Scale != nil && carriesCurrent(src) {
					v *= p.Scale[i]
				}
				if !finite(v) {
					return &onSourceError{reading: i, at: r, path: p.Travel != nil}
				}
				phi[(3*i+j)*rs+(col+c)*cs] = v
			}
		}
	}
	return nil
}

// StrengthsRSS returns the residual sum of squares, in nT^2 summed over readings and
// axes (and over real and imaginary parts for AC), of the fit FitStrengths would make
// with the same arguments, without its covariance: the cheap objective for a caller
// that searches over the geometry itself and calls FitStrengths once at the end.
func StrengthsRSS(p *Problem, sources []Source, set *Settings) (float64, error) {
	if p == nil {
		return 0, errors.New("inverse: nil problem")
	}
	if err := p.validate(); err != nil {
		return 0, err
	}
	if len(sources) == 0 {
		return 0, errors.New("inverse: StrengthsRSS needs at least one source")
	}
	if err := checkSources("StrengthsRSS", "sources", sources); err != nil {
		return 0, err
	}
	sv := newSurvey(p)
	phi, m, q, _, _, err := strengthsBasis(p, "sources", sources, set.orDefault(), sv)
	if err != nil {
		return 0, err
	}
	phiCopy := append([]float64(nil), phi...)
	nr := sv.nrhs
	coef, err := solveLinear(phi, m, q, sv.y, nr)
	if k, ok := err.(inseparableColumn); ok {
		return 0, inseparable("sources", sources, int(k))
	}
	if err != nil {
		return 0, err
	}
	var rss float64
	for row := range m {
		for k := range nr {
			v := sv.y[row*nr+k]
			for j := range q {
				v -= phiCopy[row*q+j] * coef[j*nr+k]
			}
			rss += v * v
		}
	}
	return rss, nil
}

// solveLinear solves min ||phi c - y|| for nrhs right-hand sides by Householder QR
// (phi m x q row-major is overwritten); y is m x nrhs row-major. It returns c (q x nrhs),
// or an inseparableColumn error naming the first column the others leave no room for.
func solveLinear(phi []float64, m, q int, y []float64, nrhs int) ([]float64, error) {
	a := blas64.General{Rows: m, Cols: q, Stride: q, Data: phi}
	tau := make([]float64, q)
	qty := append([]float64(nil), y...)
	c := blas64.General{Rows: m, Cols: nrhs, Stride: nrhs, Data: qty}
	// Minimal workspace: the unblocked code is the fast one at these widths.
	lw := max(q, nrhs, 1)
	work := make([]float64, lw)
	lapack64.Geqrf(a, tau, work, lw)
	var rmax float64
	for k := range q {
		rmax = math.Max(rmax, math.Abs(phi[k*q+k]))
	}
	for k := range q {
		if math.Abs(phi[k*q+k]) <= 1e-11*rmax {
			return nil, inseparableColumn(k)
		}
	}
	lapack64.Ormqr(blas.Left, blas.Trans, a, tau, c, work, lw)
	coef := make([]float64, q*nrhs)
	for k := range nrhs {
		for i := q - 1; i >= 0; i-- {
			s := qty[i*nrhs+k]
			for j := i + 1; j < q; j++ {
				s -= phi[i*q+j] * coef[j*nrhs+k]
			}
			coef[i*nrhs+k] = s / phi[i*q+i]
		}
	}
	return coef, nil
}

// carriesCurrent reports whether src is a conductor, whose field Problem.Scale
// scales: a line, segment or polyline, not a magnetised object (Dipole) or the
// background.
func carriesCurrent(src Source) bool {
	switch src.(type) {
	case Dipole, *Dipole, Background, *Background:
		return false
	}
	return true
}
