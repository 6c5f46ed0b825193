package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
	"time"
	"undercurrent/ingest/ingesttest"

	"undercurrent/inverse"
)

// synthWindow builds one window of samples for asset a from the inverse
// package's forward model (Line.Field, checked there against the
// DOMAIN.md Biot-Savart values): conductor c carries the complex RMS
// current cur[c] (DC: real, phase ignored), plus a uniform background bg
// (nT ENU, DC only) and white noise of noise nT per sample. Readings are
// rotated into each sensor's frame by the transpose of its orientation.
func synthWindow(a *AssetConfig, cur []complex128, bg [3]float64, t0 float64, rate float64, n int, noise float64, rng *rand.Rand) *window {
	w := &window{Start: t0, End: t0 + float64(n)/rate, Sensors: make([]series, len(a.Sensors)), Closed: time.Now(), Reason: "complete"}
	for si, s := range a.Sensors {
		per := unitFieldsNT(a, s.Position)
		R := orientation(s.Orientation)
		sr := &w.Sensors[si]
		for i := 0; i < n; i++ {
			t := t0 + float64(i)/rate
			var enu [3]float64
			for k := range 3 {
				for c := range per {
					if a.Mode == "ac" {
						// b(t) = sqrt(2) Re(B exp(i 2 pi f t)), the phasor convention of calibrate.
						enu[k] += math.Sqrt2 * real(complex(per[c][k], 0)*cur[c]*cmplx.Exp(complex(0, 2*math.Pi*a.Frequency*t)))
					} else {
						enu[k] += per[c][k] * real(cur[c])
					}
				}
				enu[k] += bg[k] + noise*rng.NormFloat64()
			}
			var sen [3]float64 // R^T enu
			for k := range 3 {
				sen[k] = R[0][k]*enu[0] + R[1][k]*enu[1] + R[2][k]*enu[2]
			}
			sr.T = append(sr.T, t)
			sr.Bx, sr.By, sr.Bz = append(sr.Bx, sen[0]), append(sr.By, sen[1]), append(sr.Bz, sen[2])
		}
	}
	return w
}

func harrowFen(t testing.TB) *Site {
	t.Helper()
	s, err := LoadSite(ingesttest.RepoRoot(t) + "/testdata/site/harrow-fen.toml")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// The AC fast path recovers the currents and phases of a go/return pair
// within their uncertainties and flags the leakage between them.
func TestACWindowRecoversCurrents(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane") // 50 Hz, go and return, one sensor rotated 90 degrees
	a.Alarms.MaxImbalance = 1
	rng := rand.New(rand.NewPCG(6, 50))
	truth := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(117, 0.3+math.Pi)} // 3 A leaks
	w := synthWindow(a, truth, [3]float64{}, 1764650000, 1000, 1000, 2, rng)
	p := solvingProcessor(t, a, []string{"go", "return"})
	r := p.reduce(w)
	e, alarms := p.solve(w, r)
	if e.Quality != "good" {
		t.Fatalf("quality %s", e.Quality)
	}
	for i, c := range e.Conductors {
		got := cmplx.Rect(c.Current, *c.Phase*math.Pi/180)
		// Five sigma: a failure here is a real disagreement, not bad luck.
		if d := cmplx.Abs(got - truth[i]); d > 5*c.CurrentSigma || c.CurrentSigma <= 0 {
			t.Errorf("%s: %.4f A at %.3f deg, truth %.4f A at %.3f deg (sigma %.3g A)", c.Name, c.Current, *c.Phase,
				cmplx.Abs(truth[i]), cmplx.Phase(truth[i])*180/math.Pi, c.CurrentSigma)
		}
	}
	var imb *Alarm
	for i := range alarms {
		if alarms[i].Kind == AlarmImbalance {
			imb = &alarms[i]
		}
	}
	if imb == nil || math.Abs(imb.Value-3) > 0.1 {
		t.Fatalf("imbalance alarm %+v, want one of about 3 A", imb)
	}
}

// The DC fast path separates a conductor's field from the Earth's field
// (fitted as a uniform background).
func TestDCWindowWithEarthField(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Mode, a.Frequency = "dc", 0
	rng := rand.New(rand.NewPCG(7, 1))
	earth := [3]float64{1520, 17850, -45760} // a mid-latitude field, nT (order of magnitude: common practice)
	truth := []complex128{35, -35}
	w := synthWindow(a, truth, earth, 1764650000, 200, 200, 1, rng)
	p := solvingProcessor(t, a, []string{"go", "return"})
	e, _ := p.solve(w, p.reduce(w))
	for i, c := range e.Conductors {
		if math.Abs(c.Current-real(truth[i])) > 5*c.CurrentSigma+1e-9 {
			t.Errorf("%s: %.5f +- %.2g A, truth %v", c.Name, c.Current, c.CurrentSigma, real(truth[i]))
		}
	}
	for k := range 3 {
		if math.Abs(e.Background[k]-earth[k]) > 1 {
			t.Errorf("background %d: %.2f nT, want %.0f", k, e.Background[k], earth[k])
		}
	}
}

// A stuck sensor is left out and alarmed; the others still solve.
func TestStuckSensorExcluded(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	rng := rand.New(rand.NewPCG(8, 2))
	w := synthWindow(a, []complex128{100, -100}, [3]float64{}, 0, 1000, 500, 2, rng)
	for i := range w.Sensors[2].Bz {
		w.Sensors[2].Bz[i] = 4095 // a saturated or frozen channel
	}
	p := solvingProcessor(t, a, []string{"go", "return"})
	e, alarms := p.solve(w, p.reduce(w))
	if e.Sensors != 4 || e.Missing["fl-e1"] != "stuck" {
		t.Fatalf("sensors %d missing %v", e.Sensors, e.Missing)
	}
	if len(alarms) == 0 || alarms[0].Kind != AlarmStuck || alarms[0].Subject != "fl-e1" {
		t.Fatalf("alarms %+v", alarms)
	}
}

// BenchmarkWindow100Sensors1kHz is the fast path for one 1 s window of
// 100 three-axis sensors at 1 kHz (AC, two conductors): reduction (sine
// fits) and the fixed-geometry solve.
func BenchmarkWindow100Sensors1kHz(b *testing.B) {
	for _, mode := range []string{"dc", "ac"} {
		b.Run(mode, func(b *testing.B) {
			a := &AssetConfig{Name: "bench", Mode: mode, Frequency: 50, Alarms: AlarmConfig{MaxChi2: 25},
				Conductors: []ConductorConfig{{Name: "go", Point: [3]float64{-0.15, 0, -0.8}, Direction: [3]float64{0, 1, 0}},
					{Name: "return", Point: [3]float64{0.15, 0, -0.8}, Direction: [3]float64{0, 1, 0}}}}
			for i := 0; i < 100; i++ {
				a.Sensors = append(a.Sensors, SensorConfig{Name: "s", Position: [3]float64{-5 + 0.1*float64(i), float64(i % 7), 0.3}})
			}
			rng := rand.New(rand.NewPCG(1, 1))
			w := synthWindow(a, []complex128{100, -100}, [3]float64{}, 0, 1000, 1000, 2, rng)
			p, _ := newProcessor(a, "bench")
			est, _ := NewInverseEstimator(a.Mode, a.Conductors)
			p.est, p.names = est, []string{"go", "return"}
			b.ReportAllocs()
			for b.Loop() {
				p.solve(w, p.reduce(w))
			}
		})
	}
}

// unitFieldsNT returns the field (nT, ENU) of one ampere in each of a's
// conductors at pos: the inverse package's Biot-Savart line field
// (Line.Field, checked there against the DOMAIN.md values).
func unitFieldsNT(a *AssetConfig, pos [3]float64) [][3]float64 {
	var per [][3]float64
	for _, c := range a.Conductors {
		f := inverse.Line{Point: c.Point, Dir: c.Direction}.Field(pos, 1)
		if c.Kind == "segment" {
			f = inverse.Segment{A: c.From, B: c.To}.Field(pos, 1)
		}
		per = append(per, [3]float64{f[0] * 1e9, f[1] * 1e9, f[2] * 1e9})
	}
	return per
}
