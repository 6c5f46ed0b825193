package inverse

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// A 10 A cable running east 1.0 m below ground, and a 6 A service 1.6 m down
// crossing it at 60 degrees at east 14 m (an invented scene at Brackwater
// Ings): 16 m traverses running north, sensors 0.3 m above the ground,
// readings 0.1 m apart. At east 2 m and 26 m the service crosses the
// traverse's line 20.8 m from its centre, 12.8 m beyond its end; at east 6
// m and 22 m, 13.9 m from it. The fields are the infinite lines' (Biot-Savart,
// DOMAIN.md) with the simulation's noise; the truth is the simulation's.

// serviceLines returns the cable and the service.
func serviceLines() []Line {
	return []Line{
		{Point: [3]float64{0, 0, -1}, Dir: [3]float64{1, 0, 0}},
		{Point: [3]float64{14, 0, -1.6}, Dir: [3]float64{0.5, math.Sqrt(3) / 2, 0}},
	}
}

// serviceTraverse returns the reading positions of the traverse at east x.
func serviceTraverse(x float64) [][3]float64 {
	pts := make([][3]float64, 161)
	for i := range pts {
		pts[i] = [3]float64{x, -8 + 0.1*float64(i), 0.3}
	}
	return pts
}

// checkCable checks the cable's line (the first source) against the truth
// (east-west, 1.3 m below the sensors, under the readings' centre) within
// 4 sigma, and says what it found.
func checkCable(t *testing.T, e SourceEstimate, current float64) {
	t.Helper()
	if d := math.Abs(e.Current) - current; !(math.Abs(d) <= 4*e.CurrentSigma) {
		t.Errorf("cable current %.4g ± %.2g A, true %g A", math.Abs(e.Current), e.CurrentSigma, current)
	}
	if !(math.Abs(e.Depth-1.3) <= 4*e.DepthSigma) {
		t.Errorf("cable depth %.4g ± %.2g m below the sensors, true 1.3 m", e.Depth, e.DepthSigma)
	}
	if !(math.Abs(e.Offset) <= 4*e.OffsetSigma) {
		t.Errorf("cable offset %.4g ± %.2g m, true 0", e.Offset, e.OffsetSigma)
	}
	if !(math.Abs(e.Azimuth-90) <= 4*e.AzimuthSigma) {
		t.Errorf("cable azimuth %.4g ± %.2g deg, true 90", e.Azimuth, e.AzimuthSigma)
	}
}

// TestUnresolvedServiceBeyondEndKept: DC readings, 5 nT of noise, at east 2 m
// and 26 m, ten seeds each. The automatic count keeps two lines on every
// traverse, and the cable is within 4 sigma of the truth in current, depth,
// offset and azimuth; the service's line is either resolved (its current
// over 3 sigma) or marked as a line the readings need but do not fix, none
// of its quantities identifiable, with a note on the fit. Before, the
// two-line fit was the cable split in two same-way lines (the service's
// line was never started beyond the traverse's end) or, found, was refused
// for the service's current within 3 sigma of zero, and the cable read
// 9.55 ± 0.03 A at 1.25 ± 0.004 m (17 and 11 sigma off) on 9 fits of 10.
func TestUnresolvedServiceBeyondEndKept(t *testing.T) {
	bg := [3]float64{-150, 19200, -45100}
	kept := 0
	for _, x := range []float64{2, 26} {
		pts := serviceTraverse(x)
		for seed := range uint64(10) {
			rng := rand.New(rand.NewPCG(seed, 77))
			p := &Problem{Points: pts, Fields: simulate(pts, serviceLines(), []float64{10, 6}, bg, 5, rng)}
			res, err := FitLines(p, nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Sources) != 2 {
				t.Errorf("east %g seed %d: %d lines, want the cable and the service", x, seed, len(res.Sources))
				continue
			}
			checkCable(t, res.Sources[0], 10)
			s := res.Sources[1]
			if keptNote(&s) {
				kept++
				if s.Identifiable != (Identifiable{}) || s.CurrentSigma != 0 || s.DepthSigma != 0 {
					t.Errorf("east %g seed %d: the service's line, kept unresolved, reads %+v", x, seed, s)
				}
				if !strings.Contains(strings.Join(res.Notes, " "), UnresolvedKeptNote) {
					t.Errorf("east %g seed %d: no note on the fit: %q", x, seed, res.Notes)
				}
			} else if !(math.Abs(s.Current) > 3*s.CurrentSigma) {
				t.Errorf("east %g seed %d: the service's line %.3g ± %.2g A, neither resolved nor marked", x, seed, s.Current, s.CurrentSigma)
			}
		}
	}
	if kept == 0 {
		t.Error("no fit kept the service's line unresolved: the fixture no longer tests the rule")
	}
}

// TestServiceBeyondEndACPhase: the same scene at 50 Hz, the cable at 30
// degrees and the service at -60 (AC phasors, 1 nT of noise), at east 6 m
// and 22 m, ten seeds each: two lines on every traverse, and the cable's
// current and phase within 4 sigma of the truth. Before, the service's line
// stopped at the azimuth bound, three lines were refused for its current,
// and the one line reported read the cable's phase 32.57 ± 0.18 degrees (14
// sigma off) on about half of such fits.
func TestServiceBeyondEndACPhase(t *testing.T) {
	cur := []complex128{cmplx.Rect(10, 30*math.Pi/180), cmplx.Rect(6, -60*math.Pi/180)}
	for _, x := range []float64{6, 22} {
		pts := serviceTraverse(x)
		for seed := range uint64(10) {
			rng := rand.New(rand.NewPCG(seed, 78))
			p := &Problem{Points: pts, Phasors: phasorReadings(pts, serviceLines(), cur, 1, rng)}
			res, err := FitLines(p, nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Sources) != 2 {
				t.Errorf("east %g seed %d: %d lines, want the cable and the service", x, seed, len(res.Sources))
			}
			e := res.Sources[0]
			checkCable(t, e, 10)
			if d := math.Remainder(e.Phase-30, 360); !(math.Abs(d) <= 4*e.PhaseSigma) {
				t.Errorf("east %g seed %d: cable phase %.3f ± %.2f deg, true 30", x, seed, e.Phase, e.PhaseSigma)
			}
		}
	}
}

// TestUnresolvedLineNotKeptOnLoneCable: the guard against over-fitting still
// holds. One 10 A cable (3 A at 3.3 m for the deep case) crossing a 16 m (or
// 8 m) traverse within 10 degrees of square, under or 3 to 7 m beside its
// centre, with white noise (DC 5 nT, AC 20 nT) and with noise correlated from
// reading to reading (lag-1 correlation 0.7 to 0.9, which the noise floor,
// from differences, does not see): over 40 seeds a configuration (15 with
// -short) no fit keeps a line whose current is not resolved, and with white
// noise every fit is of one line.
func TestUnresolvedLineNotKeptOnLoneCable(t *testing.T) {
	seeds := uint64(40)
	if testing.Short() {
		seeds = 15
	}
	bg := [3]float64{-150, 19200, -45100}
	for _, cf := range []struct {
		name                  string
		half, depth, cur, off float64
		noise, rho            float64
		ac                    bool
	}{
		{"DC", 8, 1.3, 10, 0, 5, 0, false},
		{"DC beside", 8, 1.3, 10, 7, 5, 0, false},
		{"DC short", 4, 1.3, 10, 0, 5, 0, false},
		{"DC deep", 8, 3.3, 3, 0, 5, 0, false},
		{"DC correlated", 8, 1.3, 10, 0, 5, 0.9, false},
		{"DC correlated beside", 8, 1.3, 10, 3, 2, 0.7, false},
		{"AC", 8, 1.3, 10, 0, 20, 0, true},
		{"AC correlated", 8, 1.3, 10, 2, 20, 0.8, true},
	} {
		t.Run(cf.name, func(t *testing.T) {
			for seed := range seeds {
				rng := rand.New(rand.NewPCG(seed, 991))
				var pts [][3]float64
				for y := -cf.half; y <= cf.half+1e-9; y += 0.1 {
					pts = append(pts, [3]float64{0, y, 0})
				}
				az := (80 + 20*rng.Float64()) * math.Pi / 180
				line := Line{Point: [3]float64{0, cf.off, -cf.depth}, Dir: [3]float64{math.Sin(az), math.Cos(az), 0}}
				p := &Problem{Points: pts}
				// AR(1) noise, stationary from the first reading (one
				// normal draw per value for rho = 0).
				var e [6]float64
				next := func(k int) float64 {
					e[k] = cf.rho*e[k] + math.Sqrt(1-cf.rho*cf.rho)*rng.NormFloat64()
					return cf.noise * e[k]
				}
				if cf.rho > 0 {
					for k := range e {
						e[k] = rng.NormFloat64()
					}
				}
				if cf.ac {
					p.Phasors = phasorReadings(pts, []Line{line}, []complex128{complex(cf.cur, 0)}, 0, nil)
					for i := range p.Phasors {
						for a := range 3 {
							p.Phasors[i][a] += complex(next(2*a), next(2*a+1))
						}
					}
				} else {
					p.Fields = simulate(pts, []Line{line}, []float64{cf.cur}, bg, 0, nil)
					for i := range p.Fields {
						for a := range 3 {
							p.Fields[i][a] += next(a)
						}
					}
				}
				res, err := FitLines(p, nil)
				if err != nil {
					t.Fatalf("seed %d: %v", seed, err)
				}
				for i := range res.Sources {
					if keptNote(&res.Sources[i]) {
						t.Errorf("seed %d: line %d kept unresolved on a lone cable: %q", seed, i+1, res.Notes)
					}
				}
				if cf.rho == 0 && len(res.Sources) != 1 {
					t.Errorf("seed %d: %d lines on a lone cable with white noise", seed, len(res.Sources))
				}
			}
		})
	}
}
