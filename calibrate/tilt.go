package calibrate

import (
	"fmt"
	"math"
)

// EulerToENU returns the matrix that takes a body-frame vector (x forward,
// y right, z down) to east-north-up, for roll, pitch and yaw in degrees in
// the aerospace Z-Y-X convention (yaw is the heading, clockwise from
// north; positive pitch raises the nose; positive roll lowers the right
// side):
//
//	R_nb = Rz(yaw) Ry(pitch) Rx(roll),   v_ENU = (v_N[1], v_N[0], -v_N[2]).
func EulerToENU(roll, pitch, yaw float64) [3][3]float64 {
	const d = math.Pi / 180
	sf, cf := math.Sincos(roll * d)
	st, ct := math.Sincos(pitch * d)
	sp, cp := math.Sincos(yaw * d)
	ned := [3][3]float64{
		{ct * cp, sf*st*cp - cf*sp, cf*st*cp + sf*sp},
		{ct * sp, sf*st*sp + cf*cp, cf*st*sp - sf*cp},
		{-st, sf * ct, cf * ct},
	}
	return nedToENU(ned)
}

// QuatToENU returns the body-to-ENU matrix for a Hamilton quaternion,
// scalar first, that rotates body vectors (x forward, y right, z down) into
// north-east-down: v_NED = q v_body q*. The quaternion is normalised; a
// zero or non-finite one is an error.
func QuatToENU(w, x, y, z float64) ([3][3]float64, error) {
	n := math.Sqrt(w*w + x*x + y*y + z*z)
	if !(n > 0) || math.IsInf(n, 0) {
		return [3][3]float64{}, fmt.Errorf("quaternion (%g, %g, %g, %g) cannot be normalised", w, x, y, z)
	}
	w, x, y, z = w/n, x/n, y/n, z/n
	ned := [3][3]float64{
		{1 - 2*(y*y+z*z), 2 * (x*y - w*z), 2 * (x*z + w*y)},
		{2 * (x*y + w*z), 1 - 2*(x*x+z*z), 2 * (y*z - w*x)},
		{2 * (x*z - w*y), 2 * (y*z + w*x), 1 - 2*(x*x+y*y)},
	}
	return nedToENU(ned), nil
}

// nedToENU swaps the rows of a body-to-NED matrix into body-to-ENU.
func nedToENU(m [3][3]float64) [3][3]float64 {
	return [3][3]float64{
		m[1],
		m[0],
		{-m[2][0], -m[2][1], -m[2][2]},
	}
}

// TiltSettings controls Tilt. A nil *TiltSettings takes the defaults.
type TiltSettings struct {
	// Attitude selects the attitude columns: "" (quaternion when present,
	// else roll/pitch/yaw), "euler" or "quaternion".
	Attitude string
}
