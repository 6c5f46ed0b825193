package ingest

import (
	"strings"
	"testing"
	"time"
)

// A traverse walked across the night the clocks go forward, its local
// times read with one fixed offset, shows a step of an hour and one
// interval between two readings a sample spacing apart: it was read
// without a word (the backward change is warned of), and a base
// correction paired the rest of the traverse an hour off.
// ClockChangeForward words it; a pause of an hour with the sensor carried
// on, another month, or another length of gap is left alone.
func TestClockChangeForward(t *testing.T) {
	walk := func(start time.Time, jump float64, jumpMove float64) (tt, x, y []float64, g []string) {
		t0 := float64(start.Unix())
		for i := 0; i < 200; i++ {
			v, xv := t0+0.2*float64(i), 0.05*float64(i)
			if i >= 100 {
				v += jump
				xv += jumpMove
			}
			tt, x, y, g = append(tt, v), append(x, xv), append(y, 0), append(g, "T04")
		}
		return
	}
	spring := time.Date(2026, 3, 29, 0, 59, 40, 0, time.UTC)
	tt, x, y, g := walk(spring, 3600, 0)
	w := ClockChangeForward(tt, x, y, g)
	if !strings.Contains(w, "clocks went forward") || !strings.Contains(w, `group "T04"`) {
		t.Errorf("spring change: %q", w)
	}
	for name, c := range map[string]struct {
		start      time.Time
		jump, move float64
	}{
		"carried on 20 m":   {spring, 3600, 20},
		"in July":           {time.Date(2026, 7, 5, 10, 0, 0, 0, time.UTC), 3600, 0},
		"a 40 minute pause": {spring, 2400, 0},
	} {
		tt, x, y, g := walk(c.start, c.jump, c.move)
		if w := ClockChangeForward(tt, x, y, g); w != "" {
			t.Errorf("%s: warned %q", name, w)
		}
	}
}
