package broker

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"undercurrent/ingest"
)

// batcherRow is one row of an invented log.
type batcherRow struct {
	sensor string
	t      float64
}

// addRows adds rows to z in the order given by their indices (all of them
// in turn when order is nil), then flushes it, and returns every batch it
// gave back, in the order it gave them.
func addRows(t *testing.T, z *Batcher, rows []batcherRow, order []int) []*Batch {
	t.Helper()
	if order == nil {
		order = make([]int, len(rows))
		for i := range order {
			order[i] = i
		}
	}
	var out []*Batch
	for _, i := range order {
		r := rows[i]
		if err := z.Add(i, r.sensor, r.t, r.t, 2*r.t, 3*r.t, 0); err != nil {
			t.Fatal(err)
		}
		for b := z.Next(); b != nil; b = z.Next() {
			out = append(out, b)
		}
	}
	z.Flush()
	for b := z.Next(); b != nil; b = z.Next() {
		out = append(out, b)
	}
	return out
}

// feed gives rows to a Batcher of lag and returns the batches in the
// order it gives them back, with the most it held at once.
func feed(t *testing.T, rows []batcherRow, dur, lag float64) ([]*Batch, int) {
	t.Helper()
	z, err := NewBatcher("log.csv", "fenwick-lane", dur, lag, false)
	if err != nil {
		t.Fatal(err)
	}
	out := addRows(t, z, rows, nil)
	if z.Held() != 0 {
		t.Fatalf("%d batches held after the last Next", z.Held())
	}
	return out, z.MaxHeld()
}

// lagOf is how far a row's time goes back behind the latest before it.
func lagOf(rows []batcherRow) float64 {
	lag, top := 0.0, math.Inf(-1)
	for _, r := range rows {
		lag = math.Max(lag, top-r.t)
		top = math.Max(top, r.t)
	}
	return lag
}

// A Batcher given the log's lag gives the batches SplitSamples gives (all
// held to the end), in the same order, for logs whose sensors interleave
// in time order, with a sensor's readings a little late, or one sensor's
// rows after another's; and some sensors at other rates, and falling
// silent for a while.
func TestBatcherOrderAsSplitSamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	sensors := []string{"a", "b", "c", "d"}
	rate := map[string]float64{"a": 0.01, "b": 0.01, "c": 0.037, "d": 0.25}
	layouts := map[string]func() []batcherRow{
		"interleaved": func() []batcherRow {
			var rows []batcherRow
			next := map[string]float64{"a": 0, "b": 0, "c": 0.005, "d": 0.1}
			for {
				s := sensors[0]
				for _, x := range sensors {
					if next[x] < next[s] {
						s = x
					}
				}
				if next[s] > 20 {
					return rows
				}
				if !(s == "c" && next[s] > 5 && next[s] < 9) { // c silent 5-9 s
					rows = append(rows, batcherRow{s, next[s]})
				}
				next[s] += rate[s]
			}
		},
		"packets": func() []batcherRow {
			// Each sensor's half second logged in turn, a little late.
			var rows []batcherRow
			for p := 0.0; p < 20; p += 0.5 {
				for _, s := range sensors {
					for t := p; t < p+0.5-1e-9; t += rate[s] {
						rows = append(rows, batcherRow{s, t + rng.Float64()*1e-3})
					}
				}
			}
			return rows
		},
		"blocks": func() []batcherRow {
			var rows []batcherRow
			for _, s := range sensors {
				for t := 0.0; t < 20; t += rate[s] {
					rows = append(rows, batcherRow{s, t})
				}
			}
			return rows
		},
	}
	for name, make := range layouts {
		rows := make()
		s := &ingest.Samples{Source: "log.csv"}
		for _, r := range rows {
			s.Time = append(s.Time, r.t)
			s.Bx, s.By, s.Bz = append(s.Bx, r.t), append(s.By, 2*r.t), append(s.Bz, 3*r.t)
			s.Group = append(s.Group, r.sensor)
		}
		want, err := SplitSamples(s, "fenwick-lane", "", 0.1)
		if err != nil {
			t.Fatal(err)
		}
		got, _ := feed(t, rows, 0.1, lagOf(rows))
		if len(got) != len(want) {
			t.Fatalf("%s: %d batches, want %d", name, len(got), len(want))
		}
		for i := range want {
			if got[i].Sensor != want[i].Sensor || fmt.Sprint(got[i].Time) != fmt.Sprint(want[i].Time) || fmt.Sprint(got[i].Bz) != fmt.Sprint(want[i].Bz) {
				t.Fatalf("%s: batch %d is %s %v, want %s %v", name, i, got[i].Sensor, got[i].Time, want[i].Sensor, want[i].Time)
			}
		}
	}
}

// A Batcher holds at once only the batches of about one batch duration,
// however long the log: five sensors at 500 Hz in 0.1 s batches, for 20 s
// and for 400 s (a log held whole, as before, has 100 batches a second).
// Rows that come up to a second late cost a second's batches more, for
// any length of log.
func TestBatcherHoldsBoundedBatches(t *testing.T) {
	log := func(seconds float64, late float64) []batcherRow {
		var rows []batcherRow
		for k := 0; float64(k)*0.002 < seconds; k++ {
			for s := range 5 {
				tt := float64(k) * 0.002
				if s == 4 {
					// Sensor e's rows are logged late.
					tt -= late
					if tt < 0 {
						continue
					}
				}
				rows = append(rows, batcherRow{fmt.Sprintf("s%d", s), tt})
			}
		}
		return rows
	}
	for _, late := range []float64{0, 1} {
		var held []int
		for _, seconds := range []float64{20, 400} {
			rows := log(seconds, late)
			out, most := feed(t, rows, 0.1, lagOf(rows))
			n := 0
			for _, b := range out {
				n += b.Len()
			}
			if n != len(rows) || len(out) < int((seconds-late)*10*5*0.95) {
				t.Fatalf("%g s: %d samples in %d batches, want %d in about %d", seconds, n, len(out), len(rows), int((seconds-late)*10*5))
			}
			held = append(held, most)
		}
		// At most two batches a sensor (one open, one complete waiting
		// for another sensor's), and the late rows' second: 10 batches
		// of each of five sensors.
		limit := 2*5 + int(late*10*5) + 5
		if held[0] > limit || held[1] > limit {
			t.Errorf("rows up to %g s late: held at most %d batches for a 20 s log and %d for a 400 s log, want at most %d for any length", late, held[0], held[1], limit)
		}
	}
}

// A Batcher told ByRow, given a log's rows merged by time from one read
// per sensor (ties in row order) rather than in the log's order, gives the
// batches SplitSamples gives for the log as it is, in the same order, and
// holds a few batches a sensor: sensors at other rates whose rows follow
// one another in the log, each sensor's whole run or runs of 2 s in turn.
// Ties on the last time go by the batch's first row in the log: told
// nothing, the Batcher orders them by the merged order.
func TestBatcherByRowMergedAsSplitSamples(t *testing.T) {
	rate := map[string]float64{"a": 0.0625, "b": 0.03125, "c": 0.037, "d": 0.25}
	start := map[string]float64{"a": 0.03125, "b": 0}
	for _, run := range []float64{20, 2} {
		var rows []batcherRow
		for p := 0.0; p < 20; p += run {
			for _, s := range []string{"a", "b", "c", "d"} {
				for k := 0; ; k++ {
					tt := start[s] + float64(k)*rate[s]
					if tt >= p+run {
						break
					}
					if tt >= p {
						rows = append(rows, batcherRow{s, tt})
					}
				}
			}
		}
		s := &ingest.Samples{Source: "log.csv"}
		for _, r := range rows {
			s.Time = append(s.Time, r.t)
			s.Bx, s.By, s.Bz = append(s.Bx, r.t), append(s.By, 2*r.t), append(s.Bz, 3*r.t)
			s.Group = append(s.Group, r.sensor)
		}
		want, err := SplitSamples(s, "fenwick-lane", "", 0.1)
		if err != nil {
			t.Fatal(err)
		}
		order := make([]int, len(rows))
		for i := range order {
			order[i] = i
		}
		sort.SliceStable(order, func(i, j int) bool { return rows[order[i]].t < rows[order[j]].t })
		for _, byRow := range []bool{true, false} {
			z, err := NewBatcher("log.csv", "fenwick-lane", 0.1, 0, false)
			if err != nil {
				t.Fatal(err)
			}
			if byRow {
				z.ByRow()
			}
			got := addRows(t, z, rows, order)
			same := len(got) == len(want)
			for i := 0; same && i < len(want); i++ {
				same = got[i].Sensor == want[i].Sensor && fmt.Sprint(got[i].Time) == fmt.Sprint(want[i].Time)
			}
			if same != byRow {
				t.Errorf("runs of %g s, ByRow %v: the same batches in the same order as SplitSamples: %v", run, byRow, same)
			}
			if byRow && z.MaxHeld() > 2*4+1 {
				t.Errorf("runs of %g s: held %d batches at once, want at most 9", run, z.MaxHeld())
			}
		}
	}
}
