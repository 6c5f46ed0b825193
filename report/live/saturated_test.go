package live

import (
	"math"
	"math/rand/v2"
	"testing"
)

// satSite is a DC asset on the invented Sedge Hollow pipeline with its
// geometry held: six sensors 0.5 m up, a conductor running north 0.05 m
// under sensors sh-2 and sh-5, each sensor a fluxgate of +-100,000 nT range.
const satSite = `
[service]
http = "127.0.0.1:0"
[[asset]]
name = "sedge-clip"
mode = "dc"
window = "2s"
model = "fixed"
noise = 0.5
  [[asset.sensor]]
  name = "sh-1"
  position = [-1.5, 0, 0.5]
  range_nt = 100000
  [[asset.sensor]]
  name = "sh-2"
  position = [-0.5, 0, 0.5]
  range_nt = 100000
  [[asset.sensor]]
  name = "sh-3"
  position = [0.5, 0, 0.5]
  range_nt = 100000
  [[asset.sensor]]
  name = "sh-4"
  position = [1.5, 0, 0.5]
  range_nt = 100000
  [[asset.sensor]]
  name = "sh-5"
  position = [-0.5, 3, 0.5]
  range_nt = 100000
  [[asset.sensor]]
  name = "sh-6"
  position = [0.5, 3, 0.5]
  range_nt = 100000
  [[asset.conductor]]
  name = "line"
  point = [-0.5, 0.0, 0.45]
  direction = [0.0, 1.0, 0.0]
`

// Reviewer's case (rv13a finding 7): a sensor driven past its range with
// readout noise on the rail value was not caught (only a bit-identical
// rail is "stuck"), and the window's fit read 30 A as 25.04 ± 0.06 A.
// Simulated truth (synthDCWindowVarying: Biot-Savart line fields, the
// Earth's field, 0.5 nT noise, 20 readings at 10 Hz): 10 A (40,000 nT at
// sh-2, within range) then 30 A (120,000 nT), readings clipped at
// +-100,000 nT and 0.5 nT of readout noise added after the clip. At 10 A
// no sensor is left out; at 30 A sh-2 and sh-5 are left out as
// "saturated", each with a saturated alarm, and the other four read 30 A
// within 4 sigma.
func TestSaturatedSensorLeftOut(t *testing.T) {
	site := testSite(t, satSite)
	a := &site.Assets[0]
	p := solvingProcessor(t, a, []string{"line"})
	rng := rand.New(rand.NewPCG(7, 30))
	for k, amps := range []float64{10, 30, 30} {
		w, _ := synthDCWindowVarying(a, func(float64) []float64 { return []float64{amps} }, steadyEarth, 1764650000+2*float64(k), 10, 20, 0, rng)
		for i := range w.Sensors {
			for _, col := range [][]float64{w.Sensors[i].Bx, w.Sensors[i].By, w.Sensors[i].Bz} {
				for j := range col {
					col[j] = math.Max(-1e5, math.Min(1e5, col[j])) + a.Noise*rng.NormFloat64()
				}
			}
		}
		e, alarms := p.solve(w, p.reduce(w))
		wantOut := amps > 25
		for _, name := range []string{"sh-2", "sh-5"} {
			if got := e.Missing[name] == "saturated"; got != wantOut {
				t.Errorf("%g A: missing %v, want %s saturated %v", amps, e.Missing, name, wantOut)
			}
			al, ok := alarmFor(alarms, AlarmSaturated, name)
			if ok != wantOut {
				t.Errorf("%g A: alarms %+v, want a saturated alarm on %s %v", amps, alarms, name, wantOut)
			}
			if ok && !(math.Abs(al.Value) >= 99990) {
				t.Errorf("%g A: saturated alarm value %g nT", amps, al.Value)
			}
		}
		if n := 2 * min(k, 1); len(e.Missing) != n || len(alarms) != n {
			t.Errorf("%g A: missing %v, alarms %+v", amps, e.Missing, alarms)
		}
		if c := e.Conductors[0]; !(math.Abs(c.Current-amps) <= 4*c.CurrentSigma) {
			t.Errorf("%g A: %.5g ± %.3g A (quality %s)", amps, c.Current, c.CurrentSigma, e.Quality)
		}
	}
}

// A range must be positive or 0 (not stated).
func TestSensorRangeRefusedWhenNegative(t *testing.T) {
	text := `
[[asset]]
name = "x"
mode = "dc"
window = "1s"
model = "fixed"
  [[asset.sensor]]
  name = "s1"
  position = [0, 0, 0]
  range_nt = -5
  [[asset.conductor]]
  name = "c"
  point = [0, 0, -1]
  direction = [0, 1, 0]
`
	if _, err := ParseSite("x.toml", []byte(text)); err == nil || !contains(err.Error(), "range_nt") {
		t.Errorf("negative range_nt: error %v", err)
	}
}

func contains(s, sub string) bool {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return true
		}
	}
	return false
}
