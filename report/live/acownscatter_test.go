package live

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// threeBarSite is an AC asset of three bars 0.2 m apart in a row across
// east, running north, their lines held (or fitted, model = "commission")
// through the bars' centres, seen by sensors at pos.
func threeBarSite(t *testing.T, noise, model string, pos [][3]float64) *AssetConfig {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "[[asset]]\nname = \"bus\"\nmode = \"ac\"\nfrequency = 50.0\nwindow = \"1s\"\nmodel = %q\ncommission = \"10s\"\nnoise = %s\n", model, noise)
	for i, p := range pos {
		fmt.Fprintf(&b, "  [[asset.sensor]]\n  name = \"s%d\"\n  position = [%g, %g, %g]\n", i+1, p[0], p[1], p[2])
	}
	for i, x := range []float64{-0.2, 0, 0.2} {
		fmt.Fprintf(&b, "  [[asset.conductor]]\n  name = \"%c\"\n  point = [%g, 0, 0]\n  direction = [0, 1, 0]\n", 'A'+i, x)
	}
	return testSite(t, b.String()).Asset("bus")
}

// threeBarWindow is a 1 s window, 1000 samples a second, of three
// 100 mm by 10 mm bars on edge (width up, centres at x = -0.2, 0, 0.2 m,
// z = 0) carrying 2000 A RMS at 0, -120 and 120 degrees at 50 Hz, plus
// the Earth's field and noise nT per sample. Each bar's field is the sum
// of 40 by 4 thin lines across its section (Biot-Savart for a long
// straight line, mu0 I / (2 pi r) = 200 nT m/A times I/r: the bar's
// field integrated numerically across its width and thickness); thin
// makes each bar one line at its centre instead.
func threeBarWindow(a *AssetConfig, t0, noise float64, thin bool, rng *rand.Rand) *window {
	const rate, n, nw, nt = 1000.0, 1000, 40, 4
	cur := []complex128{cmplx.Rect(2000, 0), cmplx.Rect(2000, -2*math.Pi/3), cmplx.Rect(2000, 2*math.Pi/3)}
	earth := [3]float64{-150, 19200, -45100}
	w := &window{Start: t0, End: t0 + n/rate, Sensors: make([]series, len(a.Sensors)), Reason: "complete"}
	for si, s := range a.Sensors {
		var ph [3]complex128 // the field's RMS phasor, nT ENU
		for c, xc := range []float64{-0.2, 0, 0.2} {
			lines := [][2]float64{{xc, 0}}
			if !thin {
				lines = nil
				for i := range nw {
					for j := range nt {
						lines = append(lines, [2]float64{xc - 0.005 + (float64(j)+0.5)*0.01/nt, -0.05 + (float64(i)+0.5)*0.1/nw})
					}
				}
			}
			for _, l := range lines {
				dx, dz := s.Position[0]-l[0], s.Position[2]-l[1]
				k := cur[c] * complex(200/float64(len(lines))/(dx*dx+dz*dz), 0)
				// Current along +y: B = mu0 I/(2 pi r) (y x r_hat).
				ph[0] += k * complex(dz, 0)
				ph[2] -= k * complex(dx, 0)
			}
		}
		sr := &w.Sensors[si]
		for i := range n {
			tt := t0 + float64(i)/rate
			// The phase from the window's start, so that 2 pi 50 t near
			// 5.6e11 rad keeps its precision (50 t0 is whole).
			rot := cmplx.Exp(complex(0, 2*math.Pi*(50*(tt-t0)+math.Mod(50*t0, 1))))
			var b [3]float64
			for k := range 3 {
				b[k] = math.Sqrt2*real(ph[k]*rot) + earth[k] + noise*rng.NormFloat64()
			}
			sr.T = append(sr.T, tt)
			sr.Bx, sr.By, sr.Bz = append(sr.Bx, b[0]), append(sr.By, b[1]), append(sr.Bz, b[2])
		}
	}
	return w
}

// rowAbove is five sensors in one row 0.3 m above the bars.
var rowAbove = [][3]float64{{-0.4, 0, 0.3}, {-0.2, 0, 0.3}, {0, 0, 0.3}, {0.2, 0, 0.3}, {0.4, 0, 0.3}}

// Three AC busbars with noise = 0 ("estimate from the fit residuals"):
// lines held through the bars' centres read 2-4 % high, 3.9-5.2 sigma
// (the review's serve run: 2043, 2074, 2043 A for 2000 A). Only DC
// windows were judged against their own scatter, so these were "good"
// with no alarm (reduced chi-square 1 by construction). Each sensor's
// scatter about its sine fit now gives the noise of its phasor, and the
// window is "degraded" with the alarm, as with the noise stated. Lines
// where the field's lines are (thin) stay "good" in every one of five
// seeds: the measured noise does not make a clean window degraded.
func TestACBusbarsJudgedWithoutNoise(t *testing.T) {
	a := threeBarSite(t, "0", "fixed", rowAbove)
	for _, thin := range []bool{false, true} {
		seeds := uint64(1)
		if thin {
			seeds = 5
		}
		for seed := range seeds {
			p := solvingProcessor(t, a, []string{"A", "B", "C"})
			w := threeBarWindow(a, 1796279400, 10, thin, rand.New(rand.NewPCG(seed, 20)))
			e, alarms := p.solve(w, p.reduce(w))
			t.Logf("thin %v seed %d: quality %s, chi2 %.3g on %d, B %.2f +- %.2f A", thin, seed, e.Quality, e.Chi2, e.DOF, e.Conductors[1].Current, e.Conductors[1].CurrentSigma)
			al, degraded := alarmFor(alarms, AlarmDegraded, "")
			if thin {
				if e.Quality != "good" || degraded {
					t.Errorf("thin lines, seed %d: quality %s, degraded alarm %v; want good, none", seed, e.Quality, degraded)
				}
				continue
			}
			if e.Quality != "degraded" || !degraded {
				t.Fatalf("bars: quality %s, degraded alarm %v; want degraded with the alarm", e.Quality, degraded)
			}
			if !strings.Contains(al.Message, "own scatter") || !strings.Contains(al.Message, "flat bar") {
				t.Errorf("bars: alarm %q names neither the window's own scatter nor an extended conductor", al.Message)
			}
		}
	}
}

// The noise an AC sensor's sine fit measures (reduced.scatter) is that
// of each quadrature of its phasor: for white noise of sigma per sample,
// sigma g / sqrt(n), as the stated noise gives it (the unbiased residual
// variance RSS / (n - p) of a least-squares fit, Gauss-Markov).
// Tolerance 5 %: the estimate from 3 x 1000 residuals has a relative
// sigma of about 1.3 %.
func TestACScatterIsPhasorNoise(t *testing.T) {
	a := threeBarSite(t, "4", "fixed", rowAbove)
	p, err := newProcessor(a, "test")
	if err != nil {
		t.Fatal(err)
	}
	r := p.reduce(threeBarWindow(a, 1796279400, 4, true, rand.New(rand.NewPCG(3, 3))))
	if len(r.scatter) != len(r.in.Sigmas) || len(r.scatter) != len(a.Sensors) {
		t.Fatalf("%d scatters, %d sigmas, %d sensors", len(r.scatter), len(r.in.Sigmas), len(a.Sensors))
	}
	for k := range r.scatter {
		if ratio := r.scatter[k] / r.in.Sigmas[k]; math.Abs(ratio-1) > 0.05 {
			t.Errorf("sensor %d: measured %.4g nT, stated noise's %.4g nT (ratio %.3f)", k, r.scatter[k], r.in.Sigmas[k], ratio)
		}
	}
}

// Commissioning three AC busbars with noise = 0: commissionMisfit judged
// nothing without a stated noise, so lines within 6 mm of the bars'
// centres were stored and every later window read 2-6 % high at up to
// 11 sigma (the review's ring of eight sensors 0.3 m from the bars). The
// fit is now judged against the noise the windows measured (their own
// scatter) and refused as a flat bar, as with the noise stated; the
// same layout's thin lines still commission. The DC busbar of
// barWindow with noise = 0 is refused the same way.
func TestCommissionFlatBarsRefusedWithoutNoise(t *testing.T) {
	ring := [][3]float64{{-0.2, 0, 0.3}, {-0.2, 0, -0.3}, {0, 0, 0.3}, {0, 0, -0.3}, {0.2, 0, 0.3}, {0.2, 0, -0.3}, {-0.5, 0, 0}, {0.5, 0, 0}}
	a := threeBarSite(t, "0", "commission", ring)
	p, err := newProcessor(a, "test")
	if err != nil {
		t.Fatal(err)
	}
	for _, thin := range []bool{false, true} {
		rng := rand.New(rand.NewPCG(1, 20))
		var reds []*reduced
		for k := range 10 {
			reds = append(reds, p.reduce(threeBarWindow(a, 1796279400+float64(k), 10, thin, rng)))
		}
		sum := meanReadings(reds, len(a.Sensors), true)
		if !(sum.WindowSigma > 0) {
			t.Errorf("thin %v: no window noise measured", thin)
		}
		conds, err := InverseCommissioner{}.Commission(&sum, a.Conductors)
		t.Logf("thin %v: window noise %.3g nT; %v", thin, sum.WindowSigma, err)
		var mis *misfitError
		switch {
		case thin && err != nil:
			t.Errorf("thin lines: %v; want commissioned", err)
		case !thin && (!errors.As(err, &mis) || !strings.Contains(err.Error(), "flat bar")):
			t.Errorf("bars: commissioned %+v, err %v; want a misfit naming an extended conductor", conds, err)
		}
	}

	dc := testSite(t, strings.Replace(barSite, "NOISE", "0", 1)).Asset("harrow-bar")
	pd, err := newProcessor(dc, "test")
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(8, 8))
	var reds []*reduced
	for range 10 {
		reds = append(reds, pd.reduce(barWindow(dc, 50, 0.5, rng)))
	}
	sum := meanReadings(reds, len(dc.Sensors), false)
	stated := []ConductorConfig{{Name: "bar", Point: [3]float64{}, pointSet: true, Direction: [3]float64{0, 1, 0}, dirSet: true}}
	_, err = InverseCommissioner{}.Commission(&sum, stated)
	var mis *misfitError
	if !errors.As(err, &mis) || !strings.Contains(err.Error(), "flat bar") {
		t.Errorf("DC busbar, noise = 0: %v; want a misfit naming an extended conductor", err)
	}
}
