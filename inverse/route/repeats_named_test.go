package route

import (
	"math"
	"strings"
	"testing"
)

// TestRepeatsPairedByTraverseName: walkedTwice's route (simulated truth:
// 21 traverses 4 m apart, 10 A falling to 9.5 A at east 42 m, between
// T11 and T12) walked a second time with every station of the second
// walk moved along the route by off m, an uncorrected GNSS offset between
// days (commonly 0.5-2 m; from memory of field practice), and the caller
// naming the traverse each station walks (Station.Traverse). Told by
// chainage alone, the offset made half the intervals, so their median,
// read as the spacing, was the offset, and no station had a repeat (0.3
// m); 1.2 m is more than a tenth of even the true 4 m spacing. Every
// second-walk station must share its first walk's chainage, T21 lie at
// 80 m, and the one step be -0.5 A within 3 sigma between T11 and T12
// with their repeats. Without the names, a station 1.2 m along the route
// is not a repeat (an infill traverse is not one), nor are two stations
// that share a name but lie over half the spacing apart.
func TestRepeatsPairedByTraverseName(t *testing.T) {
	cur := func(x float64) float64 {
		if x < 42 {
			return 10
		}
		return 9.5
	}
	all := func(int) bool { return true }
	named := func(off float64, name bool, seed uint64) []Station {
		st := walkedTwice(21, 0.01, seed, cur, all)
		for i := range st {
			base := strings.TrimPrefix(st[i].Key, "day2:")
			if base != st[i].Key {
				st[i].Point[0] += off
			}
			if name {
				st[i].Traverse = base
			}
		}
		return st
	}
	for _, off := range []float64{0.3, 1.2, -1.2} {
		for seed := uint64(1); seed <= 5; seed++ {
			r, err := Build(named(off, true, seed), &Settings{SensorHeight: 0.3})
			if err != nil {
				t.Fatal(err)
			}
			at := map[string]float64{}
			for _, p := range r.Stations {
				at[p.Key] = p.Chainage
			}
			if math.Abs(at["T21"]-80) > 0.5 {
				t.Errorf("offset %g m, seed %d: T21 at %.3f m, want 80 m", off, seed, at["T21"])
			}
			for k, c := range at {
				if b := strings.TrimPrefix(k, "day2:"); b != k && math.Abs(c-at[b]) > 1e-9 {
					t.Errorf("offset %g m, seed %d: %s at %.3f m, %s at %.3f m: not taken for repeats", off, seed, k, c, b, at[b])
				}
			}
			n := 0
			for _, f := range findings(r, KindCurrentStep) {
				n++
				if !strings.Contains(f.Message, "T11 with day2:T11") || !strings.Contains(f.Message, "T12 with day2:T12") {
					t.Errorf("offset %g m, seed %d: step not between T11 and T12 with their repeats: %s", off, seed, f.Message)
				}
				if v, ok := valueNamed(f, "step"); !ok || math.Abs(v.Value+0.5) > 3*v.Sigma {
					t.Errorf("offset %g m, seed %d: step %v, want -0.5 A within 3 sigma", off, seed, v)
				}
			}
			if n != 1 {
				t.Errorf("offset %g m, seed %d: %d steps, want the one loss: %v", off, seed, n, r.Findings)
			}
		}
	}
	// Without names, or with one name over half a spacing apart: no
	// repeats.
	for _, c := range []struct {
		name string
		off  float64
		tag  bool
	}{{"1.2 m on, unnamed", 1.2, false}, {"2.4 m on, named", 2.4, true}} {
		r, err := Build(named(c.off, c.tag, 1), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		if g := r.RepeatGap(); g <= 0 {
			t.Fatalf("%s: no repeat gap", c.name)
		}
		for k := 1; k < len(r.Stations); k++ {
			if r.Stations[k].Chainage == r.Stations[k-1].Chainage {
				t.Errorf("%s: %s and %s at one chainage, taken for repeats", c.name, r.Stations[k-1].Key, r.Stations[k].Key)
			}
		}
	}
}
