package calibrate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// SineFit is a least-squares sine fit to one series (IEEE Std 1057 and
// IEEE Std 1241):
//
//	y(t) ≈ A cos ω(t-T0) + B sin ω(t-T0) + C [+ Σ harmonics] [+ D (t-T0)]
//	       [+ (t-t̄) (E cos ω(t-T0) + F sin ω(t-T0))]
//	       [+ ((t-t̄)² - m2) (G cos ω(t-T0) + H sin ω(t-T0))]
//	       [+ (t-t̄) Σ_h (E_h cos hω(t-T0) + F_h sin hω(t-T0))],
//
// with ω = 2π Freq, t̄ the mean time and m2 the mean of (t-t̄)² (Slope
// holds E and F, Curve G and H, HarmonicSlopes each E_h and F_h).
type SineFit struct {
	A, B, C float64
	// Freq is the frequency fitted, Hz, and T0 the time origin of the
	// basis, s.
	Freq, T0 float64
	// Harmonics holds the (cos, sin) coefficients of each requested
	// harmonic, in the order asked for.
	Harmonics [][2]float64
	// Drift is the linear coefficient D (only when asked for), per second.
	Drift float64
	// Slope holds the coefficients of (t-t̄) cos ω(t-T0) and
	// (t-t̄) sin ω(t-T0), per second, t̄ the mean time (only when asked
	// for): the fundamental's linear change across the fit. A and B are
	// then its coefficients at t̄.
	Slope [2]float64
	// Curve holds the coefficients of ((t-t̄)² - m2) cos ω(t-T0) and
	// ((t-t̄)² - m2) sin ω(t-T0) (only with Slope): the fundamental's
	// quadratic change about its mean over the fit, so that A and B are
	// the mean of the amplitude over the samples (DemodSettings).
	Curve [2]float64
	// HarmonicSlopes holds the same as Slope for each harmonic, in the
	// order of Harmonics (only with Slope).
	HarmonicSlopes [][2]float64
	// RMS is the root-mean-square residual and Sigma the residual standard
	// deviation sqrt(RSS/(n-p)).
	RMS, Sigma float64
	// Iterations is the number of four-parameter iterations (0 for the
	// three-parameter fit).
	Iterations int
}

// Amplitude returns the peak amplitude sqrt(A² + B²).
func (f SineFit) Amplitude() float64 { return math.Hypot(f.A, f.B) }

// Phasor returns the complex RMS amplitude referenced to absolute time:
// y(t) = √2 Re(P exp(i ω t)) + ... . See the package documentation.
func (f SineFit) Phasor() complex128 {
	return localToAbsolute(f.A, f.B, f.Freq, f.T0, 1)
}

// localToAbsolute turns local cos/sin coefficients with basis origin t0
// into the complex RMS phasor of harmonic h referenced to t = 0.
func localToAbsolute(a, b, freq, t0 float64, h int) complex128 {
	// Phase of the basis origin, reduced carefully: ω t0 can be ~1e11 rad
	// for Unix times.
	cyc := math.Mod(float64(h)*freq*t0, 1)
	s, c := math.Sincos(2 * math.Pi * cyc)
	l := complex(a, -b) / math.Sqrt2
	return l * complex(c, -s)
}

// centreToClock turns local cos/sin coefficients a, b of harmonic h of a
// fit at frequency fw with basis origin t0 into the complex RMS phasor on
// the clock of frequency fc: B such that, about the time tc,
//
//	y(t) = √2 Re(B exp(i 2π h (fc t + (fw - fc)(t - tc)))),
//
// that is B = (a - i b)/√2 · exp(i 2π h (fw (tc - t0) - fc tc)). With
// fw = fc it is localToAbsolute's phasor. Referenced at each window's
// centre, windows fitted at frequencies a few thousandths of a hertz apart
// keep the phase of a steady tone at fc: referenced to t = 0 at their own
// frequencies, a spread of 0.002 Hz turned the phases of consecutive
// windows of a Unix-time log by tens of degrees and more (found in review).
func centreToClock(a, b, fw, fc, t0, tc float64, h int) complex128 {
	hf := float64(h)
	cyc := math.Mod(hf*fw*(tc-t0), 1) - math.Mod(hf*fc*tc, 1)
	s, c := math.Sincos(2 * math.Pi * cyc)
	l := complex(a, -b) / math.Sqrt2
	return l * complex(c, s)
}

// SineSettings sets the model of FitSine and FitSine4. A nil *SineSettings
// fits the plain three-parameter model.
type SineSettings struct {
	// Harmonics lists extra harmonics to fit (2 for the second, ...).
	Harmonics []int
	// Drift adds a linear term for slow drift.
	Drift bool
	// Background, with Drift, adds the quadratic and cubic of the window's
	// time to the linear term, as DemodSettings.Drift does in windows of
	// MinBackgroundCycles or more (fillBackground). FitSine only: FitSine4
	// refuses it.
	Background bool
	// Slope adds the columns (t-t̄) cos ω(t-T0) and (t-t̄) sin ω(t-T0), t̄
	// the mean time: a linear change of the fundamental's amplitude and
	// phase (DemodSettings.ConstantAmplitude), the quadratic change about
	// the mean (SineFit.Curve), and the linear change of each harmonic.
	// FitSine only: FitSine4 refuses it, since with a frequency to fit the
	// two are not told apart.
	Slope bool
	// MaxIter bounds the four-parameter iterations. Zero means 30.
	MaxIter int
}

// FitSine fits the three-parameter model (plus optional harmonics, drift
// and slope) at the known frequency freq (Hz) to y sampled at times t (s),
// with the basis origin at t[0]. t and y of different lengths are an error.
func FitSine(t, y []float64, freq float64, set *SineSettings) (SineFit, error) {
	if len(t) != len(y) {
		return SineFit{}, fmt.Errorf("calibrate: FitSine: %d times and %d values", len(t), len(y))
	}
	var ss SineSettings
	if set != nil {
		ss = *set
	}
	if !(freq > 0) || math.IsInf(freq, 0) {
		return SineFit{}, fmt.Errorf("calibrate: sine fit: frequency %g Hz is not positive", freq)
	}
	q := 3 + 2*len(ss.Harmonics)
	if ss.Drift {
		q++
	}
	nb := q // columns basisRow fills
	if ss.Drift && ss.Background {
		q += 2
	}
	p := q
	if ss.Slope {
		p += 4 + 2*len(ss.Harmonics)
	}
	if len(t) <= p {
		return SineFit{}, fmt.Errorf("calibrate: sine fit: %d samples for %d parameters", len(t), p)
	}
	t0 := t[0]
	var tm, m2 float64 // mean of t - t0, and of (t - t0 - tm)²
	for _, ti := range t {
		tm += ti - t0
	}
	tm /= float64(len(t))
	for _, ti := range t {
		m2 += (ti - t0 - tm) * (ti - t0 - tm)
	}
	m2 /= float64(len(t))
	X := mat.NewDense(len(t), p, nil)
	row := make([]float64, p)
	w := 2 * math.Pi * freq
	half := 0.5 * (t[len(t)-1] - t0)
	if !(half > 0) {
		half = 1
	}
	for i, ti := range t {
		basisRow(row[:nb], ti-t0, w, ss.Harmonics, ss.Drift)
		if q > nb {
			// The Legendre polynomials of fillBackground.
			u := (ti - t0 - half) / half
			row[nb], row[nb+1] = 0.5*(3*u*u-1), 0.5*u*(5*u*u-3)
		}
		if ss.Slope {
			tc := ti - t0 - tm
			row[q], row[q+1] = tc*row[0], tc*row[1]
			row[q+2], row[q+3] = (tc*tc-m2)*row[0], (tc*tc-m2)*row[1]
			for j := range ss.Harmonics {
				row[q+4+2*j], row[q+5+2*j] = tc*row[3+2*j], tc*row[4+2*j]
			}
		}
		X.SetRow(i, row)
	}
	beta, rss, err := lstsq(X, y)
	if err != nil {
		return SineFit{}, err
	}
	f := SineFit{A: beta[0], B: beta[1], C: beta[2], Freq: freq, T0: t0}
	for j := range ss.Harmonics {
		f.Harmonics = append(f.Harmonics, [2]float64{beta[3+2*j], beta[4+2*j]})
	}
	if ss.Drift {
		f.Drift = beta[nb-1]
	}
	if ss.Slope {
		f.Slope = [2]float64{beta[q], beta[q+1]}
		f.Curve = [2]float64{beta[q+2], beta[q+3]}
		for j := range ss.Harmonics {
			f.HarmonicSlopes = append(f.HarmonicSlopes, [2]float64{beta[q+4+2*j], beta[q+5+2*j]})
		}
	}
	f.RMS = math.Sqrt(rss / float64(len(t)))
	f.Sigma = math.Sqrt(rss / float64(len(t)-p))
	return f, nil
}

// basisRow fills row with the basis functions at local time tau.
func basisRow(row []float64, tau, w float64, harmonics []int, drift bool) {
	s, c := math.Sincos(w * tau)
	row[0], row[1], row[2] = c, s, 1
	for j, h := range harmonics {
		sh, ch := math.Sincos(float64(h) * w * tau)
		row[3+2*j], row[4+2*j] = ch, sh
	}
	if drift {
		row[len(row)-1] = tau
	}
}

// lstsq solves min ||X β - y|| by QR and returns β and the residual sum of
// squares.
func lstsq(X *mat.Dense, y []float64) ([]float64, float64, error) {
	n, p := X.Dims()
	var qr mat.QR
	qr.Factorize(X)
	var b mat.VecDense
	if err := qr.SolveVecTo(&b, false, mat.NewVecDense(n, y)); err != nil {
		return nil, 0, errors.New("calibrate: sine fit: basis is singular (too few samples per cycle or duplicate times?)")
	}
	var pred mat.VecDense
	pred.MulVec(X, &b)
	var rss float64
	for i := 0; i < n; i++ {
		d := y[i] - pred.AtVec(i)
		rss += d * d
	}
	beta := make([]float64, p)
	for j := range beta {
		beta[j] = b.AtVec(j)
	}
	return beta, rss, nil
}

// FitSine4 fits the four-parameter model of IEEE Std 1057 / 1241 (the
// frequency too), iterating Gauss-Newton from the starting frequency freq0
// (Hz), which should lie within about a quarter of 1/(t[n-1]-t[0]) of the
// truth. Harmonics and drift in set are fitted at multiples of the
// current frequency; only the fundamental's phase enters the frequency
// update. The basis origin is t[0].
func FitSine4(t, y []float64, freq0 float64, set *SineSettings) (SineFit, error) {
	if len(t) != len(y) {
		return SineFit{}, fmt.Errorf("calibrate: FitSine4: %d times and %d values", len(t), len(y))
	}
	var ss SineSettings
	if set != nil {
		ss = *set
	}
	if ss.MaxIter == 0 {
		ss.MaxIter = 30
	}
	if ss.Background {
		return SineFit{}, errors.New("calibrate: four-parameter fit: the background's quadratic and cubic are fitted by FitSine only")
	}
	if ss.Slope {
		return SineFit{}, errors.New("calibrate: four-parameter fit: a slope of the amplitude cannot be fitted with the frequency (the frequency is the slope of the phase)")
	}
	f, err := FitSine(t, y, freq0, &ss)
	if err != nil {
		return f, err
	}
	p := 4 + 2*len(ss.Harmonics)
	if ss.Drift {
		p++
	}
	if len(t) <= p {
		return f, fmt.Errorf("calibrate: four-parameter fit: %d samples for %d parameters", len(t), p)
	}
	t0 := t[0]
	span := t[len(t)-1] - t0
	if !(span > 0) {
		return f, errors.New("calibrate: four-parameter fit: times do not increase")
	}
	w := 2 * math.Pi * freq0
	X := mat.NewDense(len(t), p, nil)
	row := make([]float64, p)
	for it := 1; it <= ss.MaxIter; it++ {
		f.Iterations = it
		for i, ti := range t {
			tau := ti - t0
			basisRow(row[:p-1], tau, w, ss.Harmonics, ss.Drift)
			s, c := row[1], row[0]
			// ∂y/∂ω of the fundamental.
			row[p-1] = tau * (-f.A*s + f.B*c)
			X.SetRow(i, row)
		}
		beta, rss, err := lstsq(X, y)
		if err != nil {
			return f, err
		}
		dw := beta[p-1]
		w += dw
		f.A, f.B, f.C = beta[0], beta[1], beta[2]
		f.Harmonics = f.Harmonics[:0]
		for j := range ss.Harmonics {
			f.Harmonics = append(f.Harmonics, [2]float64{beta[3+2*j], beta[4+2*j]})
		}
		if ss.Drift {
			f.Drift = beta[p-2]
		}
		f.RMS = math.Sqrt(rss / float64(len(t)))
		f.Sigma = math.Sqrt(rss / float64(len(t)-p))
		if !(w > 0) || math.IsNaN(w) {
			return f, fmt.Errorf("calibrate: four-parameter fit diverged from %g Hz", freq0)
		}
		if math.Abs(dw)*span < 1e-10 {
			break
		}
	}
	// Final linear fit at the converged frequency so that A, B, C and the
	// residuals are consistent with it.
	f2, err := FitSine(t, y, w/(2*math.Pi), &ss)
	if err != nil {
		return f, err
	}
	f2.Iterations = f.Iterations
	return f2, nil
}

// reseedEvery is how many samples sincosGrid advances by rotation before
// it evaluates math.Sincos afresh. Each rotation adds at most a few units
// in the last place to the phase and the magnitude, so the drift stays
// within a few times 1e-14 whatever the window's length
// (TestSincosGridDrift).
const reseedEvery = 32

// maxGridOffset is the largest phase offset, rad, between a sample's own
// time and the window's uniform grid that sincosGrid corrects by series;
// the series' truncation error, maxGridOffset⁶/720, is below 1e-20.
// Samples further off the grid get math.Sincos.
const maxGridOffset = 1e-3

// sincosSeries fills cs[k] and sn[k] with cos and sin of w (t[k] - t[0]).
// It panics unless cs and sn are as long as t. See sincosGrid.
func sincosSeries(cs, sn, t []float64, w float64) {
	if len(cs) != len(t) || len(sn) != len(t) {
		panic("calibrate: sincosSeries: column lengths differ from the times")
	}
	var g windowTimes
	g.set(t)
	sincosGrid(cs, sn, &g, w)
}

// windowTimes holds a window's times relative to its first, τ_k = t[k] -
// t[0], and their offsets τ_k - k h from the uniform grid of step h =
// τ_{n-1}/(n-1) through its ends, in buffers reused from window to window.
type windowTimes struct {
	tau, off []float64
	h        float64
	maxOff   float64 // largest |τ_k - k h|
}

// set fills g from the window's times t.
func (g *windowTimes) set(t []float64) {
	n := len(t)
	if cap(g.tau) < n {
		g.tau = make([]float64, n)
		g.off = make([]float64, n)
	}
	g.tau, g.off = g.tau[:n], g.off[:n]
	g.h, g.maxOff = 0, 0
	if n == 0 {
		return
	}
	if n > 1 {
		g.h = (t[n-1] - t[0]) / float64(n-1)
	}
	off := g.off[:n]
	for k, tk := range t {
		tau := tk - t[0]
		g.tau[k] = tau
		e := tau - float64(k)*g.h
		off[k] = e
		if e < 0 {
			e = -e
		}
		if e > g.maxOff {
			g.maxOff = e
		}
	}
}

// sincosGrid fills cs[k] and sn[k] with cos and sin of w τ_k. On the
// uniform grid of step h the phase is w k h = w k0 h + w j h with k0 a
// multiple of reseedEvery: exp(i w k0 h) comes from math.Sincos and
// exp(i w j h) from a table built by repeated rotation by exp(i w h), so no
// sample is more than reseedEvery-1 rotations from an exact value and no
// sample waits on the one before. Each sample's offset from the grid,
// δ = w (τ_k - k h), is then applied as the rotation exp(i δ) from its
// Taylor series, or, beyond maxGridOffset, the sample gets
// math.Sincos(w τ_k). cs and sn must be as long as the window.
func sincosGrid(cs, sn []float64, g *windowTimes, w float64) {
	n := len(g.tau)
	cs, sn = cs[:n], sn[:n]
	var rc, rs [reseedEvery]float64
	rc[0] = 1
	s1, c1 := math.Sincos(w * g.h)
	for j := 1; j < reseedEvery; j++ {
		rc[j], rs[j] = rc[j-1]*c1-rs[j-1]*s1, rc[j-1]*s1+rs[j-1]*c1
	}
	series := w*g.maxOff <= maxGridOffset
	for k0 := 0; k0 < n; k0 += reseedEvery {
		k1 := min(k0+reseedEvery, n)
		off := g.off[k0:k1]
		cb, sb := cs[k0:k1], sn[k0:k1]
		cb, sb = cb[:len(off)], sb[:len(off)]
		rcb, rsb := rc[:len(off)], rs[:len(off)]
		ss, sc := math.Sincos(w * (float64(k0) * g.h))
		if series {
			// Every sample near the grid: no branch in the loop.
			for j, e := range off {
				zc, zs := sc*rcb[j]-ss*rsb[j], sc*rsb[j]+ss*rcb[j]
				d := w * e
				d2 := d * d
				cd := 1 - d2*(0.5-d2*(1.0/24))
				sd := d * (1 - d2*(1.0/6-d2*(1.0/120)))
				cb[j], sb[j] = zc*cd-zs*sd, zc*sd+zs*cd
			}
			continue
		}
		for j, e := range off {
			if d := w * e; math.Abs(d) <= maxGridOffset {
				zc, zs := sc*rcb[j]-ss*rsb[j], sc*rsb[j]+ss*rcb[j]
				d2 := d * d
				cd := 1 - d2*(0.5-d2*(1.0/24))
				sd := d * (1 - d2*(1.0/6-d2*(1.0/120)))
				cb[j], sb[j] = zc*cd-zs*sd, zc*sd+zs*cd
			} else {
				sb[j], cb[j] = math.Sincos(w * g.tau[k0+j])
			}
		}
	}
}

// fillBasis writes the columns of the sine-fit basis at angular frequency
// w for the window's times g into cols: cos, sin, 1, the cos and
// sin of each harmonic, and τ when drift is set (the order of basisRow).
// Harmonics are powers of exp(i w τ), so only the fundamental costs a
// sine and cosine per sample.
func fillBasis(cols [][]float64, g *windowTimes, w float64, harmonics []int, drift int) {
	cs, sn := cols[0], cols[1]
	sincosGrid(cs, sn, g, w)
	one := cols[2]
	for k := range one {
		one[k] = 1
	}
	for j, h := range harmonics {
		hc, hs := cols[3+2*j], cols[4+2*j]
		for k, c := range cs {
			s := sn[k]
			pc, ps := c, s
			for m := 1; m < h; m++ {
				pc, ps = pc*c-ps*s, pc*s+ps*c
			}
			hc[k], hs[k] = pc, ps
		}
	}
	if drift > 0 {
		q := 3 + 2*len(harmonics)
		copy(cols[q], g.tau)
		if drift == 3 {
			fillBackground(cols[q+1], cols[q+2], g.tau)
		}
	}
}

// dot returns Σ a[i] b[i] with four partial sums (it panics if b is
// shorter than a).
func dot(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(a); i += 4 {
		s0 += a[i] * b[i]
		s1 += a[i+1] * b[i+1]
		s2 += a[i+2] * b[i+2]
		s3 += a[i+3] * b[i+3]
	}
	for ; i < len(a); i++ {
		s0 += a[i] * b[i]
	}
	return (s0 + s1) + (s2 + s3)
}

// errSingularBasis is returned when the normal matrix of a window's basis
// is not positive definite.
var errSingularBasis = errors.New("calibrate: sine fit: basis is singular (too few samples per cycle or duplicate times?)")

// cholesky factors the leading p×p block of the symmetric matrix g (row
// stride ld) into the lower triangle l (p×p, row-major), l lᵀ = g.
func cholesky(l, g []float64, p, ld int) error {
	for j := 0; j < p; j++ {
		d := g[j*ld+j]
		for k := 0; k < j; k++ {
			d -= l[j*p+k] * l[j*p+k]
		}
		// A pivot this small relative to its diagonal means the columns
		// are dependent to the precision of the sums.
		if !(d > 1e-13*g[j*ld+j]) {
			return errSingularBasis
		}
		d = math.Sqrt(d)
		l[j*p+j] = d
		for i := j + 1; i < p; i++ {
			s := g[i*ld+j]
			for k := 0; k < j; k++ {
				s -= l[i*p+k] * l[j*p+k]
			}
			l[i*p+j] = s / d
		}
	}
	return nil
}

// cholSolve overwrites b with the solution of l lᵀ x = b.
func cholSolve(l, b []float64) {
	p := len(b)
	for i := 0; i < p; i++ {
		s := b[i]
		for k := 0; k < i; k++ {
			s -= l[i*p+k] * b[k]
		}
		b[i] = s / l[i*p+i]
	}
	for i := p - 1; i >= 0; i-- {
		s := b[i]
		for k := i + 1; k < p; k++ {
			s -= l[k*p+i] * b[k]
		}
		b[i] = s / l[i*p+i]
	}
}

// stepTolSigma ends the four-parameter iterations of freqFit once a step
// is below this fraction of the frequency's own sigma (as well as when it
// moves the phase across the window by less than 1e-10 rad, FitSine4's
// test). The iterations converge linearly at a rate of about the
// noise-to-signal ratio over √n (1e-3 for 1 nT of noise on a 125 nT tone
// over 200 samples; a few times that on the joint fit of weaker axes), so
// the next step, the change this test can make to the answer, is some
// 1e-8 sigma: far below anything the sigma could resolve, and it saves
// about one Gauss-Newton pass in five (4.1 passes a window on the
// benchmark's log of BenchmarkDemodulateEstimateFreq, against 4.5 with a
// tolerance of 1e-6).
const stepTolSigma = 1e-5

// rssFloor is the smallest residual sum of squares freqFit credits an
// axis with, as a fraction of the axis's sum of squares: below it the
// residual formed from the normal equations (yᵀy less the fitted part) is
// rounding, and a noise-free axis would otherwise get an infinite weight.
const rssFloor = 1e-13

// freqFit is the four-parameter sine fit of IEEE Std 1057 / 1241 fitted
// jointly to the three axes of a window, with buffers reused from window
// to window: one frequency shared by the axes, and for each axis its own
// linear terms (cos, sin, constant, harmonics, drift) and its own noise
// variance. It works on normal equations: each Gauss-Newton iteration
// makes one pass over the samples to form the normal matrix of the
// columns
//
//	cos ωτ, sin ωτ, 1, [harmonics], [τ], [harmonics' slopes],
//	[nuisance], τ sin ωτ, τ cos ωτ
//
// (the same for the three axes, which share their times) and their
// products with each axis's data. Per axis k, the three-parameter fit at
// the current ω gives RSS_k(ω), and the frequency column ∂y_k/∂ω =
// τ(-A_k sin ωτ + B_k cos ωτ), once the axis's linear parameters are
// eliminated by the Cholesky factor of the p×p basis block, leaves the
// Schur complement q_k and the right-hand side r_k. The linear parameters
// of different axes do not couple, so the joint step is
//
//	Δω = Σ r_k/σ_k² / Σ q_k/σ_k²,
//
// the Schur complements adding across the axes with weights 1/σ_k².
// (The step actually taken is Newton's on the profile likelihood below:
// its curvature, 2 Σ q_k/RSS_k in the Gauss-Newton approximation, loses
// 4 Σ (r_k/RSS_k)² from the weights' own change with ω, which would
// otherwise slow the convergence to a rate of about 2/n.)
//
// The weights are 1/RSS_k(ω) at the current ω (any common factor, such as
// the degrees of freedom, cancels), re-formed every iteration from sums
// the pass makes anyway. At convergence they are the weights of the fit's
// own residuals, and the fixed point is the maximum over ω of the profile
// likelihood of Gaussian white noise with an unknown variance per axis,
// -(n/2) Σ_k log RSS_k(ω): its derivative is Σ_k RSS_k'/RSS_k, and
// RSS_k' = -2 r_k there by the envelope theorem. This is the maximum-
// likelihood estimate rather than a two-stage weighted fit, so the answer
// depends neither on a count of re-weightings nor on where the iterations
// started, and an axis without signal costs nothing: its weight is its
// own noise and its q_k, growing with the square of its amplitude, is
// nearly zero. An axis that does not vary at all (a dead channel) is left
// out. The frequency's variance is 1/Σ_k q_k/s_k² (s_k² the residual
// variance of axis k), the linearised least-squares covariance of the
// joint problem; the noise variances and ω are asymptotically
// uncorrelated, so estimating the weights does not widen it.
type freqFit struct {
	harmonics []int
	drift     int // background columns beyond the constant (DriftColumns)
	// nuisance lists frequencies fitted alongside (DemodSettings.Nuisance);
	// their columns, which do not depend on ω, follow the basis columns in
	// cols and are filled by load.
	nuisance []float64
	// slope gives each harmonic and each nuisance frequency its slope
	// columns (DemodSettings.Harmonics and Nuisance), and the fundamental
	// the linear and quadratic change of its amplitude, τ(A cos ωτ +
	// B sin ωτ) and τ²(A cos ωτ + B sin ωτ), two columns per axis
	// eliminated in fit from the border (nb = 4), not the change of its
	// phase: the frequency is the slope of the phase. The harmonics' slope
	// columns follow the basis columns (and τ), before the nuisance's.
	slope  bool
	nb     int          // border columns after the basis: τ sin ωτ, τ cos ωτ, and with slope τ² sin ωτ, τ² cos ωτ
	p      int          // linear parameters: 3, 2 per harmonic, 1 for drift, 2 per harmonic with slope, then the nuisance columns
	n      int          // samples in the buffers
	cols   [][]float64  // p basis columns, then the nb border columns
	ys     [3][]float64 // the window's series less their first value
	yt     [3][]float64 // ys times τ (three-parameter case)
	y1     [3]float64   // Σ ys per axis
	times  windowTimes
	t1, t2 float64      // Σ τ and Σ τ²
	t3, t4 float64      // Σ τ³ and Σ τ⁴ (slope)
	gram   []float64    // (p+nb)×(p+nb) normal matrix of cols, row-major
	xty    [3][]float64 // colsᵀ y per axis
	yy     [3]float64   // yᵀy per axis
	l      []float64    // p×p Cholesky factor of the basis block
	zs, zc []float64    // the basis block's inverse times the columns τ sin ωτ and τ cos ωτ
	zb     [4][]float64 // the basis block's inverse times each border column (zb[0] = zs, zb[1] = zc)
	mb, lb []float64    // slope: the border's normal block with the basis projected out, nb×nb, and its Cholesky factor
	wb, eb []float64    // slope: scratch, nb
	b0     []float64    // scratch, p
}

func newFreqFit(harmonics []int, drift int, nuisance []float64, slope bool) *freqFit {
	p := 3 + 2*len(harmonics) + drift
	if slope {
		p += 2*len(harmonics) + 4*len(nuisance)
	} else {
		p += 2 * len(nuisance)
	}
	nb := 2
	if slope {
		nb = 4
	}
	m := p + nb
	f := &freqFit{harmonics: harmonics, drift: drift, nuisance: nuisance, slope: slope, nb: nb, p: p,
		cols: make([][]float64, m),
		gram: make([]float64, m*m),
		l:    make([]float64, p*p),
		zs:   make([]float64, p), zc: make([]float64, p), b0: make([]float64, p),
	}
	for k := range f.xty {
		f.xty[k] = make([]float64, m)
	}
	f.zb[0], f.zb[1] = f.zs, f.zc
	for i := 2; i < nb; i++ {
		f.zb[i] = make([]float64, p)
	}
	f.mb, f.lb = make([]float64, nb*nb), make([]float64, nb*nb)
	f.wb, f.eb = make([]float64, nb), make([]float64, nb)
	return f
}

// load copies the window's times t and series y[k], less their first
// values, into the buffers and reports the first axis whose sum of
// squares is not finite (-1 if none). It panics if the lengths differ.
// grid, when not nil, holds the nuisance columns and their normal block
// for times on the shared grid (demodulator.nuisanceGrid).
func (f *freqFit) load(t []float64, y [3][]float64, grid *nuisanceGrid) int {
	n := len(t)
	for k := range y {
		if len(y[k]) != n {
			panic("calibrate: freqFit: series and times differ in length")
		}
	}
	if cap(f.ys[0]) < n {
		for k := range f.ys {
			f.ys[k] = make([]float64, n)
			f.yt[k] = make([]float64, n)
		}
		for j := range f.cols {
			f.cols[j] = make([]float64, n)
		}
	}
	f.n = n
	f.times.set(t)
	tau := f.times.tau
	if len(f.nuisance) > 0 {
		cols := f.cols[f.nuisanceStart():f.p]
		for j := range cols {
			cols[j] = cols[j][:n]
			if grid != nil {
				copy(cols[j], grid.cols[j])
			}
		}
		if grid == nil {
			fillNuisance(cols, tau, f.nuisance, f.slope)
		}
	}
	f.t1, f.t2, f.t3, f.t4 = 0, 0, 0, 0
	for _, v := range tau {
		f.t1 += v
		f.t2 += v * v
		f.t3 += v * v * v
		f.t4 += v * v * v * v
	}
	bad := -1
	for k := range f.ys {
		ys, yt := f.ys[k][:n], f.yt[k][:n]
		ref := y[k][0]
		var s1, s2 float64
		for i, v := range y[k] {
			v -= ref
			ys[i] = v
			yt[i] = v * tau[i]
			s1 += v
			s2 += v * v
		}
		f.y1[k], f.yy[k] = s1, s2
		if bad < 0 && (math.IsNaN(s2) || math.IsInf(s2, 0)) {
			bad = k
		}
	}
	// The nuisance columns do not depend on ω: their block of the normal
	// matrix and their products with the series are formed once here.
	if q := f.nuisanceStart(); q < f.p {
		m := f.p + f.nb
		for i := q; i < f.p; i++ {
			for j := i; j < f.p; j++ {
				var v float64
				if grid != nil {
					v = grid.gram[(i-q)*(f.p-q)+j-q]
				} else {
					v = dot(f.cols[i], f.cols[j])
				}
				f.gram[i*m+j], f.gram[j*m+i] = v, v
			}
			for k := range f.ys {
				f.xty[k][i] = dot(f.cols[i], f.ys[k][:n])
			}
		}
	}
	return bad
}

// nuisanceStart is the index of the first nuisance column (p when none).
func (f *freqFit) nuisanceStart() int {
	nc := 2 * len(f.nuisance)
	if f.slope {
		nc *= 2
	}
	return f.p - nc
}

// pass fills the columns at angular frequency w for the loaded times and
// forms the normal matrix and the products with the axes listed, then
// factors the basis block.
func (f *freqFit) pass(w float64, axes ...int) error {
	if f.p == 3 {
		return f.pass3(w, axes)
	}
	n, p := f.n, f.p
	m := p + f.nb
	cols := f.cols
	for j := range cols {
		cols[j] = cols[j][:n]
	}
	fillBasis(cols[:p], &f.times, w, f.harmonics, f.drift)
	if f.slope {
		// The harmonics' slope columns, after the basis (and τ).
		q := slopeStart(f.harmonics, f.drift)
		for j := range f.harmonics {
			fillSlope(cols[q+2*j], cols[q+1+2*j], cols[3+2*j], cols[4+2*j], f.times.tau)
		}
	}
	ts, tc := cols[p], cols[p+1]
	cs, sn := cols[0], cols[1]
	for k, tau := range f.times.tau {
		ts[k], tc[k] = tau*sn[k], tau*cs[k]
	}
	if f.nb == 4 {
		t2s, t2c := cols[p+2], cols[p+3]
		for k, tau := range f.times.tau {
			t2s[k], t2c[k] = tau*ts[k], tau*tc[k]
		}
	}
	// The entries between nuisance columns [q, p) were formed by load.
	q := f.nuisanceStart()
	fixed := func(j int) bool { return j >= q && j < p }
	for i := 0; i < m; i++ {
		for j := i; j < m; j++ {
			if fixed(i) && fixed(j) {
				continue
			}
			var s float64
			if i == 2 && j == 2 {
				s = float64(n)
			} else {
				s = dot(cols[i], cols[j])
			}
			f.gram[i*m+j], f.gram[j*m+i] = s, s
		}
	}
	for _, k := range axes {
		ys := f.ys[k][:n]
		for j := 0; j < m; j++ {
			switch {
			case fixed(j):
			case j == 2:
				f.xty[k][j] = f.y1[k]
			default:
				f.xty[k][j] = dot(cols[j], ys)
			}
		}
	}
	return cholesky(f.l, f.gram, p, m)
}

// pass3 is pass for the plain three-parameter basis cos, sin, 1, in one
// sweep over the samples for the first axis listed. With c² + s² = 1 the
// ten sums Σc, Σs, Σc², Σsc, Στc, Στs, Στc², Στsc, Στ²c², Στ²sc and the
// window's Στ, Στ² give the whole 5×5 normal matrix.
func (f *freqFit) pass3(w float64, axes []int) error {
	n := f.n
	cs, sn := f.cols[0][:n], f.cols[1][:n]
	sincosGrid(cs, sn, &f.times, w)
	tau := f.times.tau[:n]
	a0 := axes[0]
	ys, yt := f.ys[a0][:n], f.yt[a0][:n]
	// Three sweeps of a few sums each keep the sums in registers.
	var c1, s1, c2, sc, tc, ts float64
	for i, c := range cs {
		s, ta := sn[i], tau[i]
		c1 += c
		s1 += s
		c2 += c * c
		sc += s * c
		tc += ta * c
		ts += ta * s
	}
	var tc2, tsc, t2c2, t2sc float64
	for i, c := range cs {
		s, ta := sn[i], tau[i]
		tcv := ta * c
		tc2 += tcv * c
		tsc += tcv * s
		t2c2 += tcv * tcv
		t2sc += tcv * (ta * s)
	}
	var yc, ysn, ytc, yts float64
	for i, c := range cs {
		s, y, yta := sn[i], ys[i], yt[i]
		yc += y * c
		ysn += y * s
		ytc += yta * c
		yts += yta * s
	}
	fn := float64(n)
	g := f.gram
	m := 3 + f.nb
	sym := func(i, j int, v float64) { g[i*m+j], g[j*m+i] = v, v }
	sym(0, 0, c2)
	sym(0, 1, sc)
	sym(0, 2, c1)
	sym(0, 3, tsc)
	sym(0, 4, tc2)
	sym(1, 1, fn-c2)
	sym(1, 2, s1)
	sym(1, 3, f.t1-tc2)
	sym(1, 4, tsc)
	sym(2, 2, fn)
	sym(2, 3, ts)
	sym(2, 4, tc)
	sym(3, 3, f.t2-t2c2)
	sym(3, 4, t2sc)
	sym(4, 4, t2c2)
	x := f.xty[a0]
	x[0], x[1], x[2], x[3], x[4] = yc, ysn, f.y1[a0], yts, ytc
	rest := axes[1:]
	for len(rest) >= 2 {
		// Two axes in one sweep: eight sums in registers.
		f.sums3two(rest[0], rest[1], cs, sn)
		rest = rest[2:]
	}
	for _, k := range rest {
		x := f.xty[k]
		ys, yt := f.ys[k][:n], f.yt[k][:n]
		x[0], x[1], x[2], x[3], x[4] = dot(ys, cs), dot(ys, sn), f.y1[k], dot(yt, sn), dot(yt, cs)
	}
	if f.nb == 4 {
		f.sums3curve(axes, cs, sn)
	}
	return cholesky(f.l, g, 3, m)
}

// sums3curve fills the products of the three-parameter pass (pass3) with
// the border columns τ² sin ωτ and τ² cos ωτ (slope), from the columns
// cs, sn, for the axes listed: with c² + s² = 1 the sums Στ²s, Στ²c,
// Στ³c², Στ³sc, Στ⁴c², Στ⁴sc and the window's Στ², Στ³, Στ⁴ give their
// normal entries.
func (f *freqFit) sums3curve(axes []int, cs, sn []float64) {
	tau := f.times.tau[:len(cs)]
	var t2s, t2c, t3c2, t3sc, t4c2, t4sc float64
	for i, c := range cs {
		s, ta := sn[i], tau[i]
		t2 := ta * ta
		t2c += t2 * c
		t2s += t2 * s
		t3 := t2 * ta
		t3c2 += t3 * c * c
		t3sc += t3 * s * c
		t4c2 += t3 * ta * c * c
		t4sc += t3 * ta * s * c
	}
	g := f.gram
	const m = 7
	sym := func(i, j int, v float64) { g[i*m+j], g[j*m+i] = v, v }
	t2sc, t2c2 := g[3*m+4], g[4*m+4] // Στ²sc, Στ²c²
	sym(0, 5, t2sc)
	sym(0, 6, t2c2)
	sym(1, 5, f.t2-t2c2)
	sym(1, 6, t2sc)
	sym(2, 5, t2s)
	sym(2, 6, t2c)
	sym(3, 5, f.t3-t3c2)
	sym(3, 6, t3sc)
	sym(4, 5, t3sc)
	sym(4, 6, t3c2)
	sym(5, 5, f.t4-t4c2)
	sym(5, 6, t4sc)
	sym(6, 6, t4c2)
	for _, k := range axes {
		yt := f.yt[k][:len(cs)]
		var ys, yc float64
		for i, c := range cs {
			v := yt[i] * tau[i]
			ys += v * sn[i]
			yc += v * c
		}
		f.xty[k][5], f.xty[k][6] = ys, yc
	}
}

// sums3two fills the products of the three-parameter pass (pass3) with
// the columns cs, sn for the axes j and k in one sweep over the samples.
func (f *freqFit) sums3two(j, k int, cs, sn []float64) {
	n := len(cs)
	yj, tj := f.ys[j][:n], f.yt[j][:n]
	yk, tk := f.ys[k][:n], f.yt[k][:n]
	var jc, js, jtc, jts, kc, ks, ktc, kts float64
	for i, c := range cs {
		s := sn[i]
		jc += yj[i] * c
		js += yj[i] * s
		jtc += tj[i] * c
		jts += tj[i] * s
		kc += yk[i] * c
		ks += yk[i] * s
		ktc += tk[i] * c
		kts += tk[i] * s
	}
	x := f.xty[j]
	x[0], x[1], x[2], x[3], x[4] = jc, js, f.y1[j], jts, jtc
	x = f.xty[k]
	x[0], x[1], x[2], x[3], x[4] = kc, ks, f.y1[k], kts, ktc
}

// fit runs the joint four-parameter fit on the times t (those given to
// load) from the starting frequency freq0 (Hz). It returns the frequency,
// the iterations made and each axis's Schur complement q[k] of the last
// Gauss-Newton step: the frequency's variance is 1/Σ_k q[k]/s_k² (rad²/s²,
// s_k² the residual variance of axis k). q[k] is zero for an axis that
// does not vary.
func (f *freqFit) fit(t []float64, freq0 float64, maxIter int) (freq float64, iters int, q [3]float64, err error) {
	n, p := len(t), f.p
	if n != f.n {
		panic("calibrate: freqFit: times differ in length from the loaded series")
	}
	np := p + 1 // the parameters per axis: the basis and the frequency
	if f.slope {
		np += 2 // and the amplitude's change, linear and quadratic
	}
	if n <= np {
		return 0, 0, q, fmt.Errorf("calibrate: four-parameter fit: %d samples for %d parameters", n, np)
	}
	span := t[n-1] - t[0]
	if !(span > 0) {
		return 0, 0, q, errors.New("calibrate: four-parameter fit: times do not increase")
	}
	m := p + f.nb
	w := 2 * math.Pi * freq0
	g := f.gram
	zs, zc, b0 := f.zs, f.zc, f.b0
	// A_k, B_k of the frequency column: the three-parameter fit's at freq0
	// on the first pass, then each step's; with slope, each pass's fit with
	// the border columns (below).
	var a, b [3]float64
	for it := 1; it <= maxIter; it++ {
		iters = it
		if err := f.pass(w, 0, 1, 2); err != nil {
			return 0, iters, q, err
		}
		for j := 0; j < p; j++ {
			zs[j], zc[j] = g[j*m+p], g[j*m+p+1]
		}
		cholSolve(f.l, zs)
		cholSolve(f.l, zc)
		// With slope, the border also holds τ² sin ωτ, τ² cos ωτ; the
		// border columns with the basis projected out have the normal
		// block mb (nb×nb), factored into lb, for the fundamental's change
		// of amplitude (below).
		nb := f.nb
		bordOK := false
		if f.slope {
			for i := 2; i < nb; i++ {
				zi := f.zb[i]
				for j := 0; j < p; j++ {
					zi[j] = g[j*m+p+i]
				}
				cholSolve(f.l, zi)
			}
			for i := 0; i < nb; i++ {
				for j := i; j < nb; j++ {
					v := g[(p+i)*m+p+j]
					zj := f.zb[j]
					for l := 0; l < p; l++ {
						v -= g[l*m+p+i] * zj[l]
					}
					f.mb[i*nb+j], f.mb[j*nb+i] = v, v
				}
			}
			bordOK = cholesky(f.lb, f.mb, nb, nb) == nil
		}
		tbar := f.t1 / float64(n)
		// Weighted sums over the axes of q_k, of the frequency column's own
		// norm (for the singularity test) and of r_k.
		var qw, ddw, rw, rrw float64
		var lin, zk [3][2]float64 // per axis: (A, B) of the linear fit and of G⁻¹u
		for k := 0; k < 3; k++ {
			xty := f.xty[k]
			copy(b0, xty[:p])
			cholSolve(f.l, b0)
			rss := f.yy[k]
			for j := 0; j < p; j++ {
				rss -= b0[j] * xty[j]
			}
			if it == 1 {
				a[k], b[k] = b0[0], b0[1]
			}
			// The border columns' products with the axis, the basis
			// projected out (slope).
			wb := f.wb
			if bordOK {
				for i := 0; i < nb; i++ {
					v := xty[p+i]
					zi := f.zb[i]
					for j := 0; j < p; j++ {
						v -= zi[j] * xty[j]
					}
					wb[i] = v
				}
				// A, B at the window's mean time from the fit with all
				// the border columns (a linear and quadratic change of
				// the fundamental): the direction its amplitude changes
				// along, whatever the basis alone takes of that change
				// (near twice the frequency, a share turned off that
				// direction).
				e := f.eb
				copy(e, wb)
				cholSolve(f.lb, e)
				ak, bk := b0[0]+tbar*(e[1]+tbar*e[3]), b0[1]+tbar*(e[0]+tbar*e[2])
				for i := 0; i < nb; i++ {
					ak -= f.zb[i][0] * e[i]
					bk -= f.zb[i][1] * e[i]
				}
				a[k], b[k] = ak, bk
			}
			ak, bk := a[k], b[k]
			// Border of the normal matrix for the column d = -A τ sin + B τ cos.
			dd := ak*ak*g[p*m+p] - 2*ak*bk*g[p*m+p+1] + bk*bk*g[(p+1)*m+p+1]
			qk, rk := dd, -ak*xty[p]+bk*xty[p+1]
			for j := 0; j < p; j++ {
				uj := -ak*g[j*m+p] + bk*g[j*m+p+1]
				qk -= uj * (-ak*zs[j] + bk*zc[j])
				rk -= uj * b0[j]
			}
			if bordOK {
				// The fundamental's change of amplitude, linear and
				// quadratic, u1 = τ(A cos + B sin) and u2 = τ²(A cos +
				// B sin), eliminated from the step as well (the
				// demodulation models both): they are not the frequency's
				// column d, which changes the phase, but near twice the
				// frequency they are far from orthogonal to it over a
				// window once the basis is projected out, and a walked
				// sensor's change of amplitude was read as a change of
				// phase (an exact 50 Hz read 50.0067 ± 0.0001 Hz at 102 Hz
				// sampling, 0.001-0.005 Hz off at 103-128 Hz; found in
				// review). In the border's coordinates (τ sin, τ cos,
				// τ² sin, τ² cos) d = (-A, B, 0, 0), u1 = (B, A, 0, 0),
				// u2 = (0, 0, B, A).
				mb := f.mb
				form := func(x, y [4]float64) float64 {
					var v float64
					for i := 0; i < nb; i++ {
						for j := 0; j < nb; j++ {
							v += x[i] * mb[i*nb+j] * y[j]
						}
					}
					return v
				}
				d := [4]float64{-ak, bk}
				u1 := [4]float64{bk, ak}
				u2 := [4]float64{2: bk, 3: ak}
				dot4 := func(x [4]float64) float64 { return x[0]*wb[0] + x[1]*wb[1] + x[2]*wb[2] + x[3]*wb[3] }
				g11, g12, g22 := form(u1, u1), form(u1, u2), form(u2, u2)
				du1, du2 := form(d, u1), form(d, u2)
				y1, y2 := dot4(u1), dot4(u2)
				if det := g11*g22 - g12*g12; det > 1e-12*g11*g22 {
					// G⁻¹ applied to (du1, du2) and to (y1, y2).
					x1, x2 := (g22*du1-g12*du2)/det, (g11*du2-g12*du1)/det
					v1, v2 := (g22*y1-g12*y2)/det, (g11*y2-g12*y1)/det
					qk -= du1*x1 + du2*x2
					rk -= du1*v1 + du2*v2
					rss -= y1*v1 + y2*v2
				}
			}
			lin[k] = [2]float64{b0[0], b0[1]}
			zk[k] = [2]float64{-ak*zs[0] + bk*zc[0], -ak*zs[1] + bk*zc[1]}
			rss = math.Max(rss, rssFloor*f.yy[k])
			q[k] = 0
			if !(dd > 0) || !(rss > 0) {
				continue // the axis does not vary: nothing to add
			}
			q[k] = qk
			qw += qk / rss
			ddw += dd / rss
			rw += rk / rss
			rrw += (rk / rss) * (rk / rss)
		}
		if ddw == 0 {
			return 0, iters, q, errors.New("calibrate: four-parameter fit: no axis varies in the window, so there is no frequency to fit")
		}
		if !(qw > 1e-13*ddw) {
			return 0, iters, q, errSingularBasis
		}
		// The step is Newton's on Σ log RSS_k, whose second derivative is
		// 2 Σ q_k/RSS_k (Gauss-Newton's) less 4 Σ (r_k/RSS_k)², the
		// change of the weights with ω; without the second term the
		// re-weighting would slow the convergence to a rate of about 2/n.
		// Far from the answer the term is dropped if it would take more
		// than half of the first.
		den := qw
		if c := 2 * rrw; c < 0.5*qw {
			den -= c
		}
		dw := rw / den
		// The weights are 1/RSS_k, so Σ q_k/s_k² = (n-p-1) qw (n-p-3
		// with the amplitude's change).
		dof := n - np
		sigmaW := 1 / math.Sqrt(float64(dof)*qw)
		w += dw
		for k := range a {
			a[k], b[k] = lin[k][0]-zk[k][0]*dw, lin[k][1]-zk[k][1]*dw
		}
		if !(w > 0) || math.IsNaN(w) {
			return 0, iters, q, fmt.Errorf("calibrate: four-parameter fit diverged from %g Hz", freq0)
		}
		if math.Abs(dw)*span < 1e-10 || math.Abs(dw) <= stepTolSigma*sigmaW {
			break
		}
	}
	return w / (2 * math.Pi), iters, q, nil
}
