package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// coilHarmonicLog simulates the three voltages of a coil with sensitivity
// H (V per T) in a field of RMS phasors b1 at f Hz and b3 at 3f Hz (nT),
// sampled at fs Hz for dur s, with noiseV volts of Gaussian noise: each
// tone's voltage phasor is H(its frequency)·B (Faraday's law, V = H B with
// H = -i N A μ ω for the ideal coil).
func coilHarmonicLog(h func(f float64) complex128, b1, b3 [3]complex128, f, fs, dur, noiseV float64) *Columns {
	rng := rand.New(rand.NewPCG(3, 23))
	c := &Columns{}
	h1, h3 := h(f), h(3*f)
	for i := 0; i < int(dur*fs); i++ {
		t := 1.7e9 + float64(i)/fs
		c.Time = append(c.Time, t)
		for k := 0; k < 3; k++ {
			v := math.Sqrt2*real(h1*b1[k]*1e-9*cmplx.Exp(complex(0, 2*math.Pi*f*t))) +
				math.Sqrt2*real(h3*b3[k]*1e-9*cmplx.Exp(complex(0, 2*math.Pi*3*f*t)))
			c.B[k] = append(c.B[k], v+noiseV*rng.NormFloat64())
		}
	}
	return c
}

// TestHarmonicsToField: CoilWindows and SensitivityWindows converted the
// fundamental to nT and left DemodResult.Harmonics in volts, beside it
// with nothing to say so (found in review: the 3rd harmonic read 1.2e-3,
// volts, next to fundamentals in nT). HarmonicsToField converts them at
// the harmonic's own frequency, 150 Hz for the 3rd of 50 Hz: the review's
// case, a 9 nT 3rd harmonic at -40°, must come back as 9 nT at -40° for
// the ideal coil and for a measured table whose phase changes with
// frequency (read at 50 Hz instead, the table's phase would be 4.8° off
// and both |H| 3 times off).
func TestHarmonicsToField(t *testing.T) {
	coil := Coil{Turns: 4000, Area: 3e-4, Mu: 120}
	// |H| ∝ f, about the ideal coil's, with a phase from -80° at 10 Hz to
	// -60° at 1 kHz (invented).
	table := &CoilResponse{Freq: []float64{10, 1000}, Sens: []float64{9e3, 9e5}, Phase: []float64{-80, -60}}
	deg := math.Pi / 180
	b1 := [3]complex128{cmplx.Rect(30, 20*deg), cmplx.Rect(10, 110*deg), cmplx.Rect(5, -60*deg)}
	b3 := [3]complex128{cmplx.Rect(9, -40*deg), cmplx.Rect(3, 70*deg), cmplx.Rect(1.5, 10*deg)}
	// The noise, 5 µV a sample, is about 0.04 nT at 150 Hz for the ideal
	// coil and the table, and under 0.002 nT on a 0.2 s window's
	// phasor (1000 samples): 0.02 nT is ten times that.
	const tolNT = 0.02
	for _, tc := range []struct {
		name string
		s    CoilSensitivity
	}{{"ideal coil", coil}, {"measured table", table}} {
		t.Run(tc.name, func(t *testing.T) {
			h := func(f float64) complex128 {
				v, err := tc.s.Sensitivity(f)
				if err != nil {
					t.Fatal(err)
				}
				return v
			}
			c := coilHarmonicLog(h, b1, b3, 50, 5000, 1, 5e-6)
			res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.2, Harmonics: []int{3}})
			if err != nil {
				t.Fatal(err)
			}
			if err := SensitivityWindows(res.Windows, tc.s); err != nil {
				t.Fatal(err)
			}
			if err := HarmonicsToField(res, []int{3}, tc.s); err != nil {
				t.Fatal(err)
			}
			for i, w := range res.Windows {
				for k := 0; k < 3; k++ {
					if d := cmplx.Abs(w.B[k] - b1[k]); d > tolNT {
						t.Errorf("window %d axis %d: fundamental %.4f∠%.2f°, want %.2f∠%.1f°", i, k, cmplx.Abs(w.B[k]), cmplx.Phase(w.B[k])/deg, cmplx.Abs(b1[k]), cmplx.Phase(b1[k])/deg)
					}
					got := res.Harmonics[i][0][k]
					if d := cmplx.Abs(got - b3[k]); d > tolNT {
						t.Errorf("window %d axis %d: 3rd harmonic %.4g∠%.2f°, want %.2f nT∠%.1f°", i, k, cmplx.Abs(got), cmplx.Phase(got)/deg, cmplx.Abs(b3[k]), cmplx.Phase(b3[k])/deg)
					}
				}
			}
		})
	}
}

// TestHarmonicsToFieldRefuses: a harmonic outside the response table, or
// a list of harmonics that does not match the demodulation, is an error
// and leaves the phasors as they were.
func TestHarmonicsToFieldRefuses(t *testing.T) {
	table := &CoilResponse{Freq: []float64{10, 100}, Sens: []float64{2e3, 2e4}, Phase: []float64{-90, -90}}
	res := &DemodResult{Windows: []Window{{Freq: 50}}, Harmonics: [][][3]complex128{{{1, 2, 3}}}}
	for _, tc := range []struct {
		name string
		hs   []int
	}{{"3rd at 150 Hz, above the table", []int{3}}, {"two named, one fitted", []int{3, 5}}, {"the fundamental", []int{1}}} {
		if err := HarmonicsToField(res, tc.hs, table); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
		if res.Harmonics[0][0] != [3]complex128{1, 2, 3} {
			t.Errorf("%s: phasors changed to %v", tc.name, res.Harmonics[0][0])
		}
	}
}
