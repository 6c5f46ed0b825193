package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// fenwickProcessor returns a processor for the harrow-fen site's
// fenwick-lane asset (50 Hz go/return pair, 2 nT noise) with the fast
// path set up.
// solvingProcessor is a processor of asset a with the inverse estimator of
// its conductors, named names in its estimates.
func solvingProcessor(t testing.TB, a *AssetConfig, names []string) *processor {
	t.Helper()
	p, err := newProcessor(a, "test")
	if err != nil {
		t.Fatal(err)
	}
	est, err := NewInverseEstimator(a.Mode, a.Conductors)
	if err != nil {
		t.Fatal(err)
	}
	p.est, p.names = est, names
	return p
}

func fenwickProcessor(t testing.TB) (*AssetConfig, *processor) {
	t.Helper()
	a := harrowFen(t).Asset("fenwick-lane")
	p := solvingProcessor(t, a, []string{"go", "return"})
	return a, p
}

// withRate returns a copy of w whose sensors in idx keep every k-th
// sample only (a logger at 1/k of the rate).
func withRate(w *window, k int, idx ...int) *window {
	out := *w
	out.Sensors = append([]series(nil), w.Sensors...)
	for _, i := range idx {
		var s series
		src := w.Sensors[i]
		for j := 0; j < src.len(); j += k {
			s.T, s.Bx, s.By, s.Bz = append(s.T, src.T[j]), append(s.Bx, src.Bx[j]), append(s.By, src.By[j]), append(s.Bz, src.Bz[j])
		}
		out.Sensors[i] = s
	}
	return &out
}

// Sampling theorem (Shannon 1949): a sine of frequency f is determined by
// samples only at a rate above 2 f; at exactly 2 f its sine quadrature is
// zero at every sample. A 50 Hz asset's sensors logging at 100 Hz or
// 50 Hz are left out of the window with the reason, so no current (and no
// imbalance, step or over-current alarm) is derived from them; 125 Hz
// (2.5 f) is used and gives the currents.
func TestSensorBelowNyquistLeftOut(t *testing.T) {
	a, p := fenwickProcessor(t)
	// Balanced go and return: an imbalance alarm would come from the fit.
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(200, -160*math.Pi/180)}
	rng := rand.New(rand.NewPCG(3, 100))
	full := synthWindow(a, truth, [3]float64{}, 1796104800, 500, 500, 2, rng)
	all := []int{0, 1, 2, 3, 4}
	for _, tc := range []struct {
		name string
		k    int
		idx  []int
		left int // sensors left out
	}{
		{"all at 100 Hz", 5, all, 5},
		{"three at 50 Hz", 10, []int{0, 2, 4}, 3},
		{"all at 125 Hz", 4, all, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w := withRate(full, tc.k, tc.idx...)
			r := p.reduce(w)
			left := 0
			for _, why := range r.missing {
				if strings.Contains(why, "below 2.5 times the 50 Hz frequency") {
					left++
				}
			}
			if left != tc.left {
				t.Fatalf("%d sensors left out for their rate, want %d: %v", left, tc.left, r.missing)
			}
			e, alarms := p.solve(w, r)
			for _, al := range alarms {
				if al.Kind == AlarmImbalance || al.Kind == AlarmStep || al.Kind == AlarmOverCurrent {
					t.Errorf("alarm from a fit of undersampled readings: %+v", al)
				}
			}
			if tc.left == 5 {
				if e.Quality != "failed" {
					t.Errorf("quality %s with every sensor left out, want failed", e.Quality)
				}
				return
			}
			if e.Quality == "failed" {
				t.Fatalf("solve failed with %d sensors", e.Sensors)
			}
			for i, c := range e.Conductors {
				got := cmplx.Rect(c.Current, *c.Phase*math.Pi/180)
				if d := cmplx.Abs(got - truth[i]); d > 5*c.CurrentSigma {
					t.Errorf("%s: %.4f A at %.2f deg, truth %.4g A (sigma %.3g)", c.Name, c.Current, *c.Phase, cmplx.Abs(truth[i]), c.CurrentSigma)
				}
			}
		})
	}
}

// A grid off its nominal frequency: demodulating a 49.8 Hz current at
// 50 Hz over 1 s keeps sinc(0.2) = sin(0.2 pi)/(0.2 pi) = 0.9355 of its
// amplitude (the response of a rectangular window, the Dirichlet kernel
// for many samples). The window's frequency is found and used instead:
// the currents come out right within 5 sigma and the estimate reports the
// frequency. At exactly 50 Hz the site's frequency is kept (phases stay
// referred to it).
func TestOffNominalGridFrequency(t *testing.T) {
	a, p := fenwickProcessor(t)
	if a.Frequency != 50 {
		t.Fatalf("site frequency %v, want 50", a.Frequency)
	}
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(180, -160*math.Pi/180)}
	if s := math.Sin(0.2*math.Pi) / (0.2 * math.Pi); math.Abs(s-0.9355) > 1e-4 {
		t.Fatalf("sinc(0.2) = %v", s)
	}
	for _, f := range []float64{49.8, 50.5, 50} {
		syn := *a
		syn.Frequency = f
		rng := rand.New(rand.NewPCG(uint64(f*10), 7))
		for win := 0; win < 5; win++ {
			w := synthWindow(&syn, truth, [3]float64{}, 1796104800+float64(win), 500, 500, 2, rng)
			e, _ := p.solve(w, p.reduce(w))
			if e.Quality != "good" {
				t.Fatalf("%v Hz window %d: quality %s", f, win, e.Quality)
			}
			if f == 50 {
				if e.Frequency != 50 || e.FrequencySigma != 0 {
					t.Errorf("nominal grid, window %d: frequency %v +- %v, want the site's 50 Hz", win, e.Frequency, e.FrequencySigma)
				}
			} else if !(math.Abs(e.Frequency-f) < 5*e.FrequencySigma) || e.FrequencySigma <= 0 || e.FrequencySigma > 1e-3 {
				t.Errorf("%v Hz grid, window %d: frequency %v +- %v", f, win, e.Frequency, e.FrequencySigma)
			}
			for i, c := range e.Conductors {
				if d := math.Abs(c.Current - cmplx.Abs(truth[i])); d > 5*c.CurrentSigma {
					t.Errorf("%v Hz grid, window %d, %s: %.4f A, truth %.4g A (sigma %.3g)", f, win, c.Name, c.Current, cmplx.Abs(truth[i]), c.CurrentSigma)
				}
			}
		}
	}
}

// Weighted least squares (Aitken 1935; the Gauss-Markov theorem for
// known variances): with each reading weighted by its own variance
// noise^2/n_i, the quoted sigma of the currents is their scatter and the
// mean chi-square is the degrees of freedom. Two of five sensors at
// 125 Hz, three at 500 Hz, 2 nT noise, 300 windows; a common sigma from
// the median count made chi-square about 2.2 times the degrees of freedom
// and the quoted sigma 1.4 times too small.
func TestMixedRatesWeightedSigma(t *testing.T) {
	a, p := fenwickProcessor(t)
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(180, -160*math.Pi/180)}
	rng := rand.New(rand.NewPCG(5, 125))
	const windows = 300
	var chi2, dof float64
	var sum, sum2, sigma [2]float64
	for k := range windows {
		full := synthWindow(a, truth, [3]float64{}, 1796104800+float64(k), 500, 500, 2, rng)
		w := withRate(full, 4, 0, 2)
		e, _ := p.solve(w, p.reduce(w))
		if e.Quality != "good" {
			t.Fatalf("window %d: %s", k, e.Quality)
		}
		chi2 += e.Chi2
		dof += float64(e.DOF)
		for i, c := range e.Conductors {
			sum[i] += c.Current
			sum2[i] += c.Current * c.Current
			sigma[i] += c.CurrentSigma / windows
		}
	}
	// The mean of 300 chi-square values of 20 degrees of freedom has a
	// standard deviation of sqrt(40/300) = 0.37: 18.5 to 21.5 is 4 of them.
	if m := chi2 / windows; math.Abs(m-dof/windows) > 1.5 {
		t.Errorf("mean chi-square %.2f at %v degrees of freedom", m, dof/windows)
	}
	for i := range 2 {
		mean := sum[i] / windows
		std := math.Sqrt((sum2[i] - windows*mean*mean) / (windows - 1))
		// A standard deviation from 300 samples is within 4.1 % (1 sigma):
		// 15 % is more than 3.5 sigma.
		if r := std / sigma[i]; math.Abs(r-1) > 0.15 {
			t.Errorf("conductor %d: scatter %.3g A, quoted sigma %.3g A (ratio %.2f)", i, std, sigma[i], r)
		}
	}
}

// With every reading of the same sigma, the weighted solve gives the
// inverse package's FitStrengths answer.
func TestWeightedSolveMatchesFitStrengths(t *testing.T) {
	a, p := fenwickProcessor(t)
	rng := rand.New(rand.NewPCG(9, 9))
	w := synthWindow(a, []complex128{150, -140}, [3]float64{}, 1796104800, 500, 500, 2, rng)
	r := p.reduce(w)
	e := p.est.(*inverseEstimator)
	plain, err := e.Solve(&SolveInput{Points: r.in.Points, Phasors: r.in.Phasors, Sigma: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	sig := make([]float64, len(r.in.Points))
	for i := range sig {
		sig[i] = 0.1
	}
	wt, err := e.solveWeighted(&SolveInput{Points: r.in.Points, Phasors: r.in.Phasors, Sigmas: sig})
	if err != nil {
		t.Fatal(err)
	}
	for i := range plain.Current {
		if math.Abs(plain.Current[i]-wt.Current[i]) > 1e-9*math.Abs(plain.Current[i]) ||
			math.Abs(plain.Phase[i]-wt.Phase[i]) > 1e-9 ||
			math.Abs(plain.CurrentSigma[i]-wt.CurrentSigma[i]) > 1e-9*plain.CurrentSigma[i] {
			t.Errorf("strength %d: FitStrengths %v A %v deg +- %v, weighted %v A %v deg +- %v", i,
				plain.Current[i], plain.Phase[i], plain.CurrentSigma[i], wt.Current[i], wt.Phase[i], wt.CurrentSigma[i])
		}
	}
	if math.Abs(plain.Chi2-wt.Chi2) > 1e-6*plain.Chi2 || plain.DOF != wt.DOF || math.Abs(plain.RMS-wt.RMS) > 1e-9*plain.RMS {
		t.Errorf("fit: FitStrengths chi2 %v dof %d rms %v, weighted %v %d %v", plain.Chi2, plain.DOF, plain.RMS, wt.Chi2, wt.DOF, wt.RMS)
	}
}

// The stuck alarm's value is the value repeated on the stuck axis.
func TestStuckAlarmValue(t *testing.T) {
	a, p := fenwickProcessor(t)
	rng := rand.New(rand.NewPCG(4, 4))
	w := synthWindow(a, []complex128{200, -200}, [3]float64{}, 1796104815, 500, 500, 2, rng)
	for i := range w.Sensors[3].Bz {
		w.Sensors[3].Bz[i] = -45000
	}
	r := p.reduce(w)
	var found bool
	for _, al := range r.alarms {
		if al.Kind == AlarmStuck {
			found = true
			if al.Subject != a.Sensors[3].Name || al.Value != -45000 || !strings.Contains(al.Message, "axis z") {
				t.Errorf("stuck alarm %+v, want sensor %s, value -45000 on axis z", al, a.Sensors[3].Name)
			}
		}
	}
	if !found {
		t.Fatal("no stuck alarm")
	}
}
