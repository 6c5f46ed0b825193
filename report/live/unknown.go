package live

import (
	"context"
	"errors"
	"fmt"
	"hash/fnv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// Data for an asset that the site file does not list has no worker, so no
// asset consumer ever reads it. Every service therefore sweeps UC_DATA
// now and then: it lists the stored subjects (one stream-info request,
// whose size grows with the number of subjects, not of messages), and for
// each asset name it does not know it creates a durable consumer filtered
// to that asset, "uc-unknown-<hash>", shared by all workers. Messages read
// from it go to uc.dlq.unknown-asset with the reason and are acknowledged,
// so each is dead-lettered once however many workers sweep (and the
// dead-letter stream's deduplication on "dlq/<sequence>" covers a worker
// that dies between the two). Known assets are never read twice: the
// sweep reads only the unknown assets' messages.

const unknownConsumerPrefix = "uc-unknown-"

// unknownConsumerName returns the durable consumer name for an unknown
// asset token (hashed: a token may hold characters a name may not).
func unknownConsumerName(asset string) string {
	h := fnv.New64a()
	h.Write([]byte(asset))
	return fmt.Sprintf("%s%016x", unknownConsumerPrefix, h.Sum64())
}

// unknownLoop sweeps every period until ctx ends.
func (s *Service) unknownLoop(ctx context.Context, period time.Duration) {
	s.forgetKnownUnknowns(ctx)
	made := map[string]jetstream.Consumer{}
	tick := time.NewTicker(period)
	defer tick.Stop()
	for {
		if err := s.sweepUnknown(ctx, made); err != nil && ctx.Err() == nil {
			s.log.Warn("unknown-asset sweep failed; trying again", "err", err)
		}
		select {
		case <-ctx.Done():
			return
		case <-tick.C:
		}
	}
}

// forgetKnownUnknowns deletes the unknown-asset consumers of assets that
// the site file now lists (added since the consumer was made).
func (s *Service) forgetKnownUnknowns(ctx context.Context) {
	st, err := s.stores.JS.Stream(ctx, broker.StreamData)
	if err != nil {
		return
	}
	l := st.ListConsumers(ctx)
	var drop []string
	for ci := range l.Info() {
		if strings.HasPrefix(ci.Name, unknownConsumerPrefix) && s.site.Asset(ci.Config.Metadata["uc-asset"]) != nil {
			drop = append(drop, ci.Name)
		}
	}
	for _, name := range drop {
		if err := st.DeleteConsumer(ctx, name); err == nil {
			s.log.Info("unknown-asset consumer removed: the site file now lists the asset", "consumer", name)
		}
	}
}

// sweepUnknown finds unknown assets in UC_DATA and dead-letters their
// messages; made caches the consumers already created.
func (s *Service) sweepUnknown(ctx context.Context, made map[string]jetstream.Consumer) error {
	rctx, cancel := context.WithTimeout(ctx, 10*time.Second)
	defer cancel()
	st, err := s.stores.JS.Stream(rctx, broker.StreamData)
	if err != nil {
		return err
	}
	info, err := st.Info(rctx, jetstream.WithSubjectFilter(broker.DataPrefix+".>"))
	if err != nil {
		return err
	}
	for subj := range info.State.Subjects {
		rest, ok := strings.CutPrefix(subj, broker.DataPrefix+".")
		if !ok {
			continue
		}
		asset, _, _ := strings.Cut(rest, ".")
		if s.site.Asset(asset) != nil || made[asset] != nil {
			continue
		}
		name := unknownConsumerName(asset)
		cons, err := st.CreateOrUpdateConsumer(rctx, jetstream.ConsumerConfig{
			Durable:        name,
			Description:    "dead-letters data of an asset not in the site file",
			FilterSubjects: []string{broker.DataPrefix + "." + asset, broker.DataPrefix + "." + asset + ".>"},
			DeliverPolicy:  jetstream.DeliverAllPolicy,
			AckPolicy:      jetstream.AckExplicitPolicy,
			AckWait:        30 * time.Second,
			Metadata:       map[string]string{"uc-asset": asset},
		})
		if err != nil {
			s.log.Warn("unknown-asset consumer not created", "asset", asset, "err", err)
			continue
		}
		s.log.Warn("data for an asset not in the site file: dead-lettering it", "asset", asset, "reason", broker.ReasonUnknownAsset)
		made[asset] = cons
	}
	var errs []error
	for asset, cons := range made {
		if err := s.drainUnknown(ctx, asset, cons); err != nil {
			errs = append(errs, err)
		}
	}
	return errors.Join(errs...)
}

// drainUnknown dead-letters what cons holds now.
func (s *Service) drainUnknown(ctx context.Context, asset string, cons jetstream.Consumer) error {
	for ctx.Err() == nil {
		mb, err := cons.FetchNoWait(256)
		if err != nil {
			return err
		}
		n := 0
		for m := range mb.Messages() {
			n++
			var seq uint64
			if md, err := m.Metadata(); err == nil {
				seq = md.Sequence.Stream
			}
			cause := fmt.Errorf("live: %s: asset %q is not in the site file", m.Subject(), asset)
			dctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
			err := broker.DeadLetter(dctx, s.stores.JS, broker.ReasonUnknownAsset, m.Subject(), seq, m.Data(), cause)
			cancel()
			if err != nil {
				m.Nak()
				return err
			}
			s.met.deadLetters.WithLabelValues(broker.ReasonUnknownAsset).Inc()
			if err := m.Ack(); err != nil {
				return err
			}
		}
		if err := mb.Error(); err != nil && !errors.Is(err, jetstream.ErrNoMessages) {
			return err
		}
		if n == 0 {
			return nil
		}
	}
	return nil
}
