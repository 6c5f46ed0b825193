package live

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// Reviewer's case (rv14b finding 8): a sensor cannot read past its range,
// so readings beyond the stated range_nt by more than the saturation
// margin say the range stated is wrong (set too low, or of another sensor
// model), not that the sensor clipped; the alarm named them "at its range
// ... clipped". Simulated truth (synthDCWindowVarying: Biot-Savart line
// fields of the Sedge Hollow pipeline, the Earth's field, 0.5 nT noise):
// 10 A gives sh-2 and sh-5 about 40,000 nT, read in full; with range_nt
// stated as 30,000 nT their alarms must say the readings lie beyond the
// stated range and point at the site file. The same readings clipped at
// 30,000 nT (with 0.5 nT of readout noise on the rail) keep the clipped
// wording.
func TestSaturatedBeyondStatedRangeNamed(t *testing.T) {
	site := testSite(t, strings.ReplaceAll(satSite, "range_nt = 100000", "range_nt = 30000"))
	a := &site.Assets[0]
	p := solvingProcessor(t, a, []string{"line"})
	rng := rand.New(rand.NewPCG(7, 31))
	for k, clip := range []bool{false, true} {
		w, _ := synthDCWindowVarying(a, func(float64) []float64 { return []float64{10} }, steadyEarth, 1764650000+2*float64(k), 10, 20, 0, rng)
		if clip {
			for i := range w.Sensors {
				for _, col := range [][]float64{w.Sensors[i].Bx, w.Sensors[i].By, w.Sensors[i].Bz} {
					for j := range col {
						col[j] = max(-3e4, min(3e4, col[j])) + a.Noise*rng.NormFloat64()
					}
				}
			}
		}
		e, alarms := p.solve(w, p.reduce(w))
		for _, name := range []string{"sh-2", "sh-5"} {
			al, ok := alarmFor(alarms, AlarmSaturated, name)
			if !ok || e.Missing[name] != "saturated" {
				t.Fatalf("clipped %v: %s not left out as saturated: missing %v, alarms %+v", clip, name, e.Missing, alarms)
			}
			beyond := strings.Contains(al.Message, "beyond the stated range_nt") && strings.Contains(al.Message, "check the site file")
			if beyond == clip || strings.Contains(al.Message, "clipped") != clip {
				t.Errorf("clipped %v, %s: %q", clip, name, al.Message)
			}
		}
	}
}
