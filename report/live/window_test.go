package live

import (
	"math"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// mkBatch returns n samples from t0 at rate Hz with bz = value.
func mkBatch(t0, rate float64, n int, value float64) *broker.Batch {
	b := &broker.Batch{}
	for i := 0; i < n; i++ {
		b.Time = append(b.Time, t0+float64(i)/rate)
		b.Bx = append(b.Bx, 0)
		b.By = append(b.By, 0)
		b.Bz = append(b.Bz, value+float64(i))
	}
	return b
}

func TestAssemblerCompleteWindows(t *testing.T) {
	// Two sensors at 100 Hz, 1 s windows, 0.25 s batches, Unix-like times
	// (rounding on the boundaries must not split a window).
	const t0 = 1764650000.0
	a := newAssembler(time.Second, 0, 2)
	now := time.Unix(0, 0)
	var closed []*window
	seq := uint64(0)
	for b := 0; b < 12; b++ { // 3 s of data
		for s := 0; s < 2; s++ {
			seq++
			res, dropped := a.add(s, seq, mkBatch(t0+0.25*float64(b), 100, 25, 0), now)
			if res != added || dropped != 0 {
				t.Fatalf("batch %d sensor %d: result %v dropped %d", b, s, res, dropped)
			}
			closed = append(closed, a.ready(now, 0)...)
		}
	}
	if len(closed) != 3 {
		t.Fatalf("%d windows closed, want 3 (the last closes as soon as both sensors have filled it)", len(closed))
	}
	for i, w := range closed {
		if w.Reason != "complete" || w.Start != t0+float64(i) || w.End != t0+float64(i)+1 {
			t.Errorf("window %d: %+v", i, w)
		}
		for s := 0; s < 2; s++ {
			if n := w.Sensors[s].len(); n != 100 {
				t.Errorf("window %d sensor %d has %d samples, want 100", i, s, n)
			}
		}
	}
	if got := a.resumeSeq(); got != seq+1 {
		t.Errorf("resumeSeq %d, want %d with nothing open", got, seq+1)
	}
}

func TestAssemblerGraceAndIdle(t *testing.T) {
	a := newAssembler(time.Second, 1500*time.Millisecond, 2)
	a.stale = 2 * time.Second
	now := time.Unix(1000, 0)
	a.add(0, 1, mkBatch(0, 10, 10, 0), now) // sensor 0: [0, 1)
	a.add(1, 2, mkBatch(0, 10, 5, 0), now)  // sensor 1: [0, 0.5) then silent
	if w := a.ready(now, 0); len(w) != 0 {
		t.Fatalf("closed %d windows while sensor 1 may still send", len(w))
	}
	now = now.Add(3 * time.Second)
	a.add(0, 3, mkBatch(1, 10, 20, 0), now) // sensor 0 reaches 2.9 s: 1.9 s past the end of window 0
	if w := a.ready(now.Add(-1500*time.Millisecond), 0); len(w) != 0 {
		t.Fatalf("closed %d windows while sensor 1, one of two, was heard from lately", len(w))
	}
	w := a.ready(now, 0) // sensor 1 silent for 3 s of wall time: sensor 0 alone decides
	if len(w) != 1 || w[0].Reason != "grace" || w[0].Sensors[1].len() != 5 {
		t.Fatalf("grace close: %+v", w)
	}
	if a.resumeSeq() != 3 {
		t.Errorf("resumeSeq %d, want 3 (the batch feeding the open window)", a.resumeSeq())
	}
	// No more data: idle closes the rest once the wall clock has moved on.
	if w := a.ready(now.Add(time.Second), 2*time.Second); len(w) != 0 {
		t.Fatalf("idle closed early: %d", len(w))
	}
	w = a.ready(now.Add(3*time.Second), 2*time.Second)
	if len(w) != 2 || w[0].Reason != "idle" || w[0].Sensors[1].len() != 0 || w[1].Sensors[0].len() != 10 {
		t.Fatalf("idle close: %d windows", len(w))
	}
}

func TestAssemblerOutOfOrderAndLate(t *testing.T) {
	a := newAssembler(time.Second, 0, 1)
	now := time.Unix(0, 0)
	a.add(0, 1, mkBatch(10, 10, 10, 0), now)
	if res, _ := a.add(0, 2, mkBatch(10.5, 10, 3, 0), now); res != outOfOrder {
		t.Fatalf("overlapping batch: %v, want outOfOrder", res)
	}
	a.add(0, 3, mkBatch(11, 10, 10, 0), now)
	if w := a.ready(now, 0); len(w) != 2 {
		t.Fatalf("closed %d, want 2", len(w))
	}
	// A successor restoring done = 12 drops earlier samples.
	b := newAssembler(time.Second, 0, 1)
	b.done = 12
	if res, dropped := b.add(0, 1, mkBatch(11, 10, 10, 0), now); res != late || dropped != 10 {
		t.Fatalf("replayed batch: %v dropped %d, want late 10", res, dropped)
	}
	if res, dropped := b.add(0, 2, mkBatch(11.95, 10, 5, 0), now); res != added || dropped != 1 {
		t.Fatalf("straddling batch: %v dropped %d, want added with 1 dropped", res, dropped)
	}
}

func TestOrientation(t *testing.T) {
	cases := []struct {
		name string
		ypr  [3]float64
		in   [3]float64
		want [3]float64
	}{
		{"identity", [3]float64{}, [3]float64{1, 2, 3}, [3]float64{1, 2, 3}},
		{"yaw 90: sensor x points north", [3]float64{90, 0, 0}, [3]float64{1, 0, 0}, [3]float64{0, 1, 0}},
		{"pitch 90: sensor x points down", [3]float64{0, 90, 0}, [3]float64{1, 0, 0}, [3]float64{0, 0, -1}},
		{"roll 90: sensor y points up", [3]float64{0, 0, 90}, [3]float64{0, 1, 0}, [3]float64{0, 0, 1}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			R := orientation(tc.ypr)
			for i := range 3 {
				got := R[i][0]*tc.in[0] + R[i][1]*tc.in[1] + R[i][2]*tc.in[2]
				if math.Abs(got-tc.want[i]) > 1e-12 {
					t.Fatalf("component %d = %v, want %v", i, got, tc.want[i])
				}
			}
		})
	}
}

func BenchmarkAssemble100Sensors1kHz(b *testing.B) {
	// One second of 100 sensors at 1 kHz in 0.1 s batches per iteration.
	batches := make([]*broker.Batch, 10)
	for i := range batches {
		batches[i] = mkBatch(float64(i)/10, 1000, 100, 0)
	}
	a := newAssembler(time.Second, 0, 100)
	now := time.Now()
	b.ReportAllocs()
	seq := uint64(0)
	for i := 0; b.Loop(); i++ {
		off := float64(i)
		for _, bt := range batches {
			for s := 0; s < 100; s++ {
				seq++
				c := *bt
				c.Time = make([]float64, len(bt.Time))
				for j, v := range bt.Time {
					c.Time[j] = v + off
				}
				a.add(s, seq, &c, now)
			}
			a.ready(now, 0)
		}
	}
}
