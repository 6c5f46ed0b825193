package calibrate

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/num/quat"
	"gonum.org/v1/gonum/spatial/r3"

	"undercurrent/ingest"
)

// Tolerance for comparing rotations built two ways: a few float64
// roundings of unit-size numbers.
const rotTol = 1e-12

// enuOfNED maps a north-east-down vector to east-north-up.
func enuOfNED(v r3.Vec) [3]float64 { return [3]float64{v.Y, v.X, -v.Z} }

func TestEulerToENUAgainstR3(t *testing.T) {
	// Reference: gonum's spatial/r3 rotations (a general-purpose library).
	// Z-Y-X intrinsic = roll about x, then pitch about y, then yaw about z,
	// all about the fixed NED axes.
	ex, ey, ez := r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}
	v := r3.Vec{X: 0.3, Y: -1.2, Z: 2.5}
	for _, a := range []struct{ roll, pitch, yaw float64 }{
		{0, 0, 0}, {30, 0, 0}, {0, 20, 0}, {0, 0, 90}, {10, -25, 135}, {-170, 80, -45}, {5, 5, 359},
	} {
		const d = math.Pi / 180
		w := r3.NewRotation(a.roll*d, ex).Rotate(v)
		w = r3.NewRotation(a.pitch*d, ey).Rotate(w)
		w = r3.NewRotation(a.yaw*d, ez).Rotate(w)
		want := enuOfNED(w)
		got := matVec3(EulerToENU(a.roll, a.pitch, a.yaw), [3]float64{v.X, v.Y, v.Z})
		for k := 0; k < 3; k++ {
			if math.Abs(got[k]-want[k]) > rotTol {
				t.Errorf("roll %g pitch %g yaw %g: got %v, want %v", a.roll, a.pitch, a.yaw, got, want)
				break
			}
		}
	}
}

func TestQuatToENUAgainstR3(t *testing.T) {
	// The quaternion of a composed r3 rotation must give the same matrix as
	// the Euler angles it was composed from.
	const d = math.Pi / 180
	for _, a := range []struct{ roll, pitch, yaw float64 }{
		{0, 0, 0}, {10, -25, 135}, {-170, 80, -45}, {45, 45, 45},
	} {
		qr := quat.Number(r3.NewRotation(a.roll*d, r3.Vec{X: 1}))
		qp := quat.Number(r3.NewRotation(a.pitch*d, r3.Vec{Y: 1}))
		qy := quat.Number(r3.NewRotation(a.yaw*d, r3.Vec{Z: 1}))
		q := quat.Mul(qy, quat.Mul(qp, qr))
		// Scale it: QuatToENU normalises.
		m, err := QuatToENU(3*q.Real, 3*q.Imag, 3*q.Jmag, 3*q.Kmag)
		if err != nil {
			t.Fatal(err)
		}
		e := EulerToENU(a.roll, a.pitch, a.yaw)
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				if math.Abs(m[i][j]-e[i][j]) > rotTol {
					t.Fatalf("%v: quaternion matrix %v, Euler matrix %v", a, m, e)
				}
			}
		}
	}
	if _, err := QuatToENU(0, 0, 0, 0); err == nil {
		t.Error("zero quaternion: want an error")
	}
}

func TestTiltSamples(t *testing.T) {
	// Level sensor facing east (yaw 90): body x = east, y = south, z = down.
	// A field of 20 000 nT north and 45 000 nT down (a mid-latitude field,
	// common practice) reads (0, -20000, 45000) in the body frame.
	s := &ingest.Samples{
		Source: "fenwick-lane.csv",
		Time:   []float64{0, 1},
		Bx:     []float64{0, 0}, By: []float64{-20000, -20000}, Bz: []float64{45000, 45000},
		Roll: []float64{0, 0}, Pitch: []float64{0, 0}, Yaw: []float64{90, 90},
		Frame: ingest.FrameSensor,
	}
	if err := Tilt(s, nil); err != nil {
		t.Fatal(err)
	}
	want := [3]float64{0, 20000, -45000}
	for i := 0; i < 2; i++ {
		got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		for k := range got {
			if math.Abs(got[k]-want[k]) > 1e-9 {
				t.Fatalf("row %d: got %v, want %v", i, got, want)
			}
		}
	}
	if s.Frame != ingest.FrameENU {
		t.Error("frame not set to ENU")
	}
	if err := Tilt(s, nil); err == nil || !strings.Contains(err.Error(), "already") {
		t.Errorf("second tilt: err = %v", err)
	}
	s.Frame = ingest.FrameSensor
	s.Yaw[1] = math.NaN()
	before := s.Bx[0]
	if err := Tilt(s, nil); err == nil || !strings.Contains(err.Error(), "row 1: column yaw") {
		t.Errorf("NaN yaw: err = %v", err)
	}
	if s.Bx[0] != before {
		t.Error("a failed tilt modified the log")
	}
}
