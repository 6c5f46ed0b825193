package broker

import (
	"cmp"
	"context"
	"crypto/x509"
	"errors"
	"fmt"
	"io"
	"maps"
	"math/rand/v2"
	"net"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// StreamSettings sizes the streams and buckets; the zero value of each field
// is documented beside it.
type StreamSettings struct {
	// Replicas of every stream and bucket; 0 means 1. Use 3 on a
	// three-node cluster.
	Replicas int
	// DataMaxAge bounds how long raw sensor batches are kept; 0 means 24 h.
	DataMaxAge time.Duration
	// DataMaxBytes bounds the raw sensor batches kept, bytes: past it the
	// oldest are discarded for new ones, so that a store too small for
	// DataMaxAge of data shortens the raw history instead of refusing new
	// data. 0 means no bound but the age.
	DataMaxBytes int64
	// EstimateMaxAge bounds how long estimates are kept (stream UC_EST,
	// the estimate history), by the broker's clock when each was stored;
	// 0 means DefaultEstimateMaxAge. EstimateMaxBytes bounds them in
	// bytes; 0 means no bound but the age. Past either the oldest are
	// discarded for new ones, so that the history shortens instead of
	// the store filling and refusing new estimates. The broker reserves
	// a byte bound in its store when the stream is made, and refuses one
	// it cannot reserve (Setup then fails with a *BoundError).
	EstimateMaxAge   time.Duration
	EstimateMaxBytes int64
	// AlarmMaxAge and AlarmMaxBytes are the same for the alarms (stream
	// UC_ALARM); AlarmMaxAge 0 means DefaultAlarmMaxAge.
	AlarmMaxAge   time.Duration
	AlarmMaxBytes int64
	// DeadLetterMaxBytes bounds the dead letters kept (stream UC_DLQ),
	// bytes: past it the oldest are discarded for new ones, so that refused
	// data (a gateway sending late or malformed batches, a log replayed
	// twice) cannot fill the store that new data needs. The broker
	// reserves the bound in its store when the stream is made, and refuses
	// a bound it cannot reserve (Setup then fails with a *BoundError). 0
	// means DeadLetterDefault, or about a quarter of a store too small for
	// four times that, at least DeadLetterMin, and no bound on a store
	// that cannot reserve even that (see defaultDeadLetterBound); Stores
	// says what was applied. Dead letters are also dropped after
	// DeadLetterMaxAge.
	DeadLetterMaxBytes int64
	// DeadLetterDefault is the bound DeadLetterMaxBytes 0 aims at; 0
	// means DefaultDeadLetterMaxBytes.
	DeadLetterDefault int64
	// DeadLetterMin is the least bound DeadLetterMaxBytes 0 is cut to on
	// a small store, tried before the dead letters are left unbounded;
	// 0 means MinDeadLetterMaxBytes. A caller that takes messages of up
	// to N bytes gives 4 N (the live pipeline: four times
	// max_message_bytes, the least dlq_max_bytes it takes), so that a
	// store left unbounded could not have held any bound it allows.
	DeadLetterMin int64
	// Duplicates is the deduplication window of estimates and alarms; 0
	// means 1 h.
	Duplicates time.Duration
	// LeaseTTL is how long a worker's lease on an asset lives without a
	// refresh; 0 means 5 s.
	LeaseTTL time.Duration
	// Memory stores everything in memory instead of files (tests only).
	Memory bool
	// StoreBytes is the size of the broker's store, bytes, when the
	// caller knows it (the embedded broker's limit, Server.MaxStore); 0
	// when not (a cluster). A default dead-letter bound found below its
	// aim is kept by a later Setup on a store of the same size, and found
	// again on a store of another size (see adoptDeadLetterBound).
	StoreBytes int64
	// Notify, when set, is given a line for the log when Setup waits for
	// another process (the dead-letter bound that the serve which made
	// the stream is finding).
	Notify func(msg string)
}

// DefaultEstimateMaxAge is how long estimates are kept when
// StreamSettings gives no EstimateMaxAge: 400 days, a year and a season
// to compare against, about 2.5 GB for a four-sensor DC asset with 10 s
// windows (some 720 bytes an estimate). DefaultAlarmMaxAge is the
// alarms': ten years, since they are few (a handful a day for such an
// asset) and are the record of what happened to the asset.
const (
	DefaultEstimateMaxAge = 400 * 24 * time.Hour
	DefaultAlarmMaxAge    = 10 * 365 * 24 * time.Hour
)

// DefaultDeadLetterMaxBytes is the dead-letter stream's bound when
// StreamSettings gives none (256 MiB), MinDeadLetterMaxBytes the least a
// default bound is cut to on a store that cannot reserve it (4 MiB: four
// of the largest sensor messages the pipeline takes by default);
// DeadLetterMaxAge is how long a dead letter is kept.
const (
	DefaultDeadLetterMaxBytes = 256 << 20
	MinDeadLetterMaxBytes     = 4 << 20
	DeadLetterMaxAge          = 7 * 24 * time.Hour
)

// errCodeInsufficientStorage and errCodeInsufficientMemory are the
// JetStream API error codes of a stream whose byte bound the server cannot
// reserve, in a file and a memory store.
const (
	errCodeInsufficientStorage = 10047
	errCodeInsufficientMemory  = 10028
)

// Setup creates or updates the streams and key-value buckets the pipeline
// uses (see the package documentation) and returns their handles.
func Setup(ctx context.Context, js jetstream.JetStream, set StreamSettings) (*Stores, error) {
	if set.Replicas == 0 {
		set.Replicas = 1
	}
	if set.DataMaxAge == 0 {
		set.DataMaxAge = 24 * time.Hour
	}
	if set.Duplicates == 0 {
		set.Duplicates = time.Hour
	}
	if set.EstimateMaxAge == 0 {
		set.EstimateMaxAge = DefaultEstimateMaxAge
	}
	if set.AlarmMaxAge == 0 {
		set.AlarmMaxAge = DefaultAlarmMaxAge
	}
	if set.LeaseTTL == 0 {
		set.LeaseTTL = 5 * time.Second
	}
	storage := jetstream.FileStorage
	if set.Memory {
		storage = jetstream.MemoryStorage
	}
	streams := []jetstream.StreamConfig{
		{Name: StreamData, Subjects: []string{DataPrefix + ".>"}, MaxAge: set.DataMaxAge, MaxBytes: set.DataMaxBytes, Discard: jetstream.DiscardOld, Duplicates: 2 * time.Minute},
		// The estimate and alarm histories were kept without bound (review
		// rv29a, finding 6: 6.2 MB a day for one asset, until the store
		// was full and refused new estimates); a stream made so is given
		// its bounds by this update. nats-server refuses a duplicate
		// window longer than the max age.
		{Name: StreamEstimates, Subjects: []string{EstimatePrefix + ".>"}, Duplicates: min(set.Duplicates, set.EstimateMaxAge), MaxAge: set.EstimateMaxAge, MaxBytes: set.EstimateMaxBytes, Discard: jetstream.DiscardOld},
		{Name: StreamAlarms, Subjects: []string{AlarmPrefix + ".>"}, Duplicates: min(set.Duplicates, set.AlarmMaxAge), MaxAge: set.AlarmMaxAge, MaxBytes: set.AlarmMaxBytes, Discard: jetstream.DiscardOld},
		{Name: StreamDeadLetter, Subjects: []string{DeadLetterPrefix + ".>"}, Duplicates: set.Duplicates, MaxAge: DeadLetterMaxAge, MaxBytes: set.DeadLetterMaxBytes, Discard: jetstream.DiscardOld},
	}
	st := &Stores{JS: js, LeaseTTL: set.LeaseTTL}
	for _, cfg := range streams {
		cfg.Storage = storage
		cfg.Replicas = st.keepReplicas(ctx, cfg.Name, set.Replicas)
		// The history and alarm queries position themselves by single-message
		// lookups; with direct get any server holding the stream answers them
		// without the stream leader's request path (28-40% faster queries on
		// the loopback benchmarks). On one replica that server is the stream
		// itself; with more, a lagging follower could answer, and a binary
		// search over sequence numbers must not see a stale stream.
		if cfg.Replicas == 1 && (cfg.Name == StreamEstimates || cfg.Name == StreamAlarms) {
			cfg.AllowDirect = true
		}
		var err error
		var stood deadLetterMark
		switch {
		case cfg.Name == StreamDeadLetter && set.DeadLetterMaxBytes == 0:
			stood = standingDeadLetterMark(ctx, js)
			err = defaultDeadLetterBound(ctx, js, &cfg, deadLetterAim{want: cmp.Or(set.DeadLetterDefault, DefaultDeadLetterMaxBytes), floor: cmp.Or(set.DeadLetterMin, MinDeadLetterMaxBytes), store: set.StoreBytes}, set.Notify)
		case cfg.Name == StreamDeadLetter:
			stood = standingDeadLetterMark(ctx, js)
			err = createOrUpdateStream(ctx, js, markGivenDeadLetterBound(cfg))
		default:
			err = createOrUpdateStream(ctx, js, cfg)
		}
		if err != nil {
			if insufficientStorage(err) && cfg.MaxBytes > 0 {
				return nil, &BoundError{Stream: cfg.Name, MaxBytes: cfg.MaxBytes, Err: err}
			}
			return nil, fmt.Errorf("broker: stream %s: %w", cfg.Name, err)
		}
		if cfg.Name == StreamDeadLetter {
			st.DeadLetterMaxBytes = max(cfg.MaxBytes, 0)
			given := set.DeadLetterMaxBytes != 0
			if stood.ok && (stood.given || given) && (stood.given != given || stood.bound != cfg.MaxBytes) {
				st.DeadLetterReplaced = &DeadLetterReplaced{Bound: max(stood.bound, 0), Given: stood.given}
			}
		}
	}
	kvs := []struct {
		dst *jetstream.KeyValue
		cfg jetstream.KeyValueConfig
	}{
		{&st.Latest, jetstream.KeyValueConfig{Bucket: BucketLatest, History: 1}},
		{&st.State, jetstream.KeyValueConfig{Bucket: BucketState, History: 1}},
		{&st.Lease, jetstream.KeyValueConfig{Bucket: BucketLease, History: 1, TTL: set.LeaseTTL}},
		{&st.Workers, jetstream.KeyValueConfig{Bucket: BucketWorkers, History: 1, TTL: set.LeaseTTL}},
	}
	for _, k := range kvs {
		k.cfg.Storage = storage
		k.cfg.Replicas = st.keepReplicas(ctx, "KV_"+k.cfg.Bucket, set.Replicas)
		kv, err := createOrUpdateKeyValue(ctx, js, k.cfg)
		if err != nil {
			return nil, fmt.Errorf("broker: bucket %s: %w", k.cfg.Bucket, err)
		}
		*k.dst = kv
	}
	return st, nil
}

// Stores holds the handles returned by Setup.
type Stores struct {
	JS                            jetstream.JetStream
	Latest, State, Lease, Workers jetstream.KeyValue
	LeaseTTL                      time.Duration
	// DeadLetterMaxBytes is the dead-letter stream's bound as applied
	// (0: none; see StreamSettings.DeadLetterMaxBytes).
	DeadLetterMaxBytes int64
	// DeadLetterReplaced, when not nil, is the bound the dead-letter
	// stream stood with, set otherwise than this Setup set it: a bound
	// given where this Setup found one, found where this one was given,
	// or given with another value. serve processes sharing a broker with
	// different dead-letter settings replace each other's bound (the last
	// to start sets it), so the caller says so.
	DeadLetterReplaced *DeadLetterReplaced
	// KeptReplicas lists the streams and buckets that the broker already
	// held with more replicas than StreamSettings.Replicas asked for:
	// Setup never lowers a stream's replicas (a site file left at
	// replicas = 1 would otherwise take a cluster's data down to one
	// copy), it keeps the broker's count and says so here.
	KeptReplicas []KeptReplicas
}

// DeadLetterReplaced is the bound the dead-letter stream stood with
// before Setup set another (see Stores.DeadLetterReplaced).
type DeadLetterReplaced struct {
	Bound int64 // bytes; 0 for none
	Given bool  // given in StreamSettings.DeadLetterMaxBytes, not found
}

// KeptReplicas is a stream (or a bucket's stream, "KV_<bucket>") whose
// replicas Setup kept above what it was asked for.
type KeptReplicas struct {
	Stream      string
	Have, Asked int
}

func (k KeptReplicas) String() string {
	return fmt.Sprintf("stream %s has %d replicas on the broker, the site file asks for %d: kept at %d (serve never lowers replicas; set [broker] replicas = %d in every site file on this cluster, or lower the stream's replicas on the broker itself)",
		k.Stream, k.Have, k.Asked, k.Have, k.Have)
}

// keepReplicas returns the replicas to give stream: asked, or the
// stream's present count when that is higher (noted in KeptReplicas).
func (st *Stores) keepReplicas(ctx context.Context, stream string, asked int) int {
	have := 0
	for attempt := 0; attempt < 3 && ctx.Err() == nil; attempt++ {
		actx, cancel := context.WithTimeout(ctx, attemptTimeout)
		s, err := st.JS.Stream(actx, stream)
		if err == nil {
			have = s.CachedInfo().Config.Replicas
		}
		cancel()
		if err == nil || !noAnswer(err) {
			break
		}
	}
	if have > asked {
		st.KeptReplicas = append(st.KeptReplicas, KeptReplicas{Stream: stream, Have: have, Asked: asked})
		return have
	}
	return asked
}

// BoundError is Setup's error for a stream whose byte bound the store
// cannot reserve.
type BoundError struct {
	Stream   string // the stream's name
	MaxBytes int64  // the bound asked for
	Err      error  // the broker's refusal
}

func (e *BoundError) Error() string {
	return fmt.Sprintf("broker: stream %s: %v (its byte bound, %d, is more than the store can reserve)", e.Stream, e.Err, e.MaxBytes)
}

func (e *BoundError) Unwrap() error { return e.Err }

// defaultDeadLetterBound creates or updates the dead-letter stream cfg
// with a default bound: want, or, on a store that cannot reserve four
// times that, a quarter of the largest power-of-two fraction of four
// times it that the store can reserve (found by asking for it), so that
// the dead letters never take more than about a quarter of the room left;
// at least floor (which is always tried: the halving need not land on
// it), and no bound when the store cannot reserve even that; want and
// floor are aim's. cfg.MaxBytes is left as applied. notify, when not nil,
// is told when it waits for another process's bound.
func defaultDeadLetterBound(ctx context.Context, js jetstream.JetStream, cfg *jetstream.StreamConfig, aim deadLetterAim, notify func(string)) error {
	want, floor := aim.want, aim.floor
	// serve processes starting together each find the bound. Their probes
	// of one stream take each other's room (a probe of four times the
	// bound held by one made another's fail), so they could settle on
	// different bounds (32 and 64 MiB on a store that had room for the
	// larger). A new stream is therefore probed with create-only requests:
	// the process whose create succeeds finds the bound and marks the
	// stream with it (deadLetterBoundKey), and one whose create meets the
	// stream made meanwhile waits for that mark and takes the bound.
	lctx, cancel := context.WithTimeout(ctx, attemptTimeout)
	_, err := js.Stream(lctx, cfg.Name)
	cancel()
	if errors.Is(err, jetstream.ErrStreamNotFound) {
		done, err := createDeadLetterBound(ctx, js, cfg, aim, notify)
		if done || err != nil {
			return err
		}
	} else if err == nil {
		// A stream that stands: one another Setup is probing or has
		// marked (with the same aim) is taken as that Setup leaves it.
		done, err := adoptDeadLetterBound(ctx, js, cfg, aim, notify)
		if done || err != nil {
			return err
		}
	}
	for try := 4 * max(want, floor); ; try /= 2 {
		try = max(try, floor)
		cfg.MaxBytes = try
		err := createOrUpdateStream(ctx, js, *cfg)
		if err == nil {
			cfg.MaxBytes = max(try/4, floor)
			return createOrUpdateStream(ctx, js, markDeadLetterBound(*cfg, aim))
		}
		if !insufficientStorage(err) {
			return err
		}
		if try == floor {
			break
		}
	}
	cfg.MaxBytes = -1
	return createOrUpdateStream(ctx, js, markDeadLetterBound(*cfg, aim))
}

// deadLetterBoundKey marks the dead-letter stream with how its bound was
// set: "BOUND WANT FLOOR UNIX STORE" for a bound found for the aim WANT
// and the floor FLOOR (see defaultDeadLetterBound) at the Unix time UNIX
// on a store of STORE bytes (0: not known), or "BOUND given UNIX" for a
// bound given in StreamSettings. A mark of the version before this one
// ("BOUND WANT FLOOR") is read as found long ago on a store not known.
const deadLetterBoundKey = "undercurrent.dead_letter_bound"

// deadLetterProbeKey marks a dead-letter stream made by a create-only
// probe (createDeadLetterBound), whose maker goes on to find its bound
// and mark it: another Setup waits for that mark only on a stream that
// carries this one. A stream made unmarked by a serve of an earlier
// version is probed at once (review rv24d, finding 10: a new serve joining an older
// serve's broker waited the whole deadLetterMarkWait "for the bound
// another serve is finding" although nothing was finding it).
const deadLetterProbeKey = "undercurrent.dead_letter_probe"

// withProbeMark returns cfg marked as a create-only probe's.
func withProbeMark(cfg jetstream.StreamConfig) jetstream.StreamConfig {
	md := make(map[string]string, len(cfg.Metadata)+1)
	maps.Copy(md, cfg.Metadata)
	md[deadLetterProbeKey] = strconv.FormatInt(time.Now().Unix(), 10)
	cfg.Metadata = md
	return cfg
}

// deadLetterAim is what a default dead-letter bound is found for: the aim
// want, the least bound floor, on a store of store bytes (0: not known).
type deadLetterAim struct{ want, floor, store int64 }

// deadLetterMark is a dead-letter stream's mark, read.
type deadLetterMark struct {
	ok    bool // a mark that holds for the stream's bound
	given bool
	bound int64 // -1 for none
	aim   deadLetterAim
	at    time.Time
}

// readDeadLetterMark reads info's mark. A mark whose bound is not the
// stream's (the stream updated by an earlier version since) is not ok.
func readDeadLetterMark(info *jetstream.StreamInfo) deadLetterMark {
	var m deadLetterMark
	f := strings.Fields(info.Config.Metadata[deadLetterBoundKey])
	var err error
	num := func(s string) int64 {
		n, e := strconv.ParseInt(s, 10, 64)
		err = cmp.Or(err, e)
		return n
	}
	switch {
	case len(f) == 3 && f[1] == "given":
		m.given, m.bound, m.at = true, num(f[0]), time.Unix(num(f[2]), 0)
	case len(f) == 3 || len(f) == 5:
		m.bound, m.aim.want, m.aim.floor = num(f[0]), num(f[1]), num(f[2])
		if len(f) == 5 {
			m.at, m.aim.store = time.Unix(num(f[3]), 0), num(f[4])
		}
	default:
		return m
	}
	m.ok = err == nil && m.bound == info.Config.MaxBytes
	return m
}

// standingDeadLetterMark reads the mark of the dead-letter stream as it
// stands (not ok when it does not stand, or cannot be looked up).
func standingDeadLetterMark(ctx context.Context, js jetstream.JetStream) deadLetterMark {
	lctx, cancel := context.WithTimeout(ctx, attemptTimeout)
	defer cancel()
	st, err := js.Stream(lctx, StreamDeadLetter)
	if err != nil {
		return deadLetterMark{}
	}
	return readDeadLetterMark(st.CachedInfo())
}

// markDeadLetterBound returns cfg with the mark of a bound found now for
// aim.
func markDeadLetterBound(cfg jetstream.StreamConfig, aim deadLetterAim) jetstream.StreamConfig {
	return withDeadLetterMark(cfg, fmt.Sprintf("%d %d %d %d %d", cfg.MaxBytes, aim.want, aim.floor, time.Now().Unix(), aim.store))
}

// markGivenDeadLetterBound returns cfg with the mark of a bound given in
// the settings.
func markGivenDeadLetterBound(cfg jetstream.StreamConfig) jetstream.StreamConfig {
	return withDeadLetterMark(cfg, fmt.Sprintf("%d given %d", cfg.MaxBytes, time.Now().Unix()))
}

func withDeadLetterMark(cfg jetstream.StreamConfig, mark string) jetstream.StreamConfig {
	md := make(map[string]string, len(cfg.Metadata)+1)
	maps.Copy(md, cfg.Metadata)
	md[deadLetterBoundKey] = mark
	cfg.Metadata = md
	return cfg
}

// createDeadLetterBound probes a new dead-letter stream's bound with
// create-only requests (see defaultDeadLetterBound). It reports done when
// the stream stands with a found bound in cfg.MaxBytes, its own or that of
// the process that made it meanwhile; not done when the stream was made
// meanwhile and no mark came in deadLetterMarkWait (a Setup of an earlier
// version), for the caller to probe it by updates.
func createDeadLetterBound(ctx context.Context, js jetstream.JetStream, cfg *jetstream.StreamConfig, aim deadLetterAim, notify func(string)) (bool, error) {
	want, floor := aim.want, aim.floor
	for try := 4 * max(want, floor); ; try /= 2 {
		try = max(try, floor)
		probe := withProbeMark(*cfg)
		probe.MaxBytes = try
		_, err := createOnly(ctx, js, probe)
		if noAnswer(err) {
			// A create that goes unanswered on a cluster (see retrying):
			// whether it made the stream is not known, so the bound is
			// probed by updates as for a stream that stands.
			return false, nil
		}
		if err == nil {
			cfg.MaxBytes = max(try/4, floor)
			return true, createOrUpdateStream(ctx, js, markDeadLetterBound(*cfg, aim))
		}
		if errors.Is(err, jetstream.ErrStreamNameAlreadyInUse) {
			return adoptDeadLetterBound(ctx, js, cfg, aim, notify)
		}
		if !insufficientStorage(err) {
			return false, err
		}
		if try == floor {
			probe.MaxBytes = -1
			if _, err := createOnly(ctx, js, probe); err != nil {
				if noAnswer(err) {
					return false, nil
				}
				if errors.Is(err, jetstream.ErrStreamNameAlreadyInUse) {
					return adoptDeadLetterBound(ctx, js, cfg, aim, notify)
				}
				return false, err
			}
			cfg.MaxBytes = -1
			return true, createOrUpdateStream(ctx, js, markDeadLetterBound(*cfg, aim))
		}
	}
}

// createOnly is js.CreateStream with one attempt's time (attemptTimeout).
func createOnly(ctx context.Context, js jetstream.JetStream, cfg jetstream.StreamConfig) (jetstream.Stream, error) {
	actx, cancel := context.WithTimeout(ctx, attemptTimeout)
	defer cancel()
	return js.CreateStream(actx, cfg)
}

// deadLetterMarkWait bounds the wait for another process's found bound;
// deadLetterFresh is how long a bound found below its aim on a store of
// a size not known is taken by other processes as theirs (they started
// together with the one that found it) before a start probes the room
// again (it may have grown); deadLetterNew is how long after its making
// an unmarked stream that a probe made (deadLetterProbeKey) is taken for
// one another process is probing (an older one, or one without the probe
// mark, is an earlier version's, probed at once).
const (
	deadLetterMarkWait = 10 * time.Second
	deadLetterFresh    = 30 * time.Second
	deadLetterNew      = 30 * time.Second
)

// adoptDeadLetterBound takes the bound another Setup found for the same
// aim and floor (done): at once when the aim was reached; when it was
// found below the aim, on a store of the same size, or, when the store's
// size is not known, less than deadLetterFresh ago (processes started
// together); waiting, up to deadLetterMarkWait, for the mark of a stream
// that a probe made (deadLetterProbeKey) less than deadLetterNew ago and
// not yet marked. Not done, for the
// caller to probe the room by updates: a bound found below its aim on a
// store of another size (broker.store_max_bytes raised, disk space freed)
// or longer ago, one found for another aim or given in the settings, a
// stream of an earlier version, or no mark in the time.
func adoptDeadLetterBound(ctx context.Context, js jetstream.JetStream, cfg *jetstream.StreamConfig, aim deadLetterAim, notify func(string)) (bool, error) {
	wctx, cancel := context.WithTimeout(ctx, deadLetterMarkWait)
	defer cancel()
	told := false
	for {
		actx, acancel := context.WithTimeout(wctx, attemptTimeout)
		st, err := js.Stream(actx, cfg.Name)
		acancel()
		if err == nil {
			info := st.CachedInfo()
			m := readDeadLetterMark(info)
			switch {
			case m.ok && !m.given && m.aim.want == aim.want && m.aim.floor == aim.floor:
				atAim := m.bound == max(aim.want, aim.floor)
				sameStore := aim.store > 0 && m.aim.store == aim.store
				fresh := aim.store == 0 && time.Since(m.at) < deadLetterFresh
				if !atAim && !sameStore && !fresh {
					return false, nil
				}
				// The mark is kept as it was: a restart adopting it
				// does not make a bound found below its aim fresh again.
				cfg.MaxBytes = m.bound
				return true, createOrUpdateStream(ctx, js, withDeadLetterMark(*cfg, info.Config.Metadata[deadLetterBoundKey]))
			case m.ok, time.Since(info.Created) > deadLetterNew, info.Config.Metadata[deadLetterProbeKey] == "":
				// Marked otherwise, made long ago, or made unmarked by
				// a serve of an earlier version, which never marks it.
				return false, nil
			}
			if !told && notify != nil {
				notify(fmt.Sprintf("waiting up to %v for the dead-letter bound that the serve which made the stream moments ago is finding", deadLetterMarkWait))
				told = true
			}
		}
		select {
		case <-wctx.Done():
			if ctx.Err() != nil {
				return false, ctx.Err()
			}
			return false, nil
		case <-time.After(50 * time.Millisecond):
		}
	}
}

// errCodeStreamNameInUse is the JetStream API error code of a stream
// created with a configuration other than that of a stream of the same
// name made meanwhile.
const errCodeStreamNameInUse = 10058

// errCodeNoPeers is the JetStream API error code "no suitable peers for
// placement": a replicated stream asked of a cluster whose JetStream peers
// have not all reported yet. On a fresh three-node cluster under load,
// three Setups started together all got it once (TestSetupTogetherOnFreshCluster),
// a moment after every node said its JetStream was current; it is tried
// again until the start-up time ends, when the error is returned (a
// cluster that truly has too few nodes for the replicas asked).
const errCodeNoPeers = 10005

// attemptTimeout bounds one lookup of a stream, and firstAttempt one
// create or update, doubled on each try up to attemptTimeout: a clustered
// create that gets no answer in that time is looked up and tried again
// (see retrying). Two processes creating a stream at once on a
// three-node nats-server 2.15.2 cluster both went unanswered, for every
// stream; the stream existed a moment later.
const (
	attemptTimeout = 4 * time.Second
	firstAttempt   = time.Second
)

// createOrUpdateStream is js.CreateOrUpdateStream, tried again (see
// retrying) when another process created the stream with another
// configuration between the client's lookup and its create (serve
// processes starting together: the dead-letter bound is found by trying
// bounds, so their configurations differ for a moment), or when the
// request got no answer (two creates of a new stream on a cluster: one
// can go unanswered while the cluster places the other); the next try
// looks the stream up and updates it.
func createOrUpdateStream(ctx context.Context, js jetstream.JetStream, cfg jetstream.StreamConfig) error {
	return retrying(ctx, func(actx context.Context) error {
		_, err := js.CreateOrUpdateStream(actx, cfg)
		return err
	})
}

// createOrUpdateKeyValue is js.CreateOrUpdateKeyValue, tried again as
// createOrUpdateStream is.
func createOrUpdateKeyValue(ctx context.Context, js jetstream.JetStream, cfg jetstream.KeyValueConfig) (jetstream.KeyValue, error) {
	var kv jetstream.KeyValue
	err := retrying(ctx, func(actx context.Context) error {
		var err error
		kv, err = js.CreateOrUpdateKeyValue(actx, cfg)
		return err
	})
	return kv, err
}

// retrying runs op, with firstAttempt doubling up to attemptTimeout,
// until it succeeds, fails otherwise than by a name in use, no peers for
// placement yet or a request without an answer, or ctx ends (then the last error is returned, saying
// which it was). It waits between tries, doubling from 100 ms up to 2 s
// with jitter, so that processes starting together do not ask in step.
func retrying(ctx context.Context, op func(context.Context) error) error {
	wait, limit := 100*time.Millisecond, firstAttempt
	for attempt := 1; ; attempt++ {
		actx, cancel := context.WithTimeout(ctx, limit)
		limit = min(2*limit, attemptTimeout)
		err := op(actx)
		cancel()
		if err == nil {
			return nil
		}
		var je jetstream.JetStreamError
		code := 0
		if errors.As(err, &je) && je.APIError() != nil {
			code = int(je.APIError().ErrorCode)
		}
		if code != errCodeStreamNameInUse && code != errCodeNoPeers && !noAnswer(err) || insufficientStorage(err) {
			return err
		}
		select {
		case <-ctx.Done():
			if noAnswer(err) {
				return fmt.Errorf("no answer from the broker's JetStream in %d tries (is the cluster's JetStream up, with a leader?): %w", attempt, err)
			}
			if code == errCodeNoPeers {
				return fmt.Errorf("the broker found no servers to place the stream's replicas on in %d tries (does the cluster have as many JetStream servers up as the replicas asked for?): %w", attempt, err)
			}
			return err
		case <-time.After(wait/2 + time.Duration(rand.Int64N(int64(wait)))):
		}
		wait = min(2*wait, 2*time.Second)
	}
}

// noAnswer reports whether err is a JetStream request that got no answer
// (timed out, or had no responder yet).
func noAnswer(err error) bool {
	return errors.Is(err, context.DeadlineExceeded) || errors.Is(err, nats.ErrTimeout) || errors.Is(err, nats.ErrNoResponders)
}

// insufficientStorage reports whether err is the broker refusing a
// stream's byte bound that it cannot reserve.
func insufficientStorage(err error) bool {
	var je jetstream.JetStreamError
	if !errors.As(err, &je) || je.APIError() == nil {
		return false
	}
	c := je.APIError().ErrorCode
	// A cluster refuses a create it has no room for as "no suitable peers
	// for placement, insufficient storage" (nats-server 2.15.2).
	return c == errCodeInsufficientStorage || c == errCodeInsufficientMemory ||
		c == errCodeNoPeers && strings.Contains(je.APIError().Description, "insufficient storage")
}

// Auth holds client credentials and TLS settings; the zero value
// connects without any.
type Auth struct {
	User, Password string
	Token          string
	// UserFrom says where User came from (such as "--user" or "the site
	// file's [broker] user"), for messages.
	UserFrom string
	// CAFile is a PEM file of the certificate authorities to trust for
	// the broker's certificate (besides the system's); CertFile and
	// KeyFile are the client's certificate and key, for a broker that
	// asks for one (both or neither); CredsFile is a NATS credentials
	// file (user JWT and seed), for a broker that authenticates that way.
	CAFile, CertFile, KeyFile string
	CredsFile                 string
	// inProcess, when set, is the server in this process to connect to
	// without a listener (Server.ConnectInProcess).
	inProcess nats.InProcessConnProvider
}

// Connect dials url (a comma-separated list of nats:// or tls:// URLs for
// a cluster) with the credentials in auth. The connection retries and
// reconnects for ever, so a broker restart does not end the client. A
// failure to connect says what was tried and, where the cause is a common
// one, what to check.
func Connect(url, name string, auth Auth) (*nats.Conn, error) {
	if err := checkURLs(url); err != nil {
		return nil, err
	}
	if (auth.CertFile == "") != (auth.KeyFile == "") {
		return nil, fmt.Errorf("broker: a client certificate needs both its certificate file and its key file (got %q and %q)", auth.CertFile, auth.KeyFile)
	}
	for _, f := range []string{auth.CAFile, auth.CertFile, auth.KeyFile, auth.CredsFile} {
		if f == "" {
			continue
		}
		if _, err := os.Stat(f); err != nil {
			return nil, fmt.Errorf("broker: %w", err)
		}
	}
	opts := []nats.Option{
		nats.Name(name),
		nats.MaxReconnects(-1),
		nats.ReconnectWait(100 * time.Millisecond),
		nats.RetryOnFailedConnect(false),
		nats.Timeout(5 * time.Second),
	}
	if auth.User != "" {
		opts = append(opts, nats.UserInfo(auth.User, auth.Password))
	}
	if auth.Token != "" {
		opts = append(opts, nats.Token(auth.Token))
	}
	if auth.CAFile != "" {
		opts = append(opts, nats.RootCAs(auth.CAFile))
	}
	if auth.CertFile != "" {
		opts = append(opts, nats.ClientCert(auth.CertFile, auth.KeyFile))
	}
	if auth.CredsFile != "" {
		opts = append(opts, nats.UserCredentials(auth.CredsFile))
	}
	if auth.inProcess != nil {
		opts = append(opts, nats.InProcessServer(auth.inProcess))
	}
	nc, err := nats.Connect(url, opts...)
	if err != nil {
		return nil, fmt.Errorf("broker: connect %s: %w%s", url, err, connectHint(err, auth))
	}
	return nc, nil
}

// checkURLs refuses a broker URL list with a scheme a NATS client port
// does not speak (an http:// URL is the monitoring port's).
func checkURLs(list string) error {
	for _, u := range strings.Split(list, ",") {
		u = strings.TrimSpace(u)
		scheme, _, ok := strings.Cut(u, "://")
		if !ok {
			continue // host:port
		}
		switch strings.ToLower(scheme) {
		case "nats", "tls", "ws", "wss":
		case "http", "https":
			return fmt.Errorf("broker: %s: want the broker's NATS client port as nats://HOST:PORT (tls:// for TLS; 4222 by default); an %s:// URL is its monitoring port's", u, strings.ToLower(scheme))
		default:
			return fmt.Errorf("broker: %s: scheme %q: want nats://HOST:PORT (or tls://, ws://, wss://)", u, scheme)
		}
	}
	return nil
}

// connectHint is what to check after a failed connect, given its error.
func connectHint(err error, auth Auth) string {
	var nerr net.Error
	var uerr x509.UnknownAuthorityError
	var herr x509.HostnameError
	switch {
	case errors.Is(err, nats.ErrAuthorization) || strings.Contains(strings.ToLower(err.Error()), "authorization violation") ||
		errors.Is(err, nats.ErrAuthExpired) || errors.Is(err, nats.ErrAuthRevoked):
		who := "with no user"
		switch {
		case auth.CredsFile != "":
			who = "with the credentials file " + auth.CredsFile
		case auth.User != "":
			who = fmt.Sprintf("as user %q", auth.User)
			if auth.UserFrom != "" {
				who += " (from " + auth.UserFrom + ")"
			}
		case auth.Token != "":
			who = "with a token"
		}
		return fmt.Sprintf(" (refused %s: check the user and password, token or credentials the broker expects)", who)
	case errors.As(err, &uerr) || strings.Contains(err.Error(), "certificate signed by unknown authority"):
		return " (the broker's certificate is signed by an authority this host does not trust: give its CA file as [broker] tls_ca or --tls-ca)"
	case errors.As(err, &herr):
		return " (the broker's certificate does not name the host in the URL)"
	case errors.Is(err, nats.ErrSecureConnRequired):
		return " (the broker requires TLS: use tls:// URLs, and [broker] tls_ca when its certificate is from a private authority)"
	case errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, nats.ErrBadHeaderMsg) ||
		(errors.As(err, &nerr) && nerr.Timeout()):
		return " (no NATS greeting: is this the broker's NATS client port, 4222 by default, and not its MQTT, monitoring (HTTP), WebSocket or cluster route port?)"
	}
	return ""
}
