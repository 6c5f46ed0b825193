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
//	y(t) ≈ A cos ω(t-T0) + B sin ω(t-T0) + C [+ Σ harmonics] [+ D (t-T0)],
//
// with ω = 2π Freq.
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

// SineSettings sets the model of FitSine and FitSine4. A nil *SineSettings
// fits the plain three-parameter model.
type SineSettings struct {
	// Harmonics lists extra harmonics to fit (2 for the second, ...).
	Harmonics []int
	// Drift adds a linear term for slow drift.
	Drift bool
	// MaxIter bounds the four-parameter iterations. Zero means 30.
	MaxIter int
}

// FitSine fits the three-parameter model (plus optional harmonics and
// drift) at the known frequency freq (Hz) to y sampled at times t (s),
// with the basis origin at t[0]. It panics if len(t) != len(y).
func FitSine(t, y []float64, freq float64, set *SineSettings) (SineFit, error) {
	if len(t) != len(y) {
		panic("calibrate: FitSine: t and y differ in length")
	}
	var ss SineSettings
	if set != nil {
		ss = *set
	}
	if !(freq > 0) || math.IsInf(freq, 0) {
		return SineFit{}, fmt.Errorf("calibrate: sine fit: frequency %g Hz is not positive", freq)
	}
	p := 3 + 2*len(ss.Harmonics)
	if ss.Drift {
		p++
	}
	if len(t) <= p {
		return SineFit{}, fmt.Errorf("calibrate: sine fit: %d samples for %d parameters", len(t), p)
	}
	t0 := t[0]
	X := mat.NewDense(len(t), p, nil)
	row := make([]float64, p)
	w := 2 * math.Pi * freq
	for i, ti := range t {
		basisRow(row, ti-t0, w, ss.Harmonics, ss.Drift)
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
		f.Drift = beta[p-1]
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
		panic("calibrate: FitSine4: t and y differ in length")
	}
	var ss SineSettings
	if set != nil {
		ss = *set
	}
	if ss.MaxIter == 0 {
		ss.MaxIter = 30
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
