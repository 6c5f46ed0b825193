package broker

import (
	"context"
	"fmt"
	"math"
	"sort"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest"
)

// SplitSamples cuts a log into per-sensor batches of at most dur seconds
// each, in time order. The sensor of each row is its group when the log
// has a group column, or sensor otherwise (sensor, when given, also
// selects one group of a grouped log). Rows with a missing value are
// skipped; times must increase within each sensor. Fields are taken as the
// sensor's own readings (the site file holds positions and orientation).
func SplitSamples(s *ingest.Samples, asset, sensor string, dur float64) ([]*Batch, error) {
	if err := ValidToken(asset); err != nil {
		return nil, err
	}
	if !(dur > 0) {
		return nil, fmt.Errorf("broker: batch duration %v s is not positive", dur)
	}
	if s.Group == nil && sensor == "" {
		return nil, fmt.Errorf("broker: %s: the log has no group column, so name the sensor", s.Source)
	}
	open := map[string]*Batch{}
	var out []*Batch
	for i := 0; i < s.Len(); i++ {
		name := sensor
		if s.Group != nil {
			if sensor != "" && s.Group[i] != sensor {
				continue
			}
			name = s.Group[i]
		}
		t, bx, by, bz := s.Time[i], s.Bx[i], s.By[i], s.Bz[i]
		if math.IsNaN(t) || math.IsNaN(bx) || math.IsNaN(by) || math.IsNaN(bz) {
			continue
		}
		b := open[name]
		if b != nil && !(t > b.Time[len(b.Time)-1]) {
			return nil, fmt.Errorf("broker: %s: row %d: column time: %v does not follow %v for sensor %q", s.Source, i+1, t, b.Time[len(b.Time)-1], name)
		}
		if b == nil || t-b.Time[0] >= dur {
			if err := ValidToken(name); err != nil {
				return nil, fmt.Errorf("broker: %s: row %d: column group: %w", s.Source, i+1, err)
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
		return nil, fmt.Errorf("broker: %s: no complete rows to replay", s.Source)
	}
	// Send in the order the data would have arrived: by last sample time.
	sort.SliceStable(out, func(i, j int) bool { return out[i].Time[len(out[i].Time)-1] < out[j].Time[len(out[j].Time)-1] })
	return out, nil
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
}

// ReplayStats summarises a replay.
type ReplayStats struct {
	Batches, Samples int
	// Duplicates counts batches the broker already held (a replay resumed
	// after an interruption stores nothing twice).
	Duplicates int
	Sensors    []string
	From, To   float64 // first and last sample time sent, s
}

// Replay publishes batches through JetStream as live sensor messages,
// paced by set.Speed, waiting for each acknowledgement.
func Replay(ctx context.Context, js jetstream.JetStream, batches []*Batch, set *ReplaySettings) (*ReplayStats, error) {
	var rs ReplaySettings
	if set != nil {
		rs = *set
	}
	st := &ReplayStats{From: math.Inf(1), To: math.Inf(-1)}
	if len(batches) == 0 {
		return st, nil
	}
	seen := map[string]bool{}
	wall0 := time.Now()
	data0 := batches[0].Time[len(batches[0].Time)-1]
	for i, b := range batches {
		last := b.Time[len(b.Time)-1]
		if rs.Speed > 0 {
			due := wall0.Add(time.Duration((last - data0) / rs.Speed * float64(time.Second)))
			if d := time.Until(due); d > 0 {
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
		ack, err := PublishBatch(ctx, js, send, rs.Encoding)
		if err != nil {
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
