package calibrate

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestDemodulateQuantisedStamps: a 50 Hz tone of known RMS phasors
// (b(t) = √2 Re(B e^{iωt}), the phasor of a sinusoid as IEEE Std
// C37.118.1 defines it: RMS magnitude, phase at absolute time) sampled
// steadily at about 800 and 1600 Hz with 1 nT noise, its times written to
// the millisecond. Read as exact, the stamps' errors of up to ±0.5 ms
// shrink the amplitude by the mean of cos ωδ (0.5% at 800 Hz, over 100
// sigma here) and at 1600 Hz repeat times, which no window spans. Rebuilt
// on the sampling they fit, every amplitude comes back within its sigma:
// the mean over the windows within 4 sigma of the truth on each axis,
// each window within 5. So does the phase, but where the interval is
// close to a fraction p/r of the quantum in lowest terms (5/4 at 800 Hz,
// also 17 ppm off it, a crystal's error) the stamps repeat every r
// samples and fix the times only to within q/(2r), a shift shared by
// nearby samples: the phase is allowed ω q/(2r) more. The windows are
// 0.2 s (or the nearest whole number of samples), as many as the log
// holds, and the result says how long they are.
func TestDemodulateQuantisedStamps(t *testing.T) {
	const q = 1e-3
	for _, c := range []struct {
		fs float64
		r  int // 0: the stamps never repeat
	}{{800, 4}, {1600, 8}, {800 * (1 + 17e-6), 4}, {1600 * (1 - 17e-6), 8}, {812.345, 0}, {1623.71, 0}} {
		fs := c.fs
		rng := rand.New(rand.NewPCG(51, 52))
		const dur = 40.0
		n := int(dur * fs)
		c0 := acLog(rng, fs, n, 1.7e9+0.137e-3, 50, testPhasors, 1)
		for i, v := range c0.Time {
			c0.Time[i] = math.Round(v/q) * q
		}
		res, err := DemodulateColumns(c0, &DemodSettings{Freq: 50, Window: 0.2})
		if err != nil {
			t.Fatalf("%.6g Hz: %v", fs, err)
		}
		if res.Quantum == nil || !res.Quantum.Uniform || !anyContains(res.Warnings, "quantised to 0.001 s") {
			t.Errorf("%.6g Hz: quantum %+v, warnings %q", fs, res.Quantum, res.Warnings)
		}
		perWin := int(math.Round(0.2 * fs))
		want := float64(perWin) / fs // a whole number of samples
		if math.Abs(want-0.2) < 2e-5 {
			want = 0.2 // as asked, within the rate's 17 ppm
		}
		if math.Abs(res.Window-want) > 1e-6*want || len(res.Windows) != n/perWin || res.Windows[0].N != perWin {
			t.Errorf("%.6g Hz: %d windows of %d samples, window %g s; want %d of %d, %g s", fs, len(res.Windows), res.Windows[0].N, res.Window, n/perWin, perWin, want)
		}
		turn := 0.0 // the phase the stamps cannot fix, rad
		if c.r > 0 {
			turn = 2 * math.Pi * 50 * q / float64(2*c.r)
		}
		for k := 0; k < 3; k++ {
			var sum complex128
			var amp, s2 float64
			truth := testPhasors[k]
			for _, w := range res.Windows {
				sum += w.B[k]
				amp += cmplx.Abs(w.B[k])
				s2 += w.Sigma[k] * w.Sigma[k]
				if d := math.Abs(cmplx.Abs(w.B[k]) - cmplx.Abs(truth)); d > 5*w.Sigma[k] {
					t.Fatalf("%.6g Hz axis %d: window at %.3f s: amplitude off by %.3g nT, %.1f sigma", fs, k, w.Time-1.7e9, d, d/w.Sigma[k])
				}
			}
			m := float64(len(res.Windows))
			mean, sig := sum/complex(m, 0), math.Sqrt(s2)/m
			if d := math.Abs(amp/m - cmplx.Abs(truth)); d > 4*sig {
				t.Errorf("%.6g Hz axis %d: mean amplitude %.4f nT, true %.4f: off by %.1f sigma", fs, k, amp/m, cmplx.Abs(truth), d/sig)
			}
			dph := math.Abs(cmplx.Phase(mean / truth))
			if sph := sig / cmplx.Abs(truth); dph > 4*sph+turn {
				t.Errorf("%.6g Hz axis %d: mean phase off by %.4f°, want within %.4f° (4 sigma) + %.4f°", fs, k, dph*180/math.Pi, 4*sph*180/math.Pi, turn*180/math.Pi)
			}
		}
	}
}

// TestDemodulateQuantisedNoWindowAdvice: stamps that look quantised (steps
// of 0 and 1 ms) but wander too far for a steady sampling are not
// rebuilt, and the refusal for want of a whole window says they look
// written too coarsely, so that nobody removes their repeated times as
// copies.
func TestDemodulateQuantisedNoWindowAdvice(t *testing.T) {
	rng := rand.New(rand.NewPCG(53, 54))
	c := acLog(rng, 1600, 20000, 1.7e9, 50, testPhasors, 1)
	last := math.Inf(-1)
	for i, v := range c.Time {
		s := math.Max(math.Round((v+0.4e-3*(2*rng.Float64()-1))/1e-3)*1e-3, last)
		c.Time[i], last = s, s
	}
	_, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.2})
	var nw *NoWindowError
	if err == nil || !strings.Contains(err.Error(), "look written to 0.001 s") {
		t.Fatalf("error %v, want a refusal saying the times look written to 0.001 s", err)
	}
	if !errors.As(err, &nw) || math.Abs(nw.Quantum-1e-3) > 1e-6 {
		t.Errorf("error %T %v: want a *NoWindowError with Quantum 0.001", err, err)
	}
}
