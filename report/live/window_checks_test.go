package live

import (
	"math"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// One sensor's batch stamped ten minutes ahead (well within max_ahead)
// is held back as ahead of the other sensors; it does not close their
// windows, they lose no sample, and when the glitching sensor's next
// batch is in line with the others again it is accepted and the held one
// given up (to be refused). Five sensors at 100 Hz, 0.1 s batches, 1 s windows,
// 2 s grace (the harrow-fen site's settings).
func TestOneSensorAheadIsolated(t *testing.T) {
	const t0 = 1796104800.0
	a := newAssembler(time.Second, 2*time.Second, 5)
	a.stale = 5 * time.Second
	now := time.Unix(1796104800, 0)
	var closed []*window
	seq := uint64(0)
	for b := 0; b < 50; b++ { // 5 s of data
		now = now.Add(100 * time.Millisecond)
		for s := 0; s < 5; s++ {
			seq++
			start := t0 + 0.1*float64(b)
			if s == 4 && b == 20 {
				res, _ := a.add(s, seq, mkBatch(start+600, 100, 10, 0), now)
				if res != heldBack {
					t.Fatalf("batch 600 s ahead of four sensors: %v, want heldBack", res)
				}
				continue
			}
			if res, dropped := a.add(s, seq, mkBatch(start, 100, 10, 0), now); res != added || dropped != 0 {
				t.Fatalf("batch %d sensor %d: %v, %d dropped", b, s, res, dropped)
			}
			rej := a.takeRejected()
			if s == 4 && b == 21 {
				if len(rej) != 1 || rej[0].b.Time[0] != start-0.1+600 || !strings.Contains(rej[0].why, "its clock jumped") {
					t.Fatalf("the held batch was not given up when its sensor came back in line: %+v", rej)
				}
			} else if len(rej) != 0 {
				t.Fatalf("batch %d sensor %d: %d batches given up", b, s, len(rej))
			}
			closed = append(closed, a.ready(now, 0)...)
		}
	}
	if len(closed) != 5 {
		t.Fatalf("%d windows closed, want 5", len(closed))
	}
	for i, w := range closed {
		if w.Start != t0+float64(i) {
			t.Errorf("window %d starts at %v", i, w.Start)
		}
		for s := 0; s < 5; s++ {
			want := 100
			if s == 4 && i == 2 {
				want = 90 // the refused batch
			}
			if n := w.Sensors[s].len(); n != want {
				t.Errorf("window %d sensor %d: %d samples, want %d", i, s, n, want)
			}
		}
	}
}

// While sensors fall silent, the ones still sending close the windows:
// with two of five silent, the three left are a majority of the five;
// with three silent, the two left close windows once the silent ones have
// sent nothing for the stale time (the site's idle time) of wall time.
func TestQuorumWithSilentSensors(t *testing.T) {
	const t0 = 1796104800.0
	for _, tc := range []struct {
		name   string
		live   []int
		before int // last batch before which no window after the first may close
	}{
		{"two of five silent", []int{0, 1, 2}, 0},
		{"three of five silent", []int{0, 1}, 55},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a := newAssembler(time.Second, 2*time.Second, 5)
			a.stale = 5 * time.Second
			now := time.Unix(1796104800, 0)
			var closed []*window
			for b := 0; b < 100; b++ { // 10 s of data, 0.1 s of wall time per batch
				now = now.Add(100 * time.Millisecond)
				sensors := tc.live
				if b < 10 {
					sensors = []int{0, 1, 2, 3, 4}
				}
				for _, s := range sensors {
					a.add(s, uint64(b*5+s+1), mkBatch(t0+0.1*float64(b), 100, 10, 0), now)
				}
				got := a.ready(now, 0)
				if b < tc.before {
					for _, w := range got {
						if w.Index > int64(t0) {
							t.Fatalf("batch %d: window at %v s closed while three of five sensors had been quiet for less than the stale time", b, w.Start-t0)
						}
					}
				}
				closed = append(closed, got...)
			}
			// Data reach 9.99 s: windows ending by 7.99 s close on grace.
			if len(closed) != 7 || closed[6].End != t0+7 {
				t.Fatalf("%d windows closed, want 7 (to 7 s)", len(closed))
			}
			for _, w := range closed[1:] {
				if w.Reason != "grace" {
					t.Errorf("window at %v s closed on %s, want grace", w.Start-t0, w.Reason)
				}
			}
		})
	}
}

// All sensors resuming after a gap in the data (a log with a pause, a
// gateway that was down) are not taken for clock jumps: the first
// sensor's batch after the gap is held only until a second sensor's
// arrives, and no sample is lost.
func TestGapInAllSensorsKept(t *testing.T) {
	const t0 = 1796104800.0
	a := newAssembler(time.Second, 2*time.Second, 5)
	a.stale = 5 * time.Second
	now := time.Unix(1796104800, 0) // a replay at full speed: the wall clock barely moves
	seq := uint64(0)
	var closed []*window
	for b := 0; b < 100; b++ {
		start := t0 + 0.1*float64(b)
		if b >= 30 {
			start += 90 // 90 s without data after 3 s
		}
		for s := 0; s < 5; s++ {
			seq++
			res, _ := a.add(s, seq, mkBatch(start, 100, 10, 0), now)
			if want := added; b == 30 && s == 0 {
				if res != heldBack {
					t.Fatalf("first batch after the gap: %v, want heldBack", res)
				}
			} else if res != want {
				t.Fatalf("batch %d sensor %d: %v", b, s, res)
			}
			if rej := a.takeRejected(); len(rej) != 0 {
				t.Fatalf("batch %d sensor %d: %d batches given up", b, s, len(rej))
			}
			closed = append(closed, a.ready(now, 0)...)
		}
	}
	closed = append(closed, a.ready(now.Add(10*time.Second), 5*time.Second)...)
	var total int
	for _, w := range closed {
		for s := range 5 {
			total += w.Sensors[s].len()
		}
	}
	if total != 100*5*10 {
		t.Fatalf("%d samples in closed windows, want %d", total, 100*5*10)
	}
}

// A 500 Hz sensor sending one or two samples per message: a 1 s window
// holds 500 samples. Its sample interval is measured from times near
// 1.8e9 s, where a float64 step is 2^-22 s = 2.4e-7 s (IEEE 754 binary64,
// 52-bit fraction, exponent 30), so one interval reads 0.002 s within
// 1.2e-4 relative and L/dt is 500 within 0.06, not the floor 499.
func TestExpectedFromSmallBatches(t *testing.T) {
	if ulp := math.Nextafter(1796104800, 2e9) - 1796104800; ulp != math.Ldexp(1, -22) {
		t.Fatalf("ulp at 1.8e9 s is %g", ulp)
	}
	for _, per := range []int{1, 2} {
		a := newAssembler(time.Second, 2*time.Second, 1)
		now := time.Unix(0, 0)
		for i := 0; i < 600; i += per {
			b := &broker.Batch{}
			for j := i; j < i+per; j++ {
				b.Time = append(b.Time, 1796104800+float64(j)/500)
				b.Bx, b.By, b.Bz = append(b.Bx, 0), append(b.By, 0), append(b.Bz, float64(j))
			}
			a.add(0, uint64(i+1), b, now)
			if i < 2 {
				continue
			}
			if got := a.expected()[0]; got != 500 {
				t.Fatalf("%d sample(s) per batch, after %d samples: %d expected per window, want 500 (dt %v)", per, i+per, got, a.dt[0])
			}
		}
	}
}
