package live

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// clip holds every reading of w within ±rail nT, as a sensor driven past
// its range reads its rail, then adds readout nT of noise per reading
// (a logger behind the clipped front end).
func clip(w *window, rail, readout float64, rng *rand.Rand) {
	for i := range w.Sensors {
		s := &w.Sensors[i]
		for _, col := range [][]float64{s.Bx, s.By, s.Bz} {
			for k, x := range col {
				col[k] = math.Max(-rail, math.Min(rail, x))
				if readout > 0 {
					col[k] += readout * rng.NormFloat64()
				}
			}
		}
	}
}

// farAbove is five sensors 1.5-2 m from the bars, where their field
// (2.4e4-4.9e4 nT peak) is within a ±100,000 nT range.
var farAbove = [][3]float64{{-1, 0, 2}, {0, 0, 2}, {1, 0, 2}, {-2, 0, 1.5}, {2, 0, 1.5}}

// busProcessor is a processor of site with the estimator of its three
// bars.
func busProcessor(t *testing.T, site *AssetConfig) *processor {
	t.Helper()
	p := solvingProcessor(t, site, []string{"A", "B", "C"})
	return p
}

// Sensors clipped at ±100,000 nT 0.3 m above three 2000 A busbars without
// range_nt: their flat-topped waveforms passed, the bars read 261, 284
// and 254 A for 2000 A (review: 257, 280, 256 A), no sensor was named
// and the alarm blamed the model. Each sensor is now left out as
// saturated with an alarm that says it held its rail; with every sensor
// clipped the failed window says so (it said no sensor gave enough
// samples, though each gave 1000), and no over-current alarm comes from
// the clipped readings. The same with the rail read through 10 nT of
// readout noise (noise = 10 stated), with noise = 0 (the rail exact),
// and with range_nt stated (saturatedAxis).
//
// The field is checked against Biot-Savart for long straight lines
// (B = mu0 I / (2 pi r)): at sensor s3, above the middle bar, the
// outer bars' vertical fields add to sqrt(3) 200 nT m/A x 2000 sqrt(2) A
// x 0.2 m / 0.13 m^2 = 1.5075e6 nT peak, 15 times the rail (the bars'
// finite section adds 1.1 %: 1.524e6 nT, within 2 %).
func TestACRailWithoutRangeLeftOut(t *testing.T) {
	for _, c := range []struct {
		name           string
		noise          string
		readout, rng   float64
		railInMessages bool
	}{
		{"noise 10, exact rail", "10", 0, 0, true},
		{"noise 10, rail read with 10 nT readout noise", "10", 10, 0, true},
		{"noise 0, exact rail", "0", 0, 0, true},
		{"range_nt = 100000", "10", 0, 100000, false},
	} {
		site := threeBarSite(t, c.noise, "fixed", rowAbove)
		site.Alarms.MaxCurrent = 1000
		for i := range site.Sensors {
			site.Sensors[i].Range = c.rng
		}
		p := busProcessor(t, site)
		w := threeBarWindow(site, 1796279400, 10, false, rand.New(rand.NewPCG(1, 20)))
		var peak float64
		for _, z := range w.Sensors[2].Bz {
			peak = math.Max(peak, math.Abs(z-(-45100)))
		}
		if want := math.Sqrt(3) * 200 * 2000 * math.Sqrt2 * 0.2 / 0.13; math.Abs(peak/want-1) > 0.02 {
			t.Fatalf("s3's vertical field peaks at %.4g nT; Biot-Savart gives %.4g nT", peak, want)
		}
		clip(w, 100000, c.readout, rand.New(rand.NewPCG(2, 20)))
		e, alarms := p.solve(w, p.reduce(w))
		if e.Quality != "failed" || len(e.Missing) != len(site.Sensors) {
			t.Errorf("%s: quality %s, missing %v; want failed, every sensor saturated", c.name, e.Quality, e.Missing)
			continue
		}
		n := 0
		for _, al := range alarms {
			switch al.Kind {
			case AlarmSaturated:
				n++
				if c.railInMessages && !strings.Contains(al.Message, "clipped at its rail") {
					t.Errorf("%s: saturated alarm %q does not say the sensor held its rail", c.name, al.Message)
				}
			case AlarmOverCurrent:
				t.Errorf("%s: over-current alarm from clipped readings: %q", c.name, al.Message)
			}
		}
		if n != len(site.Sensors) {
			t.Errorf("%s: %d saturated alarms for %d sensors", c.name, n, len(site.Sensors))
		}
		al, _ := alarmFor(alarms, AlarmDegraded, "")
		t.Logf("%s: %s", c.name, al.Message)
		if !strings.Contains(al.Message, "every sensor was saturated in the window (s1, s2, s3, s4, s5)") || strings.Contains(al.Message, "enough usable samples") {
			t.Errorf("%s: failed window's alarm %q; want it worded as saturation", c.name, al.Message)
		}
	}
}

// With five more sensors 1.5-2 m away, within their range, the clipped
// five are left out and the far ones read the bars: 2001-2003 A for
// 2000 A (before: 266, 333 and 259 A with the clipped ones in), and the
// over-current alarm at 1000 A is raised from their readings.
func TestACRailLeftOutOthersRead(t *testing.T) {
	site := threeBarSite(t, "10", "fixed", append(append([][3]float64{}, rowAbove...), farAbove...))
	site.Alarms.MaxCurrent = 1000
	p := busProcessor(t, site)
	w := threeBarWindow(site, 1796279400, 10, false, rand.New(rand.NewPCG(1, 20)))
	clip(w, 100000, 0, nil)
	e, alarms := p.solve(w, p.reduce(w))
	for i, s := range site.Sensors {
		if want := i < len(rowAbove); (e.Missing[s.Name] == "saturated") != want {
			t.Errorf("sensor %s: missing %q, want saturated %v", s.Name, e.Missing[s.Name], want)
		}
	}
	if e.Quality == "failed" || len(e.Conductors) != 3 {
		t.Fatalf("quality %s with %d conductors; want an estimate from the five far sensors", e.Quality, len(e.Conductors))
	}
	for _, c := range e.Conductors {
		t.Logf("%s: %.1f +- %.1f A", c.Name, c.Current, c.CurrentSigma)
		if math.Abs(c.Current-2000) > 20 {
			t.Errorf("conductor %s reads %.1f A, want 2000 A within 1 %%", c.Name, c.Current)
		}
		if _, ok := alarmFor(alarms, AlarmOverCurrent, c.Name); !ok {
			t.Errorf("conductor %s: no over-current alarm for %.1f A above 1000 A", c.Name, c.Current)
		}
	}
}

// The same bars, not clipped, sampled 20 times a cycle in step with the
// mains (the window's 1000 samples a second at 50 Hz) and, on the two
// axes the field is on, rounded to the sensor's resolution: 1 nT, where each cycle's peak sample repeats its
// value every cycle, and a coarse 20,000 nT (a 16-bit reading of
// ±655,360 nT: the peak step held by up to a fifth of the samples). No
// sensor is taken as railed, with noise = 0 and with noise stated.
func TestACCleanSineNotRailed(t *testing.T) {
	for _, noise := range []string{"0", "10"} {
		for _, q := range []float64{1, 20000} {
			site := threeBarSite(t, noise, "fixed", rowAbove)
			p := busProcessor(t, site)
			rng := rand.New(rand.NewPCG(1, 20))
			w := threeBarWindow(site, 1796279400, 0, true, rng)
			for i := range w.Sensors {
				s := &w.Sensors[i]
				for _, col := range [][]float64{s.Bx, s.Bz} {
					for k, x := range col {
						col[k] = q * math.Round(x/q)
					}
				}
				for k := range s.By {
					s.By[k] += 0.3 * rng.NormFloat64() // no AC along the bars: else stuck
				}
			}
			e, alarms := p.solve(w, p.reduce(w))
			if len(e.Missing) > 0 {
				t.Errorf("noise %s, resolution %g nT: missing %v; want every sensor used", noise, q, e.Missing)
			}
			for _, al := range alarms {
				if al.Kind == AlarmSaturated {
					t.Errorf("noise %s, resolution %g nT: %s", noise, q, al.Message)
				}
			}
		}
	}
}

// railAxis leaves what a sine gives alone: a sine sampled ten times a
// cycle in step with the grid (its peak sample's value repeated every
// cycle, a tenth or a fifth of the samples), a 50 nT sine rounded to
// 1 nT with 0.1 nT of noise (its top step holding a few percent), a
// steady axis rounded to a coarse step, and a sine of 20 times its noise
// with that noise stated (within 6 noise of its peak for some 20 % of
// its samples), in five seeds each; and finds a sine clipped 5 % below
// its peak at one end (the rail holding acos(0.95)/pi = 10 % of a cycle)
// and one of 100,000 nT clipped at 80 % of its peak at both ends, read
// with 10 nT of noise, stated (each rail holding acos(0.8)/pi = 20 %;
// the limit at 40 samples a cycle is 1.5 (2/40 + acos(1 - 120/80,000)/pi)
// = 10 %).
func TestRailAxisSineNotRail(t *testing.T) {
	mk := func(rate float64, n int, f func(i int, t float64) float64) *series {
		s := &series{}
		for i := range n {
			tt := 1796279400 + float64(i)/rate
			s.T = append(s.T, tt)
			s.Bx, s.By, s.Bz = append(s.Bx, f(i, tt)), append(s.By, 19200), append(s.Bz, -45100+f(i, tt)/3)
		}
		return s
	}
	for seed := range uint64(5) {
		rng := rand.New(rand.NewPCG(5, seed))
		ph := 2 * math.Pi * rng.Float64()
		cases := []struct {
			name  string
			noise float64
			s     *series
			rail  bool
		}{
			{"in step, peak on a sample", 0, mk(500, 500, func(i int, _ float64) float64 { return 1000 * math.Cos(2*math.Pi*float64(i%10)/10) }), false},
			{"in step, peak between two", 0, mk(500, 500, func(i int, _ float64) float64 { return 1000 * math.Cos(2*math.Pi*(float64(i%10)+0.5)/10) }), false},
			{"rounded to 1 nT", 0, mk(2000, 2000, func(i int, _ float64) float64 {
				return math.Round(50*math.Cos(2*math.Pi*50*float64(i)/2000+ph) + 0.1*rng.NormFloat64())
			}), false},
			{"steady, 0.03 nT noise rounded to 0.1 nT", 0, mk(2000, 2000, func(i int, _ float64) float64 {
				return math.Round((12.34+0.03*rng.NormFloat64())*10) / 10
			}), false},
			{"sine of 20 noise, noise stated", 10, mk(2000, 2000, func(i int, _ float64) float64 {
				return 200*math.Cos(2*math.Pi*50*float64(i)/2000+ph) + 10*rng.NormFloat64()
			}), false},
			{"steady, noise stated", 10, mk(2000, 2000, func(i int, _ float64) float64 { return 12.34 + 10*rng.NormFloat64() }), false},
			{"clipped 5 % below the peak", 0, mk(2000, 2000, func(i int, _ float64) float64 {
				return math.Min(950, 1000*math.Cos(2*math.Pi*50.03*float64(i)/2000+ph)+0.1*rng.NormFloat64())
			}), true},
			{"clipped at 80 % at both ends, 10 nT readout noise, stated", 10, mk(2000, 2000, func(i int, _ float64) float64 {
				return math.Max(-80000, math.Min(80000, 1e5*math.Cos(2*math.Pi*50.03*float64(i)/2000+ph))) + 10*rng.NormFloat64()
			}), true},
		}
		for _, c := range cases {
			axis, v, share, both := railAxis(c.s, 50, c.noise)
			t.Logf("seed %d, %s: axis %q, %g nT held by %.3f (both ends %v)", seed, c.name, axis, v, share, both)
			if (axis != "") != c.rail {
				t.Errorf("seed %d, %s: axis %q (share %.3f), want a rail %v", seed, c.name, axis, share, c.rail)
			}
		}
	}
}

// A window whose sensors are saturated but for one that sent nothing
// names the saturated ones in its failure (it said no sensor gave enough
// samples, as for a window of silent sensors).
func TestACRailSomeSaturatedOthersSilent(t *testing.T) {
	site := threeBarSite(t, "10", "fixed", rowAbove)
	p := busProcessor(t, site)
	w := threeBarWindow(site, 1796279400, 10, false, rand.New(rand.NewPCG(1, 20)))
	clip(w, 100000, 0, nil)
	w.Sensors[4] = series{}
	e, alarms := p.solve(w, p.reduce(w))
	al, _ := alarmFor(alarms, AlarmDegraded, "")
	if e.Quality != "failed" || e.Missing["s5"] != "silent" || !strings.Contains(al.Message, "saturated: s1, s2, s3, s4 (") {
		t.Errorf("quality %s, missing %v, alarm %q; want failed, s5 silent, s1-s4 named saturated", e.Quality, e.Missing, al.Message)
	}
}

// A fit that fails with the one sensor left (three AC currents from one
// sensor's three phasors) names the saturated ones too.
func TestACRailFitFailsNamesSaturated(t *testing.T) {
	site := threeBarSite(t, "10", "fixed", rowAbove)
	p := busProcessor(t, site)
	w := threeBarWindow(site, 1796279400, 10, false, rand.New(rand.NewPCG(1, 20)))
	s1 := w.Sensors[0]
	s1.T, s1.Bx, s1.By, s1.Bz = append([]float64(nil), s1.T...), append([]float64(nil), s1.Bx...), append([]float64(nil), s1.By...), append([]float64(nil), s1.Bz...)
	clip(w, 100000, 0, nil)
	w.Sensors[0] = s1
	e, alarms := p.solve(w, p.reduce(w))
	al, _ := alarmFor(alarms, AlarmDegraded, "")
	if e.Quality != "failed" || !strings.Contains(al.Message, "1 usable sensors failed") || !strings.Contains(al.Message, "left out as saturated (the field beyond their range): s2, s3, s4, s5") {
		t.Errorf("quality %s, missing %v, alarm %q; want failed, s2-s5 named saturated", e.Quality, e.Missing, al.Message)
	}
}
