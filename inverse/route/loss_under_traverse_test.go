package route

import (
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// underTraverseRoute is a straight conductor 1.8 m below the sensors
// carrying 10 A, losing loss amperes at chainage 100 m, directly under
// the sixth of eleven traverses 20 m apart (the review's Quillbrook Drove
// test route; undercurrent simulate and locate at 5 nT gave station
// sigmas of 0.022-0.025 A). Each station reads the current a point above
// a semi-infinite line sees past its end (Biot-Savart over a half line,
// plateau.go): the fraction (1 + d/sqrt(d^2 + h^2))/2 of the upstream
// current at d metres before the loss, so the station over it reads half
// the loss (9.80 A; the review's fitted stations read 9.78-9.82 A there).
// Simulated truth, plus independent normal noise of the stations' sigma.
func underTraverseRoute(rng *rand.Rand, loss, sigma float64) []Station {
	const h, at = 1.8, 100.0
	st := make([]Station, 11)
	for i := range st {
		x := 20 * float64(i)
		d := at - x
		c := 10 - loss*(1-(1+d/math.Hypot(d, h))/2)
		st[i] = Station{Key: key(i + 1), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{0, 1, 0},
			Current: c + sigma*rng.NormFloat64(), CurrentSigma: sigma, Depth: h, DepthSigma: 0.004, OK: true}
	}
	return st
}

// TestLossUnderTraverseFound: a 0.4 A loss directly under a traverse, 16
// of the stations' sigmas (0.024 A) and some 20 sigmas of the levels
// either side, is reported as a fall bracketing it on every one of 300
// draws, its size's pulls (size + 0.4 A) / sigma with a mean within 0.5,
// a standard deviation of 0.6-1.3 and 90% or more within two sigma; on
// the same routes with no loss, a step or change is reported on at most
// 2% of draws. Before, the station over the loss, reading half of it,
// was taken as a level or the loss's two intervals as a trend: the loss
// went unreported on 6 of 100 simulated logs (found in review) and on 1
// of these 300 draws, and with a looser StepK was sized from a transition
// of free width as 0.58 ± 0.50 A.
func TestLossUnderTraverseFound(t *testing.T) {
	const draws, sigma = 300, 0.024
	rng := rand.New(rand.NewPCG(41, 0x10ad))
	missed, others := 0, 0
	var z []float64
	for range draws {
		r, err := Build(underTraverseRoute(rng, 0.4, sigma), nil)
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, f := range r.Findings {
			if f.Kind != KindCurrentStep && f.Kind != KindCurrentChange {
				continue
			}
			v, _ := valueNamed(f, "step")
			// The chainages are measured along the fitted route: the
			// sixth station's lies within a millimetre of 100 m.
			if !found && f.Kind == KindCurrentStep && v.Value < 0 && f.From <= 101 && 99 <= f.To {
				found = true
				z = append(z, (v.Value+0.4)/v.Sigma)
				continue
			}
			others++
		}
		if !found {
			missed++
		}
	}
	s := summarise(z)
	t.Logf("missed %d of %d, other steps %d; size %s", missed, draws, others, s)
	if missed > 0 {
		t.Errorf("0.4 A loss under a traverse missed on %d of %d draws, want none", missed, draws)
	}
	if math.Abs(s.mean) > 0.5 || s.sd < 0.6 || s.sd > 1.3 || s.cover2 < 0.9 {
		t.Errorf("size pulls %s, want a mean within 0.5, sd 0.6-1.3 and 90%% within two sigma", s)
	}
	if others > draws/50 {
		t.Errorf("%d other steps or changes reported over %d draws, want at most %d", others, draws, draws/50)
	}
	false0 := 0
	for range draws {
		r, err := Build(underTraverseRoute(rng, 0, sigma), nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange {
				false0++
				break
			}
		}
	}
	t.Logf("no loss: a step or change on %d of %d draws", false0, draws)
	if false0 > draws/50 {
		t.Errorf("with no loss a step or change reported on %d of %d draws, want at most %d", false0, draws, draws/50)
	}
}

// underTraverseFitted simulates the review's survey and fits each
// traverse with one infinite line, as locate does: a straight conductor
// 1.5 m deep carrying 10 A to chainage 100 m and 10 - loss A beyond it
// (the current leaving adds no field of its own, the simulate package's
// convention), eleven traverses 20 m apart, each 8 m long across it with
// three-axis readings every 0.1 m at 0.3 m above ground, noiseNT of noise
// per axis. Simulated truth; invented Quillbrook Drove figures.
func underTraverseFitted(t testing.TB, rng *rand.Rand, loss, noiseNT float64) []Station {
	cable := inverse.Polyline{Vertices: [][3]float64{{-2000, 0, -1.5}, {100, 0, -1.5}, {2000, 0, -1.5}}}
	cur := []float64{10, 10 - loss}
	earth := [3]float64{-150, 19200, -45100} // nT, as the review's scenario
	ground := 0.0
	set := &inverse.Settings{Count: 1, ReferenceZ: &ground}
	st := make([]Station, 11)
	for i := range st {
		x := 20 * float64(i)
		var p inverse.Problem
		for k := range 81 {
			r := [3]float64{x, -4 + 0.1*float64(k), 0.3}
			b := cable.Field(r, cur)
			p.Points = append(p.Points, r)
			p.Fields = append(p.Fields, [3]float64{
				earth[0] + 1e9*b[0] + noiseNT*rng.NormFloat64(),
				earth[1] + 1e9*b[1] + noiseNT*rng.NormFloat64(),
				earth[2] + 1e9*b[2] + noiseNT*rng.NormFloat64(),
			})
		}
		p.Sigma = noiseNT
		res, err := inverse.FitLines(&p, set)
		if err != nil {
			t.Fatal(err)
		}
		s := res.Sources[0]
		st[i] = Station{Key: key(i + 1), Point: s.Point, Dir: s.Dir, Current: s.Current, CurrentSigma: s.CurrentSigma,
			Depth: s.Depth, DepthSigma: s.DepthSigma, RMS: res.RMS, Chi2: res.Chi2, DOF: res.DOF,
			OK: res.Status.Converged() || res.Status == inverse.Stalled}
	}
	return st
}

// TestLossUnderTraverseFitted: the same loss through the line fits, as
// locate sees it (underTraverseFitted, 5 nT), is reported as a fall
// bracketing chainage 100 m on every one of 150 draws, its size's pulls
// with a mean within 0.5, a standard deviation of 0.5-1.3 and 90% or more
// within two sigma. Before, it was missed on 3 of these 150 draws (and on
// 6 of 100 of the review's simulated logs).
func TestLossUnderTraverseFitted(t *testing.T) {
	const draws = 150
	rng := rand.New(rand.NewPCG(41, 0xf17))
	missed := 0
	var z []float64
	for range draws {
		r, err := Build(underTraverseFitted(t, rng, 0.4, 5), nil)
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, f := range findings(r, KindCurrentStep) {
			v, _ := valueNamed(f, "step")
			// The chainages are measured along the fitted route: the
			// sixth station's lies within a millimetre of 100 m.
			if v.Value < 0 && f.From <= 101 && 99 <= f.To {
				found = true
				z = append(z, (v.Value+0.4)/v.Sigma)
				break
			}
		}
		if !found {
			missed++
		}
	}
	s := summarise(z)
	t.Logf("missed %d of %d; size %s", missed, draws, s)
	if missed > 0 {
		t.Errorf("0.4 A loss under a traverse missed on %d of %d fitted routes, want none", missed, draws)
	}
	if math.Abs(s.mean) > 0.5 || s.sd < 0.5 || s.sd > 1.3 || s.cover2 < 0.9 {
		t.Errorf("size pulls %s, want a mean within 0.5, sd 0.5-1.3 and 90%% within two sigma", s)
	}
}
