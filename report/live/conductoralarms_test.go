package live

import (
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// tractionSite is a DC tram depot's fixed sensors (invented for the
// test): a return cable 2 m from a pipe, both running north, four
// sensors in a row across them, 0.5 nT of noise. extra is added to the
// pipe's [[asset.conductor]] entry, alarms is the [asset.alarms] table.
func tractionSite(t *testing.T, extra, alarms string) *AssetConfig {
	t.Helper()
	return depotSite(t, "", extra, alarms)
}

// depotSite is tractionSite with cable added to the cable's
// [[asset.conductor]] entry as well.
func depotSite(t *testing.T, cable, extra, alarms string) *AssetConfig {
	t.Helper()
	text := `name = "depot"
[[asset]]
name = "depot"
mode = "dc"
window = "2s"
noise = 0.5
  [[asset.sensor]]
  name = "s1"
  position = [-3.0, 0.0, 0.5]
  [[asset.sensor]]
  name = "s2"
  position = [-1.0, 0.0, 0.5]
  [[asset.sensor]]
  name = "s3"
  position = [1.0, 0.0, 0.5]
  [[asset.sensor]]
  name = "s4"
  position = [3.0, 0.0, 0.5]
  [[asset.conductor]]
  name = "cable"
  point = [-1.0, 0.0, -0.8]
  direction = [0.0, 1.0, 0.0]
` + cable + `
  [[asset.conductor]]
  name = "pipe"
  point = [1.0, 0.0, -1.2]
  direction = [0.0, 1.0, 0.0]
` + extra + `
  [asset.alarms]
` + alarms + "\n"
	s, err := ParseSite("depot.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return s.Asset("depot")
}

// runWindows solves consecutive one-second windows of a whose conductors
// carry the currents given (cable, pipe), and returns each window's
// alarms.
func runWindows(t *testing.T, a *AssetConfig, currents [][2]float64) [][]Alarm {
	t.Helper()
	_, out := runEstimates(t, a, currents)
	return out
}

// runEstimates is runWindows also returning each window's estimate.
func runEstimates(t *testing.T, a *AssetConfig, currents [][2]float64) ([]*Estimate, [][]Alarm) {
	t.Helper()
	p := solvingProcessor(t, a, []string{"cable", "pipe"})
	rng := rand.New(rand.NewPCG(20, 11))
	var out [][]Alarm
	var es []*Estimate
	for k, c := range currents {
		w := synthWindow(a, []complex128{complex(c[0], 0), complex(c[1], 0)}, [3]float64{18000, 2000, -44000}, float64(k), 100, 100, 0.5, rng)
		e, al := p.solve(w, p.reduce(w))
		if e.Quality != "good" {
			t.Fatalf("window %d: quality %s", k, e.Quality)
		}
		out = append(out, p.latch(w, e, al))
		es = append(es, e)
	}
	return es, out
}

// TestConductorOwnAlarmLimits: a conductor entry's own max_current and
// step replace the asset's [asset.alarms] values for it alone, step = 0
// turning its step alarm off; the alarm's threshold is the limit used
// and its message says it is the conductor's own. The case is rv20b's
// tram depot: a return cable carrying 320 A at full traction 2 m from a
// pipe carrying 20 A, where "pipe above 30 A" could not be written
// (max_current applied to every conductor, and every tram raised
// over-current and step alarms on the cable). Before, the entry's keys
// were refused as unknown.
func TestConductorOwnAlarmLimits(t *testing.T) {
	a := tractionSite(t, "  max_current = 30.0\n  step = 0.0", "  max_current = 450.0\n  step = 100.0")
	if v, own := a.conductorLimit("pipe", "max_current"); v != 30 || !own {
		t.Fatalf("pipe max_current %v (own %v), want 30 of its own", v, own)
	}
	if v, own := a.conductorLimit("cable", "step"); v != 100 || own {
		t.Fatalf("cable step %v (own %v), want the asset's 100", v, own)
	}
	// Traction (320 A, the pipe's 5% share 20 A), the tram stopped,
	// traction again, then the pipe's share tripled (60 A).
	als := runWindows(t, a, [][2]float64{{320, 20}, {0, 0}, {320, 20}, {320, 60}})
	for k := range 3 {
		for _, al := range als[k] {
			if al.Kind == AlarmOverCurrent || al.Subject == "pipe" {
				t.Errorf("window %d: normal running raised %s on %s: %s", k, al.Kind, al.Subject, al.Message)
			}
		}
	}
	// The cable's steps of 320 A are over the asset's step limit.
	if al, ok := alarmFor(als[1], AlarmStep, "cable"); !ok || al.Threshold != 100 {
		t.Errorf("window 1: cable step alarm %+v (found %v), want threshold 100", al, ok)
	} else if strings.Contains(al.Message, "own") {
		t.Errorf("the cable's step alarm %q calls the asset's limit its own", al.Message)
	}
	al, ok := alarmFor(als[3], AlarmOverCurrent, "pipe")
	if !ok {
		t.Fatalf("window 3: the pipe at 60 A raised no over-current: %+v", als[3])
	}
	if al.Threshold != 30 || !strings.Contains(al.Message, "its own max_current") || !strings.Contains(al.Message, "450") {
		t.Errorf("pipe over-current %+v: want threshold 30, named as its own, with the asset's 450", al)
	}
	if _, ok := alarmFor(als[3], AlarmStep, "pipe"); ok {
		t.Errorf("window 3: the pipe's step alarm is off (step = 0) but was raised")
	}
	if _, ok := alarmFor(als[3], AlarmOverCurrent, "cable"); ok {
		t.Errorf("window 3: the cable at 320 A is under the asset's 450 A but was alarmed")
	}

	// Without the entry's keys the asset's limits apply to the pipe as
	// before: the tripled share raises a step of 40 A over a limit of 30.
	b := tractionSite(t, "", "  max_current = 450.0\n  step = 30.0")
	als = runWindows(t, b, [][2]float64{{320, 20}, {320, 60}})
	if al, ok := alarmFor(als[1], AlarmStep, "pipe"); !ok || al.Threshold != 30 || strings.Contains(al.Message, "own") {
		t.Errorf("pipe step with the asset's limit: %+v (found %v)", al, ok)
	}
}

// TestConductorAlarmLimitErrorLine: a conductor's own limit that is
// negative is refused at its line and column, naming the conductor, also
// in the second of two [[asset]] tables (the line is found by the
// entry's place among all the file's conductor entries).
func TestConductorAlarmLimitErrorLine(t *testing.T) {
	for _, c := range []struct{ old, new, want string }{
		{"  name = \"pipe\"\n\n", "  name = \"pipe\"\n  max_current = -5.0\n\n", `conductor "pipe": max_current -5`},
		{"  name = \"return\"\n", "  name = \"return\"\n  step = -1.0\n", `conductor "return": step -1`},
	} {
		text, line := harrowFenText(t, c.old, c.new)
		line++ // the key is on the line after the name
		_, err := ParseSite("site.toml", []byte(text))
		if err == nil {
			t.Fatalf("%q accepted", c.new)
		}
		at := "site.toml:" + strconv.Itoa(line) + ":"
		if msg := err.Error(); !strings.Contains(msg, at) || !strings.Contains(msg, c.want) {
			t.Errorf("%q: want %q at line %d", msg, c.want, line)
		}
	}
}
