package report

import (
	"math"
	"strings"
	"testing"
)

// modelDoubtK is how many of its published sigmas a fit near an
// unmodelled feature may miss the truth by: 3, the brief of review rv24f
// ("cover the truth within about 2-3 sigma").
const modelDoubtK = 3.0

// lineNear is g's line source whose point lies nearest at across the
// route (Point[across]; the traverses of these
// scenarios cross north-running or east-running conductors; east is taken
// across a north-running one, north across an east-running one).
func lineNear(g *Group, across int, at float64) *Source {
	var best *Source
	for i := range g.Sources {
		s := &g.Sources[i]
		if s.Kind != KindLine {
			continue
		}
		if best == nil || math.Abs(s.Point[across]-at) < math.Abs(best.Point[across]-at) {
			best = s
		}
	}
	return best
}

// TestModelErrorCoversTruth: fits beside a feature their straight line
// does not model publish sigmas that cover the simulated truth (the
// scenarios' own conductors, Biot-Savart through package simulate; every
// site invented) to modelDoubtK of them, on each seed. Before (review
// rv24f, 20 seeds each, all "sound"):
//
//   - crossing-service.toml, the 30 A feeder 1 m deep at T04 and T10, 6 m
//     from a 10 A service crossing it: current 18-19 sigmas low, cover 12
//     sigmas shallow, with only an info that the estimates "hold to about"
//     the 0.97% of the signal missed (the error was 2.1 times that);
//   - wrenbeck-dive.toml, the 2 A feeder 6 m deep and level at T06 and
//     T07, 3 m from the foot of its dive and its rise: depth 12 sigmas
//     shallow (5.4 m), dip 11 deg against 0, 45 sigmas;
//   - open/tallow-brook-fault.toml, the feeder 25 A before its fault at
//     chainage 110 m and 12 A after, T06 and T07 10 m either side: current
//     6.3 sigmas low and high, cover 4.3 sigmas.
func TestModelErrorCoversTruth(t *testing.T) {
	if testing.Short() {
		t.Skip("fits three scenarios on two seeds")
	}
	type want struct {
		key            string
		across         int     // 0: east, across a north-running line; 1: north
		at             float64 // the conductor's place across, m
		current, depth float64 // truth, A and m below up = 0
		dip            bool    // the truth's dip (0) is checked too
	}
	for _, c := range []struct {
		file string
		want []want
	}{
		{"crossing-service.toml", []want{{"T04", 1, 0, 30, 1, false}, {"T10", 1, 0, 30, 1, false}}},
		{"wrenbeck-dive.toml", []want{{"T06", 1, 0, 2, 6, true}, {"T07", 1, 0, 2, 6, true}}},
		{"open/tallow-brook-fault.toml", []want{{"T06", 0, 0, 25, 1, false}, {"T07", 0, 0, 12, 1, false}}},
	} {
		for _, seed := range []int64{101, 102} {
			d := scenarioDoc(t, c.file, seed)
			for _, w := range c.want {
				var g *Group
				for i := range d.Groups {
					if d.Groups[i].Key == w.key {
						g = &d.Groups[i]
					}
				}
				if g == nil || !g.OK {
					t.Errorf("%s seed %d: %s not fitted", c.file, seed, w.key)
					continue
				}
				s := lineNear(g, w.across, w.at)
				if s == nil {
					t.Errorf("%s seed %d: %s has no line", c.file, seed, w.key)
					continue
				}
				check := func(what string, got, sigma, truth float64) {
					if !(math.Abs(got-truth) <= modelDoubtK*sigma) {
						t.Errorf("%s seed %d: %s %s %.4g ± %.2g, truth %.4g: %.1f sigmas off", c.file, seed, w.key, what, got, sigma, truth, (got-truth)/sigma)
					}
				}
				check("current", math.Abs(s.Current), s.CurrentSigma, w.current)
				check("depth", s.Depth, s.DepthSigma, w.depth)
				if w.dip {
					check("dip", s.Dip, s.DipSigma, 0)
				}
			}
		}
	}
}

// TestMinorMisfitInfoHonest: the information a small misfit raises no
// longer says the estimates "hold to about" the share of the signal
// missed (crossing-service.toml: 0.97% missed, 2.07% of current off,
// review rv24f); it says they can be off by about twice it, and the
// fit's sigmas are widened to count it.
func TestMinorMisfitInfoHonest(t *testing.T) {
	if testing.Short() {
		t.Skip("fits a scenario")
	}
	d := scenarioDoc(t, "crossing-service.toml", 101)
	n := 0
	for _, f := range d.Findings {
		if f.Kind != "poor-fit" || f.Severity != "info" {
			continue
		}
		n++
		if strings.Contains(f.Message, "hold to about") {
			t.Errorf("info still claims the estimates hold to the share missed: %s", f.Message)
		}
		if !strings.Contains(f.Message, "off by about 2 times that share") || !strings.Contains(f.Message, "widened") {
			t.Errorf("info does not say the error is about twice the share missed and widened for: %s", f.Message)
		}
	}
	if n == 0 {
		t.Error("no minor-misfit info: the test no longer covers it")
	}
}
