package live

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// Query limits of History and Alarms (and of the ?limit= parameter).
const (
	// DefaultQueryLimit is the number of results returned when no limit
	// is given.
	DefaultQueryLimit = 10000
	// MaxQueryLimit is the largest limit accepted; page through longer
	// ranges by asking again from the last start returned.
	MaxQueryLimit = 100000
)

// History returns the estimates of asset with from <= Start < to, oldest
// first, at most limit of them (the first limit of the range), read from
// the UC_EST stream.
//
// It does not read the asset's whole history: the start of the range is
// found by a binary search over stream sequences (each probe is one
// server-side "next message on the subject at or after this sequence"
// lookup, so about log2(stream length) probes), an ordered consumer is
// started at that sequence, and reading stops at the first estimate that
// starts at or after to, or at limit. This relies on the estimates of one
// asset being stored in window order, which the pipeline guarantees (one
// worker per asset, windows published in order, re-publications after a
// takeover dropped by the stream's deduplication).
func (s *Service) History(ctx context.Context, asset string, from, to float64, limit int) ([]Estimate, error) {
	out := []Estimate{}
	limit = clampLimit(limit)
	err := s.readRange(ctx, "history", broker.StreamEstimates, broker.EstimateSubject(asset), from, to, time.Time{}, func(data []byte) bool {
		var e Estimate
		if json.Unmarshal(data, &e) != nil {
			return true
		}
		out = append(out, e)
		return len(out) < limit
	})
	return out, err
}

// Alarms returns stored alarms whose window starts in [from, to) and that
// the broker stored at or after since (the zero time means any), of one
// asset or of every asset in the site file, optionally of one kind.
// They are sorted by window start, oldest first; at most limit are
// returned (the oldest of the range). Each asset's alarms are positioned
// and read as in History (the kind filter is applied by the broker), so
// the cost grows with the answer, not with the stored history.
func (s *Service) Alarms(ctx context.Context, asset, kind string, from, to float64, since time.Time, limit int) ([]Alarm, error) {
	limit = clampLimit(limit)
	var assets []string
	if asset != "" {
		assets = []string{asset}
	} else {
		for _, a := range s.site.Assets {
			assets = append(assets, a.Name)
		}
		sort.Strings(assets)
	}
	out := []Alarm{}
	for _, name := range assets {
		subject := broker.AlarmPrefix + "." + name + ".>"
		if kind != "" {
			subject = broker.AlarmSubject(name, kind)
		}
		n := 0
		err := s.readRange(ctx, "alarms", broker.StreamAlarms, subject, from, to, since, func(data []byte) bool {
			var a Alarm
			if json.Unmarshal(data, &a) != nil {
				return true
			}
			out = append(out, a)
			n++
			return n < limit
		})
		if err != nil {
			return out, err
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Start < out[j].Start })
	if len(out) > limit {
		out = out[:limit]
	}
	return out, nil
}

func clampLimit(limit int) int {
	if limit <= 0 {
		return DefaultQueryLimit
	}
	return min(limit, MaxQueryLimit)
}

// startOf reads the "start" field shared by estimates and alarms.
func startOf(data []byte) (float64, bool) {
	var v struct {
		Start *float64 `json:"start"`
	}
	if json.Unmarshal(data, &v) != nil || v.Start == nil {
		return 0, false
	}
	return *v.Start, true
}

// readRange calls f, in stream order, with each message on subject whose
// start is in [from, to) and that was stored at or after since, until f
// returns false, a message starting at or after to is met, or the
// messages stored when the read began are exhausted. Messages on subject
// must be stored in nondecreasing start order. Every message fetched from
// the broker (positioning probes included) is counted in
// uc_query_messages_read_total{query}.
func (s *Service) readRange(ctx context.Context, query, stream, subject string, from, to float64, since time.Time, f func([]byte) bool) error {
	reads := s.met.queryReads.WithLabelValues(query)
	fail := func(err error) error { return fmt.Errorf("live: %s query on %s: %w", query, stream, err) }
	if !(from < to) {
		return nil
	}
	st, err := s.stores.JS.Stream(ctx, stream)
	if err != nil {
		return fail(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		return fail(err)
	}
	if info.State.Msgs == 0 {
		return nil
	}
	// probe returns the first message on subject at or after sequence q
	// (nil when there is none) and whether it is inside the range start.
	probe := func(q uint64) (*jetstream.RawStreamMsg, bool, error) {
		m, err := st.GetMsg(ctx, q, jetstream.WithGetMsgSubject(subject))
		if errors.Is(err, jetstream.ErrMsgNotFound) {
			return nil, true, nil
		}
		if err != nil {
			return nil, false, fail(err)
		}
		reads.Inc()
		start, ok := startOf(m.Data)
		return m, ok && start >= from && !m.Time.Before(since), nil
	}
	// Smallest q in [first, last+1] whose next message is in range (or
	// absent): the predicate is monotonic in q.
	lo, hi := info.State.FirstSeq, info.State.LastSeq+1
	for lo < hi {
		mid := lo + (hi-lo)/2
		m, in, err := probe(mid)
		if err != nil {
			return err
		}
		switch {
		case in:
			hi = mid
		default:
			lo = m.Sequence + 1
		}
	}
	if lo > info.State.LastSeq {
		return nil
	}
	first, in, err := probe(lo)
	if err != nil {
		return err
	}
	if first == nil || !in {
		return nil
	}
	if start, _ := startOf(first.Data); start >= to {
		return nil
	}
	cons, err := s.stores.JS.OrderedConsumer(ctx, stream, jetstream.OrderedConsumerConfig{
		FilterSubjects: []string{subject},
		DeliverPolicy:  jetstream.DeliverByStartSequencePolicy,
		OptStartSeq:    first.Sequence,
		// The server forgets the consumer soon after the query.
		InactiveThreshold: 10 * time.Second,
	})
	if err != nil {
		return fail(err)
	}
	// Fetch in growing batches, never more than are pending, so that the
	// messages read past the end of the range stay few.
	batch, pending := 1, uint64(1)
	for {
		n := int(min(uint64(batch), pending))
		done, got, err := s.fetchRange(ctx, cons, n, to, info.State.LastSeq, reads, &pending, f)
		if err != nil {
			return fail(err)
		}
		if done {
			return nil
		}
		if got == 0 {
			return fail(fmt.Errorf("no message within 10 s although %d are pending", pending))
		}
		batch = min(2*batch, 256)
	}
}

// fetchRange fetches n messages for readRange and hands them to f; done
// reports that the read is over.
func (s *Service) fetchRange(ctx context.Context, cons jetstream.Consumer, n int, to float64, last uint64, reads interface{ Inc() }, pending *uint64, f func([]byte) bool) (done bool, got int, err error) {
	fctx, cancel := context.WithTimeout(ctx, 10*time.Second)
	defer cancel()
	mb, err := cons.Fetch(n, jetstream.FetchContext(fctx))
	if err != nil {
		return false, 0, err
	}
	for m := range mb.Messages() {
		got++
		reads.Inc()
		md, err := m.Metadata()
		if err != nil {
			return false, got, err
		}
		*pending = md.NumPending
		if start, ok := startOf(m.Data()); ok && start >= to {
			return true, got, nil
		}
		if !f(m.Data()) || md.Sequence.Stream >= last || *pending == 0 {
			return true, got, nil
		}
	}
	if err := mb.Error(); err != nil && !errors.Is(err, jetstream.ErrNoMessages) && !errors.Is(err, context.DeadlineExceeded) {
		return false, got, err
	}
	return false, got, nil
}

// scan calls f with every message on subject in stream, in order, until f
// returns false or the messages stored when it started are read. It reads
// the whole subject; tests use it as the reference for History and Alarms.
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
