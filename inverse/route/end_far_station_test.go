package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// endFarRoute draws the stations locate fitted on a simulated survey (the
// review's scenario, invented Brackwater Ings site, 40 seeds at 5 nT): a
// 10 A line 1.0 m deep ending 11 m along the route, traverses 8 m long
// every 4 m. T01-T03, 11, 7 and 3 m before the end, read 9.810, 9.577
// and 8.557 A at 0.984, 0.965 and 0.891 m (T03 a poor fit on most seeds);
// T04, 1 m past the end, 4.47 ± 0.12 A at 1.93 ± 0.05 m; T05, 5 m past
// it, a line 15-25 m deep, its azimuth turned about 20 degrees, whose
// current (19.5-50 A, about 30% sigma) passed its 3-sigma test on 12 seeds
// of 40; T06 and T07 found no current. Each value is the mean over the
// seeds plus normal noise of their spread over the seeds, with the fits'
// own sigmas; T05 is drawn from the range of those 12 seeds, or (t05Fitted
// false) found no current, as on the other 28.
func endFarRoute(rng *rand.Rand, t03Poor, t05Fitted bool) []Station {
	cur := []float64{9.8104, 9.5774, 8.5568, 4.47}
	curSD := []float64{0.0162, 0.0143, 0.0150, 0.03}
	curSig := []float64{0.0175, 0.0236, 0.0510, 0.1213}
	dep := []float64{0.9839, 0.9650, 0.8909, 1.93}
	depSD := []float64{0.0023, 0.0023, 0.0021, 0.02}
	depSig := []float64{0.0023, 0.0031, 0.0072, 0.0498}
	st := make([]Station, 7)
	for i := range st {
		x := 4 * float64(i)
		switch {
		case i < len(cur):
			d := dep[i] + depSD[i]*rng.NormFloat64()
			st[i] = Station{Key: key(i + 1), Point: [3]float64{x, 0, -d}, Dir: [3]float64{1, 0, 0},
				Current: cur[i] + curSD[i]*rng.NormFloat64(), CurrentSigma: curSig[i], Depth: d, DepthSigma: depSig[i], OK: true}
		case i == 4 && t05Fitted:
			c := 19.5 + 14*rng.Float64()
			d := 15 + 5*rng.Float64()
			turn := 20 * math.Pi / 180
			st[i] = Station{Key: key(i + 1), Point: [3]float64{x, -0.3, -d}, Dir: [3]float64{math.Cos(turn), -math.Sin(turn), 0},
				Current: c, CurrentSigma: 0.3 * c, Depth: d, DepthSigma: 0.17 * d, OK: true}
		default:
			st[i] = Station{Key: key(i + 1), Point: [3]float64{x, 0, 0.3}, Current: 4, CurrentSigma: 30,
				Depth: -1, OK: false, Problem: "no current found"}
		}
	}
	if t03Poor {
		st[2].Problem = "chi-square per degree of freedom against the survey's reference noise is 10.1, over the limit of 4"
	}
	return st
}

// TestEndFarStationNamed: the end must be named between T03 and T04, with
// T04 and T05 left out of the profile and no bend read from T05's
// azimuth, on every draw. Before a station over endFar times as deep as
// the conductor carried no evidence either way, T05's current, above the
// conductor's, broke the run past the end: the end was not named, both
// stations were kept in the route and the findings said the conductor
// "turns 20 degrees" there (12 of the review's 40 seeds).
//
// The "current before" and "depth before" must cover the truth, 10 A and
// 1.0 m: the stations before all read part of the end's field, and their
// median and spread read 9.69 ± 0.17 A and 0.975 ± 0.013 m on every seed
// (z -1.8 and -1.9, none within one sigma; found in review). Now fitted
// with the end's share of the field (endBefore), the z over the draws must
// average within one sigma of zero and fall within one sigma on 60% of
// draws and within two on 90% (the depth is still a little low: mean z
// -0.5 to -0.6).
func TestEndFarStationNamed(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	const draws = 200
	for _, c := range []struct{ poor, t05 bool }{{false, true}, {true, true}, {false, false}, {true, false}} {
		poor := c.poor
		var missed, bent int
		var zc, zd []float64
		for range draws {
			r, err := Build(endFarRoute(rng, poor, c.t05), &Settings{SensorHeight: 0.3})
			if err != nil {
				t.Fatal(err)
			}
			var end *Finding
			for i, f := range r.Findings {
				if strings.Contains(f.Message, "appears to end") && f.From <= 11 && f.To >= 11 {
					end = &r.Findings[i]
				}
				if strings.Contains(f.Message, "turns") {
					bent++
				}
			}
			if end == nil || r.Stations[3].usable() || r.Stations[4].usable() {
				if missed == 0 && end != nil {
					t.Logf("%s", end.Message)
				}
				missed++
				continue
			}
			c, _ := valueNamed(*end, "current before")
			d, _ := valueNamed(*end, "depth before")
			zc = append(zc, (c.Value-10)/c.Sigma)
			zd = append(zd, (d.Value-1.0)/d.Sigma)
		}
		if missed > 0 || bent > 0 {
			t.Errorf("T03 poor %v, T05 fitted %v: end not named, or T04/T05 kept in the profile, on %d of %d draws; a bend said on %d", poor, c.t05, missed, draws, bent)
		}
		for _, q := range []struct {
			name string
			z    []float64
		}{{"current before", zc}, {"depth before", zd}} {
			s := summarise(q.z)
			t.Logf("T03 poor %v, T05 fitted %v: %s %v", poor, c.t05, q.name, s)
			if s.n == 0 || math.Abs(s.mean) > 1 || s.cover1 < 0.6 || s.cover2 < 0.9 {
				t.Errorf("T03 poor %v, T05 fitted %v: %s does not cover the truth: %v", poor, c.t05, q.name, s)
			}
		}
	}
}
