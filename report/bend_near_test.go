package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// TestBendNearBoreWidens: a 10 A cable entering a drilled bore 1 m under
// ground and diving at 15 degrees (testdata/scenarios/harlow-bore.toml,
// invented), traverses 10 to 50 m past the entry bend. The bend, one to
// four depths from the traverses, is model error each straight-line fit
// absorbs: the fits read 13.7 to 14.4 deg (6 to 10 sigma low) with depths
// and currents several sigma off, every fit sound, and no caution was
// made. The depths of neighbouring stations slope at 15.0 ± 0.2 deg. Each
// seed must now give a bend-near caution, and at every station it names
// the simulated truth (the scenario's polyline, Biot-Savart: dip 15 deg,
// depth 1 m + east tan 15 deg, 10 A) must lie within 2 of the widened
// sigmas of dip, depth and current.
func TestBendNearBoreWidens(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 5 traverses per seed")
	}
	tan := math.Tan(15 * math.Pi / 180)
	for _, seed := range []int64{1, 2} {
		d := scenarioDoc(t, "harlow-bore.toml", seed)
		bends := map[string]bool{}
		for _, f := range d.Findings {
			if f.Kind == "bend-near" {
				if f.Severity != "caution" {
					t.Errorf("seed %d: bend-near finding is a %s, want a caution: %s", seed, f.Severity, f.Message)
				}
				for _, k := range f.Groups {
					bends[k] = true
				}
			}
		}
		if len(bends) == 0 {
			t.Errorf("seed %d: no bend-near caution on a bore diving past its entry bend", seed)
		}
		for _, g := range d.Groups {
			if !bends[g.Key] || len(g.Sources) == 0 {
				continue
			}
			s := g.Sources[0]
			x := s.Point[0]
			depth := 1 + x*tan
			for _, q := range []struct {
				name     string
				v, sigma float64
				truth    float64
			}{
				{"dip", math.Abs(s.Dip), s.DipSigma, 15},
				{"depth", s.Depth, s.DepthSigma, depth},
				{"current", math.Abs(s.Current), s.CurrentSigma, 10},
			} {
				if !(math.Abs(q.v-q.truth) <= 2*q.sigma) {
					t.Errorf("seed %d: %s (east %.1f m) %s %.4g ± %.2g, truth %.4g: more than 2 sigma off", seed, g.Key, x, q.name, q.v, q.sigma, q.truth)
				}
			}
		}
	}
}

// TestBendNearStraightDipNoCaution: a straight conductor dipping along its
// run with no bend anywhere (the infinite line of DOMAIN.md, Biot-Savart,
// plus a uniform Earth field and 2 nT of noise), at 5, 15 and 25 degrees,
// 3 to 15 m under the middle of five traverses 40 m long and 10 m apart,
// 5 A, five seeds each (the layouts whose line would rise out of the
// ground under the first traverse left out: six layouts, 150 stations).
// The fitted dips agree with the slope of the
// neighbouring depths, and no bend-near caution may be made. The test logs
// the largest departure beyond 3 combined sigmas, which route.BendFloorDeg
// must clear.
func TestBendNearStraightDipNoCaution(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 5 traverses for 30 layouts")
	}
	const noise = 2.0
	earth := [3]float64{-420, 17600, -46900}
	ground := 0.0
	worst := math.Inf(-1)
	for _, dip := range []float64{5, 15, 25} {
		for _, mid := range []float64{3, 8, 15} {
			for seed := uint64(1); seed <= 5; seed++ {
				r := dip * math.Pi / 180
				u := [3]float64{math.Cos(r), 0, -math.Sin(r)}
				p0 := [3]float64{20, 0, -mid} // under the middle traverse
				if mid-20*math.Tan(r) < 0.5 {
					continue // the line would rise out of the ground under the first traverse
				}
				rng := rand.New(rand.NewPCG(seed, uint64(dip*100+mid)))
				var fits []Fit
				for i := range 5 {
					x := 10 * float64(i)
					var prob inverse.Problem
					for k := -200; k <= 200; k++ {
						q := [3]float64{x, 0.1 * float64(k), 1}
						b := lineField(p0, u, q, 5)
						var m [3]float64
						for a := range m {
							m[a] = b[a]*1e9 + earth[a] + noise*rng.NormFloat64()
						}
						prob.Points = append(prob.Points, q)
						prob.Fields = append(prob.Fields, m)
					}
					prob.Sigma = noise
					res, err := inverse.FitLines(&prob, &inverse.Settings{ReferenceZ: &ground})
					if err != nil {
						t.Fatalf("dip %g, %g m, seed %d, T%d: %v", dip, mid, seed, i+1, err)
					}
					fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: &prob, Result: res})
				}
				d, err := Build(Document{}, fits, &BuildSettings{Noise: noise})
				if err != nil {
					t.Fatal(err)
				}
				for _, f := range d.Findings {
					if f.Kind == "bend-near" {
						t.Errorf("dip %g, %g m, seed %d: a bend-near caution on a straight line: %s", dip, mid, seed, f.Message)
					}
				}
				st := d.Route.Stations
				for k := range st {
					a, p, b := st[max(k-1, 0)], st[k], st[min(k+1, len(st)-1)]
					g := d.Groups[k]
					if g.Key != p.Key || len(g.Sources) == 0 || !(g.Sources[0].DipSigma > 0) {
						continue
					}
					fit := math.Atan2(-p.Direction[2], math.Hypot(p.Direction[0], p.Direction[1])) * 180 / math.Pi
					run := b.Chainage - a.Chainage
					sl := (a.Point[2] - b.Point[2]) / run
					ss := math.Hypot(a.DepthSigma, b.DepthSigma) / run / (1 + sl*sl) * 180 / math.Pi
					ex := math.Abs(fit-math.Atan(sl)*180/math.Pi) - 3*math.Hypot(g.Sources[0].DipSigma, ss)
					worst = math.Max(worst, ex)
				}
			}
		}
	}
	t.Logf("largest departure of a fitted dip from its neighbours' slope beyond 3 combined sigmas: %.3f deg", worst)
	if !(worst < route.BendFloorDeg) {
		t.Errorf("a straight line's fitted dip departs from its neighbours' slope by %.3f deg beyond 3 combined sigmas, over the %.2f deg floor", worst, route.BendFloorDeg)
	}
}
