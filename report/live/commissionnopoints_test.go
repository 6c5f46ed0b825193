package live

import (
	"errors"
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// The Harrow Fen go-and-return pair (200 A each way, cores 0.3 m apart at
// 0.8 m) seen by the fenwick-lane sensors 3 m up (Biot-Savart readings,
// commissionReadings), with no points in the site file: the readings give
// only the pair's centre and current times spacing, so no fit of two free
// lines can name the cores' currents, and more readings of the same field
// would not change that. Commissioning stops at once (needsSiteError,
// which the worker does not retry) with a message asking for the points,
// for AC and DC alike.
func TestCommissionUnresolvedPairWithoutPointsStops(t *testing.T) {
	sensors, lines, _ := feederWithCable(3)
	deg := math.Pi / 180
	for _, ac := range []bool{true, false} {
		cur := []complex128{cmplx.Rect(200, 20*deg), cmplx.Rect(-200, 20*deg)}
		if !ac {
			cur = []complex128{200, -200}
		}
		in := commissionReadings(sensors, lines[:2], cur, ac, 0.02, 13)
		in.WindowSigma = 0.09
		_, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "go"}, {Name: "return"}})
		var site *needsSiteError
		if !errors.As(err, &site) || !strings.Contains(err.Error(), "[[asset.conductor]] its point") {
			t.Errorf("ac %v: got %v, want a refusal for good asking for the cores' points", ac, err)
		}
	}
}

// The same feeder with its 60 A low-voltage cable 2.5 m east, the sensors
// 0.3 m up, and no points: the free fit of three lines misses the
// readings by some 40 nT RMS, hundreds of times the noise, however many
// windows are averaged (the fit is of the same field). Commissioning
// stops at once asking for the points, with which the same readings
// commission right (TestCommissionPairWithThirdConductor).
func TestCommissionMissingLinesWithoutPointsStops(t *testing.T) {
	sensors, lines, cur := feederWithCable(0.3)
	in := commissionReadings(sensors, lines, cur, true, 0.02, 11)
	in.WindowSigma = 0.09
	_, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "go"}, {Name: "return"}, {Name: "lv"}})
	var site *needsSiteError
	if !errors.As(err, &site) || !strings.Contains(err.Error(), "miss the commissioning readings") || !strings.Contains(err.Error(), "[[asset.conductor]] its point") {
		t.Errorf("got %v, want a refusal for good saying the lines miss the readings and asking for the points", err)
	}
}

// The feeder with its low-voltage cable, seen from 3 m up, and no points:
// a free fit of three lines matches the readings with the cable right and
// the two cores 1.8 m apart carrying 23 and 14 A (truth 200 A each), and
// about as well with the two at half or twice that spacing (a line
// dipole's field depends on current times spacing). That is refused for good,
// asking for the points, rather than held to give every window those
// currents (with the points it commissions right,
// TestCommissionPairWithThirdConductor).
func TestCommissionLoosePairWithoutPointsStops(t *testing.T) {
	sensors, lines, cur := feederWithCable(3)
	for _, seed := range []uint64{11, 12, 13} {
		in := commissionReadings(sensors, lines, cur, true, 0.02, seed)
		in.WindowSigma = 0.09
		_, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "go"}, {Name: "return"}, {Name: "lv"}})
		var site *needsSiteError
		if !errors.As(err, &site) || !strings.Contains(err.Error(), "[[asset.conductor]] its point") {
			t.Errorf("seed %d: got %v, want a refusal for good asking for the points", seed, err)
		}
	}
}

// DC, the feeder with its cable: five sensors give 15 readings, and three
// free lines have 18 unknowns (four for where each runs, its current, and
// the background field's three components), so any three lines fit
// exactly; the fit found cores of 20-140 A and a cable of -17 A (truth
// 200, 200 and 60 A) and was kept. It is refused for good.
func TestCommissionTooFewReadingsStops(t *testing.T) {
	for _, h := range []float64{3, 0.3} {
		sensors, lines, _ := feederWithCable(h)
		in := commissionReadings(sensors, lines, []complex128{200, -200, 60}, false, 0.02, 10)
		in.WindowSigma = 0.09
		_, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "go"}, {Name: "return"}, {Name: "lv"}})
		var site *needsSiteError
		if !errors.As(err, &site) || !strings.Contains(err.Error(), "15 readings, too few") {
			t.Errorf("sensors %v m up: got %v, want a refusal for good: too few readings", h, err)
		}
	}
}
