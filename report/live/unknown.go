package live

import (
	"context"
	"encoding/json"
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
// sweep reads only the unknown assets' messages. Messages on
// uc.data.<asset> with no sensor token, which no worker's filter matches
// either, are dead-lettered the same way as malformed.

const unknownConsumerPrefix = "uc-unknown-"

// unknownConsumerName returns the durable consumer name for the key
// "<reason>/<asset token>" (hashed: a token may hold characters a name
// may not).
func unknownConsumerName(key string) string {
	h := fnv.New64a()
	h.Write([]byte(key))
	return fmt.Sprintf("%s%016x", unknownConsumerPrefix, h.Sum64())
}

// unknownLoop sweeps every period until ctx ends.
func (s *Service) unknownLoop(ctx context.Context, period time.Duration) {
	s.forgetKnownUnknowns(ctx)
	made := map[string]*orphanConsumer{}
	tick := time.NewTicker(period)
	defer tick.Stop()
	for {
		switch err := s.sweepUnknown(ctx, made); {
		case err != nil && ctx.Err() == nil && s.sweeps.fail():
			s.log.Warn("unknown-asset sweep failed; trying again each lease TTL, further failures counted until one succeeds", "err", err)
		case err != nil && ctx.Err() == nil:
			s.log.Debug("unknown-asset sweep failed", "err", err)
		case err == nil:
			if n, d := s.sweeps.ok(); n > 0 {
				s.log.Info("unknown-asset sweep succeeds again", "failed_sweeps", n, "failing_for", d)
			}
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
		if strings.HasPrefix(ci.Name, unknownConsumerPrefix) && ci.Config.Metadata["uc-reason"] == broker.ReasonUnknownAsset &&
			s.site.Asset(ci.Config.Metadata["uc-asset"]) != nil {
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
func (s *Service) sweepUnknown(ctx context.Context, made map[string]*orphanConsumer) error {
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
	elsewhere := &otherWorkers{}
	for subj := range info.State.Subjects {
		rest, ok := strings.CutPrefix(subj, broker.DataPrefix+".")
		if !ok {
			continue
		}
		asset, _, hasSensor := strings.Cut(rest, ".")
		o := orphan{asset: asset, reason: broker.ReasonUnknownAsset,
			filters: []string{broker.DataPrefix + "." + asset, broker.DataPrefix + "." + asset + ".>"}}
		if s.site.Asset(asset) != nil {
			if hasSensor {
				continue // the asset's worker reads it
			}
			// uc.data.<asset> without a sensor: no worker's filter
			// (uc.data.<asset>.>) matches it.
			o.reason, o.filters = broker.ReasonMalformed, []string{subj}
		}
		key := o.reason + "/" + asset
		if o.reason == broker.ReasonUnknownAsset {
			if who, err := elsewhere.find(rctx, s, asset); err != nil {
				return err
			} else if who != "" {
				// Another worker's site file lists the asset (a new
				// asset being rolled out): its worker reads the data.
				delete(made, key)
				if !s.leftElsewhere[asset] {
					s.leftElsewhere[asset] = true
					s.log.Info("data for an asset this site file does not list is left to a worker that lists it", "asset", asset, "by", who)
				}
				continue
			}
			if s.leftElsewhere[asset] {
				delete(s.leftElsewhere, asset)
			}
		}
		if made[key] != nil {
			continue
		}
		cons, err := st.CreateOrUpdateConsumer(rctx, jetstream.ConsumerConfig{
			Durable:        unknownConsumerName(key),
			Description:    "dead-letters data that no asset worker reads",
			FilterSubjects: o.filters,
			DeliverPolicy:  jetstream.DeliverAllPolicy,
			AckPolicy:      jetstream.AckExplicitPolicy,
			AckWait:        30 * time.Second,
			Metadata:       map[string]string{"uc-asset": asset, "uc-reason": o.reason},
		})
		if err != nil {
			s.log.Warn("consumer for unread data not created", "asset", asset, "reason", o.reason, "err", err)
			continue
		}
		if o.reason == broker.ReasonUnknownAsset {
			s.log.Warn("data for an asset that no worker's site file lists and no worker holds: dead-lettering it", "asset", asset, "reason", o.reason)
		} else {
			s.log.Warn("data that no asset worker reads: dead-lettering it", "asset", asset, "reason", o.reason)
		}
		made[key] = &orphanConsumer{orphan: o, cons: cons}
	}
	var errs []error
	for _, oc := range made {
		if err := s.drainUnknown(ctx, oc); err != nil {
			errs = append(errs, err)
		}
	}
	return errors.Join(errs...)
}

// otherWorkers finds, for one sweep, whether a worker other than this
// one reads an asset that this site file does not list: one holds its
// lease, or one's heartbeat (workerBeat) lists it. The heartbeats are
// read once per sweep, when the first unknown asset needs them.
type otherWorkers struct {
	read  bool
	lists map[string]string // asset -> a worker listing it
}

// find returns the id of a worker that holds or lists asset, or "".
func (o *otherWorkers) find(ctx context.Context, s *Service, asset string) (string, error) {
	if e, err := s.stores.Lease.Get(ctx, asset); err == nil && len(e.Value()) > 0 {
		return string(e.Value()), nil
	} else if err != nil && !errors.Is(err, jetstream.ErrKeyNotFound) && !errors.Is(err, jetstream.ErrInvalidKey) {
		return "", fmt.Errorf("live: lease of asset %q not readable: %w", asset, err)
	}
	if !o.read {
		o.read, o.lists = true, map[string]string{}
		w, err := s.stores.Workers.WatchAll(ctx, jetstream.IgnoreDeletes())
		if err != nil {
			return "", fmt.Errorf("live: workers not readable: %w", err)
		}
		defer w.Stop()
		for e := range w.Updates() {
			if e == nil {
				break // the entries held now have all been read
			}
			var b workerBeat
			if json.Unmarshal(e.Value(), &b) != nil || e.Key() == s.id {
				continue // a worker of an earlier version: a time only
			}
			for _, a := range b.Assets {
				o.lists[a] = e.Key()
			}
		}
	}
	return o.lists[asset], nil
}

// orphan describes data that no asset worker reads: an asset the site
// file does not list (unknown-asset), or a subject uc.data.<asset> of a
// listed asset without the sensor token (malformed).
type orphan struct {
	asset, reason string
	filters       []string
}

type orphanConsumer struct {
	orphan
	cons jetstream.Consumer
}

// drainUnknown dead-letters what oc's consumer holds now.
func (s *Service) drainUnknown(ctx context.Context, oc *orphanConsumer) error {
	for ctx.Err() == nil {
		mb, err := oc.cons.FetchNoWait(256)
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
			cause := fmt.Errorf("live: %s: asset %q is not in the site file", m.Subject(), oc.asset)
			if oc.reason != broker.ReasonUnknownAsset {
				cause = fmt.Errorf("live: subject %q: want %s.<asset>.<sensor>", m.Subject(), broker.DataPrefix)
			}
			dctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
			err := broker.DeadLetter(dctx, s.stores.JS, oc.reason, m.Subject(), seq, m.Data(), s.site.Service.MaxMessageBytes, cause)
			cancel()
			if err != nil {
				m.Nak()
				return err
			}
			s.met.deadLetters.WithLabelValues(oc.reason).Inc()
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
