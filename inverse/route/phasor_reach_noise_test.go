package route

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// misfitStations gives the stations of sigmaRoute the misfit of a
// straight-line fit that estimated its noise from its residuals (as
// locate's AC fits do): station i misses its readings by b[i] times the
// reading noise, so its sigmas are b[i] times those of the noise and its
// chi-square against the reference noise b[i]² per degree of freedom (588
// of them, a 100-reading traverse's).
func misfitStations(sts []Station, b map[int]float64) {
	for i := range sts {
		r := 1.0
		if v, ok := b[i]; ok {
			r = v
		}
		sts[i].CurrentSigma *= r
		sts[i].PhaseSigma *= r
		sts[i].Chi2, sts[i].DOF = r*r*588, 588
		sts[i].SigmaFromResiduals = true
	}
}

// TestPhasorStepStationsBesideReadAtNoise: 10 A turning 5° at chainage
// 27.5 m (0.872 A leaving), eleven 10 m traverses 5 m apart 1.3 m above
// the line, read with the RMS and phase sigmas locate gives at 10 nT
// (0.0019 A and 0.00098 A, simulated), the stations 2.5 m either side of
// the change missing their readings by 2.84 times the noise and those
// 7.5 m away by 1.26 times (as locate's fits of tealTurn do, simulated),
// their sigmas widened as much: over 100 seeds (40 with -short) the
// location's and the sizes' pulls (error over sigma, simulated truth)
// have sd 0.7-1.3 and mean within 0.5. Before, the stations beside the
// change were read with their sigmas widened by their misfit twice over
// (the fit's own estimate of the noise, then misfitSigma's Birge ratio),
// some eight times their noise, though the transition read over their
// reach explains them at it: the location's sigma was three times its
// spread (pulls' sd 0.34, the sizes' 0.79-0.88). The mean's bound: the
// reach model reads the traverse's share 0.0002-0.0003 away at 2.5-7.5 m
// (TestReachShareMatchesTraverse allows 0.002), 0.1-0.15 of those
// stations' noise sigmas and all one way, which puts the current leaving
// and the turn 0.4 sigma short on average (0.1 with the stations read at
// the reach model's own shares).
//
// With a magnetised object beside the station 2.5 m before the change
// shifting its RMS current by ten of its noise sigmas (and its misfit 4
// times the noise), that station is named as missing its readings by
// more than the change explains on at least 90% of the seeds, and the
// stations beside the change keep their widening: the pulls' sd is at
// most 1.3 and their mean within 0.5 (the location's sd 0.49, as
// before). Without that check (the stations beside the change read at
// their noise whatever their residuals) it was named on none and the
// angle's pulls had mean +1.54, sd 0.36. In the change's own misfit it is
// named on at most 10% of the seeds.
func TestPhasorStepStationsBesideReadAtNoise(t *testing.T) {
	seeds := 100
	if testing.Short() {
		seeds = 40
	}
	const h = 1.3
	var pts [][3]float64
	for i := 0; i <= 100; i++ {
		pts = append(pts, [3]float64{-5 + 0.1*float64(i), 0, 0.3})
	}
	wide := ReachOf(pts, [3]float64{0, 0, -1}, [3]float64{0, 1, 0})
	const sr, st = 0.0019, 0.00098
	up, down := complex(10, 0), 10*deg(5)
	l := up - down
	want := map[string]float64{
		"current leaving":       cmplx.Abs(l),
		"angle to line current": wrapDeg((cmplx.Phase(l) - cmplx.Phase(up)) * 180 / math.Pi),
		"phase turn":            5,
		"location (chainage)":   27.5,
	}
	for _, c := range []struct {
		name   string
		b      map[int]float64
		magnet bool
		minSD  float64
	}{
		{"the change's own misfit", map[int]float64{4: 1.26, 5: 2.84, 6: 2.84, 7: 1.26}, false, 0.7},
		{"a magnetised object at T06", map[int]float64{4: 1.26, 5: 4, 6: 2.84, 7: 1.26}, true, 0},
	} {
		pulls := map[string][]float64{}
		named := 0
		for seed := uint64(1); seed <= uint64(seeds); seed++ {
			rng := rand.New(rand.NewPCG(seed, 1818))
			sts := sigmaRoute(rng, 11, 5, 27.5, up, down, sr, st, traverseShare(h, 5), wide)
			if c.magnet {
				sts[5].Current += 10 * sr
			}
			misfitStations(sts, c.b)
			r, err := Build(sts, nil)
			if err != nil {
				t.Fatal(err)
			}
			fs := findings(r, KindCurrentStep)
			if len(fs) != 1 {
				t.Errorf("%s, seed %d: %d current steps, want 1", c.name, seed, len(fs))
				continue
			}
			if m := fs[0].Message; strings.Contains(m, " by more than the change explains") {
				m = m[:strings.Index(m, " by more than the change explains")]
				if strings.Contains(m[strings.LastIndex(m, "(")+1:], "T06") {
					named++
				}
			}
			for _, v := range fs[0].Values {
				w, ok := want[v.Name]
				if !ok {
					continue
				}
				d := v.Value - w
				if v.Unit == "deg" {
					d = wrapDeg(d)
				}
				pulls[v.Name] = append(pulls[v.Name], d/v.Sigma)
			}
		}
		t.Logf("%s: T06 named on %d of %d seeds", c.name, named, seeds)
		if c.magnet && named < seeds*9/10 {
			t.Errorf("%s: T06 named as not explained by the change on %d of %d seeds, want 90%%", c.name, named, seeds)
		}
		if !c.magnet && named > seeds/10 {
			t.Errorf("%s: T06 named as not explained by the change on %d of %d seeds, want at most 10%%", c.name, named, seeds)
		}
		for name := range want {
			p := pulls[name]
			if len(p) < seeds*9/10 {
				t.Errorf("%s: %s given on %d of %d seeds", c.name, name, len(p), seeds)
				continue
			}
			m, sd := pullStats(p)
			t.Logf("%s: %s pulls mean %+.2f, sd %.2f over %d seeds", c.name, name, m, sd, len(p))
			if sd < c.minSD || sd > 1.3 || math.Abs(m) > 0.5 {
				t.Errorf("%s: %s pulls mean %+.2f, sd %.2f over %d seeds; want sd %.1f-1.3, mean within 0.5", c.name, name, m, sd, len(p), c.minSD)
			}
		}
	}
}
