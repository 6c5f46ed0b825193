package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Problem.Scale: readings of a conductor whose current changes while the sensor walks
// (a DC traction load). The field of a line is linear in its current (Biot-Savart,
// DOMAIN.md), so a reading taken when the current is r times its mean is the mean
// current's field times r; given r per reading the fit returns the mean current.
// Invented fixture: one traverse 12 m long at 0.3 m over a 200 A line 0.9 m down, the
// current ramping from 140 A to 260 A (-30 % to +30 %) along it, 2 nT noise.

// swingTraverse returns the readings, the factor r of each and the mean current.
func swingTraverse(rng *rand.Rand) (p *Problem, ratio []float64, mean float64) {
	pts := traverse(49, -6, 6, 0, 0.3)
	line := Line{Point: [3]float64{0.4, 0, -0.9}, Dir: [3]float64{0, 1, 0}}
	bg := [3]float64{17000, 1500, -44000}
	cur := make([]float64, len(pts))
	fields := make([][3]float64, len(pts))
	for i, r := range pts {
		cur[i] = 200 * (0.7 + 0.6*float64(i)/float64(len(pts)-1))
		mean += cur[i] / float64(len(pts))
		b := add(bg, scale(line.Field(r, cur[i]), nT))
		for j := range 3 {
			b[j] += 2 * rng.NormFloat64()
		}
		fields[i] = b
	}
	ratio = make([]float64, len(pts))
	for i, c := range cur {
		ratio[i] = c / mean
	}
	return &Problem{Points: pts, Fields: fields, Sigma: 2}, ratio, mean
}

// TestScaleRecoversMeanCurrent: with the ratios given, the automatic count keeps one
// line and its current is the mean current within three sigma, its depth the true
// one; without them the same readings are not fitted by that one line (more lines, or
// a current or depth many sigma off). Fails before Problem.Scale existed.
func TestScaleRecoversMeanCurrent(t *testing.T) {
	p, ratio, mean := swingTraverse(rand.New(rand.NewPCG(23, 8)))
	plain, err := FitLines(p, &Settings{ReferenceZ: new(float64)})
	if err != nil {
		t.Fatal(err)
	}
	e := plain.Sources[0]
	t.Logf("no scale: %d lines, %.2f +- %.2f A, depth %.4f +- %.4f m", len(plain.Sources), e.Current, e.CurrentSigma, e.Depth, e.DepthSigma)
	if len(plain.Sources) == 1 && math.Abs(e.Current-mean) < 3*e.CurrentSigma && math.Abs(e.Depth-0.9) < 3*e.DepthSigma {
		t.Errorf("without the ratios one line fits %.2f +- %.2f A: the fixture does not test the scale", e.Current, e.CurrentSigma)
	}
	p.Scale = ratio
	res, err := FitLines(p, &Settings{ReferenceZ: new(float64)})
	if err != nil {
		t.Fatal(err)
	}
	e = res.Sources[0]
	t.Logf("scaled: %d lines, %.3f +- %.3f A (mean %.3f), depth %.5f +- %.5f m", len(res.Sources), e.Current, e.CurrentSigma, mean, e.Depth, e.DepthSigma)
	if len(res.Sources) != 1 {
		t.Fatalf("%d lines with the ratios given, want 1", len(res.Sources))
	}
	if math.Abs(e.Current-mean) > 3*e.CurrentSigma || math.Abs(e.Depth-0.9) > 3*e.DepthSigma {
		t.Errorf("current %.3f +- %.3f A, depth %.5f +- %.5f m: want %.3f A, 0.9 m", e.Current, e.CurrentSigma, e.Depth, e.DepthSigma, mean)
	}
	// Held geometry (FitStrengths) scales the sources' columns the same way.
	hs, err := FitStrengths(p, []Source{Line{Point: [3]float64{0.4, 0, -0.9}, Dir: [3]float64{0, 1, 0}}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h := hs.Sources[0]; math.Abs(h.Current-mean) > 3*h.CurrentSigma {
		t.Errorf("held line: %.3f +- %.3f A, want %.3f", h.Current, h.CurrentSigma, mean)
	}
}

// TestScaleLeavesBackground: the factor multiplies the line's column only, not a
// dipole's (a magnetised object's field does not follow the current) nor the uniform
// background's, and a factor that is not finite and positive is refused.
func TestScaleLeavesBackground(t *testing.T) {
	pts := traverse(9, -2, 2, 0, 0.3)
	geom := []lineGeom{newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))}).geomFrom(seed{e: 0.1, z: -1}, true, true, 0, 0)}
	dips := []dipGeom{{pos: [3]float64{-0.5, 0.4, -0.8}, lim: 10, zHi: -0.02, zLo: -20}}
	plain := newSeparable(pts, make([]float64, 3*len(pts)), 1, BackgroundUniform, [3]float64{}, geom, dips)
	scaled := newSeparable(pts, make([]float64, 3*len(pts)), 1, BackgroundUniform, [3]float64{}, append([]lineGeom(nil), geom...), append([]dipGeom(nil), dips...))
	scaled.scale = make([]float64, len(pts))
	for i := range scaled.scale {
		scaled.scale[i] = 0.5 + 0.1*float64(i)
	}
	a, b := make([]float64, plain.m*plain.q), make([]float64, plain.m*plain.q)
	if err := plain.buildPhi(a); err != nil {
		t.Fatal(err)
	}
	if err := scaled.buildPhi(b); err != nil {
		t.Fatal(err)
	}
	for row := range plain.m {
		if got, want := b[row*plain.q], a[row*plain.q]*scaled.scale[row/3]; got != want {
			t.Errorf("row %d: line column %g, want %g", row, got, want)
		}
		for c := 1; c < plain.q; c++ {
			if b[row*plain.q+c] != a[row*plain.q+c] {
				t.Errorf("row %d: dipole or background column %d scaled: %g, want %g", row, c, b[row*plain.q+c], a[row*plain.q+c])
			}
		}
	}
	for _, bad := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		sc := make([]float64, len(pts))
		for i := range sc {
			sc[i] = 1
		}
		sc[3] = bad
		if _, err := FitLines(&Problem{Points: pts, Fields: make([][3]float64, len(pts)), Scale: sc}, nil); err == nil {
			t.Errorf("scale %v accepted", bad)
		}
	}
	if _, err := FitLines(&Problem{Points: pts, Fields: make([][3]float64, len(pts)), Scale: []float64{1}}, nil); err == nil {
		t.Error("one scale factor for 9 readings accepted")
	}
}
