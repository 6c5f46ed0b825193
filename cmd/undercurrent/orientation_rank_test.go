package main

// The ranking of ways of reading the field columns that all fit, on a
// made-up refit (no simulation): the fields below are exact, a base field
// with no east component and the same field with bx and by swapped.

import (
	"math"
	"strings"
	"testing"
)

// TestTurnAndMirrorBothNamed: where a turn and a mirror image fit alike and
// their lines follow the route alike (a field with no east, lines that
// the fake refit below puts on their track either way), the readings
// cannot tell them apart and the warning must give both flags; where the
// turn's lines run 7° off the route and the mirror's 1°, the mirror's
// alone.
func TestTurnAndMirrorBothNamed(t *testing.T) {
	b := [3]float64{0, 18000, -46000}
	s := [3]float64{18000, 0, -46000} // bx and by swapped
	swap := axisMap{perm: [3]int{1, 0, 2}, sign: [3]float64{1, 1, 1}}
	for _, turnOff := range []float64{1.2, 7} {
		ot := &orientTest{asRead: 40, enu: true, axes: axisMap{perm: [3]int{0, 1, 2}, sign: [3]float64{1, 1, 1}}}
		ot.refit = func(turn func([3]float64) [3]float64) refitResult {
			got := turn(s)
			r := refitResult{misfit: 30, trackOff: 60, background: got}
			if angleDeg(got, b) < 0.1 {
				r.misfit, r.trackOff = 1.1, 1
				r.local = trackTurn{abs: 1, spread: 0.5, n: 10}
				probe := [3]float64{1, 2, 3}
				if angleDeg(swap.apply(probe), turn(probe)) > 0.1 { // the turn
					r.local.abs = turnOff
				}
			}
			return r
		}
		msg, ok, _ := axesWarning("the survey's field (", s, b, angleDeg(s, b), 1, "base.csv", "beside the survey", 0, ot)
		if !ok {
			t.Fatalf("no way of reading found")
		}
		both := turnOff < 2
		if strings.Contains(msg, "--field-axes n,e,u") != true || strings.Contains(msg, "--mount-yaw -90") != both {
			t.Errorf("turn's lines %.1f° off the route, the mirror's 1°: want both flags named %v: %q", turnOff, both, msg)
		}
	}
}

// TestTurnRemedyRoundedWhenConfirmed: where every fit fails, the turn is
// measured from the readings' median, which holds the conductors' field:
// at a steep field a quarter turn read 82.2° and --mount-yaw 82.2 gave
// "sound" fits 50 sigma off (found in review). On a made-up refit whose
// fits reach the noise within 12° of the true turn back and whose lines
// run off their route by what is left of the turn: with the refitted
// backgrounds the turn is measured again from them; without, the quarter
// turn near it is offered when its lines follow the route better, and a
// true 80° turn is not rounded to 90°.
func TestTurnRemedyRoundedWhenConfirmed(t *testing.T) {
	b := [3]float64{1500, 6500, -56000}
	turnAnti := func(v [3]float64, deg float64) [3]float64 {
		sn, cs := math.Sincos(deg * math.Pi / 180)
		return [3]float64{cs*v[0] - sn*v[1], sn*v[0] + cs*v[1], v[2]}
	}
	for _, tc := range []struct {
		truth      float64 // the sensor's turn, degrees anticlockwise
		background bool
		want       float64
	}{{90, true, 90}, {90, false, 90}, {80, false, 82.2}} {
		reading := turnAnti(b, tc.truth) // the Earth's field as read
		s := turnAnti(b, 82.2)           // the level the readings' median gave
		ot := &orientTest{asRead: 377, enu: true, axes: identityAxes}
		ot.refit = func(turn func([3]float64) [3]float64) refitResult {
			bg := turn(reading)
			left := math.Remainder(headingDeg(bg)-headingDeg(b), 360)
			r := refitResult{misfit: 50, trackOff: math.Abs(left), background: bg}
			if math.Abs(left) < 12 {
				r.misfit = 1
			}
			if !tc.background {
				r.background = [3]float64{math.NaN(), math.NaN(), math.NaN()}
			}
			r.local = trackTurn{signed: left, abs: math.Abs(left), spread: 0.3, n: 7}
			return r
		}
		msg := turnWarning("the survey's field (", s, b, angleDeg(s, b), 3, "base.csv", "beside the survey", nil, 0, ot)
		yaw, ok := warningNumber([]string{msg}, mountYawRE)
		if !ok || math.Abs(yaw-tc.want) > 0.05 {
			t.Errorf("turned %g°, backgrounds %v: want --mount-yaw %g: %q", tc.truth, tc.background, tc.want, msg)
		}
	}
}
