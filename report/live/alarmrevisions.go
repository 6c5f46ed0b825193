package live

import (
	"context"
	"encoding/json"
	"math"
	"sort"
	"strconv"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// The alarms a window shows.
//
// A window read again after a restart is processed afresh: its new
// estimate may raise the alarms of the older revision, others, or none.
// The alarm listing (Alarms without AllRevisions) shows of each window
// the alarms of the highest read revision that processed it, which may
// be none. A revision has processed a window when it stored the window's
// estimate (alarms are published after their estimate, so an alarm of a
// revision also shows that it did). Until the re-read reaches a window,
// the window's highest revision is still the older one and its alarms
// stay listed.
//
// When the asset has never been restarted every alarm is of revision 0
// and the listing is read exactly as before (one run, nothing dropped,
// payloads as stored). For a
// restarted asset the alarm runs are read as in readRevisions, and for a
// window whose alarms are all of a lower revision than the asset's newest
// estimate the estimate runs of higher revisions (found as in History)
// are asked, newest first, whether they hold the window: a galloping
// search from where the run's previous answer was found (one lookup when
// the run's next estimate is the window's, about 2 log2(d) when it is d
// sequences on). Windows are decided in start order, so each estimate
// run is walked forwards once per query.
//
// Suppressed alarms make the first limit alarms of a run fewer than limit
// answers, so runs are read in chunks: every buffered alarm up to the
// smallest last start among the runs cut by their quota is decided (all
// runs have read every alarm up to there), and when fewer than limit are
// kept the runs cut there read on from where they stopped (one lookup,
// no search) with a quota of what is missing, or twice the previous
// reading-on's quota when that is more (so a long stretch of dropped
// alarms is crossed in a few reads). The cost is that of readRevisions
// plus, when some alarm of the range is of a lower revision than the
// newest estimate, about 2 log2(stream length) probes per estimate run
// of a revision above 0 and the galloping searches above, plus the
// suppressed alarms read before the limit is reached; no query scans a
// stream.

// alarmChunkRun is an alarm revision run read chunk by chunk.
type alarmChunkRun struct {
	run  revisionRun
	got  []Alarm // read and not yet decided, in start order
	last float64 // start of the last window read
	cut  bool    // stopped by its quota: alarms in range may follow
}

// read reads the next chunk of the run: at least quota alarms (fewer
// when the range ends), plus the rest of the last window. The first
// chunk is positioned by readRun, later ones resume where the previous
// stopped.
func (ar *alarmChunkRun) read(ctx context.Context, q *rangeQuery, from, to float64, since time.Time, quota int, first bool) error {
	n, cut := 0, false
	f := func(data []byte, seq uint64) bool {
		var a Alarm
		if json.Unmarshal(data, &a) != nil {
			ar.run.lo = seq + 1
			return true
		}
		if a.Revision == 0 {
			a.Revision = ar.run.rev
		}
		if n >= quota && a.Start > ar.last {
			cut = true
			return false
		}
		ar.got = append(ar.got, a)
		ar.last = max(ar.last, a.Start)
		ar.run.lo = seq + 1
		n++
		return true
	}
	var err error
	if first {
		err = q.readRun(ctx, ar.run, from, to, since, f)
	} else {
		err = q.resumeRun(ctx, ar.run, from, to, f)
	}
	// In start order for the search in latestAlarms, also when a message
	// was stored out of order (see readRun).
	sort.SliceStable(ar.got, func(i, j int) bool { return ar.got[i].Start < ar.got[j].Start })
	ar.cut = cut && err == nil
	return err
}

// latestAlarms returns the alarms on subject (of asset) with start in
// [from, to) stored at or after since, keeping of each window only the
// alarms of its highest processed revision (and of those the last stored
// for each kind and subject), sorted by start, at most limit.
func (s *Service) latestAlarms(ctx context.Context, asset, subject string, from, to float64, since time.Time, limit int) ([]Alarm, error) {
	q, top, err := s.openRevisions(ctx, "alarms", broker.StreamAlarms, subject, asset, from, to)
	if err != nil || q == nil {
		return []Alarm{}, err
	}
	defer q.close()
	if top == 0 {
		// Never restarted: one run of revision 0, every alarm kept.
		run := []revisionRun{{rev: 0, lo: q.info.State.FirstSeq, hi: q.info.State.LastSeq + 1}}
		got, err := readRuns(ctx, q, run, from, to, since, limit, decodeAlarm)
		return pickRevisions(got, false, limit, alarmStart, alarmKey), err
	}
	runs, err := q.revisionRuns(ctx)
	if err != nil {
		return []Alarm{}, err
	}
	ars := make([]*alarmChunkRun, len(runs))
	for i, r := range runs {
		ars[i] = &alarmChunkRun{run: r}
		if err := ars[i].read(ctx, q, from, to, since, limit, true); err != nil {
			return []Alarm{}, err
		}
	}
	est := &estimateRevisions{s: s, asset: asset}
	defer est.close()
	out := []Alarm{}
	quota := 0
	for {
		// Every run has read all its alarms with start <= upTo.
		upTo := math.Inf(1)
		for _, ar := range ars {
			if ar.cut {
				upTo = min(upTo, ar.last)
			}
		}
		var ready []Alarm
		for _, ar := range ars {
			i := sort.Search(len(ar.got), func(i int) bool { return ar.got[i].Start > upTo })
			ready = append(ready, ar.got[:i]...)
			ar.got = ar.got[i:]
		}
		// Stable: among equal starts lower revisions, then older
		// messages, first (runs are in increasing revision).
		sort.SliceStable(ready, func(i, j int) bool { return ready[i].Start < ready[j].Start })
		for i := 0; i < len(ready); {
			j := i + 1
			for j < len(ready) && ready[j].Window == ready[i].Window {
				j++
			}
			kept, err := est.decide(ctx, ready[i:j], top)
			if err != nil {
				return out, err
			}
			out = append(out, kept...)
			i = j
		}
		if len(out) >= limit {
			return out[:limit], nil
		}
		if math.IsInf(upTo, 1) {
			return out, nil
		}
		quota = min(max(limit-len(out), 2*quota), MaxQueryLimit)
		for _, ar := range ars {
			if ar.cut && ar.last == upTo {
				if err := ar.read(ctx, q, from, to, since, quota, false); err != nil {
					return out, err
				}
			}
		}
	}
}

func decodeAlarm(data []byte, rev int) (Alarm, float64, bool) {
	var a Alarm
	if json.Unmarshal(data, &a) != nil {
		return a, 0, false
	}
	if a.Revision == 0 {
		a.Revision = rev
	}
	return a, a.Start, true
}

func alarmStart(a Alarm) float64 { return a.Start }

func alarmKey(a Alarm) string { return a.key() }

// estimateRevisions answers which read revisions stored an estimate of a
// window, for windows asked in increasing start order.
type estimateRevisions struct {
	s     *Service
	asset string
	q     *rangeQuery // nil until first needed
	runs  []estimateRun
	ready bool
}

// estimateRun is an estimate revision run with a cursor: no estimate of
// the run before sequence at starts at or after the last window asked.
type estimateRun struct {
	revisionRun
	at   uint64
	done bool // the run ends before the last window asked
}

// close deletes the consumer of the estimate query, if it made one.
func (e *estimateRevisions) close() {
	if e.q != nil {
		e.q.close()
	}
}

// decide returns the alarms of one window (all its read alarms, sorted
// by revision and then storage order) to list: those of the window's
// highest processed revision, the last stored of each kind and subject.
// The highest processed revision is the highest of the alarms' own and
// of the estimate runs above it that hold the window; the estimate runs
// are only asked when the alarms' is below top, the revision of the
// asset's newest estimate.
func (e *estimateRevisions) decide(ctx context.Context, as []Alarm, top int) ([]Alarm, error) {
	high := 0
	for _, a := range as {
		high = max(high, a.Revision)
	}
	if high < top {
		r, err := e.highest(ctx, as[0].Window, as[0].Start, high)
		if err != nil {
			return nil, err
		}
		high = max(high, r)
	}
	var kept []Alarm
	idx := map[string]int{}
	for _, a := range as {
		if a.Revision != high {
			continue
		}
		if i, ok := idx[a.key()]; ok {
			kept[i] = a
			continue
		}
		idx[a.key()] = len(kept)
		kept = append(kept, a)
	}
	return kept, nil
}

// highest returns the highest read revision above than that stored an
// estimate of window (starting at start), or 0 when none did. Windows
// must be asked in nondecreasing start order.
func (e *estimateRevisions) highest(ctx context.Context, window int64, start float64, than int) (int, error) {
	if !e.ready {
		e.ready = true
		q, err := e.s.openQuery(ctx, "alarms", broker.StreamEstimates, broker.EstimateSubject(e.asset))
		if err != nil || q == nil {
			return 0, err
		}
		runs, err := q.revisionRuns(ctx)
		if err != nil {
			return 0, err
		}
		e.q = q
		for i := len(runs) - 1; i >= 0 && runs[i].rev > 0; i-- {
			e.runs = append(e.runs, estimateRun{revisionRun: runs[i], at: runs[i].lo})
		}
	}
	if e.q == nil {
		return 0, nil
	}
	for i := range e.runs {
		r := &e.runs[i]
		if r.rev <= than {
			break
		}
		if r.done || r.first > start {
			continue
		}
		m, err := e.q.seek(ctx, r.at, r.hi, func(m *jetstream.RawStreamMsg) bool {
			s, ok := startOf(m.Data)
			return ok && s >= start
		})
		if err != nil {
			return 0, err
		}
		if m == nil {
			r.done = true
			continue
		}
		r.at = m.Sequence
		var got struct {
			Window *int64 `json:"window"`
		}
		if json.Unmarshal(m.Data, &got) == nil && got.Window != nil && *got.Window == window {
			// Later windows start later: the next answer is past it.
			r.at = m.Sequence + 1
			return r.rev, nil
		}
	}
	return 0, nil
}

// seek returns the first message on the subject at or after sequence lo
// and before hi that satisfies in (nil when none); in must be monotonic
// along [lo, hi). It probes lo, then, past each message that fails, 1, 3,
// 7, ... sequences on, and binary searches the last step: one lookup
// when the next message satisfies in, two when the one after it does,
// about 2 log2(d) when the answer is d sequences on.
func (q *rangeQuery) seek(ctx context.Context, lo, hi uint64, in func(*jetstream.RawStreamMsg) bool) (*jetstream.RawStreamMsg, error) {
	// found is the next message at or after bound: nil or satisfying in.
	bound, found := hi, (*jetstream.RawStreamMsg)(nil)
	for step := uint64(0); lo+step < hi; step = 2*step + 1 {
		m, err := q.next(ctx, lo+step, hi)
		if err != nil {
			return nil, err
		}
		if m == nil || in(m) {
			bound, found = lo+step, m
			break
		}
		lo = m.Sequence + 1
	}
	for lo < bound {
		mid := lo + (bound-lo)/2
		m, err := q.next(ctx, mid, hi)
		if err != nil {
			return nil, err
		}
		if m == nil || in(m) {
			bound, found = mid, m
		} else {
			lo = m.Sequence + 1
		}
	}
	return found, nil
}

// key names an alarm within its window's revision: window, kind and
// subject, as its message id does, and whether it is a cleared record,
// so that a condition raised and cleared within one window (an
// out-of-order run ended before the next window was published) lists
// both.
func (a Alarm) key() string {
	k := strconv.FormatInt(a.Window, 10) + "/" + a.Kind + "/" + a.Subject
	if a.Cleared {
		k += "/cleared"
	}
	return k
}
