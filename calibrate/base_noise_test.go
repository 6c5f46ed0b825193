package calibrate

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestBaseNoise checks the base record's noise measured from its fourth
// differences against simulated truth: an hour of a one-second record
// holding a diurnal curve (30 nT a day's sine, 20 nT an hour of drift) and
// white noise of 0.3, 0.5 and 1 nT on its three components, with a
// five-minute gap and missing values. Over about 3500 differences the
// median's relative standard error is about 1.25/sqrt(3500) = 2%: the
// estimate must lie within 10% of the truth. A record with no noise gives
// next to nothing (the curve's fourth differences over a second are of
// order 30 nT x (2 pi / 86400 s)^4, 1e-15 nT), and one too short gives 0.
func TestBaseNoise(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	want := [3]float64{0.3, 0.5, 1.0}
	var bt []float64
	var bb, clean [3][]float64
	for i := range 3600 {
		if i >= 1200 && i < 1500 {
			continue // five minutes missing
		}
		s := float64(i)
		bt = append(bt, 1.7e9+s)
		for k := range 3 {
			v := 30*math.Sin(2*math.Pi*s/86400+float64(k)) + 20*s/3600*float64(k+1)
			clean[k] = append(clean[k], v)
			x := v + want[k]*rng.NormFloat64()
			if i%97 == 5 && k == 1 {
				x = math.NaN() // a value missing in one component
			}
			bb[k] = append(bb[k], x)
		}
	}
	got, step := BaseNoise(bt, bb)
	if step != 1 {
		t.Errorf("step %g s, want 1", step)
	}
	for k := range 3 {
		if math.Abs(got[k]-want[k]) > 0.1*want[k] {
			t.Errorf("%s: noise %.3f nT, want %.2f within 10%%", fieldNames[k], got[k], want[k])
		}
	}
	if got, _ := BaseNoise(bt, clean); got[0] > 1e-6 || got[1] > 1e-6 || got[2] > 1e-6 {
		t.Errorf("a record without noise: %g nT", got)
	}
	if got, _ := BaseNoise(bt[:20], [3][]float64{bb[0][:20], bb[1][:20], bb[2][:20]}); got != [3]float64{} {
		t.Errorf("20 readings: %g nT, want 0 (not measured)", got)
	}
}
