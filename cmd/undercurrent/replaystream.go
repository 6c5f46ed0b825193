package main

import (
	"context"
	"errors"
	"fmt"
	"iter"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow/array"

	"undercurrent/ingest"
	"undercurrent/ingest/broker"
)

// A log is replayed in two reads, so that it is sent in bounded memory
// (whatever its length) and still checked whole before anything is sent:
// scanReplay reads it once to check it and count its batches, keeping
// per sensor only the batch being cut and the largest so far; then
// replaySource reads it again, cutting and sending as it goes
// (broker.Batcher), holding the batches of about one batch duration, more
// for a log whose sensors' rows lag each other a little (see scanReplay's
// lag). A log whose sensors' rows lag each other more (each sensor's rows
// after the other's) is read again once per sensor, the reads merged by
// time (perSensor, mergedRows), so that it too is sent in bounded memory.

// replayRow is one row of a log being replayed.
type replayRow struct {
	row                 int // data row, 0-based, without the rows --drop-missing dropped
	sensor              string
	t, bx, by, bz, temp float64
	grouped, hasTemp    bool // the log has a group, a temperature column
}

// replayRead is what one read of the log tells besides its rows.
type replayRead struct {
	warns         []string // the reader's own, and --drop-missing's
	rows, dropped int
	temp          bool // the log has a temperature column
	// back counts the rows (of all sensors, after --drop-missing) whose
	// time is before the row's before.
	back int
}

var errStopRows = errors.New("stop")

// eachReplayRow reads the log in one pass and gives fn each row of the
// sensors replayed (all, or --sensor's group), in the log's order.
func (o *replayOptions) eachReplayRow(ctx context.Context, path string, opts []ingest.Option, fn func(replayRow) error) (replayRead, error) {
	var rd replayRead
	opts = append(opts[:len(opts):len(opts)], ingest.WithContext(ctx))
	r, err := await(ctx, func() (ingest.Reader, error) { return ingest.Open(path, opts...) })
	if err != nil {
		return rd, err
	}
	defer r.Release()
	intern := map[string]string{}
	row := 0
	prevT := math.NaN()
	for {
		if err := ctx.Err(); err != nil {
			return rd, err
		}
		if !r.Next() {
			break
		}
		rec := r.RecordBatch()
		tc, temp := ingest.Float64Column(rec, ingest.ColTime), ingest.Float64Column(rec, ingest.ColTemp)
		bx, by, bz := ingest.Float64Column(rec, ingest.ColBx), ingest.Float64Column(rec, ingest.ColBy), ingest.Float64Column(rec, ingest.ColBz)
		x, y, z := ingest.Float64Column(rec, ingest.ColX), ingest.Float64Column(rec, ingest.ColY), ingest.Float64Column(rec, ingest.ColZ)
		var group *array.String
		hasGroup := false
		if gi := rec.Schema().FieldIndices(ingest.ColGroup); len(gi) > 0 {
			hasGroup = true
			group, _ = rec.Column(gi[0]).(*array.String)
		}
		rd.temp = temp != nil
		if !hasGroup && o.sensor == "" {
			return rd, fmt.Errorf("%s: the log has no group column, so name the sensor", path)
		}
		if bx == nil || by == nil || bz == nil {
			return rd, fmt.Errorf("%s: the log has no field columns", path)
		}
		n := int(rec.NumRows())
		for j := range n {
			rd.rows++
			t := math.NaN()
			if tc != nil {
				t = tc[j]
			}
			if o.read.dropMissing {
				miss := math.IsNaN(t) || math.IsNaN(bx[j]) || math.IsNaN(by[j]) || math.IsNaN(bz[j])
				if x != nil && y != nil && z != nil {
					miss = miss || math.IsNaN(x[j]) || math.IsNaN(y[j]) || math.IsNaN(z[j])
				}
				if miss {
					rd.dropped++
					continue
				}
			}
			i := row
			row++
			if t < prevT {
				rd.back++
			}
			prevT = t
			name := o.sensor
			if hasGroup {
				g := ""
				if group != nil && !group.IsNull(j) {
					g = group.Value(j)
				}
				if o.sensor != "" && g != o.sensor {
					continue
				}
				var ok bool
				if name, ok = intern[g]; !ok {
					// Arrow strings alias the batch's buffer.
					name = strings.Clone(g)
					intern[name] = name
				}
			}
			tv := math.NaN()
			if temp != nil {
				tv = temp[j]
			}
			if err := fn(replayRow{row: i, sensor: name, t: t, bx: bx[j], by: by[j], bz: bz[j], temp: tv, grouped: hasGroup, hasTemp: temp != nil}); err != nil {
				return rd, err
			}
		}
	}
	if err := r.Err(); err != nil {
		var fe *ingest.Error
		if errors.As(err, &fe) && fe.File == "" {
			fe.File = path
		}
		return rd, err
	}
	for _, w := range ingest.Warnings(r) {
		rd.warns = append(rd.warns, cliWording(w))
	}
	if rd.rows == 0 {
		return rd, fmt.Errorf("%s: no data rows", path)
	}
	if rd.dropped > 0 {
		if rd.dropped == rd.rows {
			return rd, fmt.Errorf("%s: every row has a missing value: no readings left", path)
		}
		rd.warns = append(rd.warns, fmt.Sprintf("%s: dropped %d of %d rows with a missing value (--drop-missing)", path, rd.dropped, rd.rows))
	}
	return rd, nil
}

// replayScan is what the first read of a log finds.
type replayScan struct {
	read replayRead
	// total counts the batches; resumed those at or before held (the
	// broker's last sample of their sensor, less the shift).
	total, resumed int
	sensors        []string // in the order of their first rows
	// first is the first time of the first batch to send, last the log's
	// last time.
	first, last float64
	// lag is how far a row's time goes back behind the latest before
	// it: 0 for a log in time order, a sensor's delay for one whose
	// sensors are logged a little apart, about the whole log for one
	// whose sensors' rows follow one another. The second read holds the
	// rows of lag plus a batch duration.
	lag     float64
	sorted  bool                     // read from the log put in time order (--time-order any)
	largest map[string]*broker.Batch // each sensor's largest batch
	// spans holds each sensor's first and last complete rows; complete
	// counts the complete rows, earliest is their earliest time.
	spans    map[string][2]int
	complete int
	earliest float64
	// over counts the readings above broker.MaxFieldNT, in overBatches
	// batches; firstOver words the first.
	over, overBatches int
	firstOver         string
}

// scanReplay reads the log once, checks it as the live pipeline would
// (each sensor's times increasing, one reading per time, sensor names it
// takes) and counts its batches (those the broker holds, per held, in
// resumed; held nil for none).
func (o *replayOptions) scanReplay(ctx context.Context, path string, opts []ingest.Option, held map[string]float64, shift float64) (*replayScan, error) {
	sc := &replayScan{largest: map[string]*broker.Batch{}, spans: map[string][2]int{}, first: math.NaN(), last: math.Inf(-1), earliest: math.Inf(1)}
	sc.sorted = o.runs != nil
	type sensorState struct {
		b       *broker.Batch // being cut; empty between batches
		seq     int
		lastRow int
		over    int
	}
	state := map[string]*sensorState{}
	dur := o.batch.Seconds()
	bestLast, bestSeq, seq := math.Inf(1), 0, 0
	closeBatch := func(name string, s *sensorState) {
		b := s.b
		sc.total++
		l := b.Time[len(b.Time)-1]
		if l < bestLast || (l == bestLast && s.seq < bestSeq) {
			bestLast, bestSeq, sc.first = l, s.seq, b.Time[0]
		}
		if h, ok := held[name]; ok && l+shift <= h {
			sc.resumed++
		}
		if s.over > 0 {
			sc.overBatches++
			s.over = 0
		}
		if c := sc.largest[name]; held == nil && (c == nil || b.Len() > c.Len()) {
			sc.largest[name] = b
			s.b = &broker.Batch{Asset: b.Asset, Sensor: b.Sensor}
			if b.Temp != nil {
				s.b.Temp = []float64{}
			}
			return
		}
		b.Time, b.Bx, b.By, b.Bz = b.Time[:0], b.Bx[:0], b.By[:0], b.Bz[:0]
		if b.Temp != nil {
			b.Temp = b.Temp[:0]
		}
	}
	rd, err := o.logRows(ctx, path, opts, func(r replayRow) error {
		if math.IsNaN(r.t) || math.IsNaN(r.bx) || math.IsNaN(r.by) || math.IsNaN(r.bz) {
			return nil // as the live pipeline, replay skips incomplete rows
		}
		sc.lag = math.Max(sc.lag, sc.last-r.t)
		sc.last = math.Max(sc.last, r.t)
		sc.earliest = math.Min(sc.earliest, r.t)
		sc.complete++
		s := state[r.sensor]
		if s == nil {
			if err := broker.ValidToken(r.sensor); err != nil {
				return fmt.Errorf("%s: row %d of the log: column group: %s", path, r.row+1, strings.TrimPrefix(err.Error(), "broker: "))
			}
			s = &sensorState{b: &broker.Batch{Asset: o.asset, Sensor: r.sensor}}
			if r.hasTemp {
				s.b.Temp = []float64{}
			}
			state[r.sensor] = s
			sc.sensors = append(sc.sensors, r.sensor)
		}
		if b := s.b; b.Len() > 0 {
			prev := b.Time[len(b.Time)-1]
			switch {
			case r.t == prev:
				who := ""
				if r.grouped {
					who = fmt.Sprintf(" of sensor %q", r.sensor)
				}
				return fmt.Errorf("%s: data rows %d and %d%s have the same time, %s: the live pipeline takes one reading per sensor at a time; remove the repeated row", path, min(s.lastRow, r.row)+1, max(s.lastRow, r.row)+1, who, strconv.FormatFloat(r.t, 'f', -1, 64))
			case r.t < prev:
				return fmt.Errorf("%s: row %d of the log: column time: time goes backwards for sensor %q: %s after %s (row %d of the log); if the rows may come in any order, allow it (on the command line --time-order any) and they are sent sorted by time", path, r.row+1, r.sensor, broker.TimeText(r.t), broker.TimeText(prev), s.lastRow+1)
			}
			if r.t-b.Time[0] >= dur {
				closeBatch(r.sensor, s)
			}
		}
		b := s.b
		if b.Len() == 0 {
			s.seq = seq
			seq++
		}
		b.Time = append(b.Time, r.t)
		b.Bx, b.By, b.Bz = append(b.Bx, r.bx), append(b.By, r.by), append(b.Bz, r.bz)
		if b.Temp != nil {
			b.Temp = append(b.Temp, r.temp)
		}
		s.lastRow = r.row
		if sp, ok := sc.spans[r.sensor]; ok {
			sc.spans[r.sensor] = [2]int{sp[0], r.row}
		} else {
			sc.spans[r.sensor] = [2]int{r.row, r.row}
		}
		if m := math.Hypot(math.Hypot(r.bx, r.by), r.bz); m > broker.MaxFieldNT {
			s.over++
			sc.over++
			if sc.firstOver == "" {
				sc.firstOver = fmt.Sprintf("sensor %s at time %s, |B| = %.4g nT", r.sensor, strconv.FormatFloat(r.t, 'f', -1, 64), m)
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	sc.read = rd
	for _, name := range sc.sensors {
		if s := state[name]; s.b.Len() > 0 {
			closeBatch(name, s)
		}
	}
	if sc.total == 0 {
		return nil, fmt.Errorf("%s: no complete rows to replay", path)
	}
	return sc, nil
}

// replaySource returns the source that reads the log again and gives its
// batches as they are cut by the Batcher it returns, with a function that
// stops the read. sc is the first read's; opts the read's options.
func (o *replayOptions) replaySource(ctx context.Context, path string, opts []ingest.Option, sc *replayScan) (*broker.ReplaySource, *broker.Batcher, func(), error) {
	lag := sc.lag
	merge := sc.perSensor(path, o.batch.Seconds())
	if merge {
		lag = 0 // the merged rows come in time order
	}
	z, err := broker.NewBatcher(path, o.asset, o.batch.Seconds(), lag, sc.read.temp)
	if err != nil {
		return nil, nil, nil, err
	}
	var next func() (replayRow, bool)
	var stop func()
	var readErr func() error
	if merge {
		z.ByRow()
		next, stop, readErr = o.mergedRows(ctx, path, opts, sc)
	} else {
		var err error
		next, stop = iter.Pull(func(yield func(replayRow) bool) {
			_, err = o.logRows(ctx, path, opts, func(r replayRow) error {
				if !yield(r) {
					return errStopRows
				}
				return nil
			})
		})
		readErr = func() error { return err }
	}
	src := &broker.ReplaySource{Total: sc.total}
	for _, name := range sc.sensors {
		src.Sensors = append(src.Sensors, broker.SensorKey{Asset: o.asset, Sensor: name})
	}
	done := false
	src.Next = func() (*broker.Batch, error) {
		for {
			if b := z.Next(); b != nil {
				return b, nil
			}
			if done {
				return nil, nil
			}
			r, ok := next()
			if !ok {
				if err := readErr(); err != nil {
					return nil, err
				}
				z.Flush()
				done = true
				continue
			}
			if err := z.Add(r.row, r.sensor, r.t, r.bx, r.by, r.bz, r.temp); err != nil {
				return nil, err
			}
		}
	}
	src.Resumed = func(held map[string]float64, shift float64) (int, error) {
		// A third read, only when the broker holds some of the log.
		again, err := o.scanReplay(ctx, path, opts, held, shift)
		if err != nil {
			return 0, err
		}
		return again.resumed, nil
	}
	return src, z, stop, nil
}

// replayMergeRows is about the most rows the second read of a log may
// hold in its sensors' lag (rows a second times the lag plus a batch
// duration) before the log is read instead once per sensor, merged by
// time (mergedRows). A variable for tests.
var replayMergeRows = 1 << 16

// replayMaxReaders is the most sensors read each by its own reader: a log
// of more is read once, holding its lag.
const replayMaxReaders = 64

// perSensor says whether the second read goes one reader per sensor: when
// the rows held in the lag would be more than replayMergeRows (a log whose
// sensors' rows follow one another, not interleaved in time), and the log
// is a regular file, to be read once per sensor.
func (sc *replayScan) perSensor(path string, dur float64) bool {
	if sc.sorted || len(sc.sensors) < 2 || len(sc.sensors) > replayMaxReaders || !(sc.lag > 0) {
		return false
	}
	if st, err := os.Stat(path); err != nil || !st.Mode().IsRegular() {
		return false
	}
	held := float64(sc.complete)
	if span := sc.last - sc.earliest; span > 0 {
		held *= math.Min(1, (sc.lag+dur)/span)
	}
	return held > float64(replayMergeRows)
}

// mergedRows reads the log once per sensor, from the sensor's first
// complete row to its last (those before are read and passed over), and
// gives the complete rows of all sensors merged in time order (ties in row
// order), holding a row a sensor besides each read's record batch. It
// returns the rows' next, a stop for every read and the first read error.
func (o *replayOptions) mergedRows(ctx context.Context, path string, opts []ingest.Option, sc *replayScan) (func() (replayRow, bool), func(), func() error) {
	type reader struct {
		next func() (replayRow, bool)
		stop func()
		head replayRow
		ok   bool
		err  error
	}
	rs := make([]*reader, len(sc.sensors))
	// One CSV parser each: the reads run side by side, and each parser
	// holds its chunks in flight.
	opts = append(opts[:len(opts):len(opts)], ingest.WithWorkers(1))
	for i, name := range sc.sensors {
		span := sc.spans[name]
		rd := &reader{}
		rd.next, rd.stop = iter.Pull(func(yield func(replayRow) bool) {
			_, err := o.eachReplayRow(ctx, path, opts, func(r replayRow) error {
				if r.row > span[1] {
					return errStopRows
				}
				if r.row < span[0] || r.sensor != name || math.IsNaN(r.t) || math.IsNaN(r.bx) || math.IsNaN(r.by) || math.IsNaN(r.bz) {
					return nil
				}
				if !yield(r) {
					return errStopRows
				}
				return nil
			})
			if !errors.Is(err, errStopRows) {
				rd.err = err
			}
		})
		rs[i] = rd
	}
	started := false
	next := func() (replayRow, bool) {
		if !started {
			// The reads start on the first row asked for.
			started = true
			for _, rd := range rs {
				rd.head, rd.ok = rd.next()
			}
		}
		var top *reader
		for _, rd := range rs {
			if rd.err != nil {
				return replayRow{}, false
			}
			if rd.ok && (top == nil || rd.head.t < top.head.t || (rd.head.t == top.head.t && rd.head.row < top.head.row)) {
				top = rd
			}
		}
		if top == nil {
			return replayRow{}, false
		}
		r := top.head
		top.head, top.ok = top.next()
		return r, true
	}
	stop := func() {
		for _, rd := range rs {
			rd.stop()
		}
	}
	readErr := func() error {
		for _, rd := range rs {
			if rd.err != nil {
				return rd.err
			}
		}
		return nil
	}
	return next, stop, readErr
}
