package broker

import (
	"context"
	"fmt"
	"strconv"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// Header names used on pipeline messages.
const (
	HeaderContentType = "Content-Type"
	HeaderReason      = "Uc-Reason"  // dead letters: why the message was refused
	HeaderError       = "Uc-Error"   // dead letters: the full error text
	HeaderSubject     = "Uc-Subject" // dead letters: the subject it arrived on
	HeaderSequence    = "Uc-Seq"     // dead letters: its sequence in UC_DATA
)

// PublishBatch publishes b on uc.data.<asset>.<sensor> through JetStream and
// waits for the broker's acknowledgement, so a nil error means the batch is
// stored. The message id is asset/sensor/first-time, so publishing the same
// batch twice (a retried replay) stores it once. enc is ContentJSON or
// ContentArrow.
func PublishBatch(ctx context.Context, js jetstream.JetStream, b *Batch, enc string) (*jetstream.PubAck, error) {
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
	id := b.Asset + "/" + b.Sensor + "/" + strconv.FormatFloat(b.Time[0], 'g', -1, 64)
	ack, err := js.PublishMsg(ctx, msg, jetstream.WithMsgID(id))
	if err != nil {
		return nil, fmt.Errorf("broker: publish %s: %w", msg.Subject, err)
	}
	return ack, nil
}

// DeadLetter stores a refused message on uc.dlq.<reason> with its reason,
// error and original subject in headers and its payload unchanged. seq is
// the message's sequence in UC_DATA (0 when it has none); it makes the
// dead letter idempotent, so a message refused again after a takeover is
// stored once.
func DeadLetter(ctx context.Context, js jetstream.JetStream, reason, subject string, seq uint64, data []byte, cause error) error {
	msg := nats.NewMsg(DeadLetterSubject(reason))
	msg.Data = data
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
