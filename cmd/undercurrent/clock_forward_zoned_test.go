package main

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"

	"undercurrent/inverse/simulate"
)

// TestLocateClockForwardOnlyZonelessText: four fixed sensors at 1 Hz on
// the night of 29 March 2026, each sensor's rows together, the logger
// stopped for an hour. Written as Unix seconds, or as times ending in
// "Z", such times cannot be a clock's local times read as UTC, yet locate
// warned that the clocks went forward (found in review). Now only times
// written without an offset are looked at: the same log with its times
// so written, jumping from 00:59:59 to 02:00:00 as a clock going forward
// at 01:00 does, is warned of; a pause from 00:34:59 to 01:35:00 in
// those times is not. Fails before the change (Unix seconds and Z times
// were warned of, and the pause).
func TestLocateClockForwardOnlyZonelessText(t *testing.T) {
	dir := t.TempDir()
	write := func(name, start string, form func(float64) string) string {
		toml := fmt.Sprintf(`name = "night-pause"
site = "Ashby Cross yard, invented"
seed = 5
start = %q
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
noise_nt = 1.0
sample_rate_hz = 1.0
[survey]
pattern = "fixed"
duration_s = 600.0
  [[survey.sensor]]
  name = "s1"
  position = [-1.5, 0.0, 0.3]
  [[survey.sensor]]
  name = "s2"
  position = [-0.5, 0.0, 0.3]
  [[survey.sensor]]
  name = "s3"
  position = [0.5, 0.0, 0.3]
  [[survey.sensor]]
  name = "s4"
  position = [1.5, 0.0, 0.3]
[[conductor]]
name = "feeder"
kind = "line"
point = [0.1, 0.0, -0.9]
direction = [0.0, 1.0, 0.0]
current_a = 30.0
`, start)
		sc := filepath.Join(dir, name+".toml")
		if err := os.WriteFile(sc, []byte(toml), 0o644); err != nil {
			t.Fatal(err)
		}
		s, err := simulate.Load(sc)
		if err != nil {
			t.Fatal(err)
		}
		smp, err := simulate.Simulate(s)
		if err != nil {
			t.Fatal(err)
		}
		idx := make([]int, smp.Len())
		for i := range idx {
			idx[i] = i
		}
		sort.SliceStable(idx, func(a, b int) bool { return smp.Group[idx[a]] < smp.Group[idx[b]] })
		t0 := smp.Time[0]
		var b strings.Builder
		b.WriteString("time,x,y,z,bx,by,bz,group\n")
		for _, i := range idx {
			v := smp.Time[i]
			if v-t0 >= 300 {
				v += 3600 // the logger stopped for an hour
			}
			// A fixed log has no positions: the sensors' own.
			x := map[string]float64{"s1": -1.5, "s2": -0.5, "s3": 0.5, "s4": 1.5}[smp.Group[i]]
			fmt.Fprintf(&b, "%s,%g,0,0.3,%.3f,%.3f,%.3f,%s\n", form(v), x, smp.Bx[i], smp.By[i], smp.Bz[i], smp.Group[i])
		}
		p := filepath.Join(dir, name+".csv")
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	unix := func(v float64) string { return fmt.Sprintf("%.3f", v) }
	iso := func(layout string) func(float64) string {
		return func(v float64) string { return time.Unix(int64(v), 0).UTC().Format(layout) }
	}
	for _, c := range []struct {
		name, start string
		form        func(float64) string
		warn        bool
	}{
		{"unix", "2026-03-29T00:55:00Z", unix, false},
		{"zulu", "2026-03-29T00:55:00Z", iso("2006-01-02T15:04:05Z"), false},
		{"naive", "2026-03-29T00:55:00Z", iso("2006-01-02T15:04:05"), true},
		{"naive-pause", "2026-03-29T00:30:00Z", iso("2006-01-02T15:04:05"), false},
	} {
		log := write(c.name, c.start, c.form)
		_, out, errOut := cli(t, "locate", "--time-order", "per-group", log)
		if got := strings.Contains(out+errOut, "clocks went forward"); got != c.warn {
			t.Errorf("%s: warned of the clocks going forward %v, want %v:\n%s%s", c.name, got, c.warn, out, errOut)
		}
	}
}
