package report

import (
	"bytes"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// The fixtures below are invented scenes at the fictional Kestrel Moor gas
// spur. Their fields are computed with the point dipole, the infinite line
// and the finite segment of DOMAIN.md (the dipole as in Jackson, Classical
// Electrodynamics, eq. 5.56; the segment by Biot-Savart), a uniform Earth
// field and normal reading noise; each traverse is fitted by
// inverse.FitLines with the count chosen automatically and the noise
// estimated, as locate does by default.

// objectEarth is the uniform Earth field of the fixtures, nT.
var objectEarth = [3]float64{-150, 19200, -45100}

// objectTraverse returns the readings of one traverse at east x, sensors at
// height 0, from north -half to half every step m, of the field field(r)
// (tesla) plus the Earth's and noise nT per axis; Sigma is left 0.
func objectTraverse(rng *rand.Rand, x, half, step, noise float64, field func(r [3]float64) [3]float64) *inverse.Problem {
	p := &inverse.Problem{}
	n := int(math.Round(half / step))
	for k := -n; k <= n; k++ {
		r := [3]float64{x, step * float64(k), 0}
		b := field(r)
		var m [3]float64
		for a := range m {
			m[a] = b[a]*1e9 + objectEarth[a] + noise*rng.NormFloat64()
		}
		p.Points = append(p.Points, r)
		p.Fields = append(p.Fields, m)
	}
	return p
}

// objectFits fits each problem as locate does, keyed T01, T02, ...
func objectFits(t *testing.T, probs []*inverse.Problem) []Fit {
	t.Helper()
	var fits []Fit
	for i, p := range probs {
		set := &inverse.Settings{}
		res, err := inverse.FitLines(p, set)
		f := Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: p, Result: res, Err: err, Settings: set}
		fits = append(fits, f)
	}
	return fits
}

// A steel valve body alone, no current anywhere: 13 traverses 4 m apart
// (east 6 to 54 m), 16 m long, the body 1 m north of the line at east
// 26 m, 1.1 m below the sensors (0.8 m below ground with the sensors
// 0.3 m up), moment (0, 1.5, -3.5) A m^2, 1 nT of noise. Before, the
// traverse over it was fitted as a 0.67 A line 0.37 m below the sensors,
// taken for a conductor and warned of as 0.07 m of cover, and no object was
// reported: the search found the object, but with it the refitted line
// carried no current, which the rule for an object beside a conductor
// refused. The truth: one object where it lies, and no conductor.
func TestBuildFindsObjectAlone(t *testing.T) {
	d, obj, moment := valveBodyAlone(t)
	found := 0
	for _, f := range d.Findings {
		switch f.Kind {
		case string(route.KindDipole):
			found++
			vals := map[string]Value{}
			for _, v := range f.Values {
				vals[v.Name] = v
			}
			if _, ok := vals["distance from conductor"]; ok {
				t.Errorf("an object alone is given a distance from a conductor: %s", f.Message)
			}
			checkObjectBelowGround(t, f, obj, 0.3, moment)
		case string(route.KindShallowCover):
			t.Errorf("a cover finding where there is no conductor: %s", f.Message)
		}
	}
	if found != 1 {
		t.Errorf("%d magnetised objects reported, want 1", found)
	}
	// The report's table does not put the object beside a conductor.
	var html bytes.Buffer
	if err := WriteHTML(&html, d); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(html.String(), "beside the conductor") || !strings.Contains(html.String(), "a magnetised object and no conductor") {
		t.Error("report.html does not say the object is alone")
	}
	if d.Route != nil {
		for _, s := range d.Route.Stations {
			if s.Used {
				t.Errorf("station %s used as a conductor (%.4g A) where there is none", s.Key, s.Current)
			}
		}
	}
}

// checkObjectBelowGround is checkObject for a document whose depths are
// below the sensors carried h m above the ground: the finding gives the
// depth below ground.
func checkObjectBelowGround(t *testing.T, f Finding, obj [3]float64, h float64, moment [3]float64) {
	t.Helper()
	want := map[string]float64{"east": obj[0], "north": obj[1], "depth below ground": -obj[2] - h,
		"moment": math.Sqrt(moment[0]*moment[0] + moment[1]*moment[1] + moment[2]*moment[2])}
	for _, v := range f.Values {
		if w, ok := want[v.Name]; ok {
			delete(want, v.Name)
			if !(v.Sigma > 0) || math.Abs(v.Value-w) > 4*v.Sigma {
				t.Errorf("object %s %.4f ± %.4f, true %.4f", v.Name, v.Value, v.Sigma, w)
			}
		}
	}
	if len(want) != 0 {
		t.Errorf("finding lacks %v: %+v", want, f.Values)
	}
}

// A tee and no object: a 40 A DC feeder 1.2 m below the sensors runs east;
// at east 30 m a 15 A branch leaves it north-east at 45 degrees (25 A carry
// on). 15 traverses 4 m apart (east 4 to 60 m), north -7 to 7 m, 2 nT of
// noise. Before, the branch's field was taken for "objects" at north 21
// and 31 m, 14 and 24 m beyond the traverses, with moments of 20,000 and
// 56,000 A m^2 (and one 2.8 m off a traverse, 1.3 m deep). The scene holds
// no magnetised object: none may be reported.
func TestBuildNoObjectBeyondReadings(t *testing.T) {
	z := -1.2
	feedIn := inverse.Segment{A: [3]float64{-300, 0, z}, B: [3]float64{30, 0, z}}
	feedOut := inverse.Segment{A: [3]float64{30, 0, z}, B: [3]float64{400, 0, z}}
	branch := inverse.Segment{A: [3]float64{30, 0, z}, B: [3]float64{300, 270, z}}
	field := func(r [3]float64) [3]float64 {
		a, b, c := feedIn.Field(r, 40), feedOut.Field(r, 25), branch.Field(r, 15)
		return [3]float64{a[0] + b[0] + c[0], a[1] + b[1] + c[1], a[2] + b[2] + c[2]}
	}
	rng := rand.New(rand.NewPCG(21, 121))
	var probs []*inverse.Problem
	for i := range 15 {
		probs = append(probs, objectTraverse(rng, 4+4*float64(i), 7, 0.1, 2, field))
	}
	d, err := Build(Document{}, objectFits(t, probs), &BuildSettings{SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range d.Findings {
		if f.Kind == string(route.KindDipole) {
			t.Errorf("an object where there is none, at %.1f, %.1f: %s", f.Position[0], f.Position[1], f.Message)
		}
	}
	for _, g := range d.Groups {
		for _, s := range g.Sources {
			if s.Kind == KindDipole {
				t.Errorf("group %s holds an object at %v", g.Key, s.Point)
			}
		}
	}
}

// TestObjectCredible checks the bounds on an object before it is
// reported (dipoleSearch.credible) on one traverse, north -6 to 6 m at
// east 0, sensors at height 0: an object 1 m down beside it is credible;
// one 5 m north of its end (over twice its depth) is not; nor one whose
// moment is within 3 sigmas of zero; nor, 1 m down in the Earth's field at
// its strongest (67,000 nT), one of 10^5 A m^2: an infinitely permeable
// sphere of radius 1 m there carries 4 pi r^3 B / mu0 = 670 A m^2, ten
// times that (remanence allowed) is 6,700 A m^2.
func TestObjectCredible(t *testing.T) {
	p := &inverse.Problem{}
	for k := -24; k <= 24; k++ {
		p.Points = append(p.Points, [3]float64{0, 0.25 * float64(k), 0})
	}
	ds := func(pos [3]float64, m, s float64) *dipoleSearch {
		return &dipoleSearch{obj: &route.Object{Point: pos, Moment: m, MomentSigma: s}, inducing: dipoleEarthMax}
	}
	for _, c := range []struct {
		name string
		ds   *dipoleSearch
		want bool
	}{
		{"beside", ds([3]float64{0.5, 3, -1}, 2, 0.1), true},
		{"beyond the end", ds([3]float64{0, 11, -1}, 2, 0.1), false},
		{"moment unresolved", ds([3]float64{0.5, 3, -1}, 2, 0.8), false},
		{"moment not known", ds([3]float64{0.5, 3, -1}, 2, 0), false},
		{"moment too large", ds([3]float64{0.5, 3, -1}, 1e5, 100), false},
		{"moment within the bound", ds([3]float64{0.5, 3, -1}, 6000, 100), true},
	} {
		if got := c.ds.credible(p); got != c.want {
			t.Errorf("%s: credible %v, want %v", c.name, got, c.want)
		}
	}
}

// An AC drum beside a cable, as the drum fixture (dipole_test.go) but with
// phasors: the cable's 20 A at 17.2 degrees (0.3 rad), the drum's moment
// drumMoment at -22.9 degrees (-0.4 rad), 1 nT of noise in each part. A
// moment of one phase, m e^(i phi), read against the phase psi of its
// strongest axis (up, -1.05 A m^2: psi = phi + 180 degrees) is -m. Before,
// each axis's modulus was reported, (0.5, 0.3, 1.05), the up axis's sign
// lost against the others'.
func TestBuildACMomentSign(t *testing.T) {
	cable := inverse.Line{Point: [3]float64{0, 0, -drumDepth}, Dir: [3]float64{1, 0, 0}}
	ci, cm := cmplx.Rect(drumCurrent, 0.3), cmplx.Rect(1, -0.4)
	rng := rand.New(rand.NewPCG(17, 71))
	var fits []Fit
	for i := range 7 {
		x := 10 * float64(i)
		prob := &inverse.Problem{Sigma: drumNoise}
		for k := -24; k <= 24; k++ {
			r := [3]float64{x, 0.25 * float64(k), 0}
			b := cable.Field(r, 1)
			var d [3]float64
			if i == 3 {
				d = inverse.Dipole{Pos: drumPos}.Field(r, drumMoment)
			}
			var m [3]complex128
			for a := range m {
				m[a] = complex(b[a]*1e9, 0)*ci + complex(d[a]*1e9, 0)*cm + complex(drumNoise*rng.NormFloat64(), drumNoise*rng.NormFloat64())
			}
			prob.Points = append(prob.Points, r)
			prob.Phasors = append(prob.Phasors, m)
		}
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("traverse %d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("F%d", i+1), Problem: prob, Result: res, Settings: set})
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: drumNoise})
	if err != nil {
		t.Fatal(err)
	}
	found := 0
	for _, g := range d.Groups {
		for _, s := range g.Sources {
			if s.Kind != KindDipole {
				continue
			}
			found++
			if g.Key != "F4" || s.Moment == nil || s.MomentSigma == nil || s.Phase == nil {
				t.Fatalf("object at %s: %+v", g.Key, s)
			}
			m, ms := *s.Moment, *s.MomentSigma
			for a := range 3 {
				if w := -drumMoment[a]; !(ms[a] > 0) || math.Abs(m[a]-w) > 4*ms[a] {
					t.Errorf("moment axis %d: %.4f ± %.4f A m^2, true %.4f at the reference phase", a, m[a], ms[a], w)
				}
			}
			want := -0.4*180/math.Pi + 180
			if dp := math.Remainder(*s.Phase-want, 360); math.Abs(dp) > 2 {
				t.Errorf("moment's reference phase %.2f degrees, want %.2f", *s.Phase, want)
			}
		}
	}
	if found != 1 {
		t.Errorf("%d objects, want 1", found)
	}
}

// valveBodyAlone builds the document of the Kestrel Moor valve body alone
// (TestBuildFindsObjectAlone's survey) and returns it with the body's
// simulated position and moment.
func valveBodyAlone(t *testing.T) (d *Document, obj, moment [3]float64) {
	t.Helper()
	obj = [3]float64{26, 1, -1.1}
	moment = [3]float64{0, 1.5, -3.5}
	rng := rand.New(rand.NewPCG(31, 131))
	var probs []*inverse.Problem
	for i := range 13 {
		probs = append(probs, objectTraverse(rng, 6+4*float64(i), 8, 0.1, 1, func(r [3]float64) [3]float64 {
			return inverse.Dipole{Pos: obj}.Field(r, moment)
		}))
	}
	d, err := Build(Document{}, objectFits(t, probs), &BuildSettings{SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	return d, obj, moment
}
