package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestFitLinesBadInput(t *testing.T) {
	pts := traverse(11, -1, 1, 0, 0)
	f := simulate(pts, []Line{{Point: [3]float64{0, 0, -1}, Dir: [3]float64{0, 1, 0}}}, []float64{5}, [3]float64{}, 0, nil)
	bad := append([][3]float64(nil), f...)
	bad[4][2] = math.Inf(1)
	tests := []struct {
		name string
		p    *Problem
		set  *Settings
		want string
	}{
		{"nil problem", nil, nil, "nil problem"},
		{"no readings", &Problem{Points: pts}, nil, "neither"},
		{"both kinds", &Problem{Points: pts, Fields: f, Phasors: make([][3]complex128, len(pts))}, nil, "both"},
		{"infinite reading", &Problem{Points: pts, Fields: bad}, nil, "reading 4: field up is +Inf"},
		{"negative sigma", &Problem{Points: pts, Fields: f, Sigma: -1}, nil, "Sigma"},
		{"too few", &Problem{Points: pts[:2], Fields: f[:2]}, nil, "too few"},
		{"bad count", &Problem{Points: pts, Fields: f}, &Settings{Count: -1}, "Count"},
		{"gradient on a traverse", &Problem{Points: pts, Fields: f}, &Settings{Background: BackgroundGradient}, "single traverse"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := FitLines(tc.p, tc.set)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "inverse: ") {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestFitLinesSettings: held azimuth and dip, the depth reference, and a gradient
// background over an areal survey.
func TestFitLinesSettings(t *testing.T) {
	pts := grid(7, 31, 2, 0.5, 0.2)
	line := Line{Point: [3]float64{0.1, 0, -0.7}, Dir: [3]float64{0.2, 1, 0}}
	rng := rand.New(rand.NewPCG(2, 2))
	f := simulate(pts, []Line{line}, []float64{-15}, [3]float64{17000, 1500, -44000}, 3, rng)
	// Add a regional gradient: dBe/de = 30 nT/m, dBu/de = dBe/du = 10 nT/m (source free).
	for i, r := range pts {
		f[i][0] += 30*r[0] + 10*(r[2]-0.2)
		f[i][2] += 10*r[0] - 30*(r[2]-0.2)
	}
	wantAz := math.Atan2(0.2, 1) * 180 / math.Pi
	var freeRMS float64
	t.Run("free with gradient", func(t *testing.T) {
		zero := 0.0
		res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{Count: 1, Background: BackgroundGradient, ReferenceZ: &zero})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		freeRMS = res.RMS
		if res.DepthReference != "ReferenceZ" || res.ReferenceZ != 0 {
			t.Errorf("depth reference %q %v", res.DepthReference, res.ReferenceZ)
		}
		// Dir is oriented to azimuth [0,180): the line runs north-north-east, so the
		// current of -15 A along it is reported as -15 A.
		within3(t, "current", e.Current, -15, e.CurrentSigma)
		within3(t, "depth below 0", e.Depth, 0.7, e.DepthSigma)
		within3(t, "azimuth", e.Azimuth, wantAz, e.AzimuthSigma)
		within3(t, "gradient ee", res.Gradient[0], 30, 1) // sigma of a few nT/m at most
		if !e.Identifiable.Azimuth || !e.Identifiable.Dip || res.SingleTraverse {
			t.Errorf("azimuth and dip should be identifiable over 7 traverses: %+v", e.Identifiable)
		}
	})
	t.Run("held azimuth and dip", func(t *testing.T) {
		az, dip := 30.0, 0.0
		res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{Count: 1, Azimuth: &az, Dip: &dip, Background: BackgroundGradient})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		if math.Abs(e.Azimuth-30) > 1e-9 || e.Identifiable.Azimuth || e.AzimuthSigma != 0 {
			t.Errorf("azimuth %v identifiable %v sigma %v, want held at 30", e.Azimuth, e.Identifiable.Azimuth, e.AzimuthSigma)
		}
		if len(e.Notes) == 0 || !strings.Contains(strings.Join(e.Notes, ";"), "held") {
			t.Errorf("notes %v", e.Notes)
		}
		// Holding a wrong azimuth (truth 11.3 deg) must show in the fit quality.
		if res.RMS < 2*freeRMS {
			t.Errorf("RMS with the azimuth held wrong %v, free %v", res.RMS, freeRMS)
		}
	})
}

// TestSingleTraverseAnyDirection: a traverse running north-east across a line running
// north-west, perpendicular to it; the azimuth, fitted from the three-axis field, and the
// crossing are found.
func TestSingleTraverseAnyDirection(t *testing.T) {
	var pts [][3]float64
	for i := range 41 {
		s := -2 + 0.1*float64(i)
		pts = append(pts, [3]float64{10 + s/math.Sqrt2, 20 + s/math.Sqrt2, 0})
	}
	line := Line{Point: [3]float64{10.3, 19.9, -0.8}, Dir: [3]float64{-1, 1, 0}}
	f := simulate(pts, []Line{line}, []float64{8}, [3]float64{100, 200, 300}, 0, nil)
	res, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !res.SingleTraverse || len(res.Sources) != 1 {
		t.Fatalf("single %v, %d sources", res.SingleTraverse, len(res.Sources))
	}
	e := res.Sources[0]
	// Dir oriented to azimuth 135 (south-east), so the current is -8 A along it.
	if math.Abs(e.Azimuth-135) > 1e-6 || !e.Identifiable.Azimuth || !relClose(e.Current, -8, 1e-7) || !relClose(e.Depth, 0.8, 1e-7) {
		t.Errorf("azimuth %v current %v depth %v", e.Azimuth, e.Current, e.Depth)
	}
	// The line passes 0.2/sqrt2 m... check the point lies on the true line.
	d := sub(e.Point, line.Point)
	u := scale(line.Dir, 1/norm(line.Dir))
	if perp := norm(sub(d, scale(u, dot(d, u)))); perp > 1e-7 {
		t.Errorf("reported point %v is %g m off the line", e.Point, perp)
	}
}
