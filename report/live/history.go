package live

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"
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

// QueryOption changes what History and Alarms return.
type QueryOption func(*queryOptions)

type queryOptions struct{ all bool }

// AllRevisions makes History and Alarms return every stored revision of
// each window (sorted by window start, then revision, then storage
// order) instead of only the highest one.
func AllRevisions() QueryOption { return func(o *queryOptions) { o.all = true } }

func queryOpts(opts []QueryOption) queryOptions {
	var o queryOptions
	for _, f := range opts {
		f(&o)
	}
	return o
}

// History returns the estimates of asset with from <= Start < to, oldest
// first, at most limit of them (the first limit of the range), read from
// the UC_EST stream. Of a window stored in several read revisions (the
// asset was restarted, see the package doc) only the highest revision is
// returned, unless the AllRevisions option is given.
//
// It does not read the asset's whole history: the start of the range is
// found by a binary search over stream sequences (each probe is one
// server-side "next message on the subject at or after this sequence"
// lookup, so about log2(stream length) probes), the query's consumer
// reads on after that message, and reading stops at the first estimate that
// starts at or after to, or at limit. This relies on the estimates of one
// asset and read revision being stored in window order, which the
// pipeline guarantees (one worker per asset, windows published in order,
// re-publications after a takeover dropped by the stream's
// deduplication), and on read revisions never decreasing along the
// stream. For an asset that has been restarted the stream is one such
// run per revision; each run is found and searched on its own (see
// readRevisions).
func (s *Service) History(ctx context.Context, asset string, from, to float64, limit int, opts ...QueryOption) ([]Estimate, error) {
	o := queryOpts(opts)
	limit = clampLimit(limit)
	runs, err := readRevisions(s, ctx, "history", broker.StreamEstimates, broker.EstimateSubject(asset), asset, from, to, time.Time{}, limit, func(data []byte, rev int) (Estimate, float64, bool) {
		var e Estimate
		if json.Unmarshal(data, &e) != nil {
			return e, 0, false
		}
		if e.Revision == 0 {
			e.Revision = rev
		}
		return e, e.Start, true
	})
	out := pickRevisions(runs, o.all, limit, func(e Estimate) float64 { return e.Start }, func(e Estimate) string {
		return strconv.FormatInt(e.Window, 10)
	})
	return out, err
}

// Alarms returns stored alarms whose window starts in [from, to) and that
// the broker stored at or after since (the zero time means any), of one
// asset or of every asset in the site file, optionally of one kind.
// They are sorted by window start, oldest first; at most limit are
// returned (the oldest of the range). Each asset's alarms are positioned
// and read as in History (the kind filter is applied by the broker), so
// the cost grows with the answer, not with the stored history. Of a
// window processed in several read revisions (the asset was restarted)
// only the alarms of the highest revision that processed it are
// returned, none when it raised none: an alarm that a re-read window no
// longer raises is dropped once the re-read has stored the window's
// estimate, and kept until then. The AllRevisions option returns every
// stored alarm instead. The package doc (Queries) says how a window's
// highest revision is found without scanning the estimates, and what
// that costs.
func (s *Service) Alarms(ctx context.Context, asset, kind string, from, to float64, since time.Time, limit int, opts ...QueryOption) ([]Alarm, error) {
	o := queryOpts(opts)
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
		var got []Alarm
		var err error
		if o.all {
			var runs [][]Alarm
			runs, err = readRevisions(s, ctx, "alarms", broker.StreamAlarms, subject, name, from, to, since, limit, decodeAlarm)
			got = pickRevisions(runs, true, limit, alarmStart, alarmKey)
		} else {
			got, err = s.latestAlarms(ctx, name, subject, from, to, since, limit)
		}
		out = append(out, got...)
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

// revisionRun is the part [lo, hi) of a stream's sequences holding the
// messages of one read revision on a subject.
type revisionRun struct {
	rev    int
	lo, hi uint64
	// first is the start of the run's first message (revisionRuns).
	first float64
}

// readRevisions reads the messages on subject whose start is in
// [from, to) and that were stored at or after since, revision run by
// revision run, decoding each with dec, which is given the run's
// revision for payloads stored without the field (messages it refuses
// are skipped). It returns one slice per run, in increasing revision; within
// a run in stream order, which is start order.
//
// The rule: an asset's read revision (HeaderRevision, 0 when absent)
// never decreases along the stream, and within one revision its messages
// are in start order; a restart that re-reads old windows stores them
// again later in the stream, so start order breaks only where the
// revision grows. The highest revision ever used is that of the asset's
// newest estimate (one lookup; alarms of a revision are published after
// its estimate). When it is 0 (never restarted) the subject is a single
// run over the whole stream and the query is exactly as before. Otherwise
// each non-empty run is found by a binary search on the revision (its
// first message, then the first sequence whose next message has a higher
// revision), and the range is positioned and read within each run as in
// History. So a query costs, per non-empty revision run, about
// 2 log2(stream length) probes plus the messages it returns from that run
// (at most limit each, plus the rest of the last window read, so that a
// window cut by the limit in a newer run is not shown from an older
// one).
func readRevisions[T any](s *Service, ctx context.Context, query, stream, subject, asset string, from, to float64, since time.Time, limit int, dec func(data []byte, rev int) (T, float64, bool)) ([][]T, error) {
	q, top, err := s.openRevisions(ctx, query, stream, subject, asset, from, to)
	if err != nil || q == nil {
		return nil, err
	}
	defer q.close()
	runs := []revisionRun{{rev: 0, lo: q.info.State.FirstSeq, hi: q.info.State.LastSeq + 1}}
	if top > 0 {
		if runs, err = q.revisionRuns(ctx); err != nil {
			return nil, err
		}
	}
	return readRuns(ctx, q, runs, from, to, since, limit, dec)
}

// openRevisions opens a History or Alarms read of subject and looks up
// the asset's highest read revision (see readRevisions); q is nil when
// there is nothing to read.
func (s *Service) openRevisions(ctx context.Context, query, stream, subject, asset string, from, to float64) (q *rangeQuery, top int, err error) {
	if !(from < to) {
		return nil, 0, nil
	}
	if q, err = s.openQuery(ctx, query, stream, subject); err != nil || q == nil {
		return nil, 0, err
	}
	if top, err = q.topRevision(ctx, asset); err != nil {
		return nil, 0, err
	}
	return q, top, nil
}

// readRuns reads each run of readRevisions: at most limit messages of a
// run, plus the rest of its last window when there are several runs.
func readRuns[T any](ctx context.Context, q *rangeQuery, runs []revisionRun, from, to float64, since time.Time, limit int, dec func(data []byte, rev int) (T, float64, bool)) ([][]T, error) {
	var out [][]T
	for _, run := range runs {
		var got []T
		last := 0.0
		err := q.readRun(ctx, run, from, to, since, func(data []byte, _ uint64) bool {
			v, start, ok := dec(data, run.rev)
			if !ok {
				return true
			}
			if len(got) >= limit && start > last {
				return false
			}
			got = append(got, v)
			last = start
			// With one run the first limit are the answer; with several,
			// read the rest of the last window too.
			return len(runs) > 1 || len(got) < limit
		})
		out = append(out, got)
		if err != nil {
			return out, err
		}
	}
	return out, nil
}

// pickRevisions merges the runs of readRevisions into one list sorted by
// start (stable: among equal starts lower revisions, then older messages,
// first), keeping with all every message and otherwise only the last one
// of each key (the highest revision, and within it the newest), and
// returns its first limit. Estimates are keyed by window, so this is
// History's rule; the alarm listing of a restarted asset uses
// latestAlarms, which also drops alarms whose window a higher revision
// processed without raising them.
func pickRevisions[T any](runs [][]T, all bool, limit int, start func(T) float64, key func(T) string) []T {
	out := []T{}
	if all {
		for _, r := range runs {
			out = append(out, r...)
		}
	} else {
		type at struct{ run, i int }
		best := map[string]at{}
		for ri, r := range runs {
			for i, v := range r {
				best[key(v)] = at{ri, i}
			}
		}
		for ri, r := range runs {
			for i, v := range r {
				if best[key(v)] == (at{ri, i}) {
					out = append(out, v)
				}
			}
		}
	}
	if len(runs) > 1 {
		sort.SliceStable(out, func(i, j int) bool { return start(out[i]) < start(out[j]) })
	}
	if len(out) > limit {
		out = out[:limit]
	}
	return out
}

func clampLimit(limit int) int {
	if limit <= 0 {
		return DefaultQueryLimit
	}
	// One more than the HTTP listings accept: they ask for one beyond
	// their limit to tell whether the range holds more (markMore).
	return min(limit, MaxQueryLimit+1)
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

// rangeQuery is one History or Alarms read of a subject of a stream, with
// the stream's state when the read began.
type rangeQuery struct {
	s       *Service
	st      jetstream.Stream
	info    *jetstream.StreamInfo
	stream  string
	subject string
	query   string
	reads   interface{ Inc() }
	c       queryConsumer // see querycons.go
}

func (q *rangeQuery) fail(err error) error {
	return fmt.Errorf("live: %s query on %s: %w", q.query, q.stream, err)
}

// openQuery prepares a read of subject in stream; nil when the stream is
// empty.
func (s *Service) openQuery(ctx context.Context, query, stream, subject string) (*rangeQuery, error) {
	q := &rangeQuery{s: s, stream: stream, subject: subject, query: query, reads: s.met.queryReads.WithLabelValues(query)}
	var st jetstream.Stream
	var info *jetstream.StreamInfo
	err := q.retry(ctx, "stream info", func() (err error) {
		if st, err = s.stores.JS.Stream(ctx, stream); err == nil {
			info, err = st.Info(ctx)
		}
		return err
	})
	if err != nil {
		return nil, q.fail(err)
	}
	if info.State.Msgs == 0 {
		return nil, nil
	}
	q.st, q.info = st, info
	return q, nil
}

// msgRevision is the read revision of a stored message: its
// HeaderRevision, else the payload's "revision", else 0.
func msgRevision(m *jetstream.RawStreamMsg) int {
	if v := m.Header.Get(HeaderRevision); v != "" {
		if n, err := strconv.Atoi(v); err == nil {
			return n
		}
	}
	var p struct {
		Revision int `json:"revision"`
	}
	json.Unmarshal(m.Data, &p)
	return p.Revision
}

// topRevision is the read revision of the asset's newest estimate (0 when
// it has none): the highest revision any of its estimates or alarms
// stored so far carries. It is one message read.
func (q *rangeQuery) topRevision(ctx context.Context, asset string) (int, error) {
	st := q.st
	var m *jetstream.RawStreamMsg
	err := q.retry(ctx, "newest estimate", func() (err error) {
		if q.stream != broker.StreamEstimates {
			if st, err = q.s.stores.JS.Stream(ctx, broker.StreamEstimates); err != nil {
				return err
			}
		}
		m, err = st.GetLastMsgForSubject(ctx, broker.EstimateSubject(asset))
		return err
	})
	if errors.Is(err, jetstream.ErrMsgNotFound) {
		return 0, nil
	}
	if err != nil {
		return 0, q.fail(err)
	}
	q.reads.Inc()
	return msgRevision(m), nil
}

// next returns the first message on the subject at or after sequence
// seq and before end (nil when there is none).
func (q *rangeQuery) next(ctx context.Context, seq, end uint64) (*jetstream.RawStreamMsg, error) {
	if seq >= end {
		return nil, nil
	}
	var m *jetstream.RawStreamMsg
	err := q.retry(ctx, "lookup", func() (err error) {
		m, err = q.st.GetMsg(ctx, seq, jetstream.WithGetMsgSubject(q.subject))
		return err
	})
	if errors.Is(err, jetstream.ErrMsgNotFound) {
		return nil, nil
	}
	if err != nil {
		return nil, q.fail(err)
	}
	q.reads.Inc()
	if m.Sequence >= end {
		return nil, nil
	}
	return m, nil
}

// search returns the smallest q in [lo, hi] whose next message before hi
// is absent or satisfies in; in must be monotonic along the run.
func (q *rangeQuery) search(ctx context.Context, lo, hi uint64, in func(*jetstream.RawStreamMsg) bool) (uint64, error) {
	end := hi
	for lo < hi {
		mid := lo + (hi-lo)/2
		m, err := q.next(ctx, mid, end)
		if err != nil {
			return 0, err
		}
		if m == nil || in(m) {
			hi = mid
		} else {
			lo = m.Sequence + 1
		}
	}
	return lo, nil
}

// revisionRuns splits the subject's stored messages into runs of one
// read revision each, skipping revisions that have none.
func (q *rangeQuery) revisionRuns(ctx context.Context) ([]revisionRun, error) {
	var runs []revisionRun
	end := q.info.State.LastSeq + 1
	for lo := q.info.State.FirstSeq; lo < end; {
		m, err := q.next(ctx, lo, end)
		if err != nil {
			return nil, err
		}
		if m == nil {
			break
		}
		rev := msgRevision(m)
		hi, err := q.search(ctx, m.Sequence+1, end, func(n *jetstream.RawStreamMsg) bool { return msgRevision(n) > rev })
		if err != nil {
			return nil, err
		}
		first, _ := startOf(m.Data)
		runs = append(runs, revisionRun{rev: rev, lo: m.Sequence, hi: hi, first: first})
		lo = hi
	}
	return runs, nil
}

// readRun calls f, in stream order, with each message of the run whose
// start is in [from, to) and that was stored at or after since, and its
// stream sequence, until f returns false, two messages in a row starting
// at or after to are met, or the run ends. Messages of the run are
// stored in nondecreasing start order, so that the range is found by a
// binary search; a message out of that order (an asset-wide silent alarm
// that an earlier version dated by the wall clock before the asset's
// first window, then followed by data with earlier times) does not end
// the read nor come out outside the range: every message is checked
// against [from, to), and the read ends only at a second message in a row
// past to. Such a message stored before the range makes the search land
// on it, and the read then goes through the messages between it and the
// range (a cost, not a wrong answer); the run's first message, when the
// search passed over it, is looked at too (one lookup). Every message fetched from the
// broker (positioning probes included) is counted in
// uc_query_messages_read_total{query}.
func (q *rangeQuery) readRun(ctx context.Context, run revisionRun, from, to float64, since time.Time, f func([]byte, uint64) bool) error {
	inRange := func(m *jetstream.RawStreamMsg) bool {
		start, ok := startOf(m.Data)
		return ok && start >= from && !m.Time.Before(since)
	}
	// Smallest q in the run whose next message is in range (or absent):
	// the predicate is monotonic in q.
	lo, err := q.search(ctx, run.lo, run.hi, inRange)
	if err != nil {
		return err
	}
	if lo > run.lo {
		// The run's first message, passed over by the search: in range
		// only when stored out of order (see above), as the silent alarm
		// an earlier version dated by the wall clock was, the first of
		// its asset's alarms. One lookup.
		h, err := q.next(ctx, run.lo, lo)
		if err != nil {
			return err
		}
		if h != nil && inRange(h) {
			if start, ok := startOf(h.Data); ok && start < to && !f(h.Data, h.Sequence) {
				return nil
			}
		}
	}
	first, err := q.next(ctx, lo, run.hi)
	if err != nil || first == nil || !inRange(first) {
		return err
	}
	return q.readFrom(ctx, first, run.hi, from, to, f)
}

// resumeRun is readRun for a run whose messages from sequence run.lo on
// are all known to be in range from its start (a read that stopped
// there): it positions with one lookup instead of a search.
func (q *rangeQuery) resumeRun(ctx context.Context, run revisionRun, from, to float64, f func([]byte, uint64) bool) error {
	first, err := q.next(ctx, run.lo, run.hi)
	if err != nil || first == nil {
		return err
	}
	return q.readFrom(ctx, first, run.hi, from, to, f)
}

// readFrom reads for readRun from the message first, before sequence end.
// first came from a positioning lookup; the messages after it come from
// the query's consumer (see querycons.go), fetched in growing batches,
// never more than are pending, so that the messages read past the end
// of the range stay few.
func (q *rangeQuery) readFrom(ctx context.Context, first *jetstream.RawStreamMsg, end uint64, from, to float64, f0 func([]byte, uint64) bool) error {
	// f passes on the messages in [from, to) and says whether to read on:
	// not after the second message in a row at or past to (see readRun).
	beyond := 0
	f := func(data []byte, seq uint64) bool {
		start, ok := startOf(data)
		switch {
		case ok && start >= to:
			beyond++
			return beyond < 2
		case ok && start < from:
			beyond = 0
			return true
		}
		beyond = 0
		return f0(data, seq)
	}
	for {
		if !f(first.Data, first.Sequence) || first.Sequence+1 >= end {
			return nil
		}
		if beyond == 0 {
			break
		}
		// Past the range: one lookup tells whether the next is too,
		// without a consumer for a query that returns nothing from here.
		next, err := q.next(ctx, first.Sequence+1, end)
		if err != nil || next == nil {
			return err
		}
		first = next
	}
	pending, err := q.position(ctx, first.Sequence+1)
	if err != nil {
		return err
	}
	for batch, attempt := 2, 0; pending > 0; batch = min(2*batch, 256) {
		// No more than are pending, nor than the sequences left before end.
		if err := q.fetch(ctx, int(min(uint64(batch), pending, end-q.c.next))); err != nil {
			return err
		}
		got, retry := 0, false
		for {
			m, seq, ok, err := q.recv(ctx)
			if err != nil && got == 0 && q.again(ctx, attempt, "fetch", err) {
				// Nothing delivered: the consumer is where it was.
				attempt, retry = attempt+1, true
				break
			}
			if err != nil {
				return err
			}
			if !ok {
				break
			}
			got++
			if seq >= end {
				return nil
			}
			if !f(m.Data(), seq) || seq+1 >= end {
				return nil
			}
		}
		if retry {
			continue
		}
		if got == 0 {
			return q.fail(fmt.Errorf("no message delivered although %d are pending", pending))
		}
		attempt = 0
		pending = q.c.pending
	}
	return nil
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
	defer func() {
		it.Stop()
		if info := cons.CachedInfo(); info != nil {
			dctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
			js.DeleteConsumer(dctx, stream, info.Name)
			cancel()
		}
	}()
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
