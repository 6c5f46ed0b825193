package broker

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
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
	var temp float64
	z, err := NewBatcher(s.Source, asset, dur, math.Inf(1), s.Temp != nil)
	if err != nil {
		return nil, err
	}
	for _, i := range rows {
		if s.Temp != nil {
			temp = s.Temp[i]
		}
		if err := z.Add(i, sensorOf(i), s.Time[i], s.Bx[i], s.By[i], s.Bz[i], temp); err != nil {
			return nil, err
		}
	}
	z.Flush()
	// Sent in the order the data would have arrived: by last sample time.
	var out []*Batch
	for b := z.Next(); b != nil; b = z.Next() {
		out = append(out, b)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no complete rows to replay", s.Source)
	}
	return out, nil
}

// TimeText is timeText, for the messages of a log's other readers.
func TimeText(t float64) string { return timeText(t) }

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

// SensorKey names one sensor of an asset.
type SensorKey struct{ Asset, Sensor string }

// ReplaySource gives ReplayFrom its batches one at a time, in the order
// to send them (each sensor's in time order), so that a long log is sent
// without holding it whole (see Batcher).
type ReplaySource struct {
	// Total is the number of batches Next gives.
	Total int
	// Sensors names the sensor of every batch, each once (for Resume).
	Sensors []SensorKey
	// Next returns the next batch, or nil after the last.
	Next func() (*Batch, error)
	// Resumed, for Resume, counts the batches of Next whose last time
	// plus shift is at most held[sensor] (the sensors missing from held,
	// none), so that Replay can tell how many it has to send. Nil: read
	// the batches for it (a source that can give them only once needs it).
	Resumed func(held map[string]float64, shift float64) (int, error)
}

// SliceSource is a ReplaySource over batches held in memory, in the order
// given.
func SliceSource(batches []*Batch) *ReplaySource {
	src := &ReplaySource{Total: len(batches)}
	seen := map[SensorKey]bool{}
	for _, b := range batches {
		if k := (SensorKey{b.Asset, b.Sensor}); !seen[k] {
			seen[k] = true
			src.Sensors = append(src.Sensors, k)
		}
	}
	next := 0
	src.Next = func() (*Batch, error) {
		if next == len(batches) {
			return nil, nil
		}
		next++
		return batches[next-1], nil
	}
	src.Resumed = func(held map[string]float64, shift float64) (int, error) {
		n := 0
		for _, b := range batches {
			if h, ok := held[b.Sensor]; ok && b.Time[len(b.Time)-1]+shift <= h {
				n++
			}
		}
		return n, nil
	}
	return src
}

// Replay publishes batches through JetStream as live sensor messages,
// paced by set.Speed, waiting for each acknowledgement. When ctx ends it
// stops and returns a *StoppedError. See ReplayFrom for a log too long to
// hold.
func Replay(ctx context.Context, js jetstream.JetStream, batches []*Batch, set *ReplaySettings) (*ReplayStats, error) {
	return ReplayFrom(ctx, js, SliceSource(batches), set)
}

// ReplayFrom is Replay taking the batches one at a time from src: it holds
// one batch at a time itself.
func ReplayFrom(ctx context.Context, js jetstream.JetStream, src *ReplaySource, set *ReplaySettings) (st *ReplayStats, err error) {
	var rs ReplaySettings
	if set != nil {
		rs = *set
	}
	st = &ReplayStats{From: math.Inf(1), To: math.Inf(-1)}
	total := src.Total
	if total == 0 {
		return st, nil
	}
	defer func() {
		if cerr := ctx.Err(); err != nil && cerr != nil {
			err = &StoppedError{Err: cerr, Stored: st.StoredText(total)}
		}
	}()
	var held map[string]float64
	if rs.Resume {
		var err error
		if held, err = storedUpTo(ctx, js, src.Sensors); err != nil {
			return st, err
		}
		stored := false
		for _, h := range held {
			stored = stored || !math.IsInf(h, -1)
		}
		if stored {
			if src.Resumed == nil {
				return st, errors.New("broker: replay --resume: the source cannot count the batches stored")
			}
			skip, err := src.Resumed(held, rs.Shift)
			if err != nil {
				return st, err
			}
			total -= skip
			if total <= 0 {
				st.Resumed = skip
				return st, nil
			}
		}
	}
	seen := map[string]bool{}
	toldHold := false
	var wall0 time.Time
	var data0 float64
	for i := 0; ; {
		b, err := src.Next()
		if err != nil {
			return st, err
		}
		if b == nil {
			break
		}
		last := b.Time[len(b.Time)-1]
		if h, ok := held[b.Sensor]; ok && last+rs.Shift <= h {
			st.Resumed++
			continue
		}
		if i == 0 {
			wall0, data0 = time.Now(), last
		}
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
					rs.Notify(holdNotice(now, ahead-rs.MaxAhead.Seconds(), i, total))
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
				rs.Notify(fmt.Sprintf("no acknowledgement from the broker for batch %d of %d (%v); trying again for up to %v", i+1, total, err, publishRetryFor))
				told = true
			}
		})
		if err != nil {
			if ctx.Err() == nil && publishRetryable(err) {
				err = fmt.Errorf("%w: the broker stopped answering (no acknowledgement in %v); %s; to send the rest once the broker is back, run the same replay again with --resume, which skips each sensor's batches up to the last sample the broker holds for it (without --resume, batches stored already are not stored twice only within the broker's two-minute duplicate window; later they are stored again and the pipeline refuses them as late, into its dead letters)", err, publishRetryFor, st.StoredText(total))
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
		i++
		if rs.Progress != nil {
			rs.Progress(i, total)
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

// storedUpTo returns, per sensor, the last sample time of the
// last batch the data stream holds for it (sensors without one absent).
func storedUpTo(ctx context.Context, js jetstream.JetStream, sensors []SensorKey) (map[string]float64, error) {
	ds, err := js.Stream(ctx, StreamData)
	if err != nil {
		return nil, fmt.Errorf("broker: replay --resume: data stream: %w", err)
	}
	out := map[string]float64{}
	for _, b := range sensors {
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
