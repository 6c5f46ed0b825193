package inverse

import (
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// dipoleSurvey simulates five 6 m traverses 2 m apart, sensors 0.3 m above the
// ground (z = 0), over a 10 A line 1 m down at azimuth 20 deg and one magnetised
// object of moment (0, 3, -4) A m^2 at (2.5, 1, -1.2), with 2 nT noise: the truth
// the fits below are checked against.
func dipoleSurvey(seed uint64) *Problem {
	rng := rand.New(rand.NewPCG(seed, 3))
	ln := Line{Point: [3]float64{0.3, 0, -1}, Dir: [3]float64{0.3420201433256687, 0.9396926207859084, 0}} // sin, cos 20 deg
	obj := Dipole{Pos: [3]float64{2.5, 1, -1.2}}
	p := &Problem{Sigma: 2}
	for ty := -4.0; ty <= 4; ty += 2 {
		for i := 0; i <= 60; i++ {
			r := [3]float64{-3 + 0.1*float64(i), ty, 0.3}
			b := add(ln.Field(r, 10), obj.Field(r, [3]float64{0, 3, -4}))
			var f [3]float64
			for k := range 3 {
				f[k] = [3]float64{1200, 17500, -46000}[k] + nT*b[k] + 2*rng.NormFloat64()
			}
			p.Points, p.Fields = append(p.Points, r), append(p.Fields, f)
		}
	}
	return p
}

// TestSpareDipoleNotLocated: asked for two dipoles where the readings hold one
// object, the fit puts the second one anywhere its near-zero moment costs nothing
// (in review, just under a reading, 0.25 m above the ground, "located" to 1.5 cm).
// As for a line with no current, a dipole whose moment is within the noise of zero
// has no identifiable position, no position sigmas and a note; the fit's notes say
// the count asked for is not supported; one above the ground given as ReferenceZ
// is noted as no buried object. The true object stays located (simulated truth).
func TestSpareDipoleNotLocated(t *testing.T) {
	ground := 0.0
	for seed := uint64(1); seed <= 3; seed++ {
		res, err := FitLines(dipoleSurvey(seed), &Settings{ReferenceZ: &ground, Count: 1, Dipoles: 2})
		if err != nil {
			t.Fatal(err)
		}
		var dips []SourceEstimate
		for _, e := range res.Sources {
			if e.Kind == "dipole" {
				dips = append(dips, e)
			}
		}
		if len(dips) != 2 {
			t.Fatalf("seed %d: %d dipoles, want 2", seed, len(dips))
		}
		real, spare := dips[0], dips[1]
		if spare.Identifiable.Depth && !real.Identifiable.Depth {
			real, spare = spare, real
		}
		t.Logf("seed %d: object depth %.3f±%.3f id %v; spare depth %.3f±%.3f id %v notes %q; fit notes %q", seed,
			real.Depth, real.DepthSigma, real.Identifiable.Depth, spare.Depth, spare.DepthSigma, spare.Identifiable.Depth, spare.Notes, res.Notes)
		// The object: 1.2 m below the ground, at (2.5, 1).
		if !real.Identifiable.Depth || !real.Identifiable.Offset {
			t.Errorf("seed %d: the true object is not identifiable: %+v", seed, real.Identifiable)
		}
		within3(t, "object depth", real.Depth, 1.2, real.DepthSigma)
		within3(t, "object east", real.Point[0], 2.5, real.PointSigma[0])
		if slices.Contains(real.Notes, DipoleMomentNotSignificantNote) {
			t.Errorf("seed %d: the true object's moment called not significant", seed)
		}
		// The spare.
		if spare.Identifiable.Depth || spare.Identifiable.Offset {
			t.Errorf("seed %d: spare dipole (moment %.3g) reported identifiable", seed, spare.Moment)
		}
		if spare.DepthSigma != 0 || spare.OffsetSigma != 0 || spare.PointSigma != [3]float64{} {
			t.Errorf("seed %d: spare dipole keeps position sigmas %v %v %v", seed, spare.DepthSigma, spare.OffsetSigma, spare.PointSigma)
		}
		if !slices.Contains(spare.Notes, DipoleMomentNotSignificantNote) {
			t.Errorf("seed %d: spare dipole has no note on its moment: %q", seed, spare.Notes)
		}
		if spare.Depth < 0 && !slices.Contains(spare.Notes, DipoleAboveReferenceNote) {
			t.Errorf("seed %d: spare dipole above the ground (depth %.3f) not noted", seed, spare.Depth)
		}
		if !slices.ContainsFunc(res.Notes, func(n string) bool { return strings.HasPrefix(n, UnsupportedCountNote) }) {
			t.Errorf("seed %d: no unsupported-count note: %q", seed, res.Notes)
		}
	}
}

// TestSupportedDipoleNoNotes: one dipole asked for, one object there: it is located
// with no note on its moment or height and no unsupported-count note (simulated
// truth). With the datum given 1.5 m down (the object above it), the note on a
// dipole above ReferenceZ is given.
func TestSupportedDipoleNoNotes(t *testing.T) {
	ground := 0.0
	p := dipoleSurvey(7)
	res, err := FitLines(p, &Settings{ReferenceZ: &ground, Count: 1, Dipoles: 1})
	if err != nil {
		t.Fatal(err)
	}
	d := res.Sources[len(res.Sources)-1]
	if d.Kind != "dipole" || !d.Identifiable.Depth || !d.Identifiable.Offset {
		t.Fatalf("dipole %+v", d)
	}
	within3(t, "object depth", d.Depth, 1.2, d.DepthSigma)
	if slices.Contains(d.Notes, DipoleMomentNotSignificantNote) || slices.Contains(d.Notes, DipoleAboveReferenceNote) {
		t.Errorf("notes on a supported buried dipole: %q", d.Notes)
	}
	for _, n := range res.Notes {
		if strings.HasPrefix(n, UnsupportedCountNote) {
			t.Errorf("unsupported-count note on a supported dipole: %q", n)
		}
	}
	deep := -1.5
	res, err = FitLines(p, &Settings{ReferenceZ: &deep, Count: 1, Dipoles: 1})
	if err != nil {
		t.Fatal(err)
	}
	d = res.Sources[len(res.Sources)-1]
	if !(d.Depth < 0) || !slices.Contains(d.Notes, DipoleAboveReferenceNote) {
		t.Errorf("dipole at depth %.3f below a datum 1.5 m down: notes %q", d.Depth, d.Notes)
	}
}
