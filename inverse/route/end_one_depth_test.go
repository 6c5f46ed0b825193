package route

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// endOneDepthRoute draws the stations locate fitted on a simulated survey
// (undercurrent simulate, invented Brackenmoor test strip, 30 seeds at 5
// nT): a 5 A line 1.0 m deep (1.3 m below the sensors) ending at north
// 13 m, traverses 10 m long every 4 m from north 2 m. T01-T03 read 4.87,
// 4.74 and 4.23 A at 0.98, 0.95 and 0.88 m (the last 3 m before the end,
// a poor fit on 19 seeds of 30); T04, 1 m past the end, 2.15 ± 0.05 A at
// 1.91 ± 0.05 m; T05-T07 found no current. Each value is the mean over the
// seeds plus normal noise of their spread over the seeds, with the fits'
// own sigmas.
func endOneDepthRoute(rng *rand.Rand, t03Poor bool) []Station {
	cur := []float64{4.8687, 4.7421, 4.2263, 2.1529}
	curSD := []float64{0.0137, 0.0123, 0.0099, 0.0264}
	curSig := []float64{0.0144, 0.0166, 0.0273, 0.0539}
	dep := []float64{0.9765, 0.9543, 0.8762, 1.9113}
	depSD := []float64{0.0038, 0.0040, 0.0029, 0.0222}
	depSig := []float64{0.0041, 0.0047, 0.0083, 0.0498}
	st := make([]Station, 7)
	for i := range st {
		n := 2 + 4*float64(i)
		if i >= len(cur) {
			st[i] = Station{Key: key(i + 1), Point: [3]float64{0, n, 0.3}, Current: 0.003, CurrentSigma: 0.002,
				Depth: -1, OK: false, Problem: "no current found"}
			continue
		}
		d := dep[i] + depSD[i]*rng.NormFloat64()
		st[i] = Station{Key: key(i + 1), Point: [3]float64{0, n, -d}, Dir: [3]float64{0, 1, 0},
			Current: cur[i] + curSD[i]*rng.NormFloat64(), CurrentSigma: curSig[i], Depth: d, DepthSigma: depSig[i], OK: true}
	}
	if t03Poor {
		st[2].Problem = "chi-square per degree of freedom against the survey's reference noise is 4.8, over the limit of 4"
	}
	return st
}

// TestEndOneDepthPast: a traverse one depth past a conductor's end fits a
// line about twice as deep as the conductor with under half its current.
// The end must be named, and that station kept out of the current and
// cover profile, on every draw (the reference with T03 sound and with T03
// poor, 200 draws each). Before, the rule asked for over twice the depth,
// and the ratio, 1.91 m over 0.95-0.97 m, sat on it: the end was named on
// 8 seeds of 30 in review, and on 54% of these draws with T03 sound and
// 22% with it poor; the rest kept T04 as a 2.2 A conductor at 1.9 m, with
// its cover.
func TestEndOneDepthPast(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	const draws = 200
	for _, poor := range []bool{false, true} {
		missed := 0
		for range draws {
			r, err := Build(endOneDepthRoute(rng, poor), &Settings{SensorHeight: 0.3})
			if err != nil {
				t.Fatal(err)
			}
			named := false
			for _, f := range r.Findings {
				if strings.Contains(f.Message, "appears to end") && f.From <= 11 && f.To >= 11 {
					named = true
				}
			}
			if !named || r.Stations[3].usable() {
				missed++
			}
		}
		t.Logf("T03 poor %v: end not named, or T04 used, on %d of %d", poor, missed, draws)
		if missed > 0 {
			t.Errorf("T03 poor %v: end not named, or T04 kept in the profile, on %d of %d draws", poor, missed, draws)
		}
	}
}
