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
	w := ClockChangeForward(tt, x, y, g, 0)
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
		if w := ClockChangeForward(tt, x, y, g, 0); w != "" {
			t.Errorf("%s: warned %q", name, w)
		}
	}
}

// A stationary sensor whose logger stopped for an hour, from 00:34:59 to
// 01:35:00 on the night of a spring change, moved 0 m between the two
// readings (one spacing of a sensor that does not move) and was warned
// of as a clock gone forward (found in review). A clock's change skips
// from just before a whole hour of the clock to just after the next:
// the pause is now left alone, the change still found, also when the
// times were read with a fixed offset (off: the clock showed t+off), and
// not when that offset puts the jump off the clock's whole hour. Fails
// before the change (the pause was warned of).
func TestClockChangeForwardNotAPause(t *testing.T) {
	fixed := func(start time.Time, pauseAt int) (tt, x, y []float64, g []string) {
		t0 := float64(start.Unix())
		for i := 0; i < 600; i++ {
			v := t0 + float64(i)
			if i >= pauseAt {
				v += 3600
			}
			tt, x, y, g = append(tt, v), append(x, -1.5), append(y, 0), append(g, "s1")
		}
		return
	}
	// 00:30:00 on, a reading a second: the pause after 00:34:59.
	tt, x, y, g := fixed(time.Date(2026, 3, 29, 0, 30, 0, 0, time.UTC), 300)
	if w := ClockChangeForward(tt, x, y, g, 0); w != "" {
		t.Errorf("a stationary logger paused an hour, 00:34:59 to 01:35:00: warned %q", w)
	}
	// The clock's change: 00:59:59 to 02:00:00 as written (the hour from
	// 01:00 skipped).
	tt, x, y, g = fixed(time.Date(2026, 3, 29, 0, 55, 0, 0, time.UTC), 300)
	if w := ClockChangeForward(tt, x, y, g, 0); !strings.Contains(w, "from 2026-03-29T00:59:59 to 2026-03-29T02:00:00") {
		t.Errorf("a stationary sensor across the change: %q", w)
	}
	// The same clock read with --time-offset +01:00: the values are an
	// hour earlier, the clock's reading the same.
	for i := range tt {
		tt[i] -= 3600
	}
	if w := ClockChangeForward(tt, x, y, g, 3600); !strings.Contains(w, "clocks went forward") {
		t.Errorf("read with offset +01:00: %q", w)
	}
	if w := ClockChangeForward(tt, x, y, g, 1800); w != "" {
		t.Errorf("read with offset +00:30, the jump off the clock's hour: %q", w)
	}
}
