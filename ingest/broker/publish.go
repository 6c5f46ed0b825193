package broker

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/fnv"
	"math"
	"strconv"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// Header names used on pipeline messages.
const (
	HeaderContentType = "Content-Type"
	HeaderReason      = "Uc-Reason"    // dead letters: why the message was refused
	HeaderError       = "Uc-Error"     // dead letters: the full error text
	HeaderSubject     = "Uc-Subject"   // dead letters: the subject it arrived on
	HeaderSequence    = "Uc-Seq"       // dead letters: its sequence in UC_DATA
	HeaderTruncated   = "Uc-Truncated" // dead letters: the payload's size in bytes, when only its start is kept
	// HeaderReplay, set to "1" on a data message, says that it comes from
	// a recorded log replayed (undercurrent replay, ReplaySettings.Mark),
	// not from a sensor sending as it reads: the pipeline then never takes
	// the pace it is sent at for a live one (see report/live, clockAhead).
	HeaderReplay = "Uc-Replay"
)

// PublishBatch publishes b on uc.data.<asset>.<sensor> through JetStream and
// waits for the broker's acknowledgement, so a nil error means the batch is
// stored. The message id (BatchID) names the batch's extent and content, so
// publishing the same batch twice (a retried replay) stores it once, while
// a batch that differs in any sample (a longer one from the same first
// time, sent again with other batch edges) is stored. enc is ContentJSON
// or ContentArrow.
func PublishBatch(ctx context.Context, js jetstream.JetStream, b *Batch, enc string) (*jetstream.PubAck, error) {
	return publishBatch(ctx, js, b, enc, false, nil)
}

// publishBatch is PublishBatch, marking the message as replayed
// (HeaderReplay) when replayed is set, and calling retry (when not nil)
// before each try again after a publish that got no answer.
func publishBatch(ctx context.Context, js jetstream.JetStream, b *Batch, enc string, replayed bool, retry func(err error)) (*jetstream.PubAck, error) {
	var data []byte
	var err error
	switch enc {
	case ContentJSON, "":
		enc = ContentJSON
		data, err = EncodeJSON(b)
	case ContentArrow:
		data, err = EncodeArrow(b)
	default:
		return nil, fmt.Errorf("broker: publish: unknown encoding %q", enc)
	}
	if err != nil {
		return nil, err
	}
	msg := nats.NewMsg(DataSubject(b.Asset, b.Sensor))
	msg.Data = data
	msg.Header.Set(HeaderContentType, enc)
	if replayed {
		msg.Header.Set(HeaderReplay, "1")
	}
	id := BatchID(b)
	// A cluster electing a new stream leader (a node lost) answers nothing
	// for a few seconds: the publish is tried again, with the same message
	// id so that a batch stored by an attempt that timed out is stored
	// once, for up to publishRetryFor.
	deadline := time.Now().Add(publishRetryFor)
	for wait := 100 * time.Millisecond; ; wait = min(2*wait, 2*time.Second) {
		actx, cancel := context.WithTimeout(ctx, publishAttempt)
		ack, err := js.PublishMsg(actx, msg, jetstream.WithMsgID(id))
		cancel()
		if err == nil {
			return ack, nil
		}
		if ctx.Err() != nil || !publishRetryable(err) || time.Now().Add(wait).After(deadline) {
			return nil, fmt.Errorf("broker: publish %s: %w", msg.Subject, err)
		}
		if retry != nil {
			retry(err)
		}
		select {
		case <-ctx.Done():
			return nil, fmt.Errorf("broker: publish %s: %w", msg.Subject, ctx.Err())
		case <-time.After(wait):
		}
	}
}

// BatchID is the message id PublishBatch gives b:
// asset/sensor/first-time/last-time/samples/content hash, the hash a 64-bit
// FNV-1a of every sample's time and field values (bit patterns), so that
// the broker's deduplication drops only a batch identical to one already
// stored, whatever its encoding. An id of the first time alone (as before)
// dropped a longer batch starting at the same time as a stored one, and
// with it the samples the stored one lacked, without a word.
func BatchID(b *Batch) string {
	h := fnv.New64a()
	var buf [8]byte
	for _, col := range [][]float64{b.Time, b.Bx, b.By, b.Bz, b.Temp} {
		for _, v := range col {
			binary.LittleEndian.PutUint64(buf[:], math.Float64bits(v))
			h.Write(buf[:])
		}
		h.Write([]byte{0xff}) // column separator: no temp and a temp column differ
	}
	n := len(b.Time)
	return b.Asset + "/" + b.Sensor + "/" + strconv.FormatFloat(b.Time[0], 'g', -1, 64) + "/" +
		strconv.FormatFloat(b.Time[n-1], 'g', -1, 64) + "/" + strconv.Itoa(n) + "/" + strconv.FormatUint(h.Sum64(), 16)
}

// publishAttempt bounds one publish attempt; publishRetryFor the time
// PublishBatch goes on trying, well within the data stream's two-minute
// deduplication window. Variables only so that a test can shorten them.
var (
	publishAttempt  = 5 * time.Second
	publishRetryFor = 30 * time.Second
)

// publishRetryable reports whether a failed publish may succeed when tried
// again: no answer (timeout, no stream responding), not a refusal.
func publishRetryable(err error) bool {
	return errors.Is(err, context.DeadlineExceeded) || errors.Is(err, nats.ErrTimeout) ||
		errors.Is(err, jetstream.ErrNoStreamResponse) || errors.Is(err, nats.ErrNoResponders)
}

// DeadLetter stores a refused message on uc.dlq.<reason> with its reason,
// error and original subject in headers and its payload unchanged, or,
// when keep > 0 and the payload is longer, its first keep bytes with its
// full size in the Uc-Truncated header (an oversized message must not
// take a bounded dead-letter stream's room). seq is the message's
// sequence in UC_DATA (0 when it has none); it makes the dead letter
// idempotent, so a message refused again after a takeover is stored once.
func DeadLetter(ctx context.Context, js jetstream.JetStream, reason, subject string, seq uint64, data []byte, keep int, cause error) error {
	msg := nats.NewMsg(DeadLetterSubject(reason))
	msg.Data = data
	if keep > 0 && len(data) > keep {
		msg.Data = data[:keep]
		msg.Header.Set(HeaderTruncated, strconv.Itoa(len(data)))
	}
	msg.Header.Set(HeaderReason, reason)
	msg.Header.Set(HeaderSubject, subject)
	if cause != nil {
		msg.Header.Set(HeaderError, cause.Error())
	}
	var opts []jetstream.PublishOpt
	if seq > 0 {
		s := strconv.FormatUint(seq, 10)
		msg.Header.Set(HeaderSequence, s)
		opts = append(opts, jetstream.WithMsgID("dlq/"+s))
	}
	if _, err := js.PublishMsg(ctx, msg, opts...); err != nil {
		return fmt.Errorf("broker: dead letter %s: %w", msg.Subject, err)
	}
	return nil
}
