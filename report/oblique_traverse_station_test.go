package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// segmentFieldTest is the field in tesla at r of a straight filament from a
// to b carrying current from a to b (Biot-Savart for a finite segment, as in
// DOMAIN.md's forward models): B = (mu0 I / 4 pi d) (cos1 - cos2) n, with
// d the distance from r to the segment's line, cos1 and cos2 the cosines of
// the angles at the ends, and n the unit vector of u x rho.
func segmentFieldTest(a, b, r [3]float64, current float64) [3]float64 {
	const mu0 = 1.25663706127e-6 // CODATA 2022
	ab := [3]float64{b[0] - a[0], b[1] - a[1], b[2] - a[2]}
	l := math.Sqrt(ab[0]*ab[0] + ab[1]*ab[1] + ab[2]*ab[2])
	u := [3]float64{ab[0] / l, ab[1] / l, ab[2] / l}
	ar := [3]float64{r[0] - a[0], r[1] - a[1], r[2] - a[2]}
	t := ar[0]*u[0] + ar[1]*u[1] + ar[2]*u[2]
	rho := [3]float64{ar[0] - t*u[0], ar[1] - t*u[1], ar[2] - t*u[2]}
	d2 := rho[0]*rho[0] + rho[1]*rho[1] + rho[2]*rho[2]
	c1 := t / math.Sqrt(t*t+d2)
	c2 := (t - l) / math.Sqrt((t-l)*(t-l)+d2)
	k := mu0 * current / (4 * math.Pi) * (c1 - c2) / d2
	return [3]float64{k * (u[1]*rho[2] - u[2]*rho[1]), k * (u[2]*rho[0] - u[0]*rho[2]), k * (u[0]*rho[1] - u[1]*rho[0])}
}

// obliqueCase is a level cable 1.1 m below level ground, the sensors 0.3 m
// over the ground, carrying 25 A up to leakAt along it and 20 A beyond
// (two segments 300 m long from the leak), and straight traverses crossing
// it; the truth is each traverse's chainage along the cable from the first
// crossing.
type obliqueCase struct {
	name      string
	origin    [2]float64 // the cable's point at along = 0 (plan)
	azimuth   float64    // the cable's, degrees from north
	leakAt    float64    // along the cable from origin, m
	traverses [][2][2]float64
	crossAt   []float64 // along the cable from origin where each traverse crosses it
}

// fitObliqueCase simulates and fits c's traverses as locate does (the count
// of lines chosen automatically, the noise estimated) and builds the route.
func fitObliqueCase(t *testing.T, c obliqueCase) *Document {
	t.Helper()
	const noise, depth, sensorH = 2.0, 1.1, 0.3
	earth := [3]float64{-150, 19200, -45100}
	az := c.azimuth * math.Pi / 180
	uh := [2]float64{math.Sin(az), math.Cos(az)}
	at := func(s float64) [3]float64 {
		return [3]float64{c.origin[0] + s*uh[0], c.origin[1] + s*uh[1], -depth}
	}
	rng := rand.New(rand.NewPCG(13, 4))
	var fits []Fit
	for i, tr := range c.traverses {
		a, b := tr[0], tr[1]
		n := int(math.Round(math.Hypot(b[0]-a[0], b[1]-a[1])/0.1)) + 1
		prob := &inverse.Problem{}
		for k := range n {
			f := float64(k) / float64(n-1)
			r := [3]float64{a[0] + f*(b[0]-a[0]), a[1] + f*(b[1]-a[1]), sensorH}
			b1 := segmentFieldTest(at(c.leakAt-300), at(c.leakAt), r, 25)
			b2 := segmentFieldTest(at(c.leakAt), at(c.leakAt+300), r, 20)
			var m [3]float64
			for j := range m {
				m[j] = (b1[j]+b2[j])*1e9 + earth[j] + noise*rng.NormFloat64()
			}
			prob.Points = append(prob.Points, r)
			prob.Fields = append(prob.Fields, m)
		}
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("%s T%02d: %v", c.name, i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: prob, Result: res, Settings: set})
	}
	d, err := Build(Document{}, fits, &BuildSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || len(d.Route.Stations) != len(c.traverses) {
		t.Fatalf("%s: route %+v, want %d stations", c.name, d.Route, len(c.traverses))
	}
	return d
}

// checkObliqueChainages checks that d's stations follow the traverses in
// order, each within tol of its true chainage (along the cable from the
// first traverse's crossing), and its point within tol of the crossing.
func checkObliqueChainages(t *testing.T, c obliqueCase, d *Document, tol float64) {
	t.Helper()
	az := c.azimuth * math.Pi / 180
	uh := [2]float64{math.Sin(az), math.Cos(az)}
	for i, s := range d.Route.Stations {
		key := fmt.Sprintf("T%02d", i+1)
		if s.Key != key {
			t.Errorf("%s: station %d is %s, want %s (the traverses' order along the cable)", c.name, i+1, s.Key, key)
			continue
		}
		want := c.crossAt[i] - c.crossAt[0]
		if !(math.Abs(s.Chainage-want) <= tol) {
			t.Errorf("%s: %s at chainage %.3f m, truth %.3f m", c.name, s.Key, s.Chainage, want)
		}
		pe, pn := c.origin[0]+c.crossAt[i]*uh[0], c.origin[1]+c.crossAt[i]*uh[1]
		if e := math.Hypot(s.Point[0]-pe, s.Point[1]-pn); !(e <= tol) {
			t.Errorf("%s: %s placed at E %.3f N %.3f, %.3f m from where its traverse crosses the cable (E %.3f N %.3f)",
				c.name, s.Key, s.Point[0], s.Point[1], e, pe, pn)
		}
		if s.UnderCentre {
			t.Errorf("%s: %s said to lie under its readings' centre, not at its traverse's crossing", c.name, s.Key)
		}
	}
}

// TestBuildObliqueTraverseStations: a route's stations lie where each
// traverse crosses the fitted conductor in plan, not under the readings'
// centre; checked against the simulated truth (finite segments by
// Biot-Savart, a uniform Earth field, 2 nT of noise per axis, each
// traverse fitted by inverse.FitLines as locate does).
//
//   - "oblique off-centre": a cable at azimuth 60 degrees, ten traverses at
//     40 degrees to it crossing at 0, 3, 6, 9, 12, 16, 19, 22, 25 and 28 m
//     of chainage, running alternately from 2 m before to 7 m past the
//     cable and from 7 m before to 2 m past it, as a walker starting each
//     traverse at the cable's side would; the current falls from 25 A to
//     20 A at chainage 14 m, between T05 and T06. Before, the stations lay
//     under the readings' centres, (offset along the traverse) x cos 40
//     degrees along the cable from the crossings: T02 came before T01,
//     T05 and T06 lay 0.2 m apart and were merged as repeats of one
//     station, and the loss was placed between T03 and T05 with T06.
//   - "15 degrees": traverses due north, 12 m long and centred on a
//     planned route due east, every 5 m; the cable runs at 75 degrees,
//     15 degrees off the plan, so it crosses the traverses off their
//     centres. Before, every chainage was 7% short (33.8 m for 36.2 at
//     T08) and chainage 0 lay 1.2 m east of T01.
func TestBuildObliqueTraverseStations(t *testing.T) {
	offCentre := obliqueCase{name: "oblique off-centre", azimuth: 60, leakAt: 16}
	{
		az := 60 * math.Pi / 180
		uh := [2]float64{math.Sin(az), math.Cos(az)}
		nh := [2]float64{-uh[1], uh[0]}
		ang := 40 * math.Pi / 180
		d := [2]float64{uh[0]*math.Cos(ang) + nh[0]*math.Sin(ang), uh[1]*math.Cos(ang) + nh[1]*math.Sin(ang)}
		for i, s := range []float64{2, 5, 8, 11, 14, 18, 21, 24, 27, 30} {
			c := [2]float64{s * uh[0], s * uh[1]}
			l0, l1 := -2.0, 7.0
			if i%2 == 1 {
				l0, l1 = -7, 2
			}
			offCentre.traverses = append(offCentre.traverses, [2][2]float64{
				{c[0] + l0*d[0], c[1] + l0*d[1]}, {c[0] + l1*d[0], c[1] + l1*d[1]}})
			offCentre.crossAt = append(offCentre.crossAt, s)
		}
	}
	fifteen := obliqueCase{name: "15 degrees", origin: [2]float64{17.5, 0}, azimuth: 75, leakAt: 0}
	for i := range 8 {
		x := 5 * float64(i)
		fifteen.traverses = append(fifteen.traverses, [2][2]float64{{x, -6}, {x, 6}})
		fifteen.crossAt = append(fifteen.crossAt, (x-17.5)/math.Sin(75*math.Pi/180))
	}

	t.Run("oblique off-centre", func(t *testing.T) {
		c := offCentre
		d := fitObliqueCase(t, c)
		checkObliqueChainages(t, c, d, 0.15)
		// The loss, at chainage 14 m, between T05 (12 m) and T06 (16 m).
		var step *Finding
		for i, f := range d.Findings {
			if f.Kind == "current-step" {
				step = &d.Findings[i]
				break
			}
		}
		if step == nil {
			t.Fatalf("no current-step finding for the 5 A lost between T05 and T06; findings %+v", d.Findings)
		}
		if strings.Contains(step.Message, "T05 with T06") || !strings.Contains(step.Message, "between T05 and T06") {
			t.Errorf("the loss is not placed between T05 and T06: %s", step.Message)
		}
		located := false
		for _, v := range step.Values {
			if v.Name == "location (chainage)" {
				located = true
				if !(math.Abs(v.Value-14) <= 3*v.Sigma) {
					t.Errorf("the loss placed at chainage %.2f ± %.2f m, truth 14 m", v.Value, v.Sigma)
				}
			}
		}
		if !located {
			t.Errorf("the loss is not located along the route: %+v", step.Values)
		}
	})
	t.Run("15 degrees", func(t *testing.T) {
		c := fifteen
		d := fitObliqueCase(t, c)
		checkObliqueChainages(t, c, d, 0.05)
		// Chainage 0 is named where the cable crosses T01: E 0.0 m, N -4.7 m
		// (-17.5 / tan 75 degrees = -4.69 m).
		if z := ChainageZero(d); !strings.Contains(z, "crosses the first traverse along the route, T01, at E 0.0 m, N -4.7 m") {
			t.Errorf("chainage 0 is not named at T01's crossing (E 0.0 m, N -4.7 m): %s", z)
		}
	})
}

// TestBuildGridGroupsStationsUnderCentre: groups whose readings are not a
// traverse (a 2 m square grid of readings every 0.25 m, as a cart or a
// sensor array sweeping a patch gives) keep the station under the centre
// of their readings, and the route and the chainage-0 sentence say so;
// checked against the simulated truth (the infinite line of DOMAIN.md,
// lineField, 25 A 1.4 m below the sensors along east at north 0, 2 nT of
// noise). The grids' centres lie 0.6 m north of the cable, at east 0, 5,
// 10 and 15 m, so the stations lie at (east, 0) and chainage 0 at E 0.0 m,
// N 0.0 m.
func TestBuildGridGroupsStationsUnderCentre(t *testing.T) {
	const noise = 2.0
	earth := [3]float64{-150, 19200, -45100}
	rng := rand.New(rand.NewPCG(13, 5))
	var fits []Fit
	for i := range 4 {
		x := 5 * float64(i)
		prob := &inverse.Problem{}
		for a := -4; a <= 4; a++ {
			for b := -4; b <= 4; b++ {
				r := [3]float64{x + 0.25*float64(a), 0.6 + 0.25*float64(b), 0}
				f := lineField([3]float64{0, 0, -1.4}, [3]float64{1, 0, 0}, r, 25)
				var m [3]float64
				for j := range m {
					m[j] = f[j]*1e9 + earth[j] + noise*rng.NormFloat64()
				}
				prob.Points = append(prob.Points, r)
				prob.Fields = append(prob.Fields, m)
			}
		}
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("G%d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("G%d", i+1), Problem: prob, Result: res, Settings: set})
	}
	d, err := Build(Document{}, fits, &BuildSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || len(d.Route.Stations) != 4 {
		t.Fatalf("route %+v, want 4 stations", d.Route)
	}
	for i, s := range d.Route.Stations {
		if !s.UnderCentre {
			t.Errorf("%s: not marked as under its readings' centre", s.Key)
		}
		if e := math.Hypot(s.Point[0]-5*float64(i), s.Point[1]); !(e <= 0.02) {
			t.Errorf("%s: placed at E %.3f N %.3f, want the cable under the grid's centre, E %.1f N 0", s.Key, s.Point[0], s.Point[1], 5*float64(i))
		}
	}
	if z := ChainageZero(d); !strings.Contains(z, "passes under the centre of the first group's readings along the route, G1 (not a traverse across it), at E 0.0 m, N 0.0 m") {
		t.Errorf("chainage 0 sentence: %s", z)
	}
}
