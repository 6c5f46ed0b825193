package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// leakingMain is TestUniformLeakageNoStep's straight main: 41 stations
// 25 m apart whose current is sign 5 exp(-a x) A (a = 1e-3 per metre,
// the transmission-line model of uniform leakage, simulated truth), with
// sigmas of 0.003 A. A DC current is signed along increasing chainage, so
// sign -1 is the same main carrying its current toward the route's start.
func leakingMain(seed uint64, sign float64) []Station {
	const a, sigma = 1e-3, 0.003
	rng := rand.New(rand.NewPCG(seed, 7))
	st := make([]Station, 41)
	for i := range st {
		x := float64(i) * 25
		st[i] = Station{
			Key:          key(i),
			Point:        [3]float64{x, 0, -1.5},
			Dir:          [3]float64{1, 0, 0},
			Current:      sign * (5*math.Exp(-a*x) + sigma*rng.NormFloat64()),
			CurrentSigma: sigma,
			Depth:        1.5, DepthSigma: 0.002,
			OK: true,
		}
	}
	return st
}

// TestUniformLeakageNegativeCurrent: the leaking main with its current
// signed negative (flowing toward the route's start) gives, as the
// positive one does, no current step on any of 12 seeds and one
// attenuation finding, whose rate matches the simulated truth's magnitude,
// 100 (1 - exp(-1)) = 63.21% per km and 20 log10(e) = 8.686 dB per km,
// within 4 sigma, positive (the magnitude falls with chainage), and whose
// message reads the fall in the way the current flows: it grows toward
// the start, current joining. Before, only positive currents were fitted:
// the negative main had no attenuation finding on any seed and 8 false
// current steps over the 12 (found in review).
func TestUniformLeakageNegativeCurrent(t *testing.T) {
	for seed := uint64(1); seed <= 12; seed++ {
		r, err := Build(leakingMain(seed, -1), nil)
		if err != nil {
			t.Fatal(err)
		}
		if f := findings(r, KindCurrentStep); len(f) > 0 {
			t.Errorf("seed %d: a step on a route with none: %s", seed, f[0].Message)
		}
		att := findings(r, KindAttenuation)
		if len(att) != 1 {
			t.Errorf("seed %d: %d attenuation findings, want 1", seed, len(att))
			continue
		}
		checkAttenuation(t, seed, att[0], 100*(1-math.Exp(-1)), 20/math.Ln10)
		if m := att[0].Message; !strings.Contains(m, "toward decreasing chainage") || !strings.Contains(m, "joining") {
			t.Errorf("seed %d: the message does not read the fall in the way the current flows: %s", seed, m)
		}
	}
}

// checkAttenuation checks an attenuation finding's values: want %/km and
// dB/km (the only units given, whatever the route's length), each within
// 4 sigma.
func checkAttenuation(t *testing.T, seed uint64, f Finding, pct, db float64) {
	t.Helper()
	want := map[string]float64{"%/km": pct, "dB/km": db}
	got := 0
	for _, v := range f.Values {
		if v.Name != "attenuation" {
			continue // the between-station scatter, where there is one
		}
		w, ok := want[v.Unit]
		if !ok {
			t.Errorf("seed %d: value %q in %q, want %%/km or dB/km", seed, v.Name, v.Unit)
			continue
		}
		got++
		if math.Abs(v.Value-w) > 4*v.Sigma {
			t.Errorf("seed %d: %s %.4g ± %.2g %s, want %.4g", seed, v.Name, v.Value, v.Sigma, v.Unit, w)
		}
	}
	if got != 2 {
		t.Errorf("seed %d: %d values in %%/km and dB/km, want 2: %+v", seed, got, f.Values)
	}
}

// TestAttenuationRiseSigned: a main whose current grows along the chainage
// as 5 exp(-a (L - x)) A (the leaking main walked from its far end; a =
// 1e-3 per metre, L = 1 km, simulated truth) reports its attenuation
// negative, a rise: 100 (1 - exp(1)) = -171.8% per km and -8.686 dB per
// km, within 4 sigma. Before, the values were positive for a fall and a
// rise alike, and only the message told them apart (found in review).
func TestAttenuationRiseSigned(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		st := leakingMain(seed, 1)
		// The same currents, the stations numbered from the other end.
		for i := range st {
			st[i].Point[0] = 1000 - st[i].Point[0]
			st[i].Dir = [3]float64{-1, 0, 0}
		}
		for i, j := 0, len(st)-1; i < j; i, j = i+1, j-1 {
			st[i], st[j] = st[j], st[i]
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		att := findings(r, KindAttenuation)
		if len(att) != 1 {
			t.Fatalf("seed %d: %d attenuation findings, want 1", seed, len(att))
		}
		if !strings.Contains(att[0].Message, "rises") {
			t.Errorf("seed %d: a rise worded otherwise: %s", seed, att[0].Message)
		}
		checkAttenuation(t, seed, att[0], 100*(1-math.E), -20/math.Ln10)
	}
}

// TestAttenuationPerKmOnShortRoute: on a route under 500 m (the 400 m
// main of TestLeakageDefectFound, no defect, a = 3e-3 per metre) the
// message gives the rate per 100 m, but the values stay per km: 100 (1 -
// exp(-3)) = 95.02% and 26.06 dB per km, within 4 sigma, so that the
// machine outputs' names (attenuation_pct_per_km) do not change with the
// route's length. Before, the values were per 100 m there, and the
// GeoJSON property was attenuation_pct_per_100_m (found in review).
func TestAttenuationPerKmOnShortRoute(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		r, err := Build(leakDefectMain(3e-3, 0, seed), nil)
		if err != nil {
			t.Fatal(err)
		}
		att := findings(r, KindAttenuation)
		if len(att) != 1 {
			t.Fatalf("seed %d: %d attenuation findings, want 1", seed, len(att))
		}
		if !strings.Contains(att[0].Message, "per 100 m") {
			t.Errorf("seed %d: a short route's rate not worded per 100 m: %s", seed, att[0].Message)
		}
		// The message words the rate per 100 m, the values per km: it
		// must give the values' figures too, or one row reads 26% per
		// 100 m beside 95% per km (found in review).
		v := att[0].Values
		if want := pm(math.Abs(v[0].Value), v[0].Sigma) + "% and " + pm(math.Abs(v[1].Value), v[1].Sigma) + " dB per km"; !strings.Contains(att[0].Message, want) {
			t.Errorf("seed %d: the values' per-km figures (%s) not in the message: %s", seed, want, att[0].Message)
		}
		checkAttenuation(t, seed, att[0], 100*(1-math.Exp(-3)), 3*20/math.Ln10)
	}
}
