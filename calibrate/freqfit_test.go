package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// refFitSine4 is a straightforward four-parameter least-squares sine fit
// after IEEE Std 1057 section 4.1.3.3 (the four-parameter algorithm):
// start from the three-parameter fit at freq0, then repeatedly solve the
// linearised problem in (A, B, C, [harmonics], [drift], Δω) with the design
// matrix built column by column from math.Sincos and solved by gonum's QR
// least squares (mat.Dense.Solve), until the step moves the phase across
// the window by less than 1e-13 rad. It returns the frequency, Hz.
func refFitSine4(t *testing.T, tt, y []float64, freq0 float64, harmonics []int, drift bool) float64 {
	t.Helper()
	n := len(tt)
	p := 3 + 2*len(harmonics)
	if drift {
		p++
	}
	// Work on y less its first value, as the demodulator does; the
	// constant absorbs it.
	yv := mat.NewVecDense(n, nil)
	for i := range y {
		yv.SetVec(i, y[i]-y[0])
	}
	design := func(w, a, b float64, withFreq bool) *mat.Dense {
		m := p
		if withFreq {
			m++
		}
		X := mat.NewDense(n, m, nil)
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
			if drift {
				X.Set(i, p-1, tau)
			}
			if withFreq {
				X.Set(i, p, tau*(-a*s+b*c))
			}
		}
		return X
	}
	w := 2 * math.Pi * freq0
	var beta mat.VecDense
	if err := beta.SolveVec(design(w, 0, 0, false), yv); err != nil {
		t.Fatal(err)
	}
	a, b := beta.AtVec(0), beta.AtVec(1)
	span := tt[n-1] - tt[0]
	for it := 0; it < 100; it++ {
		var theta mat.VecDense
		if err := theta.SolveVec(design(w, a, b, true), yv); err != nil {
			t.Fatal(err)
		}
		dw := theta.AtVec(p)
		w += dw
		a, b = theta.AtVec(0), theta.AtVec(1)
		if math.Abs(dw)*span < 1e-13 {
			break
		}
	}
	return w / (2 * math.Pi)
}

func TestDemodulateEstimateFreqMatchesReference(t *testing.T) {
	// The fast per-window four-parameter fit must land where the plain
	// IEEE Std 1057 four-parameter algorithm (refFitSine4, QR on the full
	// design matrix) does, on the strongest axis, and the window's phasors
	// must be the three-parameter fits (FitSine, QR) at that frequency.
	const (
		// On noise-free data both converge to the tone; what is left is
		// rounding, far inside the brief's 1e-9.
		tolFreq = 1e-9 // relative
		tolAmp  = 1e-9 // relative
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
	}{
		{"unix times, 0.2 Hz off", 1.7e9, 50.2, 0, DemodSettings{Freq: 50, Window: 0.1}, false, 0},
		{"from zero, 1.3 Hz off, overlap", 0, 51.3, 0, DemodSettings{Freq: 50, Window: 0.2, Step: 0.05}, false, 0},
		{"harmonics and drift", 1.7e9, 49.9, 0, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{3}, Drift: true}, false, 0},
		{"exact tone, drift", 0, 50.37, 0, DemodSettings{Freq: 50, Window: 0.1, Drift: true}, true, 0},
		{"noisy", 1.7e9, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1}, false, 0},
		{"noisy, harmonics and drift", 0, 50.2, 1, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{2, 3}, Drift: true}, false, 0},
		{"jittered clock", 1000, 50.2, 0.1, DemodSettings{Freq: 50, Window: 0.1}, false, 1e-5},
		{"jittered clock, harmonics", 1000, 50.2, 0.1, DemodSettings{Freq: 50, Window: 0.1, Harmonics: []int{3}}, false, 1e-5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(31, 32))
			c := acLog(rng, 2000, 2000, tc.t0, tc.f, testPhasors, tc.noise)
			for i := range c.Time {
				c.Time[i] += tc.jitter * rng.Float64()
			}
			set := tc.set
			set.EstimateFreq = true
			set.Band = 5
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
				// testPhasors puts the strongest tone on axis 0.
				want := refFitSine4(t, tt, c.B[0][lo:lo+n], set.Freq, set.Harmonics, set.Drift)
				if d := math.Abs(w.Freq-want) / want; d > tolFreq {
					t.Errorf("window %d: %.12f Hz, reference %.12f Hz (relative %.2g)", i, w.Freq, want, d)
				}
				if tc.exact {
					if d := math.Abs(w.Freq-tc.f) / tc.f; d > tolFreq {
						t.Errorf("window %d: %.12f Hz, the tone is %g Hz", i, w.Freq, tc.f)
					}
				}
				for k := 0; k < 3; k++ {
					ref, err := FitSine(tt, c.B[k][lo:lo+n], want, &SineSettings{Harmonics: set.Harmonics, Drift: set.Drift})
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

func TestDemodulateFreqNotGivenIsFourParameterFit(t *testing.T) {
	// With no frequency given, the spectral estimate is refined by the
	// same fast fit on the first 2^k samples (16384 of 20000) of the
	// strongest axis: the result must be the stationary point of the plain
	// IEEE Std 1057 four-parameter fit there, so refFitSine4 started from
	// it stays put.
	const tol = 1e-9 // relative; rounding and the sigma-tied stop
	c := acLog(rand.New(rand.NewPCG(33, 34)), 2000, 20000, 1.7e9, 49.93, testPhasors, 1)
	res, err := DemodulateColumns(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := refFitSine4(t, c.Time[:16384], c.B[0][:16384], res.Freq, nil, false)
	if d := math.Abs(res.Freq-want) / want; d > tol {
		t.Errorf("estimated %.12f Hz, the four-parameter fit moves it to %.12f Hz (relative %.2g)", res.Freq, want, d)
	}
}

func TestDemodulateFreqSigmaMonteCarlo(t *testing.T) {
	// The reported FreqSigma must match the scatter of the estimates over
	// many independent noisy windows (within 15%), and both must match the
	// Cramér-Rao bound for the frequency of a sinusoid in white noise,
	// var(ω) = 12 / (η Δ² N (N² - 1)) (Rife and Boorstyn, IEEE Trans. Inf.
	// Theory 20(5), 1974; from memory), with η = A²/2σ² the signal-to-noise
	// ratio of a real tone of peak amplitude A and Δ the sample interval.
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
		{"three-parameter basis", DemodSettings{Freq: 50, Window: 0.1}},
		{"with drift and a harmonic", DemodSettings{Freq: 50, Window: 0.1, Drift: true, Harmonics: []int{3}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := acLog(rand.New(rand.NewPCG(41, 42)), fs, n*windows, 1.7e9, f, testPhasors, noise)
			set := tc.set
			set.EstimateFreq = true
			set.Band = 5
			res, err := DemodulateColumns(c, &set)
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Windows) != windows {
				t.Fatalf("%d windows, want %d", len(res.Windows), windows)
			}
			var mean, ss, sig2 float64
			for _, w := range res.Windows {
				mean += w.Freq
				sig2 += w.FreqSigma * w.FreqSigma
			}
			mean /= windows
			for _, w := range res.Windows {
				ss += (w.Freq - mean) * (w.Freq - mean)
			}
			scatter := math.Sqrt(ss / (windows - 1))
			reported := math.Sqrt(sig2 / windows)
			if math.Abs(reported-scatter) > tolScatter*scatter {
				t.Errorf("reported sigma %.4g Hz, scatter of the estimates %.4g Hz", reported, scatter)
			}
			amp := math.Sqrt2 * cmplx.Abs(testPhasors[0])
			eta := amp * amp / (2 * noise * noise)
			crb := math.Sqrt(12/(eta*float64(n)*(n*n-1))) * fs / (2 * math.Pi)
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
