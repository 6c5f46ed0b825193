package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// Seven traverses, 10 m apart, across a straight cable of the fictional
// Fenwick Lane route (running east, 1.2 m below the sensors, 20 A DC); a
// steel drum lies 3.5 m north of the cable beside the fourth, 0.8 m below
// the sensors, with a moment of 1.2 A m^2. The field is the infinite line
// and the point dipole (both DOMAIN.md; the dipole as in Jackson,
// Classical Electrodynamics, eq. 5.56), a uniform Earth field and 1 nT of
// noise. Each traverse is fitted by inverse.FitLines with the count chosen
// automatically, as locate does.
const (
	drumDepth   = 1.2
	drumCurrent = 20.0
	drumNoise   = 1.0 // nT
)

var (
	drumPos    = [3]float64{30.4, 3.5, -0.8}
	drumMoment = [3]float64{0.5, 0.3, -1.05}
)

func drumFits(t testing.TB) []Fit {
	const spacing = 10.0
	rng := rand.New(rand.NewPCG(7, 77))
	var fits []Fit
	for i := range 7 {
		x := float64(i) * spacing
		var drum *[3]float64
		if i == 3 {
			drum = &drumPos
		}
		prob := drumReadings(rng, x, drum, drumMoment, drumNoise, 0)
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("traverse %d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("F%d", i+1), Problem: prob, Result: res, Settings: set})
	}
	return fits
}

// drumReadings returns the readings of one traverse at east x across the
// drum fixture's cable (49 readings 0.25 m apart, north -6 m to 6 m), with
// the drum at *obj of the given moment when obj is not nil, and noise of
// standard deviation noise per axis whose lag-1 autocorrelation along the
// traverse is rho (an AR(1) series, stationary from the first reading; for
// rho = 0 one normal draw per axis and reading, in reading order).
func drumReadings(rng *rand.Rand, x float64, obj *[3]float64, moment [3]float64, noise, rho float64) *inverse.Problem {
	earth := [3]float64{-150, 19200, -45100}
	cable := inverse.Line{Point: [3]float64{0, 0, -drumDepth}, Dir: [3]float64{1, 0, 0}}
	var e [3]float64
	if rho > 0 {
		for a := range e {
			e[a] = rng.NormFloat64()
		}
	}
	prob := &inverse.Problem{Sigma: noise}
	for k := -24; k <= 24; k++ {
		r := [3]float64{x, 0.25 * float64(k), 0}
		b := cable.Field(r, drumCurrent)
		if obj != nil {
			d := inverse.Dipole{Pos: *obj}.Field(r, moment)
			for a := range b {
				b[a] += d[a]
			}
		}
		var m [3]float64
		for a := range m {
			e[a] = rho*e[a] + math.Sqrt(1-rho*rho)*rng.NormFloat64()
			m[a] = b[a]*1e9 + earth[a] + noise*e[a]
		}
		prob.Points = append(prob.Points, r)
		prob.Fields = append(prob.Fields, m)
	}
	return prob
}

func TestBuildFindsMagnetisedObject(t *testing.T) {
	const (
		current = drumCurrent
		noise   = drumNoise
	)
	obj, moment := drumPos, drumMoment
	d, err := Build(Document{}, drumFits(t), &BuildSettings{Noise: noise})
	if err != nil {
		t.Fatal(err)
	}
	var found int
	for _, f := range d.Findings {
		if f.Kind != "dipole-anomaly" {
			if f.Kind == "current-anomaly" {
				t.Errorf("the drum was reported as a current anomaly: %s", f.Message)
			}
			continue
		}
		found++
		if len(f.Groups) != 1 || f.Groups[0] != "F4" {
			t.Errorf("object found at %v, want F4", f.Groups)
		}
		checkObject(t, f, obj, moment)
	}
	if found != 1 {
		t.Fatalf("%d magnetised objects reported, want 1", found)
	}
	// The refitted cable under F4 carries the cable's current: the drum's
	// field is no longer taken for current.
	for _, g := range d.Groups {
		if g.Key != "F4" {
			continue
		}
		if len(g.Sources) != 2 || g.Sources[1].Kind != KindDipole {
			t.Fatalf("F4 sources %+v, want the cable and a dipole", g.Sources)
		}
		if s := g.Sources[0]; math.Abs(math.Abs(s.Current)-current) > 4*s.CurrentSigma {
			t.Errorf("F4 cable current %.4g ± %.2g A, true %g A", s.Current, s.CurrentSigma, current)
		}
	}
}

// BenchmarkBuildMagnetisedObject builds the document of the seven drum
// traverses, one of which is searched for a magnetised object.
func BenchmarkBuildMagnetisedObject(b *testing.B) {
	fits := drumFits(b)
	for b.Loop() {
		if _, err := Build(Document{}, fits, &BuildSettings{Noise: drumNoise}); err != nil {
			b.Fatal(err)
		}
	}
}

// checkObject checks a magnetised-object finding against the true position
// obj (m ENU; sensors at height 0, so the depth is -obj[2]) and moment:
// position, depth and moment magnitude within 4 of their reported sigmas
// (which the Monte Carlo of dipole_coverage_test.go finds calibrated). It
// returns the finding's values by name.
func checkObject(t *testing.T, f Finding, obj, moment [3]float64) map[string]Value {
	t.Helper()
	want := map[string]float64{"east": obj[0], "north": obj[1], "depth below sensors": -obj[2],
		"moment": math.Sqrt(moment[0]*moment[0] + moment[1]*moment[1] + moment[2]*moment[2])}
	vals := map[string]Value{}
	for _, v := range f.Values {
		vals[v.Name] = v
		if w, ok := want[v.Name]; ok {
			delete(want, v.Name)
			if v.Sigma <= 0 || math.Abs(v.Value-w) > 4*v.Sigma {
				t.Errorf("object %s %.4f ± %.4f, true %.4f", v.Name, v.Value, v.Sigma, w)
			}
		}
	}
	if len(want) != 0 {
		t.Errorf("finding lacks %v", want)
	}
	return vals
}
