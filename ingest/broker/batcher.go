package broker

import (
	"container/heap"
	"fmt"
	"math"
	"strings"
)

// Batcher cuts a log's rows, given one at a time, into per-sensor batches
// of at most a set duration, and gives them back in the order the data
// would have arrived (by last sample time, ties in the order the batches
// began), as SplitSamples does for a whole log; but it holds only the
// batches that a later row could still precede, so that a long log is
// sent in bounded memory.
//
// Lag bounds how far back in time a later row may go behind the latest
// time given so far (0 for a log in time order; +Inf when nothing is
// known, when every batch is held until Flush). Each sensor's rows must
// come in time order whatever the lag. A row that breaks the lag is an
// error: the order promised could no longer be kept.
type Batcher struct {
	source, asset string
	dur, lag      float64
	temp          bool
	open          map[string]*openBatch
	ready         batchHeap
	seq           int
	maxT          float64
	oldest        float64 // the earliest first time of the open batches (or earlier)
	done          bool
	max           int // most batches held at once
	// byRow: rows come out of the log's row order (a merge of several
	// reads of it), so a batch's place among ties is its first row's.
	byRow bool
}

type openBatch struct {
	b   *Batch
	seq int
	row int // the row of the last sample, for errors
}

// NewBatcher returns a Batcher for asset's batches of dur seconds; source
// names the log in errors and temp says whether rows carry a temperature.
func NewBatcher(source, asset string, dur, lag float64, temp bool) (*Batcher, error) {
	if err := ValidToken(asset); err != nil {
		return nil, err
	}
	if !(dur > 0) {
		return nil, fmt.Errorf("broker: batch duration %v s is not positive", dur)
	}
	if math.IsNaN(lag) || lag < 0 {
		return nil, fmt.Errorf("broker: lag %v s: want 0 or more", lag)
	}
	return &Batcher{source: source, asset: asset, dur: dur, lag: lag, temp: temp, open: map[string]*openBatch{}, maxT: math.Inf(-1), oldest: math.Inf(1)}, nil
}

// ByRow says that rows will come out of the log's row order, merged by
// time from several reads of the log (one per sensor): a tie on the last
// sample time then goes to the batch whose first row comes first in the
// log, as it does for rows given in row order, and a batch is given by
// Next only once a later time has been given (a batch begun later may
// then still precede it). Call it before the first Add.
func (z *Batcher) ByRow() { z.byRow = true }

// Add gives the row (0-based, counted in the log's data rows for errors)
// of sensor at time t. A row with a missing (NaN) time or field is
// skipped. After Add, Next gives the batches that are ready.
func (z *Batcher) Add(row int, sensor string, t, bx, by, bz, temp float64) error {
	if z.done {
		return fmt.Errorf("broker: Batcher.Add after Flush")
	}
	if math.IsNaN(t) || math.IsNaN(bx) || math.IsNaN(by) || math.IsNaN(bz) {
		return nil
	}
	if t < z.maxT-z.lag {
		return fmt.Errorf("%s: row %d of the log: column time: %s is more than %g s before the latest time before it, %s: the rows' order changed between two reads of the log", z.source, row+1, timeText(t), z.lag, timeText(z.maxT))
	}
	o := z.open[sensor]
	if o != nil {
		prev := o.b.Time[len(o.b.Time)-1]
		switch {
		case t == prev:
			return fmt.Errorf("%s: row %d of the log: column time: sensor %q reads twice at %s (row %d of the log has the same time): a sensor cannot read twice at one instant", z.source, row+1, sensor, timeText(t), o.row+1)
		case t < prev:
			return fmt.Errorf("%s: row %d of the log: column time: time goes backwards for sensor %q: %s after %s (row %d of the log); if the rows may come in any order, allow it (on the command line --time-order any) and they are sent sorted by time", z.source, row+1, sensor, timeText(t), timeText(prev), o.row+1)
		}
		if t-o.b.Time[0] >= z.dur {
			z.close(sensor, o)
			o = nil
		}
	}
	if o == nil {
		if err := ValidToken(sensor); err != nil {
			return fmt.Errorf("%s: row %d of the log: column group: %s", z.source, row+1, strings.TrimPrefix(err.Error(), "broker: "))
		}
		o = &openBatch{b: &Batch{Asset: z.asset, Sensor: sensor}, seq: z.seq}
		z.seq++
		if z.byRow {
			o.seq = row
		}
		if z.temp {
			o.b.Temp = []float64{}
		}
		z.open[sensor] = o
		z.oldest = math.Min(z.oldest, t)
	}
	o.row = row
	b := o.b
	b.Time = append(b.Time, t)
	b.Bx, b.By, b.Bz = append(b.Bx, bx), append(b.By, by), append(b.Bz, bz)
	if b.Temp != nil {
		b.Temp = append(b.Temp, temp)
	}
	z.maxT = math.Max(z.maxT, t)
	// A sensor's open batch that no later row can join (every later row
	// comes at maxT-lag or after, a batch's duration past its first
	// time) is complete.
	if low := z.maxT - z.lag; low-z.oldest >= z.dur {
		z.oldest = math.Inf(1)
		for name, o := range z.open {
			if low-o.b.Time[0] >= z.dur {
				z.close(name, o)
			} else {
				z.oldest = math.Min(z.oldest, o.b.Time[0])
			}
		}
	}
	z.max = max(z.max, z.Held())
	return nil
}

func (z *Batcher) close(name string, o *openBatch) {
	delete(z.open, name)
	heap.Push(&z.ready, readyBatch{b: o.b, seq: o.seq})
}

// Flush completes the open batches: the log has no more rows.
func (z *Batcher) Flush() {
	for name, o := range z.open {
		z.close(name, o)
	}
	z.done = true
}

// Next returns the next batch to send, or nil while none is ready (every
// batch after Flush).
func (z *Batcher) Next() *Batch {
	if len(z.ready) == 0 {
		return nil
	}
	top := z.ready[0]
	if !z.done {
		// A batch begun later ends at maxT-lag or after (and sorts after
		// top on a tie); an open batch ends at its last time so far or
		// after.
		last := top.b.Time[len(top.b.Time)-1]
		if last > z.maxT-z.lag || (z.byRow && last == z.maxT-z.lag) {
			return nil
		}
		for _, o := range z.open {
			ol := o.b.Time[len(o.b.Time)-1]
			if ol < last || (ol == last && o.seq < top.seq) {
				return nil
			}
		}
	}
	heap.Pop(&z.ready)
	return top.b
}

// Held is the number of batches held: open, or complete and not yet
// returned by Next.
func (z *Batcher) Held() int { return len(z.open) + len(z.ready) }

// MaxHeld is the most batches held at once so far.
func (z *Batcher) MaxHeld() int { return z.max }

type readyBatch struct {
	b   *Batch
	seq int
}

type batchHeap []readyBatch

func (h batchHeap) Len() int { return len(h) }
func (h batchHeap) Less(i, j int) bool {
	a, b := h[i].b.Time[len(h[i].b.Time)-1], h[j].b.Time[len(h[j].b.Time)-1]
	return a < b || (a == b && h[i].seq < h[j].seq)
}
func (h batchHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *batchHeap) Push(x any)   { *h = append(*h, x.(readyBatch)) }
func (h *batchHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	old[len(old)-1] = readyBatch{}
	*h = old[:len(old)-1]
	return x
}
