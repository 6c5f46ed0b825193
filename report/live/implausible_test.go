package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// scaleWindow divides every reading of w by f: what a gateway sending
// microtesla (f = 1000) as nanotesla delivers.
func scaleWindow(w *window, f float64) {
	for i := range w.Sensors {
		s := &w.Sensors[i]
		for k := range s.T {
			s.Bx[k] /= f
			s.By[k] /= f
			s.Bz[k] /= f
		}
	}
}

// solveScaled divides every reading of w by scale (scaleWindow) and
// solves it as a processor of asset a with the inverse estimator, its
// conductors named "go" and "return": the estimate, and the implausible
// checks among the alarms (implausibleChecks).
func solveScaled(a *AssetConfig, w *window, scale float64) (*Estimate, map[string]bool) {
	scaleWindow(w, scale)
	p, _ := newProcessor(a, "test")
	est, _ := NewInverseEstimator(a.Mode, a.Conductors)
	p.est, p.names = est, []string{"go", "return"}
	e, alarms := p.solve(w, p.reduce(w))
	return e, implausibleChecks(alarms)
}

func implausibleChecks(alarms []Alarm) map[string]bool {
	out := map[string]bool{}
	for _, al := range alarms {
		if al.Kind == AlarmImplausible {
			out[al.Subject] = true
		}
	}
	return out
}

// Readings 1000 times too small (microtesla sent as nanotesla) gave a
// 20 A leak as 0.02 A with quality "good". Simulated truth (synthWindow:
// Biot-Savart line fields, a mid-latitude Earth's field, the site's
// noise): the same window in nanotesla is good, and scaled down 1000
// times is marked implausible, for DC by the Earth's field (the fitted
// background near 49 nT instead of 49,000) and by a chi-square far below
// its degrees of freedom.
func TestImplausibleDCWindowInWrongUnit(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Mode, a.Frequency = "dc", 0
	a.fieldLo, a.fieldHi = defaultEarthField[0], defaultEarthField[1] // as ParseSite sets for "dc"
	earth := [3]float64{1520, 17850, -45760}                          // a mid-latitude field, nT (as TestDCWindowWithEarthField)
	for _, tc := range []struct {
		name   string
		scale  float64
		checks []string
	}{
		{"nanotesla", 1, nil},
		{"microtesla sent as nanotesla", 1000, []string{checkEarthField, checkChi2}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, 2))
			w := synthWindow(a, []complex128{200, -180}, earth, 1764650000, 200, 200, a.Noise, rng)
			e, got := solveScaled(a, w, tc.scale)
			want := "good"
			if len(tc.checks) > 0 {
				want = "implausible"
			}
			if e.Quality != want || len(got) != len(tc.checks) || len(e.Implausible) != len(tc.checks) {
				t.Fatalf("quality %q, implausible %v (%q); want %q with checks %v", e.Quality, got, e.Implausible, want, tc.checks)
			}
			for _, c := range tc.checks {
				if !got[c] {
					t.Errorf("no %s alarm; got %v", c, got)
				}
			}
		})
	}
}

// AC: sensors may leave the Earth's field out (AC coupled, detrended:
// synthWindow with no background), so no Earth's-field check applies by
// default and such a window is good; the same readings 1000 times too
// small are caught by the chi-square with the site's noise of 2 nT, as in
// the review (chi2 2.5e-5 on 20 degrees of freedom).
func TestImplausibleACWindowInWrongUnit(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane") // AC, 50 Hz, noise 2 nT
	if a.fieldHi != 0 {
		t.Fatalf("an AC asset without earth_field checks the Earth's field (%v to %v nT)", a.fieldLo, a.fieldHi)
	}
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(180, -160*math.Pi/180)}
	for _, scale := range []float64{1, 1000} {
		rng := rand.New(rand.NewPCG(8, 3))
		w := synthWindow(a, truth, [3]float64{}, 1764650000, 500, 500, a.Noise, rng)
		e, got := solveScaled(a, w, scale)
		switch {
		case scale == 1 && (e.Quality != "good" || len(got) != 0):
			t.Errorf("AC window without the static field: quality %q, implausible %v; want good", e.Quality, e.Implausible)
		case scale == 1000 && (e.Quality != "implausible" || !got[checkChi2] || got[checkEarthField]):
			t.Errorf("AC window 1000 times too small: quality %q, implausible %v (chi2 %.3g on %d); want implausible by chi2 only",
				e.Quality, e.Implausible, e.Chi2, e.DOF)
		}
	}
}

// chi2Implausible against the chi-square distribution (gonum distuv,
// the reference library): a chi-square far below its degrees of freedom
// is flagged only where chance does not explain it.
func TestChi2Implausible(t *testing.T) {
	cases := []struct {
		chi2 float64
		dof  int
		want bool
	}{
		{20, 20, false},    // the expected value
		{2.5e-5, 20, true}, // the review's wrong-unit window
		{0.005, 1, false},  // P = 0.056 with one degree of freedom: chance
		{0.005, 2, false},  // P = 1 - exp(-0.0025) = 0.0025: chance
		{0.05, 10, true},   // reduced 0.005, P about 3e-14
		{0.15, 10, false},  // reduced 0.015: above the 0.01 bound
		{1e-12, 1, true},   // P = 8e-7
		{1e-6, 1, false},   // P = 8e-4
		{math.NaN(), 5, false},
	}
	for _, tc := range cases {
		if got := chi2Implausible(tc.chi2, tc.dof); got != tc.want {
			t.Errorf("chi2Implausible(%v, %d) = %v, want %v", tc.chi2, tc.dof, got, tc.want)
		}
	}
}

// earth_field: DC assets check [15000, 80000] nT unless told otherwise,
// AC assets only when given a range, and [0, 0] turns the check off.
func TestSiteEarthField(t *testing.T) {
	for _, tc := range []struct {
		extra  string
		lo, hi float64
		err    string
	}{
		{"", 15000, 80000, ""},
		{"earth_field = [20000, 70000]", 20000, 70000, ""},
		{"earth_field = [0, 0]", 0, 0, ""},
		{"mode = \"ac\"\nfrequency = 50.0", 0, 0, ""},
		{"mode = \"ac\"\nfrequency = 50.0\nearth_field = [15000, 80000]", 15000, 80000, ""},
		{"earth_field = [80000, 15000]", 0, 0, "earth_field"},
		{"earth_field = [5]", 0, 0, "earth_field"},
	} {
		s, err := ParseSite("site.toml", []byte(strings.Replace(minimalSite, `name = "fenwick-lane"`, "name = \"fenwick-lane\"\n"+tc.extra, 1)))
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%q: error %v, want one naming %s", tc.extra, err, tc.err)
			}
			continue
		}
		if err != nil {
			t.Errorf("%q: %v", tc.extra, err)
			continue
		}
		if a := s.Assets[0]; a.fieldLo != tc.lo || a.fieldHi != tc.hi {
			t.Errorf("%q: range %v to %v, want %v to %v", tc.extra, a.fieldLo, a.fieldHi, tc.lo, tc.hi)
		}
	}
}

// AC with earth_field given (sensors that keep the static field): the
// median of the sensors' mean total fields is checked, and a window
// 1000 times too small fails both checks.
func TestImplausibleACWithEarthFieldGiven(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.fieldLo, a.fieldHi = 15000, 80000 // as earth_field = [15000, 80000]
	earth := [3]float64{1520, 17850, -45760}
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(180, -160*math.Pi/180)}
	for _, scale := range []float64{1, 1000} {
		rng := rand.New(rand.NewPCG(9, 4))
		w := synthWindow(a, truth, earth, 1764650000, 500, 500, a.Noise, rng)
		e, got := solveScaled(a, w, scale)
		switch {
		case scale == 1 && (e.Quality != "good" || len(got) != 0):
			t.Errorf("AC window with the Earth's field: quality %q, implausible %v; want good", e.Quality, e.Implausible)
		case scale == 1000 && (e.Quality != "implausible" || !got[checkChi2] || !got[checkEarthField]):
			t.Errorf("AC window 1000 times too small: quality %q, implausible %v; want implausible by both checks", e.Quality, e.Implausible)
		}
	}
}
