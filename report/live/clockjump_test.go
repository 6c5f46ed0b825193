package live

import (
	"testing"
	"time"
)

// One sensor's held data is not lost when the other sensors' data reach
// it. Every gateway of the site runs 60 s fast (a steady offset: the
// sensors' pace is real time); s2 sends one batch 5 s ahead of its own
// data (a jump past the 3 s margin, 65 s ahead of the broker's clock) and
// then stalls. It is held; when s0 and s1 reach its time it is filed, in
// its window, with no alarm (the jump was neither refused nor kept). The
// hold taken back in 8c43cc5 filed it only when the wall clock reached
// it, after s0 and s1 had closed its window on grace, and then dropped it
// (it ignored accept's late result): window 7 had no s2 samples.
func TestClockJumpHeldFiledWhenOthersReachIt(t *testing.T) {
	const t0 = 1796104800.0
	a := newAssembler(time.Second, 2*time.Second, 3)
	var closed []*window
	seq := uint64(0)
	for step := 0; step < 150; step++ {
		d := 0.1 * float64(step)
		stored := t0 - 60 + d + 0.05
		for s := 0; s < 3; s++ {
			if s == 2 && step > 20 {
				continue
			}
			seq++
			from := t0 + d
			if s == 2 && step == 20 {
				from += 5
				if r := feedAt(a, s, seq, from, stored); r != heldAhead {
					t.Fatalf("s2's batch 5 s ahead of its pace: %v, want heldAhead", r)
				}
				continue
			}
			if r := feedAt(a, s, seq, from, stored); r != added {
				t.Fatalf("sensor %d at %.1f s: %v, want added", s, d, r)
			}
		}
		closed = append(closed, a.ready(time.Unix(0, int64(stored*1e9)), 0)...)
	}
	// The wall clock reaches every sample: the rest close on idle.
	closed = append(closed, a.ready(time.Unix(int64(t0)+3600, 0), time.Nanosecond)...)
	late, filed := a.takeFiled()
	if len(late) != 0 || filed != 10 {
		t.Errorf("held batches filed late %d, samples filed %d; want 0 late and the 10 held samples filed", len(late), filed)
	}
	for _, j := range a.takeJumps() {
		if j.given || j.confirmed {
			t.Errorf("clock jump %+v refused or kept, want filed as in line with the other sensors", j)
		}
	}
	n2 := 0
	for _, w := range closed {
		n := w.Sensors[2].len()
		n2 += n
		if w.Start == t0+7 && n != 10 {
			t.Errorf("window at 7 s: %d samples of s2, want the 10 held", n)
		}
	}
	if want := 20*10 + 10; n2 != want {
		t.Errorf("%d samples of s2 in the windows, want %d", n2, want)
	}
}

// liveAssembler feeds sensors s0..s2 live data (the broker's clock 0.5 s
// after each batch's start) from data time t0+from for seconds, in 0.1 s
// batches, and returns the windows closed.
func liveFeed(t *testing.T, a *assembler, seq *uint64, t0, from, seconds float64) []*window {
	t.Helper()
	var out []*window
	for step := 0; step < int(seconds/0.1+0.5); step++ {
		d := from + 0.1*float64(step)
		for s := 0; s < 3; s++ {
			*seq++
			if r := feedAt(a, s, *seq, t0+d, t0+d+0.5); r != added {
				t.Fatalf("sensor %d live batch at %.1f s: %v, want added", s, d, r)
			}
		}
		out = append(out, a.ready(time.Unix(0, int64((t0+d+0.5)*1e9)), 0)...)
	}
	return out
}

// A gateway clock that jumps forward for one batch per sensor and back
// (rv17c: 3000 s ahead) is refused when each sensor's next batch goes
// back before it, with a jump per sensor to alarm; the live data goes
// on, every window full. One that jumps and stays is processed as dated
// once a sensor has sent grace plus a window (3 s) of data in line with
// it, with the other sensors' runs in line with it.
func TestClockJumpRefusedOrKept(t *testing.T) {
	const t0 = 1796104800.0
	t.Run("jump and back", func(t *testing.T) {
		a := newAssembler(time.Second, 2*time.Second, 3)
		seq := uint64(0)
		closed := liveFeed(t, a, &seq, t0, 0, 2)
		for s := 0; s < 3; s++ {
			seq++
			if r := feedAt(a, s, seq, t0+3000, t0+2.5); r != heldAhead {
				t.Fatalf("sensor %d 3000 s ahead: %v, want heldAhead", s, r)
			}
		}
		closed = append(closed, liveFeed(t, a, &seq, t0, 2, 3)...)
		closed = append(closed, a.ready(time.Unix(int64(t0)+100, 0), time.Nanosecond)...)
		rej, jumps := a.takeRejected(), a.takeJumps()
		if len(rej) != 3 || len(jumps) != 3 {
			t.Fatalf("%d batches given up, %d jumps; want 3 and 3", len(rej), len(jumps))
		}
		for _, j := range jumps {
			if !j.given || j.batches != 1 || j.ahead < 2997 || j.ahead > 3000 {
				t.Errorf("jump %+v: want given up, 1 batch, about 2997.5 s ahead", j)
			}
		}
		if len(closed) != 5 {
			t.Fatalf("%d windows closed, want 5", len(closed))
		}
		for i, w := range closed {
			for s := 0; s < 3; s++ {
				if w.Start != t0+float64(i) || w.Sensors[s].len() != 100 {
					t.Errorf("window %d at %.0f: sensor %d has %d samples, want 100", i, w.Start-t0, s, w.Sensors[s].len())
				}
			}
		}
	})
	t.Run("jump kept", func(t *testing.T) {
		a := newAssembler(time.Second, 2*time.Second, 3)
		seq := uint64(0)
		closed := liveFeed(t, a, &seq, t0, 0, 2)
		var res []addResult
		for step := 0; step < 40; step++ {
			d := 3000 + 0.1*float64(step)
			for s := 0; s < 3; s++ {
				seq++
				res = append(res, feedAt(a, s, seq, t0+d, t0+2.5+0.1*float64(step)))
			}
			closed = append(closed, a.ready(time.Unix(0, int64((t0+2.5+0.1*float64(step))*1e9)), 0)...)
		}
		closed = append(closed, a.ready(time.Unix(int64(t0)+100, 0), time.Nanosecond)...)
		// Held until s0 has 3 s of data in line (31 batches), then filed.
		for i, r := range res {
			want := added
			if i < 3*30+1 {
				want = heldAhead
			}
			if r != want {
				t.Fatalf("batch %d (sensor %d, %.1f s in): %v, want %v", i, i%3, 0.1*float64(i/3), r, want)
			}
		}
		jumps := a.takeJumps()
		if len(jumps) != 3 || len(a.takeRejected()) != 0 {
			t.Fatalf("jumps %+v, want 3 kept and nothing given up", jumps)
		}
		for _, j := range jumps {
			if j.given || !j.confirmed || (j.sensor == 0) != (j.along < 0) {
				t.Errorf("jump %+v: want kept, s1 and s2 along with s0", j)
			}
		}
		if late, _ := a.takeFiled(); len(late) != 0 {
			t.Errorf("%d held batches filed late, want 0", len(late))
		}
		want := []float64{0, 1, 3000, 3001, 3002, 3003}
		if len(closed) != len(want) {
			t.Fatalf("%d windows closed, want %d", len(closed), len(want))
		}
		for i, w := range closed {
			for s := 0; s < 3; s++ {
				if w.Start != t0+want[i] || w.Sensors[s].len() != 100 {
					t.Errorf("window %d at %.0f: sensor %d has %d samples, want 100 at %.0f", i, w.Start-t0, s, w.Sensors[s].len(), want[i])
				}
			}
		}
	})
}

// One sensor whose clock steps 3000 s forward and stays there, while the
// other sensors go on at the broker's clock (regression review rg17a,
// R2, invented data): its run must not be confirmed from its own data
// alone. fix-fx18a filed its first 3 s as dated, which opened windows
// 3000 s ahead; idle later published them as failed, and the healthy
// sensors, absent from them, were reported silent. The run is left to
// the hold for a sensor far ahead of every other (as before fx18a): no
// jump confirmed, no window beyond the live data, the live windows full.
func TestClockJumpOneSensorStaysAheadNotKept(t *testing.T) {
	const t0 = 1796104800.0
	a := newAssembler(time.Second, 2*time.Second, 3)
	var closed []*window
	seq := uint64(0)
	for step := 0; step < 80; step++ {
		d := 0.1 * float64(step)
		stored := t0 + d + 0.5
		for s := 0; s < 3; s++ {
			seq++
			from := t0 + d
			if s == 2 && step >= 20 {
				from += 3000
			}
			r := feedAt(a, s, seq, from, stored)
			if s < 2 && r != added || s == 2 && step >= 20 && r != heldAhead && r != heldBack {
				t.Fatalf("sensor %d at %.1f s: %v", s, d, r)
			}
		}
		closed = append(closed, a.ready(time.Unix(0, int64(stored*1e9)), 0)...)
	}
	// The data stops: idle closes what is open.
	closed = append(closed, a.ready(time.Unix(int64(t0)+20, 0), time.Nanosecond)...)
	for _, j := range a.takeJumps() {
		if j.confirmed {
			t.Errorf("jump %+v kept: one sensor alone moved", j)
		}
	}
	if late, _ := a.takeFiled(); len(late) != 0 {
		t.Errorf("%d held batches filed late, want 0", len(late))
	}
	if len(closed) != 8 {
		t.Errorf("%d windows closed, want the 8 of the live data", len(closed))
	}
	for _, w := range closed {
		if w.Start > t0+10 {
			t.Errorf("window at %.0f s closed: the jumped sensor's data was filed as dated", w.Start-t0)
			continue
		}
		for s := 0; s < 2; s++ {
			if w.Sensors[s].len() != 100 {
				t.Errorf("window at %.0f s: sensor %d has %d samples, want 100", w.Start-t0, s, w.Sensors[s].len())
			}
		}
	}
}

// A sensor whose clock flips back and forth (regression review rg17a,
// R3, invented data): each jumped batch followed by a true one is a run
// given up, but only the first of an episode is to raise an alarm; one
// given up paceSpan (30 s here) after the last starts a new episode.
// fix-fx18a alarmed on every run: 20 alarms here.
func TestClockJumpFlipsOneAlarmPerEpisode(t *testing.T) {
	const t0 = 1796104800.0
	a := newAssembler(time.Second, 2*time.Second, 3)
	seq := uint64(0)
	flip := func(d float64) {
		seq++
		if r := feedAt(a, 2, seq, t0+3000+d, t0+d+0.5); r != heldAhead {
			t.Fatalf("s2's batch 3000 s ahead at %.1f s: %v, want heldAhead", d, r)
		}
	}
	liveFeed(t, a, &seq, t0, 0, 2)
	for step := 0; step < 20; step++ {
		d := 2 + 0.1*float64(step)
		flip(d)
		liveFeed(t, a, &seq, t0, d, 0.1)
	}
	liveFeed(t, a, &seq, t0, 4, 40)
	flip(44)
	liveFeed(t, a, &seq, t0, 44, 1)
	given, alarms := 0, 0
	for _, j := range a.takeJumps() {
		if j.given {
			given++
			if !j.repeat {
				alarms++
			}
		}
	}
	if given != 21 || alarms != 2 {
		t.Errorf("%d runs given up, %d to alarm; want 21 and 2 (one per episode)", given, alarms)
	}
}
