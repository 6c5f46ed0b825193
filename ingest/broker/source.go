package broker

import (
	"context"
	"fmt"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest"
)

// SourceSettings tune Subscribe; the zero value follows new messages only
// and never stops by itself.
type SourceSettings struct {
	// From, when non-zero, starts at the first message stored at or after
	// this time; All starts at the oldest stored message. Otherwise only
	// messages arriving after Subscribe are read.
	From time.Time
	All  bool
	// MaxBatches ends the source after this many record batches (0: no limit).
	MaxBatches int
	// Idle ends the source when no message arrives for this long (0: wait for ever).
	Idle time.Duration
	// Mem allocates the record batches; nil means memory.DefaultAllocator.
	Mem memory.Allocator
}

// Source is a live subscription to one asset's sensor data that streams
// canonical record batches like any ingest.Reader: columns time, bx, by,
// bz (float64, nT in the sensor frame; the schema's frame metadata says
// "sensor") and group (utf8, the sensor name), one record batch per
// message. It ends cleanly when the context ends, after MaxBatches, or
// after Idle without data. Messages that cannot be decoded are skipped
// and counted (see Skipped): a live feed carries on past a bad message.
type Source struct {
	ctx    context.Context
	cancel context.CancelFunc
	set    SourceSettings
	schema *arrow.Schema
	it     jetstream.MessagesContext
	msgs   chan jetstream.Msg
	cur    arrow.RecordBatch
	n      int
	err    error

	skipped int
	lastBad error
}

var _ ingest.Reader = (*Source)(nil)

// Subscribe opens a Source on uc.data.<asset>.> in the UC_DATA stream.
func Subscribe(ctx context.Context, js jetstream.JetStream, asset string, set *SourceSettings) (*Source, error) {
	if err := ValidToken(asset); err != nil {
		return nil, err
	}
	s := &Source{}
	if set != nil {
		s.set = *set
	}
	if s.set.Mem == nil {
		s.set.Mem = memory.DefaultAllocator
	}
	cfg := jetstream.OrderedConsumerConfig{FilterSubjects: []string{DataFilter(asset)}, DeliverPolicy: jetstream.DeliverNewPolicy}
	switch {
	case s.set.All:
		cfg.DeliverPolicy = jetstream.DeliverAllPolicy
	case !s.set.From.IsZero():
		from := s.set.From
		cfg.DeliverPolicy, cfg.OptStartTime = jetstream.DeliverByStartTimePolicy, &from
	}
	cons, err := js.OrderedConsumer(ctx, StreamData, cfg)
	if err != nil {
		return nil, fmt.Errorf("broker: subscribe %s: %w", asset, err)
	}
	it, err := cons.Messages(jetstream.PullMaxMessages(256))
	if err != nil {
		return nil, fmt.Errorf("broker: subscribe %s: %w", asset, err)
	}
	s.ctx, s.cancel = context.WithCancel(ctx)
	s.it = it
	s.msgs = make(chan jetstream.Msg, 16)
	md := arrow.NewMetadata([]string{ingest.MetaFrame, ingest.MetaPrefix + "asset"}, []string{ingest.FrameSensor.String(), asset})
	s.schema = arrow.NewSchema([]arrow.Field{
		{Name: ingest.ColTime, Type: arrow.PrimitiveTypes.Float64},
		{Name: ingest.ColBx, Type: arrow.PrimitiveTypes.Float64},
		{Name: ingest.ColBy, Type: arrow.PrimitiveTypes.Float64},
		{Name: ingest.ColBz, Type: arrow.PrimitiveTypes.Float64},
		{Name: ingest.ColGroup, Type: arrow.BinaryTypes.String},
	}, &md)
	go func() {
		defer close(s.msgs)
		for {
			m, err := it.Next()
			if err != nil {
				return
			}
			select {
			case s.msgs <- m:
			case <-s.ctx.Done():
				return
			}
		}
	}()
	return s, nil
}

// Schema returns the source's schema.
func (s *Source) Schema() *arrow.Schema { return s.schema }

// Next waits for the next decodable message and makes it the current
// record batch. It returns false when the source ends (see Err).
func (s *Source) Next() bool {
	if s.cur != nil {
		s.cur.Release()
		s.cur = nil
	}
	if s.err != nil || (s.set.MaxBatches > 0 && s.n >= s.set.MaxBatches) {
		return false
	}
	var idle <-chan time.Time
	for {
		if s.set.Idle > 0 {
			idle = time.After(s.set.Idle)
		}
		select {
		case <-s.ctx.Done():
			return false
		case <-idle:
			return false
		case m, ok := <-s.msgs:
			if !ok {
				if s.ctx.Err() == nil {
					s.err = fmt.Errorf("broker: subscription ended")
				}
				return false
			}
			b, err := Decode(m.Subject(), m.Headers().Get(HeaderContentType), m.Data())
			if err != nil {
				s.skipped++
				s.lastBad = err
				continue
			}
			s.cur = s.record(b)
			s.n++
			return true
		}
	}
}

func (s *Source) record(b *Batch) arrow.RecordBatch {
	rb := array.NewRecordBuilder(s.set.Mem, s.schema)
	defer rb.Release()
	for i, c := range [][]float64{b.Time, b.Bx, b.By, b.Bz} {
		rb.Field(i).(*array.Float64Builder).AppendValues(c, nil)
	}
	g := rb.Field(4).(*array.StringBuilder)
	for range b.Time {
		g.Append(b.Sensor)
	}
	return rb.NewRecordBatch()
}

// RecordBatch is the current batch, valid until the next call to Next or
// Release; Retain it to keep it longer.
func (s *Source) RecordBatch() arrow.RecordBatch { return s.cur }

// Err is the error that ended the source, or nil for a clean end
// (context ended, MaxBatches reached, Idle elapsed).
func (s *Source) Err() error { return s.err }

// Skipped returns how many messages could not be decoded and the last
// such error.
func (s *Source) Skipped() (int, error) { return s.skipped, s.lastBad }

// Release stops the subscription and frees the current batch.
func (s *Source) Release() {
	if s.cur != nil {
		s.cur.Release()
		s.cur = nil
	}
	s.cancel()
	s.it.Stop()
}
