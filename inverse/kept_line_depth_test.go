package inverse

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// cableReadings returns readings (nT) of a 20 A cable through vertices v
// and of magnetised objects (point dipoles at dips with moments m, A m^2),
// on a 10 m traverse running north across east x from north -5 to 5 m,
// sensors 0.3 m above ground, readings 0.1 m apart, with the Earth's field
// and 2 nT of white noise. The fields are the polyline's (Biot-Savart for
// straight segments) and the dipoles' (DOMAIN.md); the truth is the
// simulation's. The scenes are invented (Brackwater Sidings).
func cableReadings(v [][3]float64, dips []Dipole, m [][3]float64, x float64, rng *rand.Rand) *Problem {
	cable := Polyline{Vertices: v}
	cur := make([]float64, len(v)-1)
	for i := range cur {
		cur[i] = 20
	}
	bg := [3]float64{-150, 19200, -45100}
	var pts, b [][3]float64
	for i := range 101 {
		r := [3]float64{x, -5 + 0.1*float64(i), 0.3}
		f := add(bg, scale(cable.Field(r, cur), nT))
		for k, d := range dips {
			f = add(f, scale(d.Field(r, m[k]), nT))
		}
		for j := range 3 {
			f[j] += 2 * rng.NormFloat64()
		}
		pts, b = append(pts, r), append(b, f)
	}
	return &Problem{Points: pts, Fields: b}
}

// TestKeptLineNotDeepOnDippingCable: on a lone 20 A cable 0.8 m down,
// level to east 10 m and then dipping 4 degrees to 4.3 m at east 60 m, or
// stepping down to 2.0 m between east 20 and 26 m whose depth changes
// along the route, no fit keeps a further line whose current the readings
// do not resolve (keepsUnresolvedLine): none lies beyond the traverse's
// ends, and a line far below stands only for the cable's own change of
// depth. Traverses at east 5 to 20 m over the dip (level, at the kink,
// dipping) and 14 to 23 m over the step, 30 seeds each (12 with -short). Before, a line 12 to 20 m below the sensors, its azimuth at
// the search bound, was kept on some of them, and the cable's current moved
// 2 to 4 of its sigmas further from the truth while the fit's RMS fell to
// the noise.
func TestKeptLineNotDeepOnDippingCable(t *testing.T) {
	seeds := uint64(30)
	if testing.Short() {
		seeds = 12
	}
	dip := [][3]float64{{-100, 0, -0.8}, {10, 0, -0.8}, {60, 0, -4.3}, {200, 0, -4.3}}
	step := [][3]float64{{-100, 0, -0.8}, {20, 0, -0.8}, {26, 0, -2.0}, {200, 0, -2.0}}
	for _, x := range []float64{5, 8, 11, 14, 17, 20, -14, -17, -20, -23} {
		for seed := range seeds {
			// Negative x: the step, at east |x|.
			v, name := dip, "dip"
			if x < 0 {
				v, x, name = step, -x, "step"
			}
			p := cableReadings(v, nil, nil, x, rand.New(rand.NewPCG(seed, 404)))
			res, err := FitLines(p, nil)
			if err != nil {
				t.Fatal(err)
			}
			for i := range res.Sources {
				if keptNote(&res.Sources[i]) {
					t.Errorf("%s, east %g seed %d: line %d kept unresolved %.3g m below the sensors beside a lone cable: %q", name, x, seed, i+1, res.Sources[i].Depth, strings.Join(res.Notes, "; "))
				}
			}
		}
	}
}

// TestKeptLineNotesAgree: beside a cable running east 1 m down that turns
// north at east 30 m (a 90 degree elbow just past the ends of the traverses
// at east 14 to 26 m), the fits that keep a further line whose current is
// not resolved give that line the one note that says so and no other:
// before, most such lines also carried "azimuth stopped at the bound of the
// single-traverse search ... the readings would turn the line", which reads
// as an azimuth, beside the note saying none of its quantities is fixed.
func TestKeptLineNotesAgree(t *testing.T) {
	seeds := uint64(12)
	if testing.Short() {
		seeds = 6
	}
	elbow := [][3]float64{{-100, 0, -1}, {30, 0, -1}, {30, 100, -1}}
	kept := 0
	for _, x := range []float64{14, 17, 20, 23, 26} {
		for seed := range seeds {
			res, err := FitLines(cableReadings(elbow, nil, nil, x, rand.New(rand.NewPCG(seed, 405))), nil)
			if err != nil {
				t.Fatal(err)
			}
			for i := range res.Sources {
				e := &res.Sources[i]
				if !keptNote(e) {
					continue
				}
				kept++
				if len(e.Notes) != 1 {
					t.Errorf("east %g seed %d: kept line %d has notes %q", x, seed, i+1, e.Notes)
				}
			}
		}
	}
	if kept == 0 {
		t.Error("no fit kept a line: the fixture no longer tests the notes")
	}
}

// TestKeptLineDroppedWhenMoreLinesAsked: a 20 A cable 1 m down running
// east, and a steel object (a point dipole of moment (2, 6, -12) A m^2) 0.4 m
// down at east 20 m, north 6.3 m, 1.3 m past the end of traverses at east 17
// to 26 m. A fit that keeps a line whose current the readings do not
// resolve (keepsUnresolvedLine) does not also report that conductors closer
// together than the fit can part may lie there (UnresolvedLinesNote): when
// a further line still lowers the criterion past the kept one, the kept line
// is dropped. Before, such a fit kept a line 1.3 m from the cable at the
// azimuth bound and carried both notes, its cable 2.5 sigma off in offset.
func TestKeptLineDroppedWhenMoreLinesAsked(t *testing.T) {
	seeds := uint64(20)
	if testing.Short() {
		seeds = 8
	}
	cable := [][3]float64{{-100, 0, -1}, {200, 0, -1}}
	drum := []Dipole{{Pos: [3]float64{20, 6.3, -0.4}}}
	m := [][3]float64{{2, 6, -12}}
	for _, x := range []float64{17, 20, 23, 26} {
		for seed := range seeds {
			res, err := FitLines(cableReadings(cable, drum, m, x, rand.New(rand.NewPCG(seed, 406))), nil)
			if err != nil {
				t.Fatal(err)
			}
			notes := strings.Join(res.Notes, "; ")
			if strings.Contains(notes, UnresolvedKeptNote) && strings.Contains(notes, UnresolvedLinesNote) {
				t.Errorf("east %g seed %d: both notes: %q", x, seed, notes)
			}
		}
	}
}
