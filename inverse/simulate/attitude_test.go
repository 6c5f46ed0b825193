package simulate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"undercurrent/ingest"
)

// attTol is the agreement with gonum's quaternion rotations: a few
// rounding errors on unit vectors.
const attTol = 1e-12

// TestBodyToNEDAgainstGonum checks R_nb = Rz(yaw) Ry(pitch) Rx(roll)
// against the same three rotations made with gonum's spatial/r3 (a
// reference library), for random angles and vectors, and that enuToBody is
// its inverse with the ENU/NED axis swap.
func TestBodyToNEDAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	const d = math.Pi / 180
	for range 200 {
		roll, pitch, yaw := 60*rng.NormFloat64(), 80*(rng.Float64()-0.5), 360*rng.Float64()
		v := r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()}
		want := r3.NewRotation(yaw*d, r3.Vec{Z: 1}).Rotate(
			r3.NewRotation(pitch*d, r3.Vec{Y: 1}).Rotate(
				r3.NewRotation(roll*d, r3.Vec{X: 1}).Rotate(v)))
		m := bodyToNED(roll, pitch, yaw)
		got := [3]float64{
			m[0][0]*v.X + m[0][1]*v.Y + m[0][2]*v.Z,
			m[1][0]*v.X + m[1][1]*v.Y + m[1][2]*v.Z,
			m[2][0]*v.X + m[2][1]*v.Y + m[2][2]*v.Z,
		}
		if math.Abs(got[0]-want.X) > attTol || math.Abs(got[1]-want.Y) > attTol || math.Abs(got[2]-want.Z) > attTol {
			t.Fatalf("roll %g pitch %g yaw %g: R v = %v, gonum %v", roll, pitch, yaw, got, want)
		}
		// Back: the NED vector as ENU, expressed in the body frame.
		body := enuToBody([3]float64{want.Y, want.X, -want.Z}, roll, pitch, yaw)
		if math.Abs(body[0]-v.X) > attTol || math.Abs(body[1]-v.Y) > attTol || math.Abs(body[2]-v.Z) > attTol {
			t.Fatalf("enuToBody does not invert R_nb: %v, want %v", body, v)
		}
	}
	// Facing east, level (common practice reading of the convention):
	// east is forward (+x), north is to the left (-y), up is -z.
	for _, c := range []struct{ enu, body [3]float64 }{
		{[3]float64{1, 0, 0}, [3]float64{1, 0, 0}},
		{[3]float64{0, 1, 0}, [3]float64{0, -1, 0}},
		{[3]float64{0, 0, 1}, [3]float64{0, 0, -1}},
	} {
		b := enuToBody(c.enu, 0, 0, 90)
		for k := range 3 {
			if math.Abs(b[k]-c.body[k]) > attTol {
				t.Errorf("facing east, ENU %v reads %v in the body frame, want %v", c.enu, b, c.body)
				break
			}
		}
	}
}

// TestWalkingAttitude checks a walking log: sensor frame, attitude
// columns, heading along each line (zigzag lines face opposite ways), sway
// within its amplitude, and the field's magnitude unchanged by the
// rotation.
func TestWalkingAttitude(t *testing.T) {
	base := fmt.Sprintf(quietLine, 0.3, -1.0, 10.0)
	base = strings.Replace(base, "count = 1", "count = 2\nspacing_m = 2", 1)
	base = strings.Replace(base, "zigzag = false", "zigzag = true", 1)
	text := strings.Replace(base, "height_m = 0.3", "height_m = 0.3\nattitude = \"walking\"\nsway_deg = 8", 1)
	sc := parse(t, text)
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	if s.Frame != ingest.FrameSensor || s.Roll == nil || s.Pitch == nil || s.Yaw == nil {
		t.Fatal("a walking log needs the sensor frame and roll, pitch, yaw")
	}
	lv, err := Simulate(parse(t, base))
	if err != nil {
		t.Fatal(err)
	}
	for i := range s.Len() {
		// Traverses run west to east (T01, heading 90) and back (T02,
		// heading 270) across the north-running route.
		heading := 90.0
		if s.Group[i] == "T02" {
			heading = 270
		}
		if math.Abs(math.Remainder(s.Yaw[i]-heading, 360)) > 4+1e-9 || math.Abs(s.Roll[i]) > 8+1e-9 || math.Abs(s.Pitch[i]) > 5.6+1e-9 {
			t.Fatalf("reading %d (%s): roll %g pitch %g yaw %g", i, s.Group[i], s.Roll[i], s.Pitch[i], s.Yaw[i])
		}
		a := math.Sqrt(s.Bx[i]*s.Bx[i] + s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i])
		b := math.Sqrt(lv.Bx[i]*lv.Bx[i] + lv.By[i]*lv.By[i] + lv.Bz[i]*lv.Bz[i])
		if math.Abs(a-b) > 1e-9*b {
			t.Fatalf("reading %d: |B| %g in the sensor frame, %g level", i, a, b)
		}
	}
	if _, err := Parse([]byte(strings.Replace(text, `"walking"`, `"crawling"`, 1)), "s.toml"); err == nil || !strings.Contains(err.Error(), `unknown attitude "crawling"`) {
		t.Errorf("bad attitude: %v", err)
	}
}
