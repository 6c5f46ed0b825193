package broker

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest"
)

// SplitOption changes how SplitSamples treats a log.
type SplitOption func(*splitConfig)

type splitConfig struct {
	sortTimes bool
}

// WithSortedTimes(true) sorts each sensor's rows by time before they are
// cut into batches, for a log whose rows may come in any order (read with
// ingest.TimeAnyOrder). By default a row whose time does not follow the
// previous row of its sensor is an error. A row that repeats a time of its
// sensor is an error either way: a sensor cannot read twice at one instant,
// and the live pipeline takes each sensor's times as strictly increasing.
func WithSortedTimes(ok bool) SplitOption {
	return func(c *splitConfig) { c.sortTimes = ok }
}

// SplitSamples cuts a log into per-sensor batches of at most dur seconds
// each, in time order. The sensor of each row is its group when the log
// has a group column, or sensor otherwise (sensor, when given, also
// selects one group of a grouped log). Rows with a missing value are
// skipped; times must increase within each sensor (see WithSortedTimes).
// Fields are taken as the sensor's own readings (the site file holds
// positions and orientation).
//
// Errors about the log start with its name (s.Source) and locate the row
// as "row N of the log", counting the log's data rows from 1; times are
// printed in full, with the UTC date and time when they are absolute.
func SplitSamples(s *ingest.Samples, asset, sensor string, dur float64, opts ...SplitOption) ([]*Batch, error) {
	var cfg splitConfig
	for _, o := range opts {
		o(&cfg)
	}
	if err := ValidToken(asset); err != nil {
		return nil, err
	}
	if !(dur > 0) {
		return nil, fmt.Errorf("broker: batch duration %v s is not positive", dur)
	}
	if s.Group == nil && sensor == "" {
		return nil, fmt.Errorf("%s: the log has no group column, so name the sensor", s.Source)
	}
	sensorOf := func(i int) string {
		if s.Group != nil {
			return s.Group[i]
		}
		return sensor
	}
	rows := make([]int, 0, s.Len())
	for i := 0; i < s.Len(); i++ {
		if s.Group != nil && sensor != "" && s.Group[i] != sensor {
			continue
		}
		if math.IsNaN(s.Time[i]) || math.IsNaN(s.Bx[i]) || math.IsNaN(s.By[i]) || math.IsNaN(s.Bz[i]) {
			continue
		}
		rows = append(rows, i)
	}
	if cfg.sortTimes {
		// A stable sort of all rows by time sorts each sensor's rows and
		// keeps the sensors interleaved as they were logged.
		sort.SliceStable(rows, func(a, b int) bool { return s.Time[rows[a]] < s.Time[rows[b]] })
	}
	open := map[string]*Batch{}
	lastRow := map[string]int{}
	var out []*Batch
	for _, i := range rows {
		name := sensorOf(i)
		t, bx, by, bz := s.Time[i], s.Bx[i], s.By[i], s.Bz[i]
		b := open[name]
		if b != nil {
			prev := b.Time[len(b.Time)-1]
			switch {
			case t == prev:
				return nil, fmt.Errorf("%s: row %d of the log: column time: sensor %q reads twice at %s (row %d of the log has the same time): a sensor cannot read twice at one instant", s.Source, i+1, name, timeText(t), lastRow[name]+1)
			case t < prev:
				return nil, fmt.Errorf("%s: row %d of the log: column time: time goes backwards for sensor %q: %s after %s (row %d of the log); if the rows may come in any order, allow it (on the command line --time-order any) and they are sent sorted by time", s.Source, i+1, name, timeText(t), timeText(prev), lastRow[name]+1)
			}
		}
		lastRow[name] = i
		if b == nil || t-b.Time[0] >= dur {
			if err := ValidToken(name); err != nil {
				return nil, fmt.Errorf("%s: row %d of the log: column group: %s", s.Source, i+1, strings.TrimPrefix(err.Error(), "broker: "))
			}
			b = &Batch{Asset: asset, Sensor: name}
			if s.Temp != nil {
				b.Temp = []float64{}
			}
			open[name] = b
			out = append(out, b)
		}
		b.Time = append(b.Time, t)
		b.Bx, b.By, b.Bz = append(b.Bx, bx), append(b.By, by), append(b.Bz, bz)
		if b.Temp != nil {
			b.Temp = append(b.Temp, s.Temp[i])
		}
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no complete rows to replay", s.Source)
	}
	// Send in the order the data would have arrived: by last sample time.
	sort.SliceStable(out, func(i, j int) bool { return out[i].Time[len(out[i].Time)-1] < out[j].Time[len(out[j].Time)-1] })
	return out, nil
}

// timeText prints a time in seconds in full (the shortest text that reads
// back to the same float64), followed by its UTC date and time when it
// is an absolute Unix time (1e8 s to 1e11 s: 1973 to 5138).
func timeText(t float64) string {
	s := strconv.FormatFloat(t, 'f', -1, 64)
	if math.Abs(t) >= 1e8 && math.Abs(t) < 1e11 {
		// A float64 near 2e9 s resolves 0.24 us: the date is shown to
		// the microsecond, past which its digits are rounding noise.
		s += " (" + time.UnixMicro(int64(math.Round(t*1e6))).UTC().Format("2006-01-02T15:04:05.999999Z") + ")"
	}
	return s
}

// ReplaySettings tune Replay; the zero value sends as fast as the broker
// acknowledges, as JSON.
type ReplaySettings struct {
	// Speed is the replay rate relative to real time (1 = as recorded, 10 =
	// ten times faster); 0 sends without pausing.
	Speed float64
	// Encoding is ContentJSON (default) or ContentArrow.
	Encoding string
	// Shift is added to every time before sending (s), e.g. to make an old
	// log look live.
	Shift float64
	// Progress, when set, is called after each acknowledged batch.
	Progress func(done, total int)
	// Notify, when set, is told once when the broker stops answering a
	// batch's publish (it is tried again for up to 30 s).
	Notify func(msg string)
	// MaxAhead, when positive, holds back a batch whose last time (after
	// Shift) is more than MaxAhead ahead of the wall clock until it is
	// not: a pipeline refuses batches too far ahead of its clock (a
	// gateway sending milliseconds), and a log shifted to now and replayed
	// faster than real time would otherwise run past that limit.
	MaxAhead time.Duration
	// Resume skips, per sensor, the batches whose times (after Shift) do
	// not go past the last sample the data stream holds for the sensor: a
	// replay cut short sends the rest, also after the broker's two-minute
	// duplicate window, without storing again what was stored (the
	// pipeline would refuse those as late, into its dead letters).
	Resume bool
	// Mark sets HeaderReplay on every message, so that the pipeline does
	// not take the replay's pace for a live sensor's (undercurrent replay
	// sets it; a test standing in for a live gateway leaves it off).
	Mark bool
}

// ReplayStats summarises a replay.
type ReplayStats struct {
	Batches, Samples int
	// Duplicates counts batches the broker already held (a replay resumed
	// after an interruption stores nothing twice).
	Duplicates int
	// HeldBack counts batches held back by MaxAhead.
	HeldBack int
	// Resumed counts batches not sent because the data stream already
	// held their times (Resume).
	Resumed  int
	Sensors  []string
	From, To float64 // first and last sample time sent, s
}

// StoppedError is Replay's error when its context ends (Ctrl-C): it
// unwraps to the context's error and says what was stored before, so
// that the rest can be sent with Resume.
type StoppedError struct {
	Err    error  // the context's error
	Stored string // what was stored (ReplayStats.StoredText)
}

func (e *StoppedError) Error() string { return e.Err.Error() + ": " + e.Stored }
func (e *StoppedError) Unwrap() error { return e.Err }

// StoredText says how many of the total batches to send the broker
// acknowledged as stored, and up to which time: "N of M batches were
// stored, up to time T", or "no batch was stored".
func (st *ReplayStats) StoredText(total int) string {
	if st.Batches == 0 {
		return "no batch was stored"
	}
	return fmt.Sprintf("%d of %d batches were stored, up to time %s", st.Batches, total, timeText(st.To))
}

// Replay publishes batches through JetStream as live sensor messages,
// paced by set.Speed, waiting for each acknowledgement. When ctx ends it
// stops and returns a *StoppedError.
func Replay(ctx context.Context, js jetstream.JetStream, batches []*Batch, set *ReplaySettings) (st *ReplayStats, err error) {
	var rs ReplaySettings
	if set != nil {
		rs = *set
	}
	st = &ReplayStats{From: math.Inf(1), To: math.Inf(-1)}
	if len(batches) == 0 {
		return st, nil
	}
	total := len(batches)
	defer func() {
		if cerr := ctx.Err(); err != nil && cerr != nil {
			err = &StoppedError{Err: cerr, Stored: st.StoredText(total)}
		}
	}()
	var held map[string]float64
	if rs.Resume {
		var err error
		if held, err = storedUpTo(ctx, js, batches); err != nil {
			return st, err
		}
		var rest []*Batch
		for _, b := range batches {
			if h, ok := held[b.Sensor]; ok && b.Time[len(b.Time)-1]+rs.Shift <= h {
				st.Resumed++
				continue
			}
			rest = append(rest, b)
		}
		batches = rest
		total = len(batches)
		if len(batches) == 0 {
			return st, nil
		}
	}
	seen := map[string]bool{}
	toldHold := false
	wall0 := time.Now()
	data0 := batches[0].Time[len(batches[0].Time)-1]
	for i, b := range batches {
		last := b.Time[len(b.Time)-1]
		if rs.Speed > 0 {
			due := wall0.Add(secondsDuration((last - data0) / rs.Speed))
			if d := time.Until(due); d > 0 {
				select {
				case <-ctx.Done():
					return st, ctx.Err()
				case <-time.After(d):
				}
			}
		}
		if rs.MaxAhead > 0 {
			now := time.Now()
			ahead := last + rs.Shift - float64(now.UnixNano())/1e9
			if d := secondsDuration(ahead - rs.MaxAhead.Seconds()); d > 0 {
				st.HeldBack++
				if !toldHold && d >= holdNoticeAfter && rs.Notify != nil {
					// Said once: a log shifted ahead of the clock
					// would otherwise wait without a word.
					rs.Notify(holdNotice(now, ahead-rs.MaxAhead.Seconds(), i, len(batches)))
					toldHold = true
				}
				select {
				case <-ctx.Done():
					return st, ctx.Err()
				case <-time.After(d):
				}
			}
		}
		send := b
		if rs.Shift != 0 {
			c := *b
			c.Time = make([]float64, len(b.Time))
			for j, t := range b.Time {
				c.Time[j] = t + rs.Shift
			}
			send = &c
		}
		told := false
		ack, err := publishBatch(ctx, js, send, rs.Encoding, rs.Mark, func(err error) {
			if !told && rs.Notify != nil {
				rs.Notify(fmt.Sprintf("no acknowledgement from the broker for batch %d of %d (%v); trying again for up to %v", i+1, len(batches), err, publishRetryFor))
				told = true
			}
		})
		if err != nil {
			if ctx.Err() == nil && publishRetryable(err) {
				err = fmt.Errorf("%w: the broker stopped answering (no acknowledgement in %v); %s; to send the rest once the broker is back, run the same replay again with --resume, which skips each sensor's batches up to the last sample the broker holds for it (without --resume, batches stored already are not stored twice only within the broker's two-minute duplicate window; later they are stored again and the pipeline refuses them as late, into its dead letters)", err, publishRetryFor, st.StoredText(len(batches)))
			}
			return st, err
		}
		st.Batches++
		st.Samples += b.Len()
		if ack.Duplicate {
			st.Duplicates++
		}
		if !seen[b.Sensor] {
			seen[b.Sensor] = true
			st.Sensors = append(st.Sensors, b.Sensor)
		}
		st.From = math.Min(st.From, send.Time[0])
		st.To = math.Max(st.To, send.Time[len(send.Time)-1])
		if rs.Progress != nil {
			rs.Progress(i+1, len(batches))
		}
	}
	sort.Strings(st.Sensors)
	return st, nil
}

// holdNoticeAfter is the shortest hold (MaxAhead) that Replay says it
// makes: a log shifted to now and replayed faster than real time is
// held a fraction of a second per batch, which the stats count.
const holdNoticeAfter = time.Second

// holdNotice says that batch i of n is held for hold seconds from now,
// until the pipeline's clock limit (MaxAhead) lets it through: "holding
// until 15:04:05 UTC (2.0 h): ...", with the date when it is not today's.
func holdNotice(now time.Time, hold float64, i, n int) string {
	now = now.UTC()
	sec, frac := math.Modf(float64(now.UnixNano())/1e9 + hold)
	until := time.Unix(int64(sec), int64(frac*1e9)).UTC()
	at := until.Format("15:04:05 UTC")
	if until.YearDay() != now.YearDay() || until.Year() != now.Year() {
		at = until.Format("2006-01-02 15:04:05 UTC")
	}
	var how string
	switch {
	case hold < 120:
		how = fmt.Sprintf("%.0f s", hold)
	case hold < 2*3600:
		how = fmt.Sprintf("%.0f min", hold/60)
	case hold < 48*3600:
		how = fmt.Sprintf("%.1f h", hold/3600)
	default:
		how = fmt.Sprintf("%.0f days", hold/86400)
	}
	return fmt.Sprintf("holding until %s (%s): the log is ahead of the clock, its batch %d of %d beyond --max-ahead, which the pipeline would refuse; check --shift, or give --now to start the log now", at, how, i+1, n)
}

// secondsDuration is s seconds as a Duration, held within the Duration's
// range (about 292 years) where a plain conversion of a larger float is
// undefined.
func secondsDuration(s float64) time.Duration {
	switch ns := s * float64(time.Second); {
	case math.IsNaN(ns) || ns <= 0:
		return 0
	case ns >= math.MaxInt64:
		return math.MaxInt64
	default:
		return time.Duration(ns)
	}
}

// storedUpTo returns, per sensor of batches, the last sample time of the
// last batch the data stream holds for it (sensors without one absent).
func storedUpTo(ctx context.Context, js jetstream.JetStream, batches []*Batch) (map[string]float64, error) {
	ds, err := js.Stream(ctx, StreamData)
	if err != nil {
		return nil, fmt.Errorf("broker: replay --resume: data stream: %w", err)
	}
	out := map[string]float64{}
	for _, b := range batches {
		if _, ok := out[b.Sensor]; ok {
			continue
		}
		out[b.Sensor] = math.Inf(-1)
		m, err := ds.GetLastMsgForSubject(ctx, DataSubject(b.Asset, b.Sensor))
		if errors.Is(err, jetstream.ErrMsgNotFound) {
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("broker: replay --resume: last stored batch of sensor %s: %w", b.Sensor, err)
		}
		got, err := Decode(m.Subject, m.Header.Get(HeaderContentType), m.Data)
		if err != nil || got.Len() == 0 {
			return nil, fmt.Errorf("broker: replay --resume: last stored batch of sensor %s not readable: %v", b.Sensor, err)
		}
		out[b.Sensor] = got.Time[got.Len()-1]
	}
	return out, nil
}
