package live

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"strconv"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// The broker consumer of a query.
//
// History and Alarms position each read with single-message lookups and
// read on from there through a broker consumer. A query makes at most
// one consumer per subject it reads, whatever the number of reads:
//
//   - created at the first read that needs more than the message its
//     positioning lookup returned (a read of one message needs none),
//     as a pull consumer without acknowledgements, in memory, filtered
//     on the subject and starting just after that message;
//   - moved to the start of each later read (another revision run, or
//     an alarm run read on) by a consumer reset, one request, or left
//     where it is when it already stands there;
//   - deleted when the query ends, however it ends (answer, broker
//     error, cancelled context of a client that went away). Its name is
//     chosen before the create request is sent, so a query cancelled
//     while that request is in flight still deletes it; the inactivity
//     threshold removes it only if the process dies mid-query.
//
// A fetch asks for no more messages than the consumer has pending and
// does not wait (no_wait): the broker sends what it holds and ends the
// request, so no pull request outlives its fetch to take messages after
// a reset. A fetch left unread by the end of a read is drained before
// the consumer moves. As a check, the consumer's delivery sequence must
// count up by one from each create or reset: a gap means messages went
// to a request no longer listened to, and the query fails rather than
// return a range with holes.

// resetLevel is the JetStream API level from which a query moves its
// consumer with a reset: level 5, nats-server 2.15 (the release in
// go.mod), which has the consumer reset request. Against an older
// broker (the create answer gives the level of the server hosting the
// consumer) each later read gets a consumer of its own instead, the
// previous one deleted first: still one at a time, and still one per
// read rather than one per fetch.
const resetLevel = 5

// queryInactive is the inactivity threshold of a query consumer, after
// which the broker deletes one that its query did not (the process
// died mid-query).
const queryInactive = 10 * time.Second

// queryConsumer is the consumer state of a rangeQuery.
type queryConsumer struct {
	name    string // chosen before creating; "" when none was asked for
	cons    jetstream.Consumer
	start   uint64                 // OptStartSeq: resets may not go below it
	next    uint64                 // stream sequence it delivers from
	pending uint64                 // messages on the subject from next on
	dseq    uint64                 // consumer sequence of the last delivery
	batch   jetstream.MessageBatch // the last fetch until read to its end
	reset   bool                   // the broker can reset it (resetLevel)
}

func newConsumerName() string {
	var b [12]byte
	rand.Read(b[:])
	return "uc_query_" + hex.EncodeToString(b[:])
}

// hook calls the Service's query hook (tests) with event.
func (q *rangeQuery) hook(ctx context.Context, event string) {
	if h := q.s.queryHook.Load(); h != nil {
		(*h)(ctx, event)
	}
}

// position makes the query's consumer deliver the subject's messages
// from stream sequence seq on, creating it on first use, and returns
// how many are pending from there.
func (q *rangeQuery) position(ctx context.Context, seq uint64) (uint64, error) {
	c := &q.c
	if err := q.drain(ctx); err != nil {
		return 0, err
	}
	if c.cons != nil && c.next == seq {
		return c.pending, nil
	}
	if c.cons != nil && c.reset && seq >= c.start {
		var resp *jetstream.ConsumerResetResponse
		err := q.retry(ctx, "consumer reset", func() (err error) {
			resp, err = q.s.stores.JS.ResetConsumerToSequence(ctx, q.stream, c.name, seq)
			return err
		})
		if err != nil {
			return 0, q.fail(fmt.Errorf("moving the query consumer to sequence %d: %w", seq, err))
		}
		if resp.ConsumerInfo == nil {
			return 0, q.fail(fmt.Errorf("moving the query consumer to sequence %d: no consumer state in the answer", seq))
		}
		c.next, c.pending, c.dseq = seq, resp.NumPending, 0
		q.hook(ctx, "reset")
		return c.pending, nil
	}
	// None yet, a broker without the reset, or asked to go below where
	// it was created (reads of a query go forward, so this is a
	// fallback): a new one.
	q.close()
	c.name = newConsumerName()
	var cons jetstream.Consumer
	err := q.retry(ctx, "consumer create", func() (err error) {
		cons, err = q.s.stores.JS.CreateConsumer(ctx, q.stream, jetstream.ConsumerConfig{
			Name:              c.name,
			FilterSubject:     q.subject,
			DeliverPolicy:     jetstream.DeliverByStartSequencePolicy,
			OptStartSeq:       seq,
			AckPolicy:         jetstream.AckNonePolicy,
			MemoryStorage:     true,
			Replicas:          1,
			InactiveThreshold: queryInactive,
		})
		return err
	})
	if err != nil {
		return 0, q.fail(fmt.Errorf("creating the query consumer: %w", err))
	}
	info := cons.CachedInfo()
	if info == nil {
		return 0, q.fail(errors.New("creating the query consumer: no consumer state in the answer"))
	}
	c.cons, c.start, c.next, c.pending, c.dseq = cons, seq, seq, info.NumPending, 0
	level, _ := strconv.Atoi(info.Config.Metadata["_nats.level"])
	c.reset = level >= resetLevel && !q.s.noConsumerReset.Load()
	q.hook(ctx, "created")
	return c.pending, nil
}

// fetch asks the consumer for n messages, n at most the pending count
// position or the last delivery gave; recv hands them out.
func (q *rangeQuery) fetch(ctx context.Context, n int) error {
	if err := q.drain(ctx); err != nil {
		return err
	}
	q.hook(ctx, "fetch")
	mb, err := q.c.cons.FetchNoWait(n)
	if err != nil {
		return q.fail(err)
	}
	q.c.batch = mb
	return nil
}

// recv returns the next message of the last fetch with its stream
// sequence, or ok false when the fetch is over. Every message received
// is counted in uc_query_messages_read_total.
func (q *rangeQuery) recv(ctx context.Context) (m jetstream.Msg, seq uint64, ok bool, err error) {
	c := &q.c
	if c.batch == nil {
		return nil, 0, false, nil
	}
	select {
	case m, ok = <-c.batch.Messages():
	case <-ctx.Done():
		return nil, 0, false, q.fail(ctx.Err())
	}
	if !ok {
		err := c.batch.Error()
		c.batch = nil
		if err != nil && !errors.Is(err, jetstream.ErrNoMessages) {
			return nil, 0, false, q.fail(err)
		}
		return nil, 0, false, nil
	}
	q.reads.Inc()
	md, err := m.Metadata()
	if err != nil {
		return nil, 0, false, q.fail(err)
	}
	if md.Sequence.Consumer != c.dseq+1 {
		return nil, 0, false, q.fail(fmt.Errorf("the query consumer delivered its message %d after %d: deliveries were lost", md.Sequence.Consumer, c.dseq))
	}
	c.dseq, c.next, c.pending = md.Sequence.Consumer, md.Sequence.Stream+1, md.NumPending
	return m, md.Sequence.Stream, true, nil
}

// drain reads the rest of the last fetch, so that the consumer's
// position is known and no delivery is in flight.
func (q *rangeQuery) drain(ctx context.Context) error {
	for {
		_, _, ok, err := q.recv(ctx)
		if err != nil || !ok {
			return err
		}
	}
}

// queryRetries and queryRetryWait bound the retries of a query step that
// nobody answered: up to queryRetries more tries, waiting queryRetryWait,
// then twice that, and so on (375 ms in all).
const (
	queryRetries   = 4
	queryRetryWait = 25 * time.Millisecond
)

// queryRetryable reports whether a query step that failed with err may
// succeed when tried again at once: no responders. On a cluster a fetch
// from a query consumer just created can reach the client's node before
// the consumer's interest does (1-4% of queries on three nodes answered
// 502 "no responders" without it), and a lookup can fall between stream
// leaders. A request nobody received changed nothing, so it can be sent
// again.
func queryRetryable(err error) bool { return errors.Is(err, nats.ErrNoResponders) }

// again reports whether retry attempt (from 0) of the query step what,
// which failed with err, should be made, after waiting for it.
func (q *rangeQuery) again(ctx context.Context, attempt int, what string, err error) bool {
	if attempt >= queryRetries || !queryRetryable(err) || ctx.Err() != nil {
		return false
	}
	if h := q.s.queryRetryHook.Load(); h != nil {
		(*h)(what)
	}
	q.s.log.Debug("query step not answered; trying again", "query", q.query, "stream", q.stream, "step", what, "attempt", attempt+1, "err", err)
	select {
	case <-ctx.Done():
		return false
	case <-time.After(queryRetryWait << attempt):
		return true
	}
}

// retry runs step, again while it fails for want of responders (see
// again).
func (q *rangeQuery) retry(ctx context.Context, what string, step func() error) error {
	for attempt := 0; ; attempt++ {
		err := step()
		if err == nil || !q.again(ctx, attempt, what, err) {
			return err
		}
	}
}

// close deletes the query's consumer, if one was asked for. It does not
// use the query's context, which may be cancelled already.
func (q *rangeQuery) close() {
	c := &q.c
	if c.name == "" {
		return
	}
	dctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	if err := q.s.stores.JS.DeleteConsumer(dctx, q.stream, c.name); err != nil && !errors.Is(err, jetstream.ErrConsumerNotFound) {
		q.s.log.Warn("query consumer not deleted; the broker removes it when inactive", "stream", q.stream, "consumer", c.name, "err", err)
	}
	*c = queryConsumer{}
}
