package simulate

import (
	"math"
	"math/cmplx"
	"testing"
)

// balancedTrefoil is a balanced trefoil of 100 A cores at 50 Hz (phases
// 0°, -120°, +120°, 0.1 m apart, centred 1.0 m below the ground),
// walked over by a sensor 0.3 m up on two traverses square to it, and a
// 20 A DC cable 2.5 m aside, alone at its frequency: an invented site.
const balancedTrefoil = `name = "trefoil-together"
site = "Hollin Fold, invented"
seed = 3
start = "2026-06-11T08:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 10.0
sample_rate_hz = 1000
[survey]
route = [[0.0, 0.0], [12.0, 0.0]]
count = 2
spacing_m = 6.0
first_at_m = 3.0
length_m = 6.0
speed_m_s = 1.0
turn_s = 5.0
[[conductor]]
name = "L1"
kind = "line"
point = [0.0, 0.0, -0.9423]
direction = [1.0, 0.0, 0.0]
current_a = 100
frequency_hz = 50.0
phase_deg = 0.0
[[conductor]]
name = "L2"
kind = "line"
point = [0.0, -0.05, -1.0289]
direction = [1.0, 0.0, 0.0]
current_a = 100
frequency_hz = 50.0
phase_deg = -120.0
[[conductor]]
name = "L3"
kind = "line"
point = [0.0, 0.05, -1.0289]
direction = [1.0, 0.0, 0.0]
current_a = 100
frequency_hz = 50.0
phase_deg = 120.0
[[conductor]]
name = "DC cable"
kind = "line"
point = [0.0, 2.5, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 20
`

// TestPeakTotalFieldsTrefoil: the peak of the three cores' field together
// is far below each core's own and equals the phasor sum of the three
// cores' fields by the Biot-Savart law for a long straight line (|B| =
// mu0 I / (2 pi r), square to the radius; mu0 = 4 pi 1e-7 T m/A), scanned
// across the traverse at the sensor's height. In review simulate printed
// only each core's own 16099 nT, eleven times what the sensors see of the
// circuit (1451 nT).
func TestPeakTotalFieldsTrefoil(t *testing.T) {
	sc, err := Parse([]byte(balancedTrefoil), "trefoil.toml")
	if err != nil {
		t.Fatal(err)
	}
	got := sc.PeakTotalFields()
	if len(got) != 2 || got[0].Frequency != 50 || got[0].Conductors != 3 || got[1].Frequency != 0 || got[1].Conductors != 1 {
		t.Fatalf("bands %+v, want the three cores at 50 Hz and the DC cable", got)
	}
	// The cores run along east: the field lies in the north-up plane.
	type core struct {
		y, z, i, ph float64
	}
	cores := []core{{0, -0.9423, 100, 0}, {-0.05, -1.0289, 100, -120}, {0.05, -1.0289, 100, 120}}
	var want, own float64
	for y := -3.0; y <= 3.0; y += 0.0005 {
		var bn, bu complex128
		for _, c := range cores {
			dy, dz := y-c.y, 0.3-c.z
			r2 := dy*dy + dz*dz
			k := 2e-7 * c.i / r2 * 1e9 // mu0 I / (2 pi r) / r, nT per m
			turn := cmplx.Rect(1, c.ph*math.Pi/180)
			// B = mu0 I / (2 pi r) (e_x × r̂): north -dz, up +dy.
			bn += complex(-k*dz, 0) * turn
			bu += complex(k*dy, 0) * turn
			own = math.Max(own, k*math.Sqrt(r2))
		}
		want = math.Max(want, math.Sqrt(sqAbs(bn)+sqAbs(bu)))
	}
	if math.Abs(got[0].Peak-want) > 0.005*want {
		t.Errorf("three cores together peak at %.1f nT, Biot-Savart %.1f nT", got[0].Peak, want)
	}
	if !(got[0].Peak < own/5) {
		t.Errorf("together %.1f nT against a core's own %.1f nT: the balanced cores should cancel", got[0].Peak, own)
	}
	// The DC cable alone: its own peak, mu0 I / (2 pi h) straight over it.
	if dc := 2e-7 * 20 / 1.1 * 1e9; math.Abs(got[1].Peak-dc) > 0.001*dc {
		t.Errorf("DC cable peaks at %.2f nT, Biot-Savart %.2f nT", got[1].Peak, dc)
	}
	if own := sc.PeakFields(); math.Abs(own[0]-2e-7*100/1.2423*1e9) > 0.001*own[0] {
		t.Errorf("core L1's own peak %.1f nT, Biot-Savart %.1f nT", own[0], 2e-7*100/1.2423*1e9)
	}
}
