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
	if len(alarms) != 1 || !strings.Contains(alarms[0].Message, "sensor layout") || strings.Contains(alarms[0].Message, "flat bar") {
		t.Errorf("commissioning alarms %+v, want one naming the sensor layout", alarms)
	}
}
