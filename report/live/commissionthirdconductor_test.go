package live

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// The Harrow Fen feeder (go and return cores 0.3 m apart at 0.8 m, 200 A
// each way at 50 Hz) with a 60 A low-voltage cable 2.5 m east at 0.6 m,
// seen by the five fenwick-lane sensors at height h. The readings are the
// Biot-Savart field of the three lines (commissionReadings), averaged
// over 20 windows of 1 s: 2 nT per sample at 500 Hz is 2/sqrt(500) =
// 0.09 nT per phasor component in one window, 0.02 nT in the mean.
func feederWithCable(h float64) ([][3]float64, []inverse.Line, []complex128) {
	sensors := [][3]float64{{-1.5, 0, h}, {-0.5, 0, h}, {0.5, 0, h}, {1.5, 0, h}, {0, 4, h}}
	north := [3]float64{0, 1, 0}
	lines := []inverse.Line{{Point: [3]float64{-0.15, 0, -0.8}, Dir: north}, {Point: [3]float64{0.15, 0, -0.8}, Dir: north}, {Point: [3]float64{2.5, 0, -0.6}, Dir: north}}
	deg := math.Pi / 180
	return sensors, lines, []complex128{cmplx.Rect(200, 20*deg), cmplx.Rect(-200, 20*deg), cmplx.Rect(60, -30*deg)}
}

// A commissioned go-and-return pair with a third conductor, every point
// in the site file: the geometry commissioned gives each core its true
// current and the balanced pair no imbalance, with the sensors 3 m up
// (the pair unresolved: its cores are kept at their points' spacing) and
// 0.3 m up (resolved), from exact points and from points 0.1 m east and
// 0.2 m too deep (the cores' spacing right).
func TestCommissionPairWithThirdConductor(t *testing.T) {
	for _, h := range []float64{3, 0.3} {
		for _, off := range [][3]float64{{}, {0.1, 0, -0.2}} {
			sensors, lines, cur := feederWithCable(h)
			in := commissionReadings(sensors, lines, cur, true, 0.02, 11)
			in.WindowSigma = 0.09
			var stated []ConductorConfig
			for i, name := range []string{"go", "return", "lv"} {
				stated = append(stated, ConductorConfig{Name: name, Point: add(lines[i].Point, off), pointSet: true, Direction: lines[i].Dir, dirSet: true})
			}
			conds, err := InverseCommissioner{}.Commission(in, stated)
			if err != nil {
				t.Errorf("sensors %v m up, points off by %v: %v", h, off, err)
				continue
			}
			est, err := NewInverseEstimator("", conds)
			if err != nil {
				t.Fatal(err)
			}
			out, err := est.Solve(in)
			if err != nil {
				t.Fatal(err)
			}
			var net complex128
			for i, c := range conds {
				if c.Name != stated[i].Name {
					t.Fatalf("conductor %d named %q, want %q", i, c.Name, stated[i].Name)
				}
				// Signed along the stated (common) direction.
				z := cmplx.Rect(out.Current[i], out.Phase[i]*math.Pi/180)
				if dot(c.Direction, lines[i].Dir) < 0 {
					z = -z
				}
				// 3%: the unresolved pair's centre is known to about 1 cm
				// at 3.8 m, and its current goes as the distance squared.
				if d := cmplx.Abs(z - cur[i]); d > 0.03*cmplx.Abs(cur[i]) {
					t.Errorf("sensors %v m up, points off by %v: %s reads %.2f A at %.1f deg, truth %.0f A at %.0f deg (at x %.3f z %.3f)",
						h, off, c.Name, cmplx.Abs(z), cmplx.Phase(z)*180/math.Pi, cmplx.Abs(cur[i]), cmplx.Phase(cur[i])*180/math.Pi, c.Point[0], c.Point[2])
				}
				if i < 2 {
					net += z
				}
			}
			// The balanced feeder: no imbalance for the 5 A alarm to see.
			if cmplx.Abs(net) > 1 {
				t.Errorf("sensors %v m up, points off by %v: go + return %.2f A, truth 0", h, off, cmplx.Abs(net))
			}
			if sp := math.Abs(conds[1].Point[0] - conds[0].Point[0]); h == 3 && math.Abs(sp-0.3) > 1e-3 {
				t.Errorf("sensors 3 m up: cores %.4f m apart, want the points' 0.3 m", sp)
			}
		}
	}
}

// A commissioned line lying far from its point in the site file is named,
// with its distance across the line.
func TestFarFromPoints(t *testing.T) {
	stated := []ConductorConfig{{Name: "go", Point: [3]float64{1.85, 0, -0.8}, pointSet: true}, {Name: "return", Point: [3]float64{2.15, 0, -0.8}, pointSet: true}}
	north := [3]float64{0, 1, 0}
	conds := []ConductorConfig{{Name: "go", Kind: "line", Point: [3]float64{-0.15, 7, -0.8}, Direction: north}, {Name: "return", Kind: "line", Point: [3]float64{0.15, 0, -0.8}, Direction: north}}
	got := farFromPoints(conds, stated, 1)
	if strings.Join(got, "; ") != "go 2.00 m; return 2.00 m" {
		t.Errorf("got %q", got)
	}
	if got := farFromPoints(conds, stated, 2.5); len(got) != 0 {
		t.Errorf("within 2.5 m: got %q", got)
	}
}
