package live

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// commissionReadings is the mean field at the sensors of the given lines
// (Biot-Savart, inverse.Line.Field, checked in package inverse against
// the DOMAIN.md values) with noise of sigma nT per component: DC fields
// on top of the Earth's field when ac is false, RMS phasors when true.
func commissionReadings(sensors [][3]float64, lines []inverse.Line, cur []complex128, ac bool, sigma float64, seed uint64) *SolveInput {
	rng := rand.New(rand.NewPCG(seed, 7))
	// The mean of ten windows, each of noise sqrt(10) sigma.
	in := &SolveInput{Points: sensors, Sigma: sigma, WindowSigma: sigma * math.Sqrt(10)}
	earth := [3]float64{-150, 19200, -45100}
	for _, s := range sensors {
		var z [3]complex128
		for c, l := range lines {
			f := l.Field(s, 1)
			for k := range 3 {
				z[k] += complex(f[k]*1e9, 0) * cur[c]
			}
		}
		if ac {
			for k := range 3 {
				z[k] += complex(sigma*rng.NormFloat64(), sigma*rng.NormFloat64())
			}
			in.Phasors = append(in.Phasors, z)
		} else {
			var f [3]float64
			for k := range 3 {
				f[k] = real(z[k]) + earth[k] + sigma*rng.NormFloat64()
			}
			in.Fields = append(in.Fields, f)
		}
	}
	return in
}

var pairSensors = [][3]float64{{-1.5, 0, 0.3}, {-0.5, 0, 0.3}, {0.5, 0, 0.3}, {1.5, 0, 0.3}, {0, 4, 0.3}}

// Without the cores' points a go-and-return pair the readings do not
// resolve is refused, for good (more readings of the same field do not
// separate I from d), with a message saying what to add.
func TestCommissionRefusesPairWithoutPoints(t *testing.T) {
	for _, ac := range []bool{true, false} {
		cur := []complex128{cmplx.Rect(20, pairPhase), cmplx.Rect(-20, pairPhase)}
		if !ac {
			cur = []complex128{20, -20}
		}
		in := commissionReadings(pairSensors, pairCores, cur, ac, 0.45, 1)
		testPairPoints(t, in)
	}
}

func testPairPoints(t *testing.T, in *SolveInput) {
	t.Helper()
	_, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "go"}, {Name: "return"}})
	var site *needsSiteError
	// AC: the free fit finds the pair and it is refused for good. DC: the
	// free fit (three more unknowns, the Earth's field, from four sensor
	// positions across the pair) misses the readings, and is refused.
	if in.Phasors != nil && !errors.As(err, &site) || err == nil || !strings.Contains(err.Error(), "point") {
		t.Fatalf("got %v, want the pair refused for want of the cores' points", err)
	}
	// With the points the cores are placed at their spacing.
	stated := []ConductorConfig{{Name: "go", Point: [3]float64{-0.15, 0, -1.5}, pointSet: true}, {Name: "return", Point: [3]float64{0.15, 0, -1.5}, pointSet: true}}
	conds, err := InverseCommissioner{}.Commission(in, stated)
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range conds {
		if c.Name != stated[i].Name || math.Abs(c.Point[0]-pairCores[i].Point[0]) > 0.02 || math.Abs(c.Point[2]+1.5) > 0.03 || c.Direction[1] < 0.999 {
			t.Errorf("conductor %d: %+v, want %s at x %v, z -1.5, pointing north", i, c, stated[i].Name, pairCores[i].Point[0])
		}
	}
	// Their currents, fitted with the geometry held, are the truth's.
	est, err := NewInverseEstimator("", conds)
	if err != nil {
		t.Fatal(err)
	}
	out, err := est.Solve(in)
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{20, -20} {
		got := out.Current[i]
		if in.Phasors != nil {
			got *= math.Cos((out.Phase[i] - pairPhase*180/math.Pi) * math.Pi / 180)
		}
		if math.Abs(got-want) > 0.03*20 { // the centre's 1 cm at 1.8 m, squared
			t.Errorf("%s: %.3f A, truth %v A", conds[i].Name, got, want)
		}
	}
}

// Two conductors the readings resolve (DC): a cable with 10 A and a pipe
// with 4 A, 2.2 m apart. Each fitted line takes the name of the
// conductor whose point lies nearest, whatever the order of strength or
// listing, and points along the conductor's stated direction, or along
// the first stated one.
func TestCommissionNamesLinesByPosition(t *testing.T) {
	var sensors [][3]float64
	for i := range 9 {
		sensors = append(sensors, [3]float64{-3 + 0.75*float64(i), 0, 0.3})
	}
	sensors = append(sensors, [3]float64{-2, 4, 0.3}, [3]float64{0, 4, 0.3}, [3]float64{2, 4, 0.3})
	cable := inverse.Line{Point: [3]float64{-1, 0, -1}, Dir: [3]float64{0, 1, 0}}
	pipe := inverse.Line{Point: [3]float64{1.2, 0, -1.5}, Dir: [3]float64{0, 1, 0}}
	in := commissionReadings(sensors, []inverse.Line{cable, pipe}, []complex128{10, 4}, false, 0.3, 2)

	// The weaker pipe listed first, its current counted southward.
	stated := []ConductorConfig{
		{Name: "pipe", Point: [3]float64{1, 0, -1.3}, pointSet: true, Direction: [3]float64{0, -1, 0}, dirSet: true},
		{Name: "cable", Point: [3]float64{-0.8, 0, -1.2}, pointSet: true},
	}
	conds, err := InverseCommissioner{}.Commission(in, stated)
	if err != nil {
		t.Fatal(err)
	}
	check := func(c ConductorConfig, name string, l inverse.Line, north float64) {
		t.Helper()
		if c.Name != name || math.Hypot(c.Point[0]-l.Point[0], c.Point[2]-l.Point[2]) > 0.05 || math.Abs(c.Direction[1]-north) > 0.01 {
			t.Errorf("got %s at x %.3f z %.3f direction %.3f, want %s at x %v z %v, direction north %v", c.Name, c.Point[0], c.Point[2], c.Direction, name, l.Point[0], l.Point[2], north)
		}
	}
	check(conds[0], "pipe", pipe, -1)
	check(conds[1], "cable", cable, -1) // along the first stated direction

	// Without points: left to right looking along the common direction,
	// which points north when none is stated.
	conds, err = InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "west"}, {Name: "east"}})
	if err != nil {
		t.Fatal(err)
	}
	check(conds[0], "west", cable, 1)
	check(conds[1], "east", pipe, 1)
}

// In a commissioned site file every conductor gives its point or none
// does, and a direction given is not zero.
func TestCommissionSitePointsAllOrNone(t *testing.T) {
	base := `
[[asset]]
name = "tollbar"
model = "commission"
  [[asset.sensor]]
  name = "s1"
  position = [0.0, 0.0, 0.3]
  [[asset.conductor]]
  name = "go"
  point = [-0.15, 0.0, -1.5]
  [[asset.conductor]]
  name = "return"
`
	if _, err := ParseSite("t.toml", []byte(base)); err == nil || !strings.Contains(err.Error(), `"go" gives a point and "return" does not`) {
		t.Errorf("got %v", err)
	}
	s, err := ParseSite("t.toml", []byte(base+"  point = [0.0, 0.0, 0.0]\n"))
	if err != nil {
		t.Fatal(err)
	}
	if c := s.Assets[0].Conductors; !c[0].pointSet || !c[1].pointSet || c[0].dirSet {
		t.Errorf("points and directions given: %+v", c)
	}
	if _, err := ParseSite("t.toml", []byte(base+"  point = [0.15, 0.0, -1.5]\n  direction = [0.0, 0.0, 0.0]\n")); err == nil || !strings.Contains(err.Error(), "direction is zero") {
		t.Errorf("got %v", err)
	}
}
