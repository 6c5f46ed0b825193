package broker

import (
	"cmp"
	"context"
	"errors"
	"fmt"
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
}

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
	if set.LeaseTTL == 0 {
		set.LeaseTTL = 5 * time.Second
	}
	storage := jetstream.FileStorage
	if set.Memory {
		storage = jetstream.MemoryStorage
	}
	streams := []jetstream.StreamConfig{
		{Name: StreamData, Subjects: []string{DataPrefix + ".>"}, MaxAge: set.DataMaxAge, MaxBytes: set.DataMaxBytes, Discard: jetstream.DiscardOld, Duplicates: 2 * time.Minute},
		{Name: StreamEstimates, Subjects: []string{EstimatePrefix + ".>"}, Duplicates: set.Duplicates},
		{Name: StreamAlarms, Subjects: []string{AlarmPrefix + ".>"}, Duplicates: set.Duplicates},
		{Name: StreamDeadLetter, Subjects: []string{DeadLetterPrefix + ".>"}, Duplicates: set.Duplicates, MaxAge: DeadLetterMaxAge, MaxBytes: set.DeadLetterMaxBytes, Discard: jetstream.DiscardOld},
	}
	st := &Stores{JS: js, LeaseTTL: set.LeaseTTL}
	for _, cfg := range streams {
		cfg.Storage = storage
		cfg.Replicas = set.Replicas
		// The history and alarm queries position themselves by single-message
		// lookups; with direct get any server holding the stream answers them
		// without the stream leader's request path (28-40% faster queries on
		// the loopback benchmarks). On one replica that server is the stream
		// itself; with more, a lagging follower could answer, and a binary
		// search over sequence numbers must not see a stale stream.
		if set.Replicas == 1 && (cfg.Name == StreamEstimates || cfg.Name == StreamAlarms) {
			cfg.AllowDirect = true
		}
		var err error
		if cfg.Name == StreamDeadLetter && set.DeadLetterMaxBytes == 0 {
			err = defaultDeadLetterBound(ctx, js, &cfg, cmp.Or(set.DeadLetterDefault, DefaultDeadLetterMaxBytes), cmp.Or(set.DeadLetterMin, MinDeadLetterMaxBytes))
		} else {
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
		k.cfg.Replicas = set.Replicas
		kv, err := js.CreateOrUpdateKeyValue(ctx, k.cfg)
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
// it), and no bound when the store cannot reserve even that. cfg.MaxBytes
// is left as applied.
func defaultDeadLetterBound(ctx context.Context, js jetstream.JetStream, cfg *jetstream.StreamConfig, want, floor int64) error {
	for try := 4 * max(want, floor); ; try /= 2 {
		try = max(try, floor)
		cfg.MaxBytes = try
		err := createOrUpdateStream(ctx, js, *cfg)
		if err == nil {
			cfg.MaxBytes = max(try/4, floor)
			return createOrUpdateStream(ctx, js, *cfg)
		}
		if !insufficientStorage(err) {
			return err
		}
		if try == floor {
			break
		}
	}
	cfg.MaxBytes = -1
	return createOrUpdateStream(ctx, js, *cfg)
}

// errCodeStreamNameInUse is the JetStream API error code of a stream
// created with a configuration other than that of a stream of the same
// name made meanwhile.
const errCodeStreamNameInUse = 10058

// createOrUpdateStream is js.CreateOrUpdateStream, tried again when
// another process created the stream with another configuration between
// the client's lookup and its create (serve processes starting together:
// the dead-letter bound is found by trying bounds, so their
// configurations differ for a moment); the next try updates it.
func createOrUpdateStream(ctx context.Context, js jetstream.JetStream, cfg jetstream.StreamConfig) error {
	for attempt := 0; ; attempt++ {
		_, err := js.CreateOrUpdateStream(ctx, cfg)
		var je jetstream.JetStreamError
		if err == nil || attempt == 4 || !errors.As(err, &je) || je.APIError() == nil || je.APIError().ErrorCode != errCodeStreamNameInUse {
			return err
		}
	}
}

// insufficientStorage reports whether err is the broker refusing a
// stream's byte bound that it cannot reserve.
func insufficientStorage(err error) bool {
	var je jetstream.JetStreamError
	if !errors.As(err, &je) || je.APIError() == nil {
		return false
	}
	c := je.APIError().ErrorCode
	return c == errCodeInsufficientStorage || c == errCodeInsufficientMemory
}

// Auth holds client credentials; the zero value connects without any.
type Auth struct {
	User, Password string
	Token          string
}

// Connect dials url (a comma-separated list of nats:// URLs for a cluster)
// with the credentials in auth. The connection retries and reconnects for
// ever, so a broker restart does not end the client.
func Connect(url, name string, auth Auth) (*nats.Conn, error) {
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
	nc, err := nats.Connect(url, opts...)
	if err != nil {
		return nil, fmt.Errorf("broker: connect %s: %w", url, err)
	}
	return nc, nil
}
