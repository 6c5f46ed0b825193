package calibrate

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"
)

func TestCoilFaraday(t *testing.T) {
	// DOMAIN.md (Calibration, verified): N = 1000, A = 1 cm², 50 Hz and a
	// 1 µT peak field give 3.14159e-5 V peak (air core).
	coil := Coil{Turns: 1000, Area: 1e-4}
	b, err := CoilToField([]float64{3.14159e-5}, coil, 50)
	if err != nil {
		t.Fatal(err)
	}
	// The published voltage has six significant figures.
	if math.Abs(b[0]-1000) > 1e-5*1000 {
		t.Errorf("field %.6f nT, want 1000", b[0])
	}
	// A core of apparent permeability 100 gives 100 times the voltage.
	b, _ = CoilToField([]float64{3.14159e-3}, Coil{Turns: 1000, Area: 1e-4, Mu: 100}, 50)
	if math.Abs(b[0]-1000) > 1e-2 {
		t.Errorf("with core: field %.6f nT, want 1000", b[0])
	}
	// Phasor: B = i V/(NAω): the field leads the voltage by 90 degrees.
	p, err := CoilPhasor(complex(3.14159e-5, 0), coil, 50)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(cmplx.Abs(p)-1000) > 1e-2 || math.Abs(cmplx.Phase(p)-math.Pi/2) > 1e-12 {
		t.Errorf("phasor %v, want 1000 nT at +90 degrees", p)
	}
	if _, err := CoilToField([]float64{1}, Coil{Turns: 0, Area: 1}, 50); err == nil {
		t.Error("zero turns: want an error")
	}
}

func ExampleCoilToField() {
	// A 1000-turn, 1 cm² air coil reads 31.4 µV peak at 50 Hz.
	b, err := CoilToField([]float64{31.4159e-6}, Coil{Turns: 1000, Area: 1e-4}, 50)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.1f nT peak\n", b[0])
	// Output: 1000.0 nT peak
}

func TestCoilWindows(t *testing.T) {
	// A coil log demodulated in volts, converted window by window: the same
	// DOMAIN.md check value (31.4159 µV peak ↔ 1 µT peak at 50 Hz), as RMS.
	ws := []Window{{Freq: 50, B: [3]complex128{complex(3.14159e-5/math.Sqrt2, 0)}, Sigma: [3]float64{1e-7}}}
	if err := CoilWindows(ws, Coil{Turns: 1000, Area: 1e-4}); err != nil {
		t.Fatal(err)
	}
	if got := cmplx.Abs(ws[0].B[0]) * math.Sqrt2; math.Abs(got-1000) > 1e-2 {
		t.Errorf("peak field %.4f nT, want 1000", got)
	}
	if math.Abs(ws[0].Sigma[0]-1e-7/3.14159e-5*1000) > 1e-3 {
		t.Errorf("sigma %.6f nT not scaled with the field", ws[0].Sigma[0])
	}
	if err := CoilWindows([]Window{{Freq: 0}}, Coil{Turns: 1, Area: 1}); err == nil {
		t.Error("zero frequency: want an error")
	}
}
