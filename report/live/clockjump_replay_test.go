package live

import (
	"math"
	"testing"
	"time"
)

// feedAt adds a batch of 10 samples at 100 Hz from data time from for
// sensor s, stored when the broker's clock read stored (Unix s; also the
// wall time), and returns what addMsg said.
func feedAt(a *assembler, s int, seq uint64, from, stored float64) addResult {
	clock := time.Unix(0, int64(math.Round(stored*1e9)))
	a.clock = clock
	r, _ := a.addMsg(s, seq, mkBatch(from, 100, 10, 1), clock, "uc.data.a.s", nil)
	a.clock = time.Time{}
	return r
}

// A log replayed with --now at 20 times real time, with a gap inside
// (regression review rg16b): every sensor pauses from 5 s to 65 s of data
// time, and s2 alone from 70 s to 78 s. Replay waits a gap out at its
// speed (broker.Replay), so the data after it is ahead of the broker's
// clock (by about 55 s) and far after each sensor's last sample, but in
// line with the sensors' pace (20). Nothing may be held, no jump
// reported, and every sample filed in its window. The hold taken back in
// 8c43cc5 held the data after both gaps: it failed here (batches held,
// s2's and then every sensor's samples missing from their windows).
func TestClockJumpReplayGapNotHeld(t *testing.T) {
	const t0 = 1796104800.0
	const speed = 20.0
	a := newAssembler(time.Second, 2*time.Second, 3) // margin 3 s
	var closed []*window
	seq := uint64(0)
	stored := t0 // --now: the log starts at the clock
	last := 0.0
	for step := 0; step < 850; step++ {
		d := 0.1 * float64(step)
		if d >= 5 && d < 65 {
			continue
		}
		stored += (d - last) / speed // replay sleeps until each batch is due
		last = d
		for s := 0; s < 3; s++ {
			if s == 2 && d >= 70 && d < 78 {
				continue
			}
			seq++
			// The first sensor back after the asset's gap is held as ahead
			// of the others until they come (heldBack), as before.
			if r := feedAt(a, s, seq, t0+d, stored); r != added && !(r == heldBack && s == 0 && d == 65) {
				t.Fatalf("sensor %d batch at %.1f s (%.1f s ahead of the clock): %v, want added", s, d, t0+d-stored, r)
			}
		}
		closed = append(closed, a.ready(time.Unix(0, int64(stored*1e9)), 0)...)
	}
	closed = append(closed, a.ready(time.Unix(int64(t0)+3600, 0), time.Nanosecond)...)
	if j := a.takeJumps(); len(j) != 0 {
		t.Errorf("%d clock jumps reported, want none: %+v", len(j), j)
	}
	got := 0
	for _, w := range closed {
		for s := 0; s < 3; s++ {
			want := 100
			if s == 2 && w.Start >= t0+70 && w.Start < t0+78 {
				want = 0
			}
			if n := w.Sensors[s].len(); n != want {
				t.Errorf("window at %.0f s sensor %d: %d samples, want %d", w.Start-t0, s, n, want)
			}
			got += w.Sensors[s].len()
		}
	}
	// 5 s + 20 s of data for three sensors, less s2's 8 s, at 100 Hz.
	if want := (25*3 - 8) * 100; got != want {
		t.Errorf("%d samples filed, want %d", got, want)
	}
}

// A log replayed with --now at 1.5 times real time that stalls 4 s just
// before a gap of every sensor from 40 s to 80 s of data time, or at 1.2
// times that stalls 14 s (regression review rg17a, R1, invented data):
// the batches held up by the stall go out in a burst, late, and replay
// waits the gap out only to its schedule, so the data moves 40 s while
// the broker's clock moves about 23 s (24 s at 1.2). Nothing may be held
// as ahead of the clock, and no jump reported. With the live pace bound
// at 1.5 and no lead check, every sensor's data after the gap was held
// and confirmed as a clock jump; the 1.2 replay's pace with the stall
// (0.9) is under any live bound, and only its lead over the clock
// (13 s, no more than 1.5 x real time since the pace's anchor gives)
// keeps it from being held.
func TestClockJumpStalledReplayGapNotHeld(t *testing.T) {
	const t0 = 1796104800.0
	for _, c := range []struct{ speed, stall, at float64 }{{1.5, 4, 39}, {1.2, 14, 34.8}} {
		a := newAssembler(time.Second, 2*time.Second, 3) // margin 3 s
		seq := uint64(0)
		for step := 0; step < 1000; step++ {
			d := 0.1 * float64(step)
			if d >= 40 && d < 80 {
				continue
			}
			stored := t0 + d/c.speed // --now: the log starts at the clock
			if d >= c.at-1e-9 && d < 40 {
				stored = t0 + c.at/c.speed + c.stall + 0.01*(d-c.at) // sent in a burst after the stall
			}
			for s := 0; s < 3; s++ {
				seq++
				// The first sensor back after the asset's gap is held as ahead
				// of the others until they come (heldBack), as before.
				if r := feedAt(a, s, seq, t0+d, stored); r != added && !(r == heldBack && s == 0 && d == 80) {
					t.Fatalf("speed %v: sensor %d batch at %.1f s (%.1f s ahead of the clock): %v, want added", c.speed, s, d, t0+d-stored, r)
				}
			}
			a.ready(time.Unix(0, int64(stored*1e9)), 0)
		}
		if j := a.takeJumps(); len(j) != 0 {
			t.Errorf("speed %v: %d clock jumps reported, want none: %+v", c.speed, len(j), j)
		}
	}
}

// A log replayed with --now at 2 times real time that stalls 19 s at
// 38 s of data time, just before a gap of every sensor from 40 s to 80 s
// (invented data, the case left by rg17a's fix): the stall pulls the
// sensors' pace over the last 30 to 60 s of the broker's clock to 40 s of
// data in 38 s (1.05, under paceLive), and replay, waiting the gap out
// to its schedule, sends the data after it 40 s ahead of the broker's
// clock, more than a replay at up to paceCatch would have gained since
// the pace's older anchor (23 s). Unmarked, as a gateway's, that is a
// jump of every sensor: held, and kept after 3 s of data with a
// clock-jump alarm per sensor. Marked as replayed (broker.HeaderReplay),
// nothing is held, no jump reported, and every window has all its
// samples. Before the mark was read, the marked run failed as the
// unmarked one.
func TestClockJumpMarkedReplayStallGapNotHeld(t *testing.T) {
	const t0 = 1796104800.0
	const speed, stall, at = 2.0, 19.0, 38.0
	for _, marked := range []bool{false, true} {
		a := newAssembler(time.Second, 2*time.Second, 3) // margin 3 s
		var closed []*window
		seq := uint64(0)
		stored := t0
		for step := 0; step < 1000; step++ {
			d := 0.1 * float64(step)
			if d >= 40-1e-9 && d < 80-1e-9 {
				continue
			}
			due := t0 + d/speed // --now: the log starts at the clock
			switch {
			case d >= at-1e-9 && d < 40:
				stored = t0 + at/speed + stall + 0.01*(d-at) // sent in a burst after the stall
			default:
				stored = math.Max(due, stored+0.001) // behind its schedule: sent at once
			}
			for s := 0; s < 3; s++ {
				seq++
				a.marked = marked
				r := feedAt(a, s, seq, t0+d, stored)
				a.marked = false
				if !marked {
					continue
				}
				// The first sensor back after the asset's gap is held as ahead
				// of the others until they come (heldBack), as unmarked.
				if r != added && !(r == heldBack && s == 0 && math.Abs(d-80) < 1e-9) {
					t.Fatalf("marked: sensor %d batch at %.1f s (%.1f s ahead of the clock): %v, want added", s, d, t0+d-stored, r)
				}
			}
			closed = append(closed, a.ready(time.Unix(0, int64(stored*1e9)), 0)...)
		}
		closed = append(closed, a.ready(time.Unix(int64(t0)+3600, 0), time.Nanosecond)...)
		jumps := a.takeJumps()
		if !marked {
			// The gateway's behaviour, kept: a jump of every sensor kept as
			// dated, one alarm each (TestClockJump* cover the rest).
			kept := map[int]bool{}
			for _, j := range jumps {
				if j.confirmed {
					kept[j.sensor] = true
				}
			}
			if len(kept) != 3 {
				t.Errorf("unmarked: jumps %+v, want every sensor's run held and kept as dated", jumps)
			}
			continue
		}
		if len(jumps) != 0 {
			t.Errorf("marked: %d clock jumps reported, want none: %+v", len(jumps), jumps)
		}
		n := 0
		for _, w := range closed {
			n++
			for s := 0; s < 3; s++ {
				if got := w.Sensors[s].len(); got != 100 {
					t.Errorf("marked: window at %.0f s sensor %d: %d samples, want 100", w.Start-t0, s, got)
				}
			}
		}
		// 40 s before the gap and 20 s after it, in 1 s windows.
		if n != 60 {
			t.Errorf("marked: %d windows closed, want 60", n)
		}
	}
}
