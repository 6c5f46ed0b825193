package live

import (
	"context"
	"encoding/json"
	"fmt"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// History returns the estimates of asset with from <= Start < to, oldest
// first, at most limit of them, read from the UC_EST stream.
func (s *Service) History(ctx context.Context, asset string, from, to float64, limit int) ([]Estimate, error) {
	out := []Estimate{}
	err := scan(ctx, s.stores.JS, broker.StreamEstimates, broker.EstimateSubject(asset), func(data []byte) bool {
		var e Estimate
		if json.Unmarshal(data, &e) != nil {
			return true
		}
		if e.Start >= from && e.Start < to {
			out = append(out, e)
		}
		return len(out) < limit
	})
	return out, err
}

// Alarms returns stored alarms, optionally of one asset and kind, whose
// window starts in [from, to), at most limit (the newest).
func (s *Service) Alarms(ctx context.Context, asset, kind string, from, to float64, limit int) ([]Alarm, error) {
	filter := broker.AlarmPrefix + ".>"
	if asset != "" {
		filter = broker.AlarmPrefix + "." + asset + ".>"
	}
	out := []Alarm{}
	err := scan(ctx, s.stores.JS, broker.StreamAlarms, filter, func(data []byte) bool {
		var a Alarm
		if json.Unmarshal(data, &a) != nil {
			return true
		}
		if (kind == "" || a.Kind == kind) && a.Start >= from && a.Start < to {
			out = append(out, a)
		}
		return true
	})
	if len(out) > limit {
		out = out[len(out)-limit:]
	}
	return out, err
}

// scan calls f with every message on subject in stream, in order, until f
// returns false or the messages stored when it started are read.
func scan(ctx context.Context, js jetstream.JetStream, stream, subject string, f func([]byte) bool) error {
	st, err := js.Stream(ctx, stream)
	if err != nil {
		return fmt.Errorf("live: %s: %w", stream, err)
	}
	info, err := st.Info(ctx, jetstream.WithSubjectFilter(subject))
	if err != nil {
		return fmt.Errorf("live: %s: %w", stream, err)
	}
	var total uint64
	for _, n := range info.State.Subjects {
		total += n
	}
	if total == 0 {
		return nil
	}
	cons, err := js.OrderedConsumer(ctx, stream, jetstream.OrderedConsumerConfig{FilterSubjects: []string{subject}})
	if err != nil {
		return fmt.Errorf("live: %s: %w", stream, err)
	}
	it, err := cons.Messages(jetstream.PullMaxMessages(256))
	if err != nil {
		return fmt.Errorf("live: %s: %w", stream, err)
	}
	defer it.Stop()
	for {
		type next struct {
			m   jetstream.Msg
			err error
		}
		ch := make(chan next, 1)
		go func() { m, err := it.Next(); ch <- next{m, err} }()
		var n next
		select {
		case n = <-ch:
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(10 * time.Second):
			return fmt.Errorf("live: %s: no message after 10 s", stream)
		}
		m, err := n.m, n.err
		if err != nil {
			return fmt.Errorf("live: %s: %w", stream, err)
		}
		md, err := m.Metadata()
		if err != nil {
			return fmt.Errorf("live: %s: %w", stream, err)
		}
		if !f(m.Data()) || md.NumPending == 0 {
			return nil
		}
	}
}
