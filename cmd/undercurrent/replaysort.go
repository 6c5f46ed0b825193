package main

import (
	"bufio"
	"container/heap"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"

	"undercurrent/ingest"
)

// A log read with --time-order any is put in time order on disk, not in
// memory: its complete rows are read in runs of replaySortRows, each
// sorted by time (ties in row order) and written to a file of its own in
// a folder of the system's temporary folder, and the runs are merged by
// time, ties in row order, whenever the log is read (a stable sort of the
// whole log, as sortByTime's). The folder is removed when the replay
// ends, also when it is interrupted (the first Ctrl-C or SIGTERM).

// replaySortRows is the rows of one sorted run (19 MB of rows in memory
// at most). A variable for tests.
var replaySortRows = 1 << 18

// sortedRuns is a log put in time order in runs on disk.
type sortedRuns struct {
	dir     string
	files   []string
	sensors []string // by the number written in the runs
	grouped bool
	read    replayRead // the read that made the runs
}

// sortRecord is the bytes of a row in a run: its data row, its sensor's
// number, time, three field components and temperature.
const sortRecord = 8 + 4 + 5*8

// sortLog reads the log once and writes its complete rows (of the sensors
// replayed) in sorted runs. On an error nothing is left on disk.
func (o *replayOptions) sortLog(ctx context.Context, path string, opts []ingest.Option) (_ *sortedRuns, err error) {
	dir, err := os.MkdirTemp("", "undercurrent-replay-")
	if err != nil {
		return nil, err
	}
	sr := &sortedRuns{dir: dir}
	defer func() {
		if err != nil {
			sr.remove()
		}
	}()
	ids := map[string]uint32{}
	var chunk []replayRow
	flush := func() error {
		if len(chunk) == 0 {
			return nil
		}
		slices.SortStableFunc(chunk, func(a, b replayRow) int {
			switch {
			case a.t < b.t:
				return -1
			case a.t > b.t:
				return 1
			}
			return 0
		})
		name := filepath.Join(dir, fmt.Sprintf("run-%d", len(sr.files)))
		f, err := os.Create(name)
		if err != nil {
			return err
		}
		w := bufio.NewWriterSize(f, 1<<18)
		var buf [sortRecord]byte
		for _, r := range chunk {
			binary.LittleEndian.PutUint64(buf[0:], uint64(r.row))
			binary.LittleEndian.PutUint32(buf[8:], ids[r.sensor])
			for k, v := range []float64{r.t, r.bx, r.by, r.bz, r.temp} {
				binary.LittleEndian.PutUint64(buf[12+8*k:], math.Float64bits(v))
			}
			if _, err := w.Write(buf[:]); err != nil {
				f.Close()
				return err
			}
		}
		if err := w.Flush(); err != nil {
			f.Close()
			return err
		}
		if err := f.Close(); err != nil {
			return err
		}
		sr.files = append(sr.files, name)
		chunk = chunk[:0]
		return nil
	}
	rd, err := o.eachReplayRow(ctx, path, opts, func(r replayRow) error {
		if math.IsNaN(r.t) || math.IsNaN(r.bx) || math.IsNaN(r.by) || math.IsNaN(r.bz) {
			return nil // skipped by every later read, as by the live pipeline
		}
		if _, ok := ids[r.sensor]; !ok {
			ids[r.sensor] = uint32(len(sr.sensors))
			sr.sensors = append(sr.sensors, r.sensor)
		}
		sr.grouped = r.grouped
		if chunk == nil {
			chunk = make([]replayRow, 0, replaySortRows)
		}
		chunk = append(chunk, r)
		if len(chunk) == replaySortRows {
			return flush()
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if err := flush(); err != nil {
		return nil, err
	}
	if rd.back > 0 {
		rd.warns = append(rd.warns, fmt.Sprintf("%s: time goes backwards at %s (--time-order any): the rows were put in time order for the live pipeline", path, plural(rd.back, "row")))
	}
	sr.read = rd
	return sr, nil
}

// remove deletes the runs' folder.
func (sr *sortedRuns) remove() {
	if sr != nil && sr.dir != "" {
		os.RemoveAll(sr.dir)
	}
}

// each gives fn the rows of the runs merged in time order, ties in row
// order, holding a row and a read buffer a run.
func (sr *sortedRuns) each(ctx context.Context, fn func(replayRow) error) (replayRead, error) {
	h := &runHeap{}
	defer func() {
		for _, r := range *h {
			r.f.Close()
		}
	}()
	for _, name := range sr.files {
		f, err := os.Open(name)
		if err != nil {
			return sr.read, err
		}
		r := &runReader{f: f, br: bufio.NewReaderSize(f, 1<<16)}
		ok, err := r.next(sr)
		if err != nil {
			f.Close()
			return sr.read, err
		}
		if !ok {
			f.Close()
			continue
		}
		*h = append(*h, r)
	}
	heap.Init(h)
	for n := 0; h.Len() > 0; n++ {
		if n%65536 == 0 {
			if err := ctx.Err(); err != nil {
				return sr.read, err
			}
		}
		r := (*h)[0]
		if err := fn(r.head); err != nil {
			return sr.read, err
		}
		ok, err := r.next(sr)
		if err != nil {
			return sr.read, err
		}
		if ok {
			heap.Fix(h, 0)
		} else {
			heap.Pop(h)
			r.f.Close()
		}
	}
	return sr.read, nil
}

// runReader reads one sorted run.
type runReader struct {
	f    *os.File
	br   *bufio.Reader
	head replayRow
	buf  [sortRecord]byte
}

func (r *runReader) next(sr *sortedRuns) (bool, error) {
	if _, err := io.ReadFull(r.br, r.buf[:]); err != nil {
		if errors.Is(err, io.EOF) {
			return false, nil
		}
		return false, fmt.Errorf("reading the log put in time order (%s): %w", r.f.Name(), err)
	}
	b := r.buf[:]
	var v [5]float64
	for k := range v {
		v[k] = math.Float64frombits(binary.LittleEndian.Uint64(b[12+8*k:]))
	}
	r.head = replayRow{row: int(binary.LittleEndian.Uint64(b[0:])), sensor: sr.sensors[binary.LittleEndian.Uint32(b[8:])],
		t: v[0], bx: v[1], by: v[2], bz: v[3], temp: v[4], grouped: sr.grouped, hasTemp: sr.read.temp}
	return true, nil
}

type runHeap []*runReader

func (h runHeap) Len() int { return len(h) }
func (h runHeap) Less(i, j int) bool {
	a, b := h[i].head, h[j].head
	return a.t < b.t || (a.t == b.t && a.row < b.row)
}
func (h runHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *runHeap) Push(x any)   { *h = append(*h, x.(*runReader)) }
func (h *runHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

// logRows gives fn the rows of the log: from its runs put in time order
// when it has them, else read from the file in its own order.
func (o *replayOptions) logRows(ctx context.Context, path string, opts []ingest.Option, fn func(replayRow) error) (replayRead, error) {
	if o.runs != nil {
		return o.runs.each(ctx, fn)
	}
	return o.eachReplayRow(ctx, path, opts, fn)
}
