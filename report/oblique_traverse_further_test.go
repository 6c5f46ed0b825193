package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// TestBuildObliqueTraverseFurtherStations: a further conductor's stations
// lie where its fitted line crosses each traverse, with its depth there, as
// conductor 1's do; checked against the simulated truth (finite segments by
// Biot-Savart, segmentFieldTest, a uniform Earth field, 2 nT of noise per
// axis, each traverse fitted by inverse.FitLines as locate does, the count
// of lines chosen by the fit). The geometry is plane geometry on the
// scenario's own numbers.
//
// Seven traverses due north, 24 m long, at east 4, 7, ..., 22 m, the
// sensors at up 0. Cable 1 (30 A) runs level 1.2 m below the sensors at
// azimuth 65 degrees through (0, -6): the traverses cross it at 65 degrees.
// Cable 2 (20 A) diverges from it at azimuth 55 degrees through (0, -2),
// 1.3 m below the sensors there and dipping 3 per cent (1.7 degrees) to
// along 40 m (a polyline, level 200 m before and after). Before, cable 2's
// stations lay where its line meets cable 1's cross section at cable 1's
// station, 2.1 to 3.9 m along cable 2 from its traverses (their distance
// apart along the traverse x cos 65 degrees), with the depths there: 0.06
// to 0.12 m (25 to 100 sigma) shallower than the truth at the traverses,
// its chainages 8% short (20.2 m for 22.0 at T07), and the length
// conductor 2 was said to be followed 20 m for 22 m.
//
// The offset of cable 2 from cable 1 (crossOffset: in cable 1's cross
// section at its station, which links the track) stays what it was: the
// truth, 4.1 m to the left at T01 widening to 7.6 m at T07.
func TestBuildObliqueTraverseFurtherStations(t *testing.T) {
	const noise = 2.0
	earth := [3]float64{-150, 19200, -45100}
	az1, az2 := 65*math.Pi/180, 55*math.Pi/180
	u1 := [2]float64{math.Sin(az1), math.Cos(az1)}
	u2 := [2]float64{math.Sin(az2), math.Cos(az2)}
	o1, o2 := [2]float64{0, -6}, [2]float64{0, -2}
	const depth1 = 1.2
	// Cable 2's depth below the sensors at s m along it from o2.
	depth2 := func(s float64) float64 { return 1.3 + 0.03*math.Max(0, math.Min(40, s)) }
	at2 := func(s float64) [3]float64 { return [3]float64{o2[0] + s*u2[0], o2[1] + s*u2[1], -depth2(s)} }
	at1 := func(s float64) [3]float64 { return [3]float64{o1[0] + s*u1[0], o1[1] + s*u1[1], -depth1} }
	cable2 := [][3]float64{at2(-200), at2(0), at2(40), at2(240)}

	rng := rand.New(rand.NewPCG(14, 1))
	var fits []Fit
	xs := []float64{4, 7, 10, 13, 16, 19, 22}
	for i, x := range xs {
		prob := &inverse.Problem{}
		for k := 0; k <= 240; k++ {
			r := [3]float64{x, -12 + 0.1*float64(k), 0}
			b := segmentFieldTest(at1(-300), at1(300), r, 30)
			for j := 1; j < len(cable2); j++ {
				bj := segmentFieldTest(cable2[j-1], cable2[j], r, 20)
				for c := range b {
					b[c] += bj[c]
				}
			}
			var m [3]float64
			for c := range m {
				m[c] = b[c]*1e9 + earth[c] + noise*rng.NormFloat64()
			}
			prob.Points = append(prob.Points, r)
			prob.Fields = append(prob.Fields, m)
		}
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("T%02d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: prob, Result: res, Settings: set})
	}
	d, err := Build(Document{}, fits, &BuildSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || len(d.Route.Stations) != len(xs) {
		t.Fatalf("route %+v, want %d stations", d.Route, len(xs))
	}
	if len(d.Conductors) != 1 || len(d.Conductors[0].Route.Stations) != len(xs) {
		t.Fatalf("conductors %+v, want cable 2 followed as conductor 2 at all %d traverses", d.Conductors, len(xs))
	}
	tr := &d.Conductors[0]
	// Where cable 2 crosses the traverse at east x: s along it from o2.
	s0 := (xs[0] - o2[0]) / u2[0]
	for i, st := range tr.Route.Stations {
		key := fmt.Sprintf("T%02d", i+1)
		if st.Key != key {
			t.Errorf("conductor 2's station %d is %s, want %s", i+1, st.Key, key)
			continue
		}
		s := (xs[i] - o2[0]) / u2[0]
		pe, pn := o2[0]+s*u2[0], o2[1]+s*u2[1]
		if e := math.Hypot(st.Point[0]-pe, st.Point[1]-pn); !(e <= 0.05) {
			t.Errorf("%s: conductor 2 placed at E %.3f N %.3f, %.3f m from where its traverse crosses cable 2 (E %.3f N %.3f)",
				key, st.Point[0], st.Point[1], e, pe, pn)
		}
		// Chainage along cable 2 from T01's crossing: the dip lengthens
		// it by sqrt(1 + 0.03²) within the dipping stretch.
		want := (s - s0) * math.Hypot(1, 0.03)
		if !(math.Abs(st.Chainage-want) <= 0.05) {
			t.Errorf("%s: conductor 2 at chainage %.3f m, truth %.3f m", key, st.Chainage, want)
		}
		// The straight-line fit of a bent polyline leaves a model error
		// of a few millimetres that the fit's sigma (under 1 mm) does
		// not carry: 1 cm allowed, against 6-12 cm before.
		if e := math.Abs(st.Depth - depth2(s)); !(e <= 0.01) {
			t.Errorf("%s: conductor 2's depth %.4f ± %.4f m, truth %.4f m where the traverse crosses it", key, st.Depth, st.DepthSigma, depth2(s))
		}
		if !(st.DepthSigma > 0 && st.DepthSigma < 0.01) {
			t.Errorf("%s: conductor 2's depth sigma %.4g m, want a fitted one under 1 cm", key, st.DepthSigma)
		}
		if st.UnderCentre {
			t.Errorf("%s: conductor 2 said to lie under its readings' centre", key)
		}
	}
	// The length followed, along cable 2 between T01 and T07.
	c, ok := crossingOf(d, tr)
	if !ok {
		t.Fatal("conductor 2, 10 degrees off conductor 1 and diverging, is not summarised as running at an angle to it")
	}
	sLast := (xs[len(xs)-1] - o2[0]) / u2[0]
	if want := (sLast - s0); !(math.Abs(c.length-want) <= 0.1) {
		t.Errorf("conductor 2 followed for %.2f m, truth %.2f m in plan", c.length, want)
	}
	// Its offsets from conductor 1: where cable 1's cross section through
	// its crossing with the traverse meets cable 2, positive to the right
	// looking along cable 1.
	offsetAt := func(x float64) float64 {
		s1 := (x - o1[0]) / u1[0]
		p := [2]float64{o1[0] + s1*u1[0], o1[1] + s1*u1[1]}
		// p + a*right meets o2 + b*u2; right = (u1y, -u1x).
		right := [2]float64{u1[1], -u1[0]}
		det := right[0]*(-u2[1]) - right[1]*(-u2[0])
		dx, dy := o2[0]-p[0], o2[1]-p[1]
		return (dx*(-u2[1]) - dy*(-u2[0])) / det
	}
	for _, e := range []struct {
		got  float64
		x    float64
		name string
	}{{c.first, xs[0], c.firstKey}, {c.last, xs[len(xs)-1], c.lastKey}} {
		if want := offsetAt(e.x); !(math.Abs(e.got-want) <= 0.05) {
			t.Errorf("conductor 2's offset from conductor 1 at %s %.3f m, truth %.3f m", e.name, e.got, want)
		}
	}
}
