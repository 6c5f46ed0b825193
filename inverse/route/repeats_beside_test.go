package route

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// walkedTwiceBeside is walkedTwice with every point of the second walk
// moved across m across the route (north, the route running east): a
// later walk whose positions are off the first's along its traverses (an
// uncorrected GNSS offset between days; commonly 0.5-2 m, from memory of
// field practice) fits each traverse's line that far across itself, at
// the same chainage (simulated truth).
func walkedTwiceBeside(n int, sig float64, seed uint64, cur func(x float64) float64, second func(k int) bool, across float64) []Station {
	st := walkedTwice(n, sig, seed, cur, second)
	for i := range st {
		if strings.HasPrefix(st[i].Key, "day2:") {
			st[i].Point[1] += across
		}
	}
	return st
}

// TestRepeatWalkBesideNoFalseStep: a constant 25 A conductor (simulated
// truth: no loss, traverses 4 m apart, the route 24 m long) walked twice,
// the second walk's stations 0.3-2 m across the route from the first's.
// The intervals between a station and its repeat, half of them, were
// read as the spacing, so no stations were repeats: the chainage
// zigzagged (0.6 m more at every station) and an end station took its
// direction from the tangent to its repeat, across the route, its sign
// set by noise (-25 A beside +25 A, a false 50 A step; found in review on
// single-line.toml walked again 0.6 m along its traverses). Every station
// must read +25 A along the route (within 5 sigma), share its repeat's
// chainage (within 1 mm), the route be 24 m long (within 5 cm) and no
// change of current be reported, over twenty noise draws each.
func TestRepeatWalkBesideNoFalseStep(t *testing.T) {
	for _, across := range []float64{0.3, 0.6, -0.6, 1.0, 2.0} {
		for _, part := range []struct {
			name   string
			second func(int) bool
		}{{"whole", func(int) bool { return true }}, {"last three", func(k int) bool { return k >= 4 }}} {
			name := fmt.Sprintf("%s %g m across", part.name, across)
			for seed := uint64(1); seed <= 20; seed++ {
				r, err := Build(walkedTwiceBeside(7, 0.007, seed, func(float64) float64 { return 25 }, part.second, across), &Settings{SensorHeight: 0.3})
				if err != nil {
					t.Fatal(err)
				}
				at := map[string]float64{}
				for _, p := range r.Stations {
					if math.Abs(p.Current-25) > 5*p.CurrentSigma {
						t.Errorf("%s, seed %d: %s reads %.4f A along the route, want +25 A", name, seed, p.Key, p.Current)
					}
					at[p.Key] = p.Chainage
				}
				for k, c := range at {
					if first, ok := at[strings.TrimPrefix(k, "day2:")]; ok && math.Abs(c-first) > 0.001 {
						t.Errorf("%s, seed %d: %s at chainage %.3f m, its first walk at %.3f m", name, seed, k, c, first)
					}
				}
				if math.Abs(r.Length-24) > 0.05 {
					t.Errorf("%s, seed %d: route %.3f m long, want 24 m", name, seed, r.Length)
				}
				for _, f := range r.Findings {
					if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange || f.Kind == KindCurrentAnomaly {
						t.Errorf("%s, seed %d: %s", name, seed, f.Message)
					}
				}
			}
		}
	}
}

// TestRepeatWalkBesideConfirmsLoss: 10 A falling by 0.5 A at east 42 m
// (between T11 at 40 m and T12 at 44 m; simulated truth), 21 traverses,
// the second walk over T09-T14 only and 0.6 m across the route from the
// first. The loss must be found once, bracketed by T11 and T12 named
// with their repeats, its size within 3 sigma of 0.5 A, on each of ten
// noise draws, as without the offset (TestRepeatWalkConfirmsLoss).
func TestRepeatWalkBesideConfirmsLoss(t *testing.T) {
	cur := func(x float64) float64 {
		if x < 42 {
			return 10
		}
		return 9.5
	}
	for seed := uint64(1); seed <= 10; seed++ {
		r, err := Build(walkedTwiceBeside(21, 0.01, seed, cur, func(k int) bool { return k >= 8 && k <= 13 }, 0.6), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, f := range findings(r, KindCurrentStep) {
			n++
			if f.Keys[0] != "T11" || f.Keys[len(f.Keys)-1] != "T12" || !strings.Contains(f.Message, "T11 with day2:T11") {
				t.Errorf("seed %d: step %v, want it between T11 and T12 with their repeats: %s", seed, f.Keys, f.Message)
			}
			if v, ok := valueNamed(f, "step"); !ok || math.Abs(v.Value+0.5) > 3*v.Sigma {
				t.Errorf("seed %d: step %v, want -0.5 A within 3 sigma", seed, v)
			}
		}
		if n != 1 {
			t.Errorf("seed %d: %d steps, want the one loss: %v", seed, n, r.Findings)
		}
	}
}
