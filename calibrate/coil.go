package calibrate

import (
	"fmt"
	"math"
)

// Coil describes an induction coil for Faraday's law V = -N A μ dB/dt.
type Coil struct {
	Turns float64 // N
	Area  float64 // A, m² (mean turn area)
	// Mu is the apparent relative permeability of the core; zero means 1
	// (air core).
	Mu float64
}

func (c Coil) gain(freq float64) (float64, error) {
	mu := c.Mu
	if mu == 0 {
		mu = 1
	}
	if !(c.Turns > 0) || !(c.Area > 0) || !(mu > 0) || !(freq > 0) ||
		math.IsInf(c.Turns, 0) || math.IsInf(c.Area, 0) || math.IsInf(mu, 0) || math.IsInf(freq, 0) {
		return 0, fmt.Errorf("calibrate: coil: turns %g, area %g m², permeability %g and frequency %g Hz must be positive", c.Turns, c.Area, mu, freq)
	}
	return c.Turns * c.Area * mu * 2 * math.Pi * freq, nil // V per T
}

// CoilToField converts coil voltage amplitudes (peak or RMS, V) of a
// sinusoid at freq (Hz) to field amplitudes of the same kind, nT:
//
//	|B| = |V| / (N A μ 2π f).
func CoilToField(volts []float64, coil Coil, freq float64) ([]float64, error) {
	g, err := coil.gain(freq)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(volts))
	for i, v := range volts {
		out[i] = v / g * 1e9
	}
	return out, nil
}

// CoilPhasor converts a coil voltage phasor (V) at freq (Hz) to the field
// phasor (nT). With V = -N A μ iω B, the field leads the voltage by 90°:
//
//	B = i V / (N A μ ω).
func CoilPhasor(v complex128, coil Coil, freq float64) (complex128, error) {
	g, err := coil.gain(freq)
	if err != nil {
		return 0, err
	}
	return complex(0, 1e9/g) * v, nil
}

// CoilWindows converts demodulated windows of coil voltages (B and Sigma
// in volts, as Demodulate returns them when the log's field columns hold
// coil outputs) to field in nT in place, each at its own frequency. A
// window the conversion rejects leaves the windows unchanged.
func CoilWindows(ws []Window, coil Coil) error {
	for i, w := range ws {
		if _, err := coil.gain(w.Freq); err != nil {
			return fmt.Errorf("calibrate: coil: window %d: %w", i, err)
		}
	}
	for i := range ws {
		g, _ := coil.gain(ws[i].Freq)
		for k := 0; k < 3; k++ {
			ws[i].B[k] *= complex(0, 1e9/g)
			ws[i].Sigma[k] *= 1e9 / g
		}
	}
	return nil
}
