package simulate

import "math"

// The walking attitude follows the aerospace convention the calibrate
// package documents: body axes x forward, y right, z down; yaw psi (the
// heading, clockwise from north), pitch theta and roll phi compose as
//
//	R_nb = Rz(psi) Ry(theta) Rx(phi),   v_NED = R_nb v_body,
//
// so a reading in the sensor frame is v_body = R_nb^T v_NED, with
// v_NED = (north, east, -up).

// Sway frequencies, Hz: a walker's roll, pitch and heading sway at
// different slow rates (invented, smooth and deterministic).
const (
	swayRollHz  = 0.9
	swayPitchHz = 0.55
	swayYawHz   = 0.35
)

// attitude returns roll, pitch and yaw (degrees) of a sensor carried along
// survey line i, tau seconds after the line's first reading.
func (sc *Scenario) attitude(i int, tau float64) (roll, pitch, yaw float64) {
	l := sc.lines[i]
	heading := math.Atan2(l.To[0]-l.From[0], l.To[1]-l.From[1]) * 180 / math.Pi
	a := sc.Sensor.Sway
	k := float64(i)
	roll = a * math.Sin(2*math.Pi*swayRollHz*tau+0.7*k)
	pitch = 0.7 * a * math.Sin(2*math.Pi*swayPitchHz*tau+1.3*k)
	yaw = heading + 0.5*a*math.Sin(2*math.Pi*swayYawHz*tau+2.1*k)
	return roll, pitch, yaw
}

// bodyToNED is R_nb for roll, pitch and yaw in degrees.
func bodyToNED(roll, pitch, yaw float64) [3][3]float64 {
	const d = math.Pi / 180
	sf, cf := math.Sincos(roll * d)
	st, ct := math.Sincos(pitch * d)
	sp, cp := math.Sincos(yaw * d)
	rz := [3][3]float64{{cp, -sp, 0}, {sp, cp, 0}, {0, 0, 1}}
	ry := [3][3]float64{{ct, 0, st}, {0, 1, 0}, {-st, 0, ct}}
	rx := [3][3]float64{{1, 0, 0}, {0, cf, -sf}, {0, sf, cf}}
	return mul3(rz, mul3(ry, rx))
}

// enuToBody expresses an east-north-up vector in the sensor's body frame.
func enuToBody(v [3]float64, roll, pitch, yaw float64) [3]float64 {
	r := bodyToNED(roll, pitch, yaw)
	ned := [3]float64{v[1], v[0], -v[2]}
	var out [3]float64
	for j := range 3 {
		out[j] = r[0][j]*ned[0] + r[1][j]*ned[1] + r[2][j]*ned[2] // R^T ned
	}
	return out
}

func mul3(a, b [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := range 3 {
		for j := range 3 {
			c[i][j] = a[i][0]*b[0][j] + a[i][1]*b[1][j] + a[i][2]*b[2][j]
		}
	}
	return c
}
