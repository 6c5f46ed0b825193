package live

import (
	"errors"
	"math"
	"strings"
	"sync/atomic"
	"testing"

	"undercurrent/inverse"
)

// Two lines under the Kestrel Moor layout (six sensors in two rows along
// the lines, so only three places across them): a 2 A pipe at x 0.3 m,
// 1.4 m down, and a 1 A cable at x -1.2 m, 0.9 m down (simulated truth,
// Biot-Savart through commissionReadings), fields of 100-200 nT against
// 0.5 nT noise. The three places across cannot tell the two lines'
// places apart. The refusal said "the currents are off or too small for
// the noise", which sends a crew to the rectifier; it now names the
// sensor layout, and says the fields stand out.
func TestCommissionLayoutNotCurrent(t *testing.T) {
	sigma := 0.5 / math.Sqrt(20) / math.Sqrt(10)
	lines := []inverse.Line{
		{Point: [3]float64{0.3, 0, -1.4}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{-1.2, 0, -0.9}, Dir: [3]float64{0, 1, 0}},
	}
	stated := []ConductorConfig{
		{Name: "pipe", Point: [3]float64{0.6, 0, -1.2}, pointSet: true},
		{Name: "cable", Point: [3]float64{-1.0, 0, -1.2}, pointSet: true},
	}
	in := commissionReadings(kestrelSensors, lines, []complex128{2, 1}, false, sigma, 1)
	_, err := InverseCommissioner{}.Commission(in, stated)
	var unres *unresolvedError
	if !errors.As(err, &unres) {
		t.Fatalf("got %v, want a refusal as unresolved", err)
	}
	t.Logf("%v", err)
	if strings.Contains(err.Error(), "currents are off") || !strings.Contains(err.Error(), "sensor layout") {
		t.Errorf("refusal %q: want the sensor layout named, not the currents", err)
	}
	// The currents off under the same layout are still "no current".
	in = commissionReadings(kestrelSensors, lines, []complex128{0, 0}, false, sigma, 1)
	_, err = InverseCommissioner{}.Commission(in, stated)
	if !errors.As(err, &unres) || !strings.Contains(err.Error(), "currents are off") {
		t.Errorf("currents off: %v; want a refusal for want of current", err)
	}
}

// layoutCommissioner refuses every commissioning as a layout that cannot
// place the lines (an unresolvedError with layout set), and counts the
// calls.
type layoutCommissioner struct{ calls *atomic.Int64 }

func (c layoutCommissioner) Commission(*SolveInput, []ConductorConfig) ([]ConductorConfig, error) {
	c.calls.Add(1)
	return nil, &unresolvedError{err: errors.New("the sensor layout does not fix where pipe, cable run"), layout: true}
}

// Such a refusal was held as waiting for current, for ever (24
// commissioning periods in the review, nothing published, no alarm). It
// now counts toward the twenty commissioning periods, then stops the
// asset with one commissioning alarm naming the sensor layout.
func TestCommissionLayoutStops(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	var calls atomic.Int64
	r := commissionUntilStopped(t, h, layoutCommissioner{&calls})
	t.Logf("stopped: %s", r.ai.Stopped)
	r.end(t)
	alarms := commissioningAlarms(h)
	if len(alarms) != 2 {
		t.Errorf("commissioning alarms %+v, want two: the failing one and the stop", alarms)
	}
	for _, al := range alarms {
		if !strings.Contains(al.Message, "sensor layout") || strings.Contains(al.Message, "flat bar") {
			t.Errorf("commissioning alarm %q, want one naming the sensor layout", al.Message)
		}
	}
}

// rowLines are a DC traction return cable (120 A) and a pipe (7.5 A) 2 m
// apart, both running north, 1.3 m and 1.7 m below a row of sensors 0.5 m
// up (simulated truth, the review's tram depot).
var rowLines = []inverse.Line{
	{Point: [3]float64{-1, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
	{Point: [3]float64{1, 0, -1.2}, Dir: [3]float64{0, 1, 0}},
}

// Four sensors in one row across two parallel lines: by Biot-Savart a
// line's field has no component along it (dl x r is square to dl), so the
// readings along the lines carry nothing of where they run, and the
// other eight (Bx and Bz at four sensors) are as many as the unknowns
// (two places across and two depths, two currents, two background
// components). Other lines fit them exactly: from the site file's points
// (-1.3, -0.6) and (0.4, -1.6) commissioning put the pipe at (-0.55,
// -1.67), 1.55 m from where it runs, chi-square 1.5e-19, and the windows
// then read the cable 233 A for 320 and the pipe 125 A for 20, with
// sigmas of a few mA (the geometry's uncertainty was not found, 12
// readings for 13 unknowns, and only logged). Every choice of points is
// now refused as a layout that does not fix the lines, saying why; with
// a fifth sensor in the row, or a second row, it commissions where the
// lines run.
func TestCommissionOneRowAcrossTwoLinesRefused(t *testing.T) {
	sigma := 0.5 / math.Sqrt(1200) // the mean of 2 min of 10 Hz readings at 0.5 nT
	cur := []complex128{120, 7.5}
	row := [][3]float64{{-3, 0, 0.5}, {-1, 0, 0.5}, {1, 0, 0.5}, {3, 0, 0.5}}
	for _, pts := range [][2][3]float64{
		{{-1.3, 0, -0.6}, {0.4, 0, -1.6}}, // the review's wrong geometry
		{{-1.2, 0, -0.7}, {0.5, 0, -1.4}}, // the review's tilted pipe
		{{-0.8, 0, -1.0}, {1.2, 0, -1.0}}, // near the truth
	} {
		stated := []ConductorConfig{
			{Name: "cable", Point: pts[0], Direction: [3]float64{0, 1, 0}, pointSet: true, dirSet: true},
			{Name: "pipe", Point: pts[1], Direction: [3]float64{0, 1, 0}, pointSet: true, dirSet: true},
		}
		in := commissionReadings(row, rowLines, cur, false, sigma, 1)
		conds, err := InverseCommissioner{}.Commission(in, stated)
		var unres *unresolvedError
		if !errors.As(err, &unres) || !unres.layout {
			t.Errorf("points %v: got %+v, %v; want a refusal naming the layout", pts, conds, err)
			continue
		}
		if !strings.Contains(err.Error(), "one row across the lines") || !strings.Contains(err.Error(), "8 readings across them (4 sensors) for 8 unknowns") {
			t.Errorf("points %v: refusal %q does not say why", pts, err)
		}
	}
	t.Logf("refusal: %v", func() error {
		_, err := InverseCommissioner{}.Commission(commissionReadings(row, rowLines, cur, false, sigma, 1), []ConductorConfig{
			{Name: "cable", Point: [3]float64{-1.3, 0, -0.6}, pointSet: true}, {Name: "pipe", Point: [3]float64{0.4, 0, -1.6}, pointSet: true}})
		return err
	}())

	// Sensors that do fix the lines: a fifth in the row, or a second row
	// 2 m along the lines. placeTol is 5 cm, some ten times the place
	// sigma the fit's noise gives at these fields.
	const placeTol = 0.05
	for name, sensors := range map[string][][3]float64{
		"five in a row": append(append([][3]float64(nil), row...), [3]float64{5, 0, 0.5}),
		"two rows":      append(append([][3]float64(nil), row...), [3]float64{-2, 2, 0.5}, [3]float64{0, 2, 0.5}, [3]float64{2, 2, 0.5}),
	} {
		stated := []ConductorConfig{
			{Name: "cable", Point: [3]float64{-1.3, 0, -0.6}, pointSet: true},
			{Name: "pipe", Point: [3]float64{0.4, 0, -1.6}, pointSet: true},
		}
		in := commissionReadings(sensors, rowLines, cur, false, sigma, 1)
		conds, err := InverseCommissioner{}.Commission(in, stated)
		if err != nil {
			t.Errorf("%s: %v; want commissioned", name, err)
			continue
		}
		for i, c := range conds {
			if off := norm(perp(sub(c.Point, rowLines[i].Point), unit(c.Direction))); off > placeTol {
				t.Errorf("%s: %s at %v, %.3g m from where it runs", name, c.Name, c.Point, off)
			}
		}
		if _, err := geometryCovariance(in, conds); err != nil {
			t.Errorf("%s: geometry uncertainty: %v", name, err)
		}
	}
}
