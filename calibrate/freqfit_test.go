package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// refDesign is the design matrix of the sine-fit model at angular
// frequency w on the times tt (basis origin tt[0]), built column by column
// from math.Sincos: cos, sin, 1, the cos and sin of each harmonic, τ when
// drift is set (and τ² and τ³ too in a window of MinBackgroundCycles or
// more, as DemodSettings.Drift), and with hslope (τ-τ̄) cos and (τ-τ̄) sin
// of each harmonic (τ̄ the mean of τ; DemodSettings.Harmonics).
func refDesign(tt []float64, w float64, harmonics []int, drift, hslope bool) *mat.Dense {
	q := 3 + 2*len(harmonics)
	cubic := refCubic(tt, w, drift)
	if drift {
		q++
	}
	if cubic {
		q += 2
	}
	p := q
	if hslope {
		p += 2 * len(harmonics)
	}
	var tm float64
	for _, ti := range tt {
		tm += ti - tt[0]
	}
	tm /= float64(len(tt))
	X := mat.NewDense(len(tt), p, nil)
	for i, ti := range tt {
		tau := ti - tt[0]
		s, c := math.Sincos(w * tau)
		X.Set(i, 0, c)
		X.Set(i, 1, s)
		X.Set(i, 2, 1)
		for j, h := range harmonics {
			sh, ch := math.Sincos(float64(h) * w * tau)
			X.Set(i, 3+2*j, ch)
			X.Set(i, 4+2*j, sh)
		}
		if cubic {
			X.Set(i, q-3, tau)
			X.Set(i, q-2, tau*tau)
			X.Set(i, q-1, tau*tau*tau)
		} else if drift {
			X.Set(i, q-1, tau)
		}
		if hslope {
			for j, h := range harmonics {
				sh, ch := math.Sincos(float64(h) * w * tau)
				X.Set(i, q+2*j, (tau-tm)*ch)
				X.Set(i, q+1+2*j, (tau-tm)*sh)
			}
		}
	}
	return X
}

// refCubic says whether refDesign takes τ² and τ³ beside τ: with drift,
// in a window of MinBackgroundCycles or more of the frequency w/2π.
func refCubic(tt []float64, w float64, drift bool) bool {
	n := len(tt)
	return drift && n > 1 && w/(2*math.Pi)*(tt[n-1]-tt[0])*float64(n)/float64(n-1) >= MinBackgroundCycles-0.005
}

// refLinear is the linear (three-parameter, plus harmonics and drift) fit
// of y less its first value at angular frequency w, by gonum's QR least
// squares (mat.VecDense.SolveVec). It returns the residuals, their sum of
// squares and the frequency column d = τ(-A sin ωτ + B cos ωτ) of the
// four-parameter algorithm of IEEE Std 1057 section 4.1.3.3 at the fitted
// A, B (the fundamental's derivative ∂y/∂ω).
func refLinear(t *testing.T, tt, y []float64, w float64, harmonics []int, drift, hslope bool) (r []float64, rss float64, d []float64) {
	t.Helper()
	n := len(tt)
	X := refDesign(tt, w, harmonics, drift, hslope)
	yv := mat.NewVecDense(n, nil)
	for i := range y {
		yv.SetVec(i, y[i]-y[0])
	}
	var beta, pred mat.VecDense
	if err := beta.SolveVec(X, yv); err != nil {
		t.Fatal(err)
	}
	pred.MulVec(X, &beta)
	a, b := beta.AtVec(0), beta.AtVec(1)
	r, d = make([]float64, n), make([]float64, n)
	for i := range r {
		r[i] = yv.AtVec(i) - pred.AtVec(i)
		rss += r[i] * r[i]
		tau := tt[i] - tt[0]
		s, c := math.Sincos(w * tau)
		d[i] = tau * (-a*s + b*c)
	}
	return r, rss, d
}

// refSlopeAxis is refLinear for the slope model (DemodSettings with
// ConstantAmplitude false): the design X of refDesign with the harmonics'
// slope columns, and the fundamental's change of amplitude, linear and
// quadratic, u1 = τ(A cos ωτ + B sin ωτ) and u2 = τ²(A cos ωτ + B sin ωτ)
// as two more columns, where A, B are the fundamental's coefficients at
// the mean of τ in the fit of y less its first value on X and τ cos ωτ,
// τ sin ωτ, τ² cos ωτ, τ² sin ωτ (a linear and quadratic change of the
// fundamental's amplitude and phase; gonum QR). It returns the design
// [X u1 u2], the residual sum of squares of the fit on it (gonum QR) and
// the frequency column d = τ(-A sin ωτ + B cos ωτ) at those A, B: the
// phase's change, which the frequency takes, while u1 and u2 take the
// amplitude's.
func refSlopeAxis(t *testing.T, tt, y []float64, w float64, harmonics []int, drift bool) (xu *mat.Dense, rss float64, d []float64) {
	t.Helper()
	n := len(tt)
	X := refDesign(tt, w, harmonics, drift, true)
	_, p := X.Dims()
	yv := mat.NewVecDense(n, nil)
	var tm float64
	for i := range y {
		yv.SetVec(i, y[i]-y[0])
		tm += tt[i] - tt[0]
	}
	tm /= float64(n)
	full := mat.NewDense(n, p+4, nil)
	full.Slice(0, n, 0, p).(*mat.Dense).Copy(X)
	for i, ti := range tt {
		tau := ti - tt[0]
		s, c := math.Sincos(w * tau)
		full.Set(i, p, tau*c)
		full.Set(i, p+1, tau*s)
		full.Set(i, p+2, tau*tau*c)
		full.Set(i, p+3, tau*tau*s)
	}
	var beta mat.VecDense
	if err := beta.SolveVec(full, yv); err != nil {
		t.Fatal(err)
	}
	a := beta.AtVec(0) + beta.AtVec(p)*tm + beta.AtVec(p+2)*tm*tm
	b := beta.AtVec(1) + beta.AtVec(p+1)*tm + beta.AtVec(p+3)*tm*tm
	xu = mat.NewDense(n, p+2, nil)
	xu.Slice(0, n, 0, p).(*mat.Dense).Copy(X)
	d = make([]float64, n)
	for i, ti := range tt {
		tau := ti - tt[0]
		s, c := math.Sincos(w * tau)
		xu.Set(i, p, tau*(a*c+b*s))
		xu.Set(i, p+1, tau*tau*(a*c+b*s))
		d[i] = tau * (-a*s + b*c)
	}
	var gamma, pred mat.VecDense
	if err := gamma.SolveVec(xu, yv); err != nil {
		t.Fatal(err)
	}
	pred.MulVec(xu, &gamma)
	for i := 0; i < n; i++ {
		r := yv.AtVec(i) - pred.AtVec(i)
		rss += r * r
	}
	return xu, rss, d
}

// refJointFit is a dense reference for the joint four-parameter fit of
// several axes sharing one frequency, after the four-parameter algorithm
// of IEEE Std 1057 section 4.1.3.3 extended to weighted axes: each
// Gauss-Newton step stacks the axes into one least-squares problem in all
// their linear parameters and the one frequency step, each axis's rows
// divided by the root of its residual sum of squares at the current
// frequency, and solves it by gonum's QR (mat.QR on the whole stacked
// design, 3n rows), until the step moves the phase across the window by
// less than 1e-13 rad. An axis with no variation at all is left out. With
// hslope (the slope model) each axis's linear parameters are those of
// refSlopeAxis, the fundamental's change of amplitude among them. It
// returns the frequency, Hz, and its one-sigma, Hz, from the last diagonal
// entry of R (1/R² is the frequency's variance with rows weighted by
// 1/s_k, s_k² = RSS_k/(n-p-1), p the linear parameters of an axis).
func refJointFit(t *testing.T, tt []float64, ys [][]float64, freq0 float64, harmonics []int, drift, hslope bool) (freq, sigma float64) {
	t.Helper()
	n := len(tt)
	p := 3 + 2*len(harmonics)
	if drift {
		p++
	}
	if refCubic(tt, 2*math.Pi*freq0, drift) {
		p += 2
	}
	if hslope {
		p += 2*len(harmonics) + 2
	}
	// axis returns an axis's design at w (its linear parameters), the
	// residual sum of squares of its fit and the frequency column.
	axis := func(y []float64, w float64) (*mat.Dense, float64, []float64) {
		if hslope {
			return refSlopeAxis(t, tt, y, w, harmonics, drift)
		}
		_, rss, d := refLinear(t, tt, y, w, harmonics, drift, false)
		return refDesign(tt, w, harmonics, drift, false), rss, d
	}
	var axes [][]float64
	for _, y := range ys {
		for _, v := range y {
			if v != y[0] {
				axes = append(axes, y)
				break
			}
		}
	}
	m := len(axes)
	w := 2 * math.Pi * freq0
	span := tt[n-1] - tt[0]
	for it := 0; it < 100; it++ {
		J := mat.NewDense(m*n, m*p+1, nil)
		rhs := mat.NewVecDense(m*n, nil)
		for k, y := range axes {
			X, rss, d := axis(y, w)
			s := 1 / math.Sqrt(rss)
			for i := 0; i < n; i++ {
				for j := 0; j < p; j++ {
					J.Set(k*n+i, k*p+j, s*X.At(i, j))
				}
				J.Set(k*n+i, m*p, s*d[i])
				rhs.SetVec(k*n+i, s*(y[i]-y[0]))
			}
		}
		var qr mat.QR
		qr.Factorize(J)
		var theta mat.VecDense
		if err := qr.SolveVecTo(&theta, false, rhs); err != nil {
			t.Fatal(err)
		}
		dw := theta.AtVec(m * p)
		w += dw
		if math.Abs(dw)*span < 1e-13 {
			break
		}
	}
	// The covariance at the converged frequency, rows weighted by 1/s_k.
	J := mat.NewDense(m*n, m*p+1, nil)
	for k, y := range axes {
		X, rss, d := axis(y, w)
		s := 1 / math.Sqrt(rss/float64(n-p-1))
		for i := 0; i < n; i++ {
			for j := 0; j < p; j++ {
				J.Set(k*n+i, k*p+j, s*X.At(i, j))
			}
			J.Set(k*n+i, m*p, s*d[i])
		}
	}
	var qr mat.QR
	qr.Factorize(J)
	var R mat.Dense
	qr.RTo(&R)
	return w / (2 * math.Pi), 1 / math.Abs(R.At(m*p, m*p)) / (2 * math.Pi)
}

// refProfileFreq maximises the profile likelihood of Gaussian white noise
// with an unknown variance per axis, -(n/2) Σ_k log RSS_k(ω), RSS_k the
// linear fit's residual sum of squares at ω (refLinear, gonum QR). Its
// derivative in ω is -(n/2) Σ_k RSS_k'/RSS_k with RSS_k' = -2 dᵀr (the
// envelope theorem: β is optimal at each ω; without harmonics d is the
// exact derivative of the model). The maximum is bracketed on a grid of
// phases across the window, (ω - ω0)·span in [-2, 2] rad by 0.05, as the
// sign change of the derivative with the largest likelihood, and the
// derivative's zero is found by bisection to 1e-13 rad.
func refProfileFreq(t *testing.T, tt []float64, ys [][]float64, freq0 float64, drift bool) float64 {
	t.Helper()
	n := len(tt)
	span := tt[n-1] - tt[0]
	w0 := 2 * math.Pi * freq0
	// f is Σ log RSS_k (to minimise) and g its derivative in x.
	eval := func(x float64) (f, g float64) {
		w := w0 + x/span
		for _, y := range ys {
			r, rss, d := refLinear(t, tt, y, w, nil, drift, false)
			var dr float64
			for i := range r {
				dr += d[i] * r[i]
			}
			f += math.Log(rss)
			g += -2 * dr / rss / span
		}
		return f, g
	}
	lo, hi, best := 0.0, 0.0, math.Inf(1)
	_, gPrev := eval(-2)
	for x := -1.95; x <= 2; x += 0.05 {
		f, g := eval(x)
		if gPrev < 0 && g >= 0 && f < best {
			lo, hi, best = x-0.05, x, f
		}
		gPrev = g
	}
	if math.IsInf(best, 1) {
		t.Fatal("profile likelihood: no maximum within 2 rad of the start")
	}
	for hi-lo > 1e-13 {
		mid := 0.5 * (lo + hi)
		if _, g := eval(mid); g < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (w0 + 0.5*(lo+hi)/span) / (2 * math.Pi)
}

func TestDemodulateEstimateFreqMatchesReference(t *testing.T) {
	// The fast per-window joint fit must land where the dense reference
	// does (refJointFit: the IEEE Std 1057 four-parameter algorithm on the
	// three axes stacked and weighted, gonum QR; in the slope model with
	// the fundamental's linear and quadratic change of amplitude among each
	// axis's linear parameters, refSlopeAxis), with the same sigma, and without
	// harmonics or slope at the maximum of the profile likelihood
	// (refProfileFreq, bisection on its derivative; in the slope model
	// the amplitude's column moves with ω, so the frequency is not that
	// maximum's); the window's phasors must be the three-parameter fits
	// (FitSine, QR) at that frequency.
	const (
		// On noise-free data all converge to the tone; what is left is
		// rounding and the sigma-tied stop, far inside the brief's 1e-9.
		tolFreq  = 1e-9 // relative
		tolAmp   = 1e-9 // relative
		tolSigma = 1e-6 // relative; the sigma's q comes from the last step
	)
	for _, tc := range []struct {
		name  string
		t0    float64
		f     float64
		noise float64
		set   DemodSettings
		// exact marks logs whose tone the model fits exactly: times from
		// zero (no rounding of Unix times) and the log's drift modelled.
		exact bool
		// jitter, s, is added to each time stamp (uniform), taking the
		// samples off the grid where the basis needs math.Sincos.
		jitter float64
		// extra is further noise per axis (nT, on top of noise), so that
		// the axes' weights differ.
		extra [3]float64
		// dead holds axis 2 at a constant, a channel that does not vary.
		dead bool
	}{
		{"unix times, 0.2 Hz off", 1.7e9, 50.2, 0, DemodSettings{Freq: 50, Window: 0.1}, false, 0, [3]float64{}, false},
		{"from zero, 1.3 Hz off, overlap", 0, 51.3, 0, DemodSettings{Freq: 50, Window: 0.2, Step: 0.05}, false, 0, [3]float64{}, false},
		{"harmonics and drift", 1.7e9, 49.9, 0, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{3}, Drift: true}, false, 0, [3]float64{}, false},
		{"exact tone, drift", 0, 50.37, 0, DemodSettings{Freq: 50, Window: 0.1, Drift: true}, true, 0, [3]float64{}, false},
		{"noisy", 1.7e9, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1}, false, 0, [3]float64{}, false},
		{"noisy, harmonics and drift", 0, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{2, 3}, Drift: true}, false, 0, [3]float64{}, false},
		{"unequal noise", 1.7e9, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1}, false, 0, [3]float64{0, 20, 3}, false},
		{"unequal noise, drift, 0.8 Hz off", 0, 49.2, 0.5, DemodSettings{Freq: 50, Window: 0.1, Drift: true}, false, 0, [3]float64{8, 0, 40}, false},
		{"dead axis", 1.7e9, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1}, false, 0, [3]float64{}, true},
		{"jittered clock", 1000, 50.2, 0.1, DemodSettings{Freq: 50, Window: 0.1}, false, 1e-5, [3]float64{}, false},
		{"jittered clock, harmonics", 1000, 50.2, 0.1, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{3}}, false, 1e-5, [3]float64{}, false},
	} {
		for _, constant := range []bool{true, false} {
			name := tc.name
			if !constant {
				name += ", slope"
			}
			t.Run(name, func(t *testing.T) {
				rng := rand.New(rand.NewPCG(31, 32))
				c := acLog(rng, 2000, 2000, tc.t0, tc.f, testPhasors, tc.noise)
				for i := range c.Time {
					c.Time[i] += tc.jitter * rng.Float64()
					for k, e := range tc.extra {
						c.B[k][i] += e * rng.NormFloat64()
					}
					if tc.dead {
						c.B[2][i] = -47500
					}
				}
				set := tc.set
				set.EstimateFreq = true
				set.Band = 5
				set.ConstantAmplitude = constant
				res, err := DemodulateColumns(c, &set)
				if err != nil {
					t.Fatal(err)
				}
				n := int(math.Round(set.Window * 2000))
				hop := int(math.Round(stepOf(set) * 2000))
				if len(res.Windows) < 5 {
					t.Fatalf("%d windows", len(res.Windows))
				}
				for i, w := range res.Windows[:5] {
					lo := i * hop
					tt := c.Time[lo : lo+n]
					ys := [][]float64{c.B[0][lo : lo+n], c.B[1][lo : lo+n], c.B[2][lo : lo+n]}
					want, sigma := refJointFit(t, tt, ys, set.Freq, set.Harmonics, set.Drift, !constant)
					if d := math.Abs(w.Freq-want) / want; d > tolFreq {
						t.Errorf("window %d: %.12f Hz, reference %.12f Hz (relative %.2g)", i, w.Freq, want, d)
					}
					if tc.noise > 0 {
						// The reference's noise per axis is the four-parameter
						// residual's; with the slope columns it is the slope
						// fit's, on these steady tones the same to within the
						// chance spread of two parameters' share of the sum
						// of squares (about 2/n of it).
						tol := tolSigma
						if !constant {
							tol = 0.03
						}
						if d := math.Abs(w.FreqSigma-sigma) / sigma; d > tol {
							t.Errorf("window %d: sigma %.9g Hz, reference %.9g Hz (relative %.2g)", i, w.FreqSigma, sigma, d)
						}
						if len(set.Harmonics) == 0 && constant {
							prof := refProfileFreq(t, tt, ys[:map[bool]int{false: 3, true: 2}[tc.dead]], set.Freq, set.Drift)
							if d := math.Abs(w.Freq-prof) / prof; d > tolFreq {
								t.Errorf("window %d: %.12f Hz, profile likelihood's maximum %.12f Hz (relative %.2g)", i, w.Freq, prof, d)
							}
						}
					}
					if tc.exact {
						if d := math.Abs(w.Freq-tc.f) / tc.f; d > tolFreq {
							t.Errorf("window %d: %.12f Hz, the tone is %g Hz", i, w.Freq, tc.f)
						}
					}
					for k := 0; k < 3; k++ {
						if tc.dead && k == 2 {
							if w.B[k] != 0 {
								t.Errorf("window %d: dead axis has |B| = %g", i, cmplx.Abs(w.B[k]))
							}
							continue
						}
						ref, err := FitSine(tt, c.B[k][lo:lo+n], want, &SineSettings{Harmonics: set.Harmonics, Drift: set.Drift, Background: DriftColumns(&set, n, 1.0/2000) == 3, Slope: !constant})
						if err != nil {
							t.Fatal(err)
						}
						got, wantAmp := math.Sqrt2*cmplx.Abs(w.B[k]), ref.Amplitude()
						if d := math.Abs(got-wantAmp) / wantAmp; d > tolAmp {
							t.Errorf("window %d axis %d: amplitude %.12f, reference %.12f (relative %.2g)", i, k, got, wantAmp, d)
						}
					}
				}
			})
		}
	}
}

func TestDemodulateFreqNotGiven(t *testing.T) {
	// With no frequency given, the estimate combines the four-parameter
	// fits of every window of the log (estimateFreq): on a steady
	// 49.93 Hz tone (synthesised) it must lie within 3 of its sigmas of
	// the tone, and the sigma must be the windows' combined one, the
	// inverse-variance mean's sum(1/FreqSigma²)^(-1/2) over the windows
	// fitted with EstimateFreq, not less (by 10%, for rounding) and not
	// widened by half as much again (the windows' reduced chi-square
	// widens it by its scatter about 1, some sqrt(2/49) for 50 windows).
	c := acLog(rand.New(rand.NewPCG(33, 34)), 2000, 20000, 1.7e9, 49.93, testPhasors, 1)
	res, err := DemodulateColumns(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !(res.FreqSigma > 0) || math.Abs(res.Freq-49.93) > 3*res.FreqSigma {
		t.Errorf("estimated %.7f ± %.7f Hz, the tone is 49.93 Hz", res.Freq, res.FreqSigma)
	}
	ws, err := DemodulateColumns(c, &DemodSettings{Freq: res.Freq, EstimateFreq: true, Drift: true})
	if err != nil {
		t.Fatal(err)
	}
	var info float64
	for _, w := range ws.Windows {
		info += 1 / (w.FreqSigma * w.FreqSigma)
	}
	if want := 1 / math.Sqrt(info); !(res.FreqSigma >= 0.9*want && res.FreqSigma <= 1.5*want) {
		t.Errorf("sigma %.3g Hz, the windows' combined %.3g Hz", res.FreqSigma, want)
	} else {
		t.Logf("%.7f ± %.3g Hz, the windows' combined sigma %.3g Hz", res.Freq, res.FreqSigma, want)
	}
}

func TestDemodulateFreqSigmaMonteCarlo(t *testing.T) {
	// The reported FreqSigma must match the scatter of the estimates over
	// many independent noisy windows (within 15%), and both must match the
	// Cramér-Rao bound of the joint problem. For one sinusoid in white
	// noise the bound is var(ω) = 12 / (η Δ² N (N² - 1)) (Rife and
	// Boorstyn, IEEE Trans. Inf. Theory 20(5), 1974; from memory), with
	// η = A²/2σ² the signal-to-noise ratio of a real tone of peak amplitude
	// A and Δ the sample interval; the axes' noises are independent, so
	// their Fisher informations for the shared frequency add and the bound
	// is 1/Σ_k η_k Δ² N (N² - 1)/12 (the information of independent
	// observations is additive, a textbook property; the axes' amplitudes
	// and phases, like the unknown noise variances, are asymptotically
	// orthogonal to ω in the Fisher matrix).
	if testing.Short() {
		t.Skip("Monte Carlo of 1000 windows")
	}
	const (
		fs, n, windows = 2000.0, 200, 1000
		noise          = 3.0
		f              = 50.2
		// 1000 windows give the scatter to 1/√2000 ≈ 2.2%; the brief's 15%
		// leaves room for the bias of the linearised sigma at this SNR.
		tolScatter = 0.15
		tolCRB     = 0.10
	)
	for _, tc := range []struct {
		name string
		set  DemodSettings
	}{
		{"slope basis (default)", DemodSettings{Freq: 50, Window: 0.1}},
		{"three-parameter basis", DemodSettings{Freq: 50, Window: 0.1, ConstantAmplitude: true}},
		{"with drift and a harmonic", DemodSettings{Freq: 50, Window: 0.1, Drift: true, Harmonics: []int{3}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := acLog(rand.New(rand.NewPCG(41, 42)), fs, n*windows, 1.7e9, f, testPhasors, noise)
			set := tc.set
			set.EstimateFreq = true
			set.Band = 5
			reported, scatter, mean := freqStats(t, c, set, windows)
			if math.Abs(reported-scatter) > tolScatter*scatter {
				t.Errorf("reported sigma %.4g Hz, scatter of the estimates %.4g Hz", reported, scatter)
			}
			crb := jointCRB(testPhasors, [3]float64{noise, noise, noise}, fs, n)
			t.Logf("reported %.4g Hz, scatter %.4g Hz, Cramér-Rao %.4g Hz", reported, scatter, crb)
			if math.Abs(reported-crb) > tolCRB*crb {
				t.Errorf("reported sigma %.4g Hz, Cramér-Rao bound %.4g Hz", reported, crb)
			}
			if math.Abs(mean-f) > 4*scatter/math.Sqrt(windows) {
				t.Errorf("mean estimate %.6f Hz, want %g (scatter %.3g)", mean, f, scatter)
			}
		})
	}
}

// jointCRB is the Cramér-Rao bound, Hz, of a frequency shared by three
// axes carrying complex RMS phasors ph in independent white noises of
// standard deviations noise, n samples at fs (see
// TestDemodulateFreqSigmaMonteCarlo).
func jointCRB(ph [3]complex128, noise [3]float64, fs float64, n int) float64 {
	var info float64
	for k := range ph {
		amp := math.Sqrt2 * cmplx.Abs(ph[k])
		eta := amp * amp / (2 * noise[k] * noise[k])
		info += eta * float64(n) * (float64(n)*float64(n) - 1) / 12
	}
	return math.Sqrt(1/info) * fs / (2 * math.Pi)
}

// freqStats demodulates c with set and returns the root-mean-square
// reported FreqSigma, the scatter of the estimated frequencies and their
// mean, Hz.
func freqStats(t *testing.T, c *Columns, set DemodSettings, windows int) (reported, scatter, mean float64) {
	t.Helper()
	res, err := DemodulateColumns(c, &set)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Windows) != windows {
		t.Fatalf("%d windows, want %d", len(res.Windows), windows)
	}
	var ss, sig2 float64
	for _, w := range res.Windows {
		mean += w.Freq
		sig2 += w.FreqSigma * w.FreqSigma
	}
	mean /= float64(windows)
	for _, w := range res.Windows {
		ss += (w.Freq - mean) * (w.Freq - mean)
	}
	return math.Sqrt(sig2 / float64(windows)), math.Sqrt(ss / float64(windows-1)), mean
}

func TestDemodulateJointFreqSigma(t *testing.T) {
	// The joint fit against the fit of the strongest axis alone (the same
	// log with the other two axes held constant, which the joint fit
	// leaves out), over 1000 noisy windows. With comparable amplitudes on
	// two axes the joint sigma must shrink as the Cramér-Rao bound does,
	// sqrt(η_0/Σ η_k) (TestDemodulateFreqSigmaMonteCarlo), both as
	// reported and as the scatter of the estimates; with the signal on one
	// axis and only noise, however loud, on the others it must neither
	// shrink nor grow.
	if testing.Short() {
		t.Skip("Monte Carlo of 2 × 1000 windows per case")
	}
	const (
		fs, n, windows = 2000.0, 200, 1000
		f              = 50.2
		// The reported sigmas are means over 1000 windows of nearly the
		// same linearised value: 2% covers their spread. The scatters are
		// each known to 1/√2000 ≈ 2.2%, and the two fits' errors are
		// correlated through axis 0: 7% on their ratio.
		tolReported = 0.02
		tolScatter  = 0.07
	)
	for _, tc := range []struct {
		name  string
		ph    [3]complex128
		noise [3]float64
	}{
		// |B| = 100 and 90.1 nT RMS: a ratio of sqrt(10000/18135) = 0.743.
		{"comparable amplitudes on two axes", [3]complex128{complex(80, -60), complex(30, 85), complex(3, 1)}, [3]float64{3, 3, 3}},
		{"test field", testPhasors, [3]float64{3, 3, 3}},
		{"signal on one axis, noise on two", [3]complex128{complex(80, -60), 0, 0}, [3]float64{3, 3, 30}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(51, 52))
			c := acLog(rng, fs, n*windows, 1.7e9, f, tc.ph, 0)
			for k := range c.B {
				for i := range c.B[k] {
					c.B[k][i] += tc.noise[k] * rng.NormFloat64()
				}
			}
			set := DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true, Band: 5}
			jointRep, jointSc, _ := freqStats(t, c, set, windows)
			for _, k := range []int{1, 2} {
				for i := range c.B[k] {
					c.B[k][i] = 0
				}
			}
			oneRep, oneSc, _ := freqStats(t, c, set, windows)
			var ph0 [3]complex128
			ph0[0] = tc.ph[0]
			want := jointCRB(tc.ph, tc.noise, fs, n) / jointCRB(ph0, tc.noise, fs, n)
			t.Logf("joint: reported %.4g Hz, scatter %.4g Hz; axis 0 alone: reported %.4g Hz, scatter %.4g Hz; ratios %.4f and %.4f, Cramér-Rao %.4f",
				jointRep, jointSc, oneRep, oneSc, jointRep/oneRep, jointSc/oneSc, want)
			if r := jointRep / oneRep; math.Abs(r-want) > tolReported*want {
				t.Errorf("reported sigma: joint/one axis = %.4f, Cramér-Rao ratio %.4f", r, want)
			}
			if r := jointSc / oneSc; math.Abs(r-want) > tolScatter*want {
				t.Errorf("scatter: joint/one axis = %.4f, Cramér-Rao ratio %.4f", r, want)
			}
		})
	}
}

func TestDemodulateEstimateFreqBadValue(t *testing.T) {
	// A NaN in the log is reported by row and column on the estimating
	// path too, not as a failed fit.
	c := acLog(rand.New(rand.NewPCG(43, 44)), 2000, 1000, 0, 50, testPhasors, 0.1)
	c.B[2][456] = math.NaN()
	_, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true})
	if err == nil || !strings.Contains(err.Error(), "row 456: column bz") {
		t.Errorf("err = %v, want one naming row 456 column bz", err)
	}
}

func TestDemodulateEstimateFreqNoSignal(t *testing.T) {
	// A window where no axis varies has no frequency: an error naming the
	// window, not a NaN frequency.
	c := acLog(rand.New(rand.NewPCG(47, 48)), 2000, 1000, 0, 50, [3]complex128{}, 0)
	for k := range c.B {
		for i := range c.B[k] {
			c.B[k][i] = 100
		}
	}
	_, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true})
	if err == nil || !strings.Contains(err.Error(), "rows 0-199") || !strings.Contains(err.Error(), "no axis varies") {
		t.Errorf("err = %v, want one naming rows 0-199 and saying no axis varies", err)
	}
}

func TestSincosGridDrift(t *testing.T) {
	// The rotation tables are re-seeded every reseedEvery samples, so the
	// rounding drift must stay at a few dozen units in the last place
	// however long the window: checked over 2^20 samples at 2048 Hz (8.5
	// minutes, far longer than any demodulation window) against phases
	// computed exactly in cycles.
	const (
		n = 1 << 20
		// Up to reseedEvery-1 rotations of a few ulp each.
		tolDrift = 4 * reseedEvery * 0x1p-52
	)
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = float64(i) / 2048
	}
	cs, sn := make([]float64, n), make([]float64, n)
	for _, tc := range []struct {
		name string
		f    float64 // Hz, a multiple of 1/256 Hz
	}{
		// The phase stays within 201 rad, where float64 holds the argument
		// to 2e-14: an unseeded rotation would drift to ~1e-10 here.
		{"slow tone, 1/16 Hz", 1.0 / 16},
		{"50 Hz", 50},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w := 2 * math.Pi * tc.f
			sincosSeries(cs, sn, tt, w)
			// f/2048 cycles per sample = (256 f)/(2048·256): an integer
			// numerator over 2^19.
			num := int64(math.Round(tc.f * 256))
			var worstHead, worstTail float64
			for k := range tt {
				frac := float64((num*int64(k))%(1<<19)) / (1 << 19)
				s, c := math.Sincos(2 * math.Pi * frac)
				// float64 holds w τ only to half an ulp, as it does in a
				// direct math.Sincos(w τ); that part of the error is not
				// drift.
				tol := tolDrift + 2*0x1p-52*w*tt[k]
				e := math.Max(math.Abs(cs[k]-c), math.Abs(sn[k]-s))
				if e > tol {
					t.Fatalf("sample %d (τ = %g s): error %.3g, want below %.3g", k, tt[k], e, tol)
				}
				if k < n/16 {
					worstHead = math.Max(worstHead, e)
				} else if k >= n-n/16 {
					worstTail = math.Max(worstTail, e)
				}
			}
			t.Logf("largest error %.3g in the first 16th, %.3g in the last", worstHead, worstTail)
		})
	}

	// Absolute Unix times rounded in float64 sit off the grid by up to half
	// an ulp of 1.7e9 s (1.2e-7 s): the series correction must reproduce
	// math.Sincos(w τ) on the rounded times to the rounding of the
	// argument w τ itself (eps × 2000 rad over a 6.4 s window at 50 Hz).
	const m = 12800
	w := 2 * math.Pi * 50
	tt = tt[:m]
	for i := range tt {
		tt[i] = 1.7e9 + float64(i)/2000
	}
	cs, sn = cs[:m], sn[:m]
	sincosSeries(cs, sn, tt, w)
	offGrid := false
	var g windowTimes
	g.set(tt)
	h := g.h
	for k := range tt {
		tau := tt[k] - tt[0]
		s, c := math.Sincos(w * tau)
		if e := math.Max(math.Abs(cs[k]-c), math.Abs(sn[k]-s)); e > 1e-12 {
			t.Fatalf("sample %d: (%.17g, %.17g), math.Sincos gives (%.17g, %.17g)", k, cs[k], sn[k], c, s)
		}
		if tau != float64(k)*h {
			offGrid = true
		}
	}
	if !offGrid {
		t.Fatal("the rounded Unix times all sat on the grid: the correction went untested")
	}

	// A jittered clock (2e-4 s, 0.06 rad at 50 Hz) takes math.Sincos.
	rng := rand.New(rand.NewPCG(45, 46))
	for i := range tt {
		tt[i] = float64(i)/2000 + 2e-4*rng.Float64()
	}
	sincosSeries(cs, sn, tt, w)
	for k := range tt {
		s, c := math.Sincos(w * (tt[k] - tt[0]))
		if e := math.Max(math.Abs(cs[k]-c), math.Abs(sn[k]-s)); e > 1e-12 {
			t.Fatalf("jittered sample %d: off by %.3g", k, e)
		}
	}
}

func BenchmarkSincosGrid(b *testing.B) {
	// One window of 200 samples at 2 kHz on absolute Unix times, 50 Hz.
	const n = 200
	t := make([]float64, n)
	for i := range t {
		t[i] = 1.7e9 + float64(i)/2000
	}
	cs, sn := make([]float64, n), make([]float64, n)
	w := 2 * math.Pi * 50.2
	var g windowTimes
	g.set(t)
	for b.Loop() {
		sincosGrid(cs, sn, &g, w)
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N)/n*1e9, "ns/sample")
}

func BenchmarkDemodulateFreqUnknown(b *testing.B) {
	// A minute of 2 kHz log with no frequency given: the spectral peak of
	// 65536 samples refined by the four-parameter fit, then known-frequency
	// windows.
	const rows = 120000
	c := acLog(rand.New(rand.NewPCG(1, 1)), 2000, rows, 1.7e9, 50.2, testPhasors, 1)
	set := &DemodSettings{Window: 0.1}
	for b.Loop() {
		if _, err := DemodulateColumns(c, set); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
}
