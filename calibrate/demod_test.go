package calibrate

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// acLog simulates a 3-axis log: Earth's field plus slow drift plus a tone
// of frequency f whose complex RMS phasors (absolute-time convention) are
// ph, sampled at fs from absolute time t0, with Gaussian noise.
func acLog(rng *rand.Rand, fs float64, n int, t0, f float64, ph [3]complex128, noise float64) *Columns {
	c := &Columns{Time: make([]float64, n)}
	earth := [3]float64{1500, 20800, -47500} // nT, ENU, Boulder-like (DOMAIN.md figures)
	for k := 0; k < 3; k++ {
		c.B[k] = make([]float64, n)
		c.Pos[k] = make([]float64, n)
	}
	for i := 0; i < n; i++ {
		t := t0 + float64(i)/fs
		c.Time[i] = t
		// Phase from the exact sample index so the tone is exact even though
		// absolute times are rounded in float64.
		cyc := math.Mod(f*t0, 1) + f*float64(i)/fs
		e := cmplx.Exp(complex(0, 2*math.Pi*cyc))
		for k := 0; k < 3; k++ {
			c.B[k][i] = earth[k] + 0.5*float64(i)/fs + math.Sqrt2*real(ph[k]*e)
			if noise > 0 {
				c.B[k][i] += noise * rng.NormFloat64()
			}
		}
		c.Pos[0][i] = 0.3 * float64(i) / fs // walking east at 0.3 m/s
	}
	return c
}

var testPhasors = [3]complex128{complex(120, -35), complex(-40, 60), complex(15, 5)}

func TestDemodulatePhaseCoherent(t *testing.T) {
	// Windows at a stable, known frequency must all return the phasors the
	// log was built with (absolute-time convention of the contract); the
	// Earth's field and slow drift fall out. The tolerance without a drift
	// term covers the 0.5 nT/s drift leaking through the constant-only
	// model on 5-cycle windows. With it, what is left is the rounding of
	// absolute Unix times in float64 (2.4e-7 s, up to 3.7e-5 rad at 50 Hz,
	// i.e. 5e-3 nT on a 125 nT phasor).
	rng := rand.New(rand.NewPCG(11, 12))
	c := acLog(rng, 2000, 20000, 1.7e9, 50, testPhasors, 0)
	for _, tc := range []struct {
		name  string
		set   DemodSettings
		tol   float64
		uniOK bool
	}{
		{"three-parameter", DemodSettings{Freq: 50, Window: 0.1}, 0.05, true},
		{"with drift term", DemodSettings{Freq: 50, Window: 0.1, Drift: true}, 5e-3, true},
		{"harmonics, overlap", DemodSettings{Freq: 50, Window: 0.2, Step: 0.05, Harmonics: []int{3, 5}, Drift: true}, 5e-3, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, err := DemodulateColumns(c, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			wantN := int(math.Floor((10-tc.set.Window)/stepOf(tc.set))) + 1
			if len(res.Windows) != wantN {
				t.Errorf("%d windows, want %d", len(res.Windows), wantN)
			}
			if tc.uniOK && res.General != 0 {
				t.Errorf("%d windows took the general path on a uniform log", res.General)
			}
			for i, w := range res.Windows {
				for k := 0; k < 3; k++ {
					if d := cmplx.Abs(w.B[k] - testPhasors[k]); d > tc.tol {
						t.Fatalf("window %d axis %d: B = %.6f, want %.6f (|diff| %.2g)", i, k, w.B[k], testPhasors[k], d)
					}
				}
				wantPos := 0.3 * (w.Time - 1.7e9)
				if math.Abs(w.Pos[0]-wantPos) > 1e-6 {
					t.Fatalf("window %d: mean east %.6f, want %.6f", i, w.Pos[0], wantPos)
				}
			}
			for _, h := range res.Harmonics {
				for j := range h {
					for k := 0; k < 3; k++ {
						if cmplx.Abs(h[j][k]) > 1e-6 {
							t.Fatalf("harmonic %d axis %d: %.3g, want 0", tc.set.Harmonics[j], k, h[j][k])
						}
					}
				}
			}
			if len(res.Warnings) != 0 {
				t.Errorf("unexpected warnings: %q", res.Warnings)
			}
		})
	}
}

func stepOf(s DemodSettings) float64 {
	if s.Step != 0 {
		return s.Step
	}
	return s.Window
}

func TestDemodulateFastPathMatchesGeneral(t *testing.T) {
	// The shared precomputed basis (uniform windows) must agree with a basis
	// built from each window's own timestamps. Perturbing one timestamp per
	// window by far less than the uniformity tolerance keeps the fast path;
	// we compare it with FitSine, which always builds its own basis.
	rng := rand.New(rand.NewPCG(13, 14))
	c := acLog(rng, 2000, 2000, 1000, 50.02, testPhasors, 0.5)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50.02, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if res.Uniform != len(res.Windows) {
		t.Fatalf("uniform %d of %d windows", res.Uniform, len(res.Windows))
	}
	for i, w := range res.Windows {
		lo := i * 200
		for k := 0; k < 3; k++ {
			f, err := FitSine(c.Time[lo:lo+200], c.B[k][lo:lo+200], 50.02, &SineSettings{Slope: true})
			if err != nil {
				t.Fatal(err)
			}
			if d := cmplx.Abs(f.Phasor() - w.B[k]); d > 1e-9*cmplx.Abs(w.B[k]) {
				t.Fatalf("window %d axis %d: fast %v, reference %v", i, k, w.B[k], f.Phasor())
			}
		}
	}
	// Now make the log non-uniform (jittered clock): windows take the
	// general path and still agree with FitSine.
	for i := range c.Time {
		c.Time[i] += 2e-5 * rng.Float64()
	}
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50.02, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if res.General == 0 {
		t.Fatal("jittered log: expected the general path")
	}
	for i, w := range res.Windows {
		lo := i * 200
		f, err := FitSine(c.Time[lo:lo+200], c.B[0][lo:lo+200], 50.02, &SineSettings{Slope: true})
		if err != nil {
			t.Fatal(err)
		}
		if d := cmplx.Abs(f.Phasor() - w.B[0]); d > 1e-9*cmplx.Abs(w.B[0]) {
			t.Fatalf("jittered window %d: %v, reference %v", i, w.B[0], f.Phasor())
		}
	}
}

func TestDemodulateSigma(t *testing.T) {
	// With white noise σ per sample, the RMS amplitude of an N-sample
	// whole-cycle window has standard error σ/√N (σ·√(2/N) on the peak
	// amplitude, divided by √2). Check Sigma and the scatter of |B|.
	const noise, n = 2.0, 200
	rng := rand.New(rand.NewPCG(15, 16))
	c := acLog(rng, 2000, 200000, 0, 50, testPhasors, noise)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, Drift: true})
	if err != nil {
		t.Fatal(err)
	}
	want := noise / math.Sqrt(n)
	var ss, sig float64
	for _, w := range res.Windows {
		d := cmplx.Abs(w.B[0]) - cmplx.Abs(testPhasors[0])
		ss += d * d
		sig += w.Sigma[0]
	}
	m := float64(len(res.Windows))
	scatter, meanSigma := math.Sqrt(ss/m), sig/m
	// 1000 windows: the scatter is known to about 2%, allow 10%.
	if math.Abs(scatter-want) > 0.1*want || math.Abs(meanSigma-want) > 0.1*want {
		t.Errorf("scatter %.4f, mean Sigma %.4f, want both %.4f", scatter, meanSigma, want)
	}
}

func TestDemodulateWarnings(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	// 51.5 Hz demodulated at 50 Hz: outside the 1 Hz band of 0.1 s windows
	// (and outside EN 50160's 50 Hz ± 1%, DOMAIN.md).
	c := acLog(rng, 2000, 20000, 1.7e9, 51.5, testPhasors, 0.1)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.DriftHz-1.5) > 0.01 {
		t.Errorf("DriftHz = %.4f, want 1.5", res.DriftHz)
	}
	if !anyContains(res.Warnings, "as if the frequency were 51.5") {
		t.Errorf("no drift warning naming 51.5 Hz: %q", res.Warnings)
	}
	// Estimating the frequency per window recovers it and the amplitude.
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true, Band: 2})
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range res.Windows {
		if math.Abs(w.Freq-51.5) > 0.01 {
			t.Fatalf("window %d: frequency %.4f, want 51.5", i, w.Freq)
		}
		if d := cmplx.Abs(w.B[0]) - cmplx.Abs(testPhasors[0]); math.Abs(d) > 0.05 {
			t.Fatalf("window %d: |B| off by %.3f nT", i, d)
		}
	}
	// The phasors are on the clock of the 50 Hz given, so they turn from
	// window to window: only that warning.
	if len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], "as if the frequency were 51.5") {
		t.Errorf("warnings with a 2 Hz band: %q, want only the phase turn's", res.Warnings)
	}
	// With the default 1 Hz band every window is out of band: that too.
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Warnings) != 2 || !strings.Contains(res.Warnings[1], "in 100 of 100 windows") {
		t.Errorf("warnings %q, want the phase turn's and one covering 100 windows", res.Warnings)
	}
	// Too few cycles: 0.04 s at 50 Hz is two cycles.
	c = acLog(rng, 2000, 2000, 0, 50, testPhasors, 0.1)
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.04})
	if err != nil {
		t.Fatal(err)
	}
	if !anyContains(res.Warnings, "only 2.00 cycles") {
		t.Errorf("no too-few-cycles warning: %q", res.Warnings)
	}
}

func TestDemodulateEstimatesFrequency(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 20))
	c := acLog(rng, 2000, 20000, 1.7e9, 49.93, testPhasors, 1)
	res, err := DemodulateColumns(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Freq-49.93) > 1e-3 {
		t.Errorf("estimated %.5f Hz, want 49.93", res.Freq)
	}
	if len(res.Windows) != 49 { // ten-cycle windows, 10 s
		t.Errorf("%d windows, want 49", len(res.Windows))
	}
}

func TestDemodulateGroupsAndErrors(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	c := acLog(rng, 2000, 1000, 0, 50, testPhasors, 0)
	c.Group = make([]string, 1000)
	for i := range c.Group {
		c.Group[i] = "T1"
		if i >= 450 {
			c.Group[i] = "T2"
		}
	}
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	// T1: 450 rows → 2 windows (50 dropped); T2: 550 rows → 2 windows (150 dropped).
	var groups []string
	for _, w := range res.Windows {
		groups = append(groups, w.Group)
	}
	if got := strings.Join(groups, ","); got != "T1,T1,T2,T2" || res.Dropped != 200 {
		t.Errorf("groups %s, dropped %d; want T1,T1,T2,T2 and 200", got, res.Dropped)
	}
	// A pause in logging inside T2 (rows 700 on, 5 s later): T2 splits into
	// 250 rows (1 window, 50 dropped) and 300 rows (1 window, 100 dropped).
	for i := 700; i < 1000; i++ {
		c.Time[i] += 5
	}
	res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Windows) != 4 || res.Dropped != 200 || res.General != 0 {
		t.Errorf("after a pause: %d windows, %d dropped, %d general; want 4, 200, 0", len(res.Windows), res.Dropped, res.General)
	}
	c.Pos[0][555] = math.NaN()
	if _, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1}); err == nil || !strings.Contains(err.Error(), "row 555: column x") {
		t.Errorf("err = %v, want one naming row 555 column x", err)
	}
	c.Pos[0][555] = 0
	c.B[1][321] = math.NaN()
	if _, err := DemodulateColumns(c, &DemodSettings{Freq: 50}); err == nil || !strings.Contains(err.Error(), "row 321: column by") {
		t.Errorf("err = %v, want one naming row 321 column by", err)
	}
	c.B[1][321] = 0
	if _, err := DemodulateColumns(c, &DemodSettings{Freq: 1500}); err == nil || !strings.Contains(err.Error(), "Nyquist") {
		t.Errorf("err = %v, want a Nyquist error", err)
	}
}

func anyContains(list []string, sub string) bool {
	for _, s := range list {
		if strings.Contains(s, sub) {
			return true
		}
	}
	return false
}

func BenchmarkDemodulate(b *testing.B) {
	// 3-axis 2 kHz log, 0.1 s windows, known frequency: the live-pipeline
	// case. Reports rows (3-axis samples) per second.
	const rows = 120000 // one minute
	c := acLog(rand.New(rand.NewPCG(1, 1)), 2000, rows, 1.7e9, 50, testPhasors, 1)
	set := &DemodSettings{Freq: 50, Window: 0.1}
	b.ResetTimer()
	for b.Loop() {
		if _, err := DemodulateColumns(c, set); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
}

// BenchmarkDemodulateTracer: a 512 Hz tracer in 0.1 s windows of a 2 kHz
// log with the mains fitted alongside (MainsNuisance: ten frequencies, 45
// columns a window), at a known frequency and with the frequency fitted in
// every window (locate's check, which takes at most about 1500 windows).
func BenchmarkDemodulateTracer(b *testing.B) {
	const rows = 120000 // one minute
	c := acLog(rand.New(rand.NewPCG(1, 1)), 2000, rows, 1.7e9, 512, testPhasors, 1)
	nz := MainsNuisance(512, 0.1, 2000, []float64{50, 60}, nil)
	for _, tc := range []struct {
		name string
		set  DemodSettings
	}{
		{"known frequency", DemodSettings{Freq: 512, Window: 0.1, Nuisance: nz}},
		{"frequency fitted", DemodSettings{Freq: 512, Window: 0.1, Nuisance: nz, EstimateFreq: true}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				if _, err := DemodulateColumns(c, &tc.set); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
		})
	}
}

func ExampleDemodulateColumns() {
	// Two seconds of a 2 kHz three-axis log over a cable carrying 50 Hz.
	c := &Columns{Time: make([]float64, 4000)}
	for k := range c.B {
		c.B[k] = make([]float64, 4000)
	}
	for i := range c.Time {
		t := float64(i) / 2000
		c.Time[i] = t
		c.B[0][i] = 1500 + 100*math.Cos(2*math.Pi*50*t+0.5)
		c.B[1][i] = 20800
		c.B[2][i] = -47500 - 50*math.Sin(2*math.Pi*50*t)
	}
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.2})
	if err != nil {
		fmt.Println(err)
		return
	}
	w := res.Windows[0]
	fmt.Printf("east: %.2f nT RMS at %.1f deg\n", cmplx.Abs(w.B[0]), cmplx.Phase(w.B[0])*180/math.Pi)
	fmt.Printf("north: %.2f nT RMS\n", cmplx.Abs(w.B[1]))
	fmt.Printf("up: %.2f nT RMS at %.1f deg\n", cmplx.Abs(w.B[2]), cmplx.Phase(w.B[2])*180/math.Pi)
	fmt.Println(len(res.Windows), "windows")
	// Output:
	// east: 70.71 nT RMS at 28.6 deg
	// north: 0.00 nT RMS
	// up: 35.36 nT RMS at 90.0 deg
	// 10 windows
}

func BenchmarkDemodulateEstimateFreq(b *testing.B) {
	// The same log with the frequency re-estimated in every window by the
	// four-parameter fit: the slow, careful path.
	const rows = 20000 // ten seconds
	c := acLog(rand.New(rand.NewPCG(1, 1)), 2000, rows, 1.7e9, 50.2, testPhasors, 1)
	set := &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true}
	for b.Loop() {
		if _, err := DemodulateColumns(c, set); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
}

// TestWindowTravel: the half-travel of a steady walk is the speed times
// sqrt(N^2-1)/2 dt (from sum k^2 = N(N^2-1)/12 about the mean index, a
// standard series), and Simpson's rule on Pos -/+ Travel reproduces the
// mean over the window's samples of a field quadratic along the path, which
// is what the definition promises.
func TestWindowTravel(t *testing.T) {
	const fs, speed = 2000.0, 0.3
	c := acLog(nil, fs, 4000, 1.7e9, 50, testPhasors, 0)
	// Add a northward drift that accelerates, so the slope is a fit, not a
	// difference of end points.
	for i := range c.Time {
		s := float64(i) / fs
		c.Pos[1][i] = 0.1*s + 0.05*s*s
	}
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Windows) == 0 {
		t.Fatal("no windows")
	}
	for i, w := range res.Windows {
		n := float64(w.N)
		want := speed * math.Sqrt(n*n-1) / 2 / fs
		if math.Abs(w.Travel[0]-want) > 1e-9*want {
			t.Fatalf("window %d: half-travel east %.12g m, want %.12g", i, w.Travel[0], want)
		}
		if w.Travel[2] != 0 {
			t.Fatalf("window %d: half-travel up %g, want 0", i, w.Travel[2])
		}
		// North: least-squares slope of 0.1 s + 0.05 s^2 at the window's
		// centre time is 0.1 + 0.1 s_c (the quadratic's symmetric part adds
		// nothing to the slope).
		sc := w.Time - 1.7e9
		wantN := (0.1 + 0.1*sc) * math.Sqrt(n*n-1) / 2 / fs
		if math.Abs(w.Travel[1]-wantN) > 1e-6*wantN {
			t.Fatalf("window %d: half-travel north %.12g m, want %.12g", i, w.Travel[1], wantN)
		}
		// A field quadratic along the (east) path: the mean over the samples
		// equals Simpson's rule on the segment.
		x0 := w.Pos[0] - 0.7
		f := func(x float64) float64 { return 3 + 2*(x-x0) + 5*(x-x0)*(x-x0) }
		lo := int(math.Round((w.Time-1.7e9)*fs - (n-1)/2))
		var mean float64
		for k := lo; k < lo+w.N; k++ {
			mean += f(c.Pos[0][k])
		}
		mean /= n
		T := w.Travel[0]
		simp := (f(w.Pos[0]-T) + 4*f(w.Pos[0]) + f(w.Pos[0]+T)) / 6
		if math.Abs(simp-mean) > 1e-9*math.Abs(mean) {
			t.Fatalf("window %d: Simpson %.12g, sample mean %.12g", i, simp, mean)
		}
	}
}

// TestDemodulateAmplitudeSlope: a sensor walked over a conductor sees the
// tone's amplitude change within a window. Least squares over a window of
// N whole cycles, of half-length T/2 about its mean time t̄, projects a
// change a1 (t-t̄) cos(ω t + φ0) onto the constant-amplitude basis as
// (ΔA, ΔB) = a1/(2ω) (sin φc, -cos φc) in the cos ω(t-t̄), sin ω(t-t̄)
// coefficients, φc the phase at t̄: the projection is 2<τ cos(ωτ+φc) cos ωτ>
// = -sin φc <τ sin 2ωτ> and <τ sin 2ωτ> = -cos(ωT)/(2ω) = -1/(2ω)
// (integration by parts; derived here, a textbook calculus step). As an
// RMS phasor referenced to absolute time that is
// ΔP = i a1/(2√2 ω) exp(-i(2ω t̄ + φ0)). The default fit, with the slope
// columns, must return the amplitude at t̄ exactly; the constant-amplitude
// fit must show the predicted error (to the few per cent by which 40
// samples a cycle differ from the integral).
func TestDemodulateAmplitudeSlope(t *testing.T) {
	const (
		fs, f = 2000.0, 50.0
		a0    = 100.0 // nT peak at the window's mean time
		a1    = 400.0 // nT/s: 1 m/s over a field falling 4 nT per cm
		t0    = 1000.0
	)
	w := 2 * math.Pi * f
	for _, phi0 := range []float64{0, 0.7, 2.1, -1.3} {
		for _, n := range []int{200, 205} { // 5 cycles, and 5.125
			c := &Columns{Time: make([]float64, n)}
			for k := range c.B {
				c.B[k] = make([]float64, n)
			}
			var tm float64
			for i := 0; i < n; i++ {
				c.Time[i] = t0 + float64(i)/fs
				tm += c.Time[i]
			}
			tm /= float64(n)
			for i, ti := range c.Time {
				y := (a0 + a1*(ti-tm)) * math.Cos(w*ti+phi0)
				c.B[0][i] = 20000 + y
				c.B[1][i] = -45000 + 0.5*y
				c.B[2][i] = 3000
			}
			want := cmplx.Rect(a0/math.Sqrt2, phi0)
			slope, err := DemodulateColumns(c, &DemodSettings{Freq: f, Window: float64(n) / fs})
			if err != nil {
				t.Fatal(err)
			}
			flat, err := DemodulateColumns(c, &DemodSettings{Freq: f, Window: float64(n) / fs, ConstantAmplitude: true})
			if err != nil {
				t.Fatal(err)
			}
			if len(slope.Windows) != 1 || len(flat.Windows) != 1 {
				t.Fatalf("%d and %d windows, want 1", len(slope.Windows), len(flat.Windows))
			}
			got := slope.Windows[0].B[0]
			if d := cmplx.Abs(got - want); d > 1e-9*a0 {
				t.Errorf("phi0 %g, %d samples: slope fit %v, want %v (off by %.3g nT)", phi0, n, got, want, d)
			}
			if d := cmplx.Abs(slope.Windows[0].B[1] - want/2); d > 1e-9*a0 {
				t.Errorf("phi0 %g, %d samples: slope fit on axis 1 off by %.3g nT", phi0, n, d)
			}
			errFlat := flat.Windows[0].B[0] - want
			if n == 200 {
				pred := complex(0, a1/(2*math.Sqrt2*w)) * cmplx.Rect(1, -(2*w*tm+phi0))
				if d := cmplx.Abs(errFlat - pred); d > 0.05*cmplx.Abs(pred) {
					t.Errorf("phi0 %g: constant-amplitude error %v, predicted %v", phi0, errFlat, pred)
				}
			} else if !(cmplx.Abs(errFlat) > 0.2*a1/(2*math.Sqrt2*w)) {
				// Over a fraction of a cycle more the constant fit also
				// errs in phase; it must still err by the order of a1/ω.
				t.Errorf("phi0 %g, %d samples: constant-amplitude error only %.3g nT", phi0, n, cmplx.Abs(errFlat))
			}
		}
	}
}

// TestDemodulateNuisance: a 512 Hz tracer of 20 nT beside a 50 Hz mains
// field of 3000 nT that grows by 6000 nT/s (a sensor walked toward the
// cable) and its third harmonic. Over whole cycles of both, a steady mains
// tone would be orthogonal to the tracer's columns; a changing one is not,
// and leaks into the tracer's phasors far above the reading noise. Fitted
// as nuisance (with their slope columns), the mains leave the tracer's
// phasor within a few sigma of the truth, also when the frequency is
// estimated. The truth is the construction; the sigma is the least-squares
// one of the fit (IEEE Std 1057: 2σ²/n per coefficient).
func TestDemodulateNuisance(t *testing.T) {
	const (
		fs, n     = 2000.0, 2000 // 1 s: ten 0.1 s windows
		ft, at    = 512.0, 20.0  // tracer, nT peak
		noise     = 1.0
		mains, a0 = 50.0, 3000.0
		grow      = 6000.0 // nT/s
	)
	rng := rand.New(rand.NewPCG(51, 52))
	c := &Columns{Time: make([]float64, n)}
	for k := range c.B {
		c.B[k] = make([]float64, n)
	}
	for i := range n {
		ti := 100 + float64(i)/fs
		c.Time[i] = ti
		m := (a0 + grow*(ti-100.5)) * math.Cos(2*math.Pi*mains*ti+0.3)
		h3 := 0.1 * a0 * math.Cos(2*math.Pi*3*mains*ti-1.1)
		tr := at * math.Cos(2*math.Pi*ft*ti-0.7)
		c.B[0][i] = 21000 + m + h3 + tr + noise*rng.NormFloat64()
		c.B[1][i] = -44000 + 0.5*m + noise*rng.NormFloat64()
		c.B[2][i] = 1500 + noise*rng.NormFloat64()
	}
	want := cmplx.Rect(at/math.Sqrt2, -0.7)
	nz := MainsNuisance(ft, 0.1, fs, []float64{50, 60}, nil)
	if len(nz) == 0 || nz[0] != 50 {
		t.Fatalf("MainsNuisance gave %v", nz)
	}
	for _, tc := range []struct {
		name string
		set  DemodSettings
		// maxErr bounds the tracer's error in sigmas; minErr (for the
		// fit without nuisance) requires the leak to show.
		maxErr, minErr float64
	}{
		{"without nuisance", DemodSettings{Freq: ft, Window: 0.1}, math.Inf(1), 10},
		{"with the mains as nuisance", DemodSettings{Freq: ft, Window: 0.1, Nuisance: nz}, 4, 0},
		{"with nuisance, frequency estimated", DemodSettings{Freq: ft, Window: 0.1, Nuisance: nz, EstimateFreq: true}, 4, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, err := DemodulateColumns(c, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Windows) != 10 {
				t.Fatalf("%d windows", len(res.Windows))
			}
			// The RMS phasor's sigma per quadrature: σ/√(n/2)/√2 = σ/√n.
			sig := noise / math.Sqrt(0.1*fs)
			var worst float64
			for _, w := range res.Windows {
				e := cmplx.Abs(w.B[0] - want)
				if tc.set.EstimateFreq {
					// Referenced to absolute time at the window's own
					// frequency, the phasor turns with any error of it
					// (100 s from zero); its modulus does not.
					e = math.Abs(cmplx.Abs(w.B[0]) - cmplx.Abs(want))
				}
				worst = math.Max(worst, e/sig)
				if tc.set.EstimateFreq && !(math.Abs(w.Freq-ft) <= 4*w.FreqSigma) {
					t.Errorf("window at %.2f s: %.4f ± %.4f Hz, true %g Hz", w.Time, w.Freq, w.FreqSigma, ft)
				}
			}
			if worst > tc.maxErr || worst < tc.minErr {
				t.Errorf("worst tracer error %.3g sigma, want within [%g, %g]", worst, tc.minErr, tc.maxErr)
			}
			if tc.set.Nuisance != nil && fmt.Sprint(res.Nuisance) != fmt.Sprint(nz) {
				t.Errorf("result lists nuisance %v, want %v", res.Nuisance, nz)
			}
		})
	}
	// Frequencies a window cannot tell from the signal, or beyond the
	// Nyquist frequency, are refused.
	for _, bad := range [][]float64{{505}, {1000}, {-50}} {
		if _, err := DemodulateColumns(c, &DemodSettings{Freq: ft, Window: 0.1, Nuisance: bad}); err == nil {
			t.Errorf("nuisance %v accepted", bad)
		}
	}
}

// TestMainsNuisance: the mains frequencies chosen beside a signal.
func TestMainsNuisance(t *testing.T) {
	for _, tc := range []struct {
		freq, window, fs float64
		mains            []float64
		h                []int
		want             string
	}{
		// A 512 Hz tracer logged at 2 kHz: both mains' 1st, 3rd and 5th
		// harmonics and their odd harmonics either side of 512 Hz.
		{512, 0.1, 2000, []float64{50, 60}, nil, "[50 60 150 180 250 300 420 450 540 550]"},
		// Logged at 500 Hz: only those under 0.45 fs.
		{512, 0.1, 500, []float64{50, 60}, nil, "[50 60 150 180]"},
		// 16.7 Hz railway field with its third harmonic fitted: 50 Hz is
		// within 1/window of 3 x 16.7 = 50.1 Hz and left out.
		{16.7, 0.6, 500, []float64{50, 60}, []int{3}, "[60 150 180]"},
		{16.7, 0.6, 500, []float64{50, 60}, nil, "[50 60 150 180]"},
		// 128 Hz in 0.05 s windows: 150 Hz lies 22 Hz off, under
		// NuisanceSeparation (40 Hz), and is left to leak rather than
		// fitted at the tracer's expense; 60 Hz is within 1/window of 50.
		{128, 0.05, 2000, []float64{50, 60}, nil, "[50 180 250 300]"},
		// The mains themselves: nothing.
		{50, 0.1, 2000, []float64{50, 60}, nil, "[]"},
		{60, 0.1, 2000, []float64{50, 60}, nil, "[]"},
		// A grid off nominal is still the mains (within 1%, NearMains):
		// a cable surveyed at 50.05 Hz, a 60 Hz grid at 59.7 Hz.
		{50.05, 0.2, 2000, []float64{50, 60}, nil, "[]"},
		{59.7, 0.2, 2000, []float64{50, 60}, nil, "[]"},
		// 48 Hz is no grid's frequency: a tracer there has the mains fitted
		// beside it (50 Hz lies 2 Hz off, under NuisanceSeparation, and leaks).
		{48, 0.2, 2000, []float64{50, 60}, nil, "[60 150 180 250 300]"},
	} {
		if got := fmt.Sprint(MainsNuisance(tc.freq, tc.window, tc.fs, tc.mains, tc.h)); got != tc.want {
			t.Errorf("MainsNuisance(%g, %g, %g, %v, %v) = %s, want %s", tc.freq, tc.window, tc.fs, tc.mains, tc.h, got, tc.want)
		}
	}
}
