package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// pairField is the RMS field phasor, nT (north, up), at horizontal offset
// y m of a go-and-return pair along the east axis, 1.2 m below the sensor
// and 1 m apart (cores at y = 0 and y = 1), carrying 30 A at 20° and 27 A
// at 200°: the infinite line's Biot-Savart field, μ0 I/(2π r) = 200 I/r
// nT for I in A and r in m, around the line (simulated truth; the circuit
// is invented, like the review's `antiphase` pair at 0.9 m under a sensor
// 0.3 m up). dy is its derivative along y, nT per m.
func pairField(y float64) (b, dy [2]complex128) {
	cores := []struct {
		y float64
		i complex128
	}{{0, cmplx.Rect(30, 20*math.Pi/180)}, {1, cmplx.Rect(27, 200*math.Pi/180)}}
	const dz = 1.2 // sensor above the cores, m
	for _, c := range cores {
		ry := y - c.y
		r2 := ry*ry + dz*dz
		// B = 200 I/r² (x̂ × r): north -200 I dz/r², up 200 I ry/r².
		b[0] += -200 * c.i * complex(dz/r2, 0)
		b[1] += 200 * c.i * complex(ry/r2, 0)
		dy[0] += -200 * c.i * complex(-2*ry*dz/(r2*r2), 0)
		dy[1] += 200 * c.i * complex((dz*dz-ry*ry)/(r2*r2), 0)
	}
	return b, dy
}

// TestCoilWindowsRemoveMotion: an ideal coil (N A μ = 144 m²) walked at
// 1 m/s across the go-and-return pair of pairField, logged at 5 kHz with
// 0.5 nT of noise (as field): the coil's voltage is -N A μ db/dt, and with
// the sensor moving db/dt holds the motional term v ∂b/∂y beside ∂b/∂t
// (Faraday's law along the walk). Converted at iω alone, that term stayed
// in the windows as Ḃ/(iω): over conductors of opposite phase, where the
// field's gradient between the cores is large, it moved the pair's
// relative phase 0.9° (15 sigma) and left a phantom line between them
// (found in review). Each window converted by CoilWindows, and by
// SensitivityWindows with a measured table of the same ideal law, must
// now come within 4 of its sigmas of the true field averaged over the
// window's samples (the magnetometer's reading, Window.Travel).
func TestCoilWindowsRemoveMotion(t *testing.T) {
	const (
		fs, f, v, k = 5000.0, 50.0, 1.0, 144.0 // Hz, Hz, m/s, m²
		noise       = 0.5                      // nT, as field
		t0          = 1.8e9
	)
	w := 2 * math.Pi * f
	vNoise := k * w * noise * 1e-9 // volts for noise nT at 50 Hz
	rng := rand.New(rand.NewPCG(30, 27))
	var c Columns
	var truth [][2]complex128 // the field phasor at each sample
	y := func(t float64) float64 { return -4 + v*t }
	for i := range int(9 * fs) {
		tt := float64(i) / fs
		b, dy := pairField(y(tt))
		rot := cmplx.Rect(math.Sqrt2, w*(t0+tt)) // √2 exp(iωt)
		var volts [3]float64
		for a := range 2 {
			db := (complex(0, w)*b[a] + complex(v, 0)*dy[a]) * rot // nT/s
			volts[a+1] = -k*real(db)*1e-9 + rng.NormFloat64()*vNoise
		}
		volts[0] = rng.NormFloat64() * vNoise
		c.Time = append(c.Time, t0+tt)
		for a := range 3 {
			c.B[a] = append(c.B[a], volts[a])
		}
		c.Pos[0] = append(c.Pos[0], 0)
		c.Pos[1] = append(c.Pos[1], y(tt))
		c.Pos[2] = append(c.Pos[2], 0)
		truth = append(truth, b)
	}
	coil := Coil{Turns: 4000, Area: 3e-4, Mu: 120}
	table := &CoilResponse{Freq: []float64{10, 1000}, Sens: []float64{k * 2 * math.Pi * 10, k * 2 * math.Pi * 1000}, Phase: []float64{-90, -90}}
	for _, conv := range []struct {
		name string
		do   func([]Window) error
	}{
		{"ideal law", func(ws []Window) error { return CoilWindows(ws, coil) }},
		{"measured table", func(ws []Window) error { return SensitivityWindows(ws, table) }},
	} {
		res, err := DemodulateColumns(&c, &DemodSettings{Freq: f, Drift: true})
		if err != nil {
			t.Fatal(err)
		}
		if err := conv.do(res.Windows); err != nil {
			t.Fatal(err)
		}
		worst, sum2, n := 0.0, 0.0, 0
		for _, win := range res.Windows {
			lo := int(math.Round((win.Time-t0)*fs - float64(win.N-1)/2))
			var want [2]complex128
			for i := lo; i < lo+win.N; i++ {
				want[0] += truth[i][0]
				want[1] += truth[i][1]
			}
			for a := range 2 {
				want[a] /= complex(float64(win.N), 0)
				pull := cmplx.Abs(win.B[a+1]-want[a]) / win.Sigma[a+1]
				worst = math.Max(worst, pull)
				sum2 += pull * pull
				n++
				if pull > 5 {
					t.Errorf("%s: window at y = %.2f m, axis %d: %.5g nT ∠%.4f°, true mean %.5g ∠%.4f° (%.1f sigma off)",
						conv.name, win.Pos[1], a+1, cmplx.Abs(win.B[a+1]), cmplx.Phase(win.B[a+1])*180/math.Pi,
						cmplx.Abs(want[a]), cmplx.Phase(want[a])*180/math.Pi, pull)
				}
			}
		}
		if rms := math.Sqrt(sum2 / float64(n)); !(rms <= 2) {
			t.Errorf("%s: windows off by %.2f of their sigmas RMS (worst %.2f), want 2 or less", conv.name, rms, worst)
		}
	}
}
