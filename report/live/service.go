package live

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash/fnv"
	"log/slog"
	"net"
	"net/http"
	"os"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// Config wires a Service. Site and Conn are required.
type Config struct {
	Site *Site
	// Conn is a connection to the broker (embedded or a cluster).
	Conn *nats.Conn
	// Worker names this worker in leases and estimates; "" means
	// host-pid-random.
	Worker string
	// NewEstimator builds the fixed-geometry solver; nil means
	// NewInverseEstimator.
	NewEstimator NewEstimatorFunc
	// Commissioner fits geometry for model "commission"; nil means
	// InverseCommissioner.
	Commissioner Commissioner
	// HTTP overrides the site's listen address ("-" disables HTTP).
	HTTP string
	// Logger receives structured logs; nil discards them.
	Logger *slog.Logger
	// Memory keeps streams in memory (tests).
	Memory bool
	// External says the broker is not the embedded one (serve --broker):
	// its store's limits are in its own configuration, not the site
	// file's broker.store_max_bytes.
	External bool
	// StoreBytes is the embedded broker's store limit, bytes (0 for an
	// external broker): a dead-letter bound found below its aim is kept
	// by a restart on a store of the same size and found again on another.
	StoreBytes int64
	// StoreCheck, when set (the embedded broker: broker.Server's
	// StoreWriteError), reports the streams of the broker's store that
	// failed a write; such a stream refuses every write until the broker
	// is restarted. The worker calls it at each lease round.
	StoreCheck func() error
	// Version and Revision name the running build (the module version,
	// and the VCS revision it was built from, "" when not recorded):
	// exported as uc_build_info{version,revision} 1.
	Version, Revision string
	// OnEstimate, when set, is called after each estimate is acknowledged
	// with the time since its window closed (load tests).
	OnEstimate func(e *Estimate, latency time.Duration)
}

// Service is the continuous pipeline: it shares the site's assets with
// other workers through leases in the broker, processes the ones it holds
// and serves the HTTP API.
type Service struct {
	site         *Site
	nc           *nats.Conn
	id           string
	log          *slog.Logger
	met          *metrics
	stores       *broker.Stores
	newEstimator NewEstimatorFunc
	commissioner Commissioner
	onEstimate   func(*Estimate, time.Duration)
	httpAddr     string
	memory       bool
	external     bool
	storeBytes   int64
	storeCheck   func() error

	// stopped holds, per asset this worker has stopped for want of a
	// site file that says more (a commissioning needsSiteError), why.
	stopped sync.Map
	// waiting holds, per "commission" asset this worker holds that waits
	// for its conductors' currents to flow before it can be commissioned,
	// why.
	waiting sync.Map

	mu   sync.Mutex
	held map[string]*holding
	// leftElsewhere: assets this site file does not list whose data the
	// unknown-asset sweep leaves to another worker (logged once).
	leftElsewhere map[string]bool
	ready         chan struct{}
	httpLn        net.Listener
	readyErr      error

	// queryHook, when set (tests), is called by queries as their
	// consumer is created, reset and fetched from (see querycons.go).
	queryHook atomic.Pointer[func(ctx context.Context, event string)]
	// noConsumerReset (tests) makes queries behave as against a broker
	// without the consumer reset.
	noConsumerReset atomic.Bool
	// queryRetryHook, when set (tests), is called with each query step
	// about to be tried again (see rangeQuery.again).
	queryRetryHook atomic.Pointer[func(step string)]

	// storeFull holds the error of the last write the broker refused for
	// want of storage, until a write succeeds again (see noteStore).
	storeFull atomic.Pointer[string]
	// beatErr is the error of the latest heartbeat, nil once one
	// succeeds: /readyz fails while the worker cannot heartbeat (its
	// leases, in the same store, cannot be renewed either).
	beatErr atomic.Pointer[string]
	// storeFailed holds StoreCheck's error while the broker's store has
	// a stream that failed a write (see checkStore).
	storeFailed atomic.Pointer[string]
	// link follows the connection to the broker (brokerlink.go); beats
	// and sweeps count runs of failed heartbeats and unknown-asset
	// sweeps, logged once each.
	link          brokerLink
	beats, sweeps failStreak

	// digests holds each asset's settings digest (settingsDigest), taken
	// at New and carried in the heartbeat.
	digests map[string]string
	// settingsMu guards settingsWarned (other worker and asset -> the
	// digest last warned of) and settingsDiffer (asset -> the other live
	// workers whose digest differs, at the latest lease round).
	settingsMu     sync.Mutex
	settingsWarned map[string]string
	settingsDiffer map[string][]SettingsDiffer
}

type holding struct {
	rev uint64
	// cancel stops the asset's processing: with a nil cause it drains
	// (complete windows published, checkpoint written; see drainLimit),
	// with errLeaseLost it stops at once and writes nothing more.
	cancel  context.CancelCauseFunc
	done    chan error
	leaving bool // draining to hand the asset to another worker
	// lost says the lease was lost: the processing is told to stop and
	// is no longer renewed nor counted as held; the holding is dropped
	// (and the asset may be taken again) once the processing has ended.
	lost bool
}

// errLeaseLost is the cause with which an asset's processing is stopped
// when its lease could not be renewed: another worker may hold the asset
// by now, so nothing more is processed, published or checkpointed.
var errLeaseLost = errors.New("lease lost")

// errAbandoned is the cause with which a drain that did not end within
// its time at shutdown is cut short: what it had not published is left
// to the next holder, who resumes from the last checkpoint.
var errAbandoned = errors.New("drain abandoned at shutdown")

// New checks the configuration; Run does the work.
func New(cfg Config) (*Service, error) {
	if cfg.Site == nil || cfg.Conn == nil {
		return nil, errors.New("live: New: Site and Conn are required")
	}
	s := &Service{site: cfg.Site, nc: cfg.Conn, id: cfg.Worker, log: cfg.Logger, met: newMetrics(),
		newEstimator: cfg.NewEstimator, commissioner: cfg.Commissioner, onEstimate: cfg.OnEstimate,
		httpAddr: cfg.HTTP, memory: cfg.Memory, external: cfg.External, storeBytes: cfg.StoreBytes, storeCheck: cfg.StoreCheck, held: map[string]*holding{}, leftElsewhere: map[string]bool{}, ready: make(chan struct{})}
	if cfg.Version != "" || cfg.Revision != "" {
		s.met.buildInfo(cfg.Version, cfg.Revision)
	}
	if s.id == "" {
		host, _ := os.Hostname()
		var b [3]byte
		rand.Read(b[:])
		s.id = fmt.Sprintf("%s-%d-%s", host, os.Getpid(), hex.EncodeToString(b[:]))
	}
	if err := broker.ValidToken(s.id); err != nil {
		// Host names may hold dots; keep the id a valid key.
		s.id = sanitize(s.id)
	}
	if s.log == nil {
		s.log = slog.New(slog.NewTextHandler(discard{}, nil))
	}
	s.log = s.log.With("worker", s.id)
	s.watchBroker()
	if s.newEstimator == nil {
		s.newEstimator = defaultEstimator
	}
	if s.commissioner == nil {
		s.commissioner = defaultCommissioner
	}
	if s.newEstimator == nil {
		return nil, errors.New("live: New: no estimator configured")
	}
	if s.httpAddr == "" {
		s.httpAddr = s.site.Service.HTTP
	}
	// Fail at start, not at the first window, on a bad calibration file,
	// and warn of one whose logs were taken over a year ago (or after
	// now): the live readings are taken now (Calibration.CheckTaken).
	now := time.Now()
	s.digests = map[string]string{}
	for i := range s.site.Assets {
		a := &s.site.Assets[i]
		s.digests[a.Name] = settingsDigest(a)
		p, err := newProcessor(a, s.id)
		if err != nil {
			return nil, err
		}
		for j, c := range p.cals {
			for _, w := range c.CheckTaken(now, now) {
				s.log.Warn("calibration out of date", "asset", a.Name, "sensor", a.Sensors[j].Name, "calibration", a.Sensors[j].Calibration, "warning", w)
			}
		}
	}
	return s, nil
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }

func sanitize(id string) string {
	b := []byte(id)
	for i, c := range b {
		if !(c == '-' || c == '_' || (c >= '0' && c <= '9') || (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z')) {
			b[i] = '_'
		}
	}
	if len(b) > 64 {
		b = b[:64]
	}
	return string(b)
}

// ID returns the worker id.
func (s *Service) ID() string { return s.id }

// Ready is closed once the streams exist and the HTTP API listens.
func (s *Service) Ready() <-chan struct{} { return s.ready }

// HTTPAddr returns the API's address once Ready (empty when disabled).
func (s *Service) HTTPAddr() string {
	if s.httpLn == nil {
		return ""
	}
	return s.httpLn.Addr().String()
}

// Run creates the streams, serves the API and processes assets until ctx
// ends; then it stops taking data, publishes the windows already
// complete, writes checkpoints, hands its leases back and returns.
func (s *Service) Run(ctx context.Context) error {
	js, err := jetstream.New(s.nc)
	if err != nil {
		return fmt.Errorf("live: %w", err)
	}
	// Listen first, so that an address in use stops serve before it
	// touches the broker's streams; requests are served once they exist.
	if s.httpAddr != "-" {
		ln, err := net.Listen("tcp", s.httpAddr)
		if err != nil {
			return fmt.Errorf("live: http: %w", err)
		}
		s.httpLn = ln
		defer func() {
			if s.stores == nil {
				ln.Close()
			}
		}()
	}
	sctx, cancel := context.WithTimeout(ctx, 30*time.Second)
	s.stores, err = broker.Setup(sctx, js, broker.StreamSettings{
		Replicas: s.site.Broker.Replicas, DataMaxAge: s.site.Broker.DataRetention.Duration, DataMaxBytes: s.site.Broker.DataMaxBytes,
		EstimateMaxAge: s.site.Broker.EstimateRetention.Duration, EstimateMaxBytes: s.site.Broker.EstimateMaxBytes,
		AlarmMaxAge: s.site.Broker.AlarmRetention.Duration, AlarmMaxBytes: s.site.Broker.AlarmMaxBytes,
		DeadLetterMaxBytes: s.site.Broker.DLQMaxBytes, DeadLetterDefault: s.site.dlqDefault(), DeadLetterMin: s.site.dlqMin(),
		LeaseTTL: s.site.Service.LeaseTTL.Duration, Memory: s.memory, StoreBytes: s.storeBytes,
		Notify: func(msg string) { s.log.Info(msg, "stream", broker.StreamDeadLetter) }})
	cancel()
	if err != nil {
		return fmt.Errorf("live: %w%s", err, s.site.boundAdvice(err, s.external))
	}
	if r := s.stores.DeadLetterReplaced; r != nil {
		s.log.Warn(s.site.dlqReplacedWarning(r, s.stores.DeadLetterMaxBytes), "stream", broker.StreamDeadLetter)
	}
	if kept := s.stores.KeptReplicas; len(kept) > 0 {
		names := make([]string, len(kept))
		for i, k := range kept {
			names[i] = fmt.Sprintf("%s (%d)", k.Stream, k.Have)
		}
		s.log.Warn("replicas not lowered: "+kept[0].String(), "site_replicas", kept[0].Asked, "kept", strings.Join(names, ", "))
	}
	if cl := s.nc.ConnectedClusterName(); cl != "" && s.site.Broker.Replicas == 1 && len(s.stores.KeptReplicas) == 0 {
		s.log.Warn("the broker is a cluster but [broker] replicas = 1: each stream and bucket is kept on one node only, so losing that node loses or stalls its data; set replicas = 3 (the same in every site file on the cluster)", "cluster", cl)
	}
	if n := s.stores.DeadLetterMaxBytes; n > 0 {
		s.log.Info("dead letters kept up to a bound, the oldest giving way", "stream", broker.StreamDeadLetter, "max_bytes", n, "max_age", broker.DeadLetterMaxAge)
	} else {
		msg, attrs := s.site.dlqUnboundedWarning(s.external)
		s.log.Warn(msg, attrs...)
	}
	var srv *http.Server
	if ln := s.httpLn; ln != nil {
		var sln net.Listener
		srv, sln = newHTTPServer(s.Handler(), ln, defaultHTTPLimits)
		go srv.Serve(sln)
		s.log.Info("http api listening", "addr", ln.Addr().String())
		if !s.loopback() && s.site.Service.Token == "" {
			s.log.Warn("the HTTP API listens off loopback but no service token is configured: every API and /metrics request will be refused (401); set [service] token, or token_env and that variable, or listen on loopback",
				"addr", ln.Addr().String(), "token_env", s.site.Service.TokenEnv)
		}
	}
	close(s.ready)
	uctx, ucancel := context.WithCancel(ctx)
	swept := make(chan struct{})
	go func() { defer close(swept); s.unknownLoop(uctx, s.site.Service.LeaseTTL.Duration) }()
	err = s.leaseLoop(ctx)
	ucancel()
	<-swept
	if srv != nil {
		sd, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		srv.Shutdown(sd)
		cancel()
	}
	return err
}

// leaseLoop heartbeats, acquires and renews asset leases, and drains on exit.
func (s *Service) leaseLoop(ctx context.Context) error {
	ttl := s.site.Service.LeaseTTL.Duration
	tick := time.NewTicker(ttl / 4)
	defer tick.Stop()
	order := s.assetOrder()
	for {
		s.leaseRound(ctx, order)
		select {
		case <-ctx.Done():
			return s.releaseAll()
		case <-tick.C:
		}
	}
}

// assetOrder rotates the asset list by a hash of the worker id so that
// workers starting together reach for different assets first.
func (s *Service) assetOrder() []string {
	names := make([]string, len(s.site.Assets))
	for i, a := range s.site.Assets {
		names[i] = a.Name
	}
	sort.Strings(names)
	h := fnv.New32a()
	h.Write([]byte(s.id))
	k := int(h.Sum32() % uint32(len(names)))
	return append(names[k:], names[:k]...)
}

// workerBeat is a worker's entry in the workers bucket: when it last
// beat and the assets its site file lists, so that a worker whose site
// file lacks an asset that another's lists (a new asset being rolled
// out) leaves that asset's data to it instead of dead-lettering it, and
// each asset's settings digest (settingsDigest), so that workers whose
// site files differ for an asset warn of it (compareSettings).
type workerBeat struct {
	At       string            `json:"at"`
	Assets   []string          `json:"assets"`
	Settings map[string]string `json:"settings,omitempty"`
}

// ServedAssets reads the running workers' heartbeats (the workers
// bucket, whose entries expire a lease TTL after a worker stops) and
// returns the assets their site files list, sorted. known is false when
// that cannot be told: no running worker, a worker of an earlier version
// (its beat a time only), or no workers bucket. A sender (replay) can so
// tell an asset name the pipeline would dead-letter every batch of.
func ServedAssets(ctx context.Context, js jetstream.JetStream) (assets []string, known bool, err error) {
	kv, err := js.KeyValue(ctx, broker.BucketWorkers)
	if err != nil {
		if errors.Is(err, jetstream.ErrBucketNotFound) {
			return nil, false, nil
		}
		return nil, false, err
	}
	w, err := kv.WatchAll(ctx, jetstream.IgnoreDeletes())
	if err != nil {
		return nil, false, err
	}
	defer w.Stop()
	seen := map[string]bool{}
	workers := 0
	for {
		var e jetstream.KeyValueEntry
		select {
		case <-ctx.Done():
			return nil, false, ctx.Err()
		case e = <-w.Updates():
		}
		if e == nil {
			break // the entries held now have all been read
		}
		var b workerBeat
		if json.Unmarshal(e.Value(), &b) != nil || len(b.Assets) == 0 {
			return nil, false, nil // a worker of an earlier version
		}
		workers++
		for _, a := range b.Assets {
			seen[a] = true
		}
	}
	if workers == 0 {
		return nil, false, nil
	}
	for a := range seen {
		assets = append(assets, a)
	}
	sort.Strings(assets)
	return assets, true, nil
}

func (s *Service) heartbeat(now time.Time) []byte {
	b := workerBeat{At: now.UTC().Format(time.RFC3339Nano), Settings: s.digests}
	for _, a := range s.site.Assets {
		b.Assets = append(b.Assets, a.Name)
	}
	data, _ := json.Marshal(b)
	return data
}

// readBeats reads the other live workers' heartbeats (keys, from the
// workers bucket) and compares their assets' settings with this worker's.
func (s *Service) readBeats(ctx context.Context, keys []string) {
	beats := map[string]workerBeat{}
	for _, k := range keys {
		if k == s.id {
			continue
		}
		e, err := s.stores.Workers.Get(ctx, k)
		if err != nil {
			return // gone since Keys, or not readable now: judged next round
		}
		var b workerBeat
		if json.Unmarshal(e.Value(), &b) == nil {
			beats[k] = b
		}
	}
	s.compareSettings(beats)
}

func (s *Service) leaseRound(ctx context.Context, order []string) {
	st := s.stores
	rctx, cancel := context.WithTimeout(context.Background(), s.site.Service.LeaseTTL.Duration/2) // not ctx: a stop must not look like a lost lease
	defer cancel()
	_, err := st.Workers.Put(rctx, s.id, s.heartbeat(time.Now()))
	if err != nil {
		// Said once for a run of failures (a broker outage or a full
		// store fails every beat, four a lease TTL), counted at the end.
		if s.beats.fail() {
			s.log.Warn("heartbeat failed; further failures are counted until one succeeds", "err", err)
		} else {
			s.log.Debug("heartbeat failed", "err", err)
		}
		msg := err.Error()
		s.beatErr.Store(&msg)
	} else {
		if n, d := s.beats.ok(); n > 0 {
			s.log.Info("heartbeat succeeds again", "failed_beats", n, "failing_for", d)
		}
		s.beatErr.Store(nil)
	}
	s.noteStore(err)
	s.checkStore()
	workers := 1
	if keys, err := st.Workers.Keys(rctx); err == nil && len(keys) > 0 {
		workers = len(keys)
		s.readBeats(rctx, keys)
	}
	limit := (len(order) + workers - 1) / workers
	s.mu.Lock()
	defer s.mu.Unlock()
	// Renew, and notice assets whose processing ended.
	for name, h := range s.held {
		select {
		case err := <-h.done:
			if err != nil {
				s.log.Error("asset processing stopped", "asset", name, "err", err)
			}
			s.releaseLease(rctx, name)
			delete(s.held, name)
			continue
		default:
		}
		if h.lost {
			continue // stopping; not ours to renew
		}
		rev, err := st.Lease.Update(rctx, name, []byte(s.id), h.rev)
		if err != nil {
			// A renewal that timed out may still have been applied: the
			// lease is ours as long as the key names this worker.
			e, gerr := st.Lease.Get(rctx, name)
			if gerr == nil && string(e.Value()) == s.id {
				rev, err = st.Lease.Update(rctx, name, []byte(s.id), e.Revision())
			}
		}
		if err != nil {
			// Stop the asset's processing at once, and do not wait for it
			// here: the round must go on heartbeating and renewing the
			// other leases. The holding goes once its processing has
			// ended (the case above, at a later round).
			s.noteStore(err)
			s.log.Warn("lease lost: the asset's processing stops at once, unpublished windows are left to the next holder", "asset", name, "err", err)
			s.met.leaseLost.Inc()
			h.lost = true
			h.cancel(errLeaseLost)
			continue
		}
		h.rev = rev
	}
	if ctx.Err() != nil {
		return
	}
	// More workers than when we took our assets: hand the surplus back,
	// last in our order first. Each drains (complete windows published,
	// checkpoint written) and its lease is released at a later round.
	active := 0
	for _, h := range s.held {
		if !h.leaving && !h.lost {
			active++
		}
	}
	for i := len(order) - 1; i >= 0 && active > limit; i-- {
		if h, ok := s.held[order[i]]; ok && !h.leaving {
			s.log.Info("handing asset over to share the work", "asset", order[i], "workers", workers)
			h.leaving = true
			h.cancel(nil)
			active--
		}
	}
	for _, name := range order {
		if len(s.held) >= limit {
			break
		}
		if _, ok := s.held[name]; ok {
			continue
		}
		rev, err := st.Lease.Create(rctx, name, []byte(s.id))
		if err != nil {
			s.noteStore(err)
			// Held by another worker, or by this one from before a
			// broker restart or a lost renewal: adopt our own.
			e, gerr := st.Lease.Get(rctx, name)
			if gerr != nil || string(e.Value()) != s.id {
				continue
			}
			if rev, err = st.Lease.Update(rctx, name, []byte(s.id), e.Revision()); err != nil {
				continue
			}
		}
		a := s.site.Asset(name)
		aw, err := s.newAssetWorker(a)
		if err != nil {
			s.log.Error("asset cannot start", "asset", name, "err", err)
			st.Lease.Delete(rctx, name, jetstream.LastRevision(rev))
			continue
		}
		actx, acancel := context.WithCancelCause(context.Background())
		h := &holding{rev: rev, cancel: acancel, done: make(chan error, 1)}
		s.held[name] = h
		s.met.takeovers.Inc()
		go func() { h.done <- aw.run(actx) }()
	}
	s.setHeld()
}

// setHeld sets uc_assets_held to the leases held (those lost and still
// stopping are not). Called with s.mu held.
func (s *Service) setHeld() {
	n := 0
	for _, h := range s.held {
		if !h.lost {
			n++
		}
	}
	s.met.leases.Set(float64(n))
}

// releaseAll drains every held asset and hands its lease back. Each drain
// ends by itself within drainLimit once its broker writes go through; a
// processing that has not ended drainLimit plus shutdownSlack after the
// stop (its writes retried against a broker that does not answer) is cut
// short with errAbandoned and waited for no more than shutdownSlack again,
// so that a stop always returns.
func (s *Service) releaseAll() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, h := range s.held {
		h.cancel(nil)
	}
	var errs []error
	release := func(name string) {
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		defer cancel()
		s.releaseLease(ctx, name)
	}
	dctx, dcancel := context.WithTimeout(context.Background(), s.drainLimit()+shutdownSlack)
	defer dcancel()
	for _, pass := range []string{"drain", "cut"} {
		for name, h := range s.held {
			select {
			case err := <-h.done:
				if err != nil && !h.lost && pass == "drain" {
					errs = append(errs, err)
				}
				release(name)
				delete(s.held, name)
			case <-dctx.Done():
			}
		}
		if len(s.held) == 0 || pass == "cut" {
			break
		}
		for name, h := range s.held {
			s.log.Warn("drain not finished in time at shutdown: cut short, windows not yet published are left to the next holder", "asset", name, "after", s.drainLimit()+shutdownSlack)
			h.cancel(errAbandoned)
		}
		dctx, dcancel = context.WithTimeout(context.Background(), shutdownSlack)
		defer dcancel()
	}
	for name := range s.held {
		s.log.Warn("asset processing did not stop at shutdown; leaving it (its lease expires after the lease TTL)", "asset", name)
		delete(s.held, name)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	s.stores.Workers.Delete(ctx, s.id)
	s.met.leases.Set(0)
	s.log.Info("drained")
	return errors.Join(errs...)
}

// shutdownSlack is the time allowed at shutdown beyond drainLimit for a
// drain's last writes, and again for a drain cut short to stop.
const shutdownSlack = 5 * time.Second

// drainLimit bounds an asset's drain (complete windows published and the
// checkpoint written after a stop): the lease TTL, and at least two
// seconds. A drain that has not ended by then (the client's consumer can
// go on delivering after a broker restart) stops reading, writes its
// checkpoint and returns.
func (s *Service) drainLimit() time.Duration {
	return max(s.site.Service.LeaseTTL.Duration, 2*time.Second)
}

// releaseLease hands the lease on name back if this worker still holds it.
func (s *Service) releaseLease(ctx context.Context, name string) {
	e, err := s.stores.Lease.Get(ctx, name)
	if err != nil || string(e.Value()) != s.id {
		return
	}
	if err := s.stores.Lease.Delete(ctx, name, jetstream.LastRevision(e.Revision())); err != nil {
		s.log.Warn("lease not handed back; it expires after the lease TTL", "asset", name, "err", err)
	}
}

// publish stores msg through JetStream with a message id, retrying while
// the broker is unreachable (up to about a minute).
func (s *Service) publish(msg *nats.Msg, id string) (*jetstream.PubAck, error) {
	return s.publishFenced(nil, msg, id)
}

// publishFenced is publish that gives up, before each attempt, when
// fenced (if not nil) returns an error: an asset's processing that lost
// its lease stops retrying at once.
func (s *Service) publishFenced(fenced func() error, msg *nats.Msg, id string) (*jetstream.PubAck, error) {
	var last error
	for attempt := 0; attempt < 30; attempt++ {
		if fenced != nil {
			if err := fenced(); err != nil {
				return nil, err
			}
		}
		if s.nc.IsClosed() {
			return nil, fmt.Errorf("live: publish %s: connection closed", msg.Subject)
		}
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
		ack, err := s.stores.JS.PublishMsg(ctx, msg, jetstream.WithMsgID(id))
		cancel()
		s.noteStore(err)
		if err == nil {
			return ack, nil
		}
		last = err
		time.Sleep(time.Duration(attempt+1) * 50 * time.Millisecond)
	}
	return nil, fmt.Errorf("live: publish %s: %w", msg.Subject, last)
}

// errCodeInsufficientResources is the JetStream API error code of a write
// refused because the server's (or the account's) storage is used up.
const errCodeInsufficientResources = 10023

// StoreRefused reports whether err is a write the broker refused for want
// of storage (JetStream "insufficient resources", err_code 10023): its
// store, or the account's share of it, is full.
func StoreRefused(err error) bool { return storeRefused(err) }

// storeRefused reports whether err is a write refused for want of storage.
func storeRefused(err error) bool {
	var je jetstream.JetStreamError
	if errors.As(err, &je) && je.APIError() != nil {
		return je.APIError().ErrorCode == errCodeInsufficientResources
	}
	return err != nil && strings.Contains(err.Error(), "insufficient resources")
}

// dlqUnboundedWarning is the WARN logged when the store cannot reserve a
// bound for the dead letters, and its attributes. The broker has then
// tried the least bound the site file allows (dlqMin, four times
// max_message_bytes; broker.StreamSettings.DeadLetterMin), so setting
// broker.dlq_max_bytes, which cannot be lower, would stop serve: the
// advice is room in the store. With store_max_bytes given it says the
// room data_max_bytes leaves (the pipeline's other streams and buckets
// reserve none).
func (s *Site) dlqUnboundedWarning(external bool) (string, []any) {
	need := s.dlqMin()
	attrs := []any{"stream", broker.StreamDeadLetter, "max_age", broker.DeadLetterMaxAge, "least_bound_bytes", need}
	room := fmt.Sprintf(", which needs at least %d bytes", need)
	if external {
		advice := "give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)"
		if s.Broker.DataMaxBytes > 0 {
			advice += " or lower broker.data_max_bytes"
		}
		return fmt.Sprintf("the broker cannot reserve room for a bounded dead-letter stream%s (four times service.max_message_bytes, below which broker.dlq_max_bytes cannot be set): "+
			"refused messages are kept unbounded for their max age; to bound them, %s, and restart serve", room, advice), attrs
	}
	if st := s.Broker.StoreMaxBytes; st > 0 {
		left := max(st-s.Broker.DataMaxBytes, 0)
		room = fmt.Sprintf(": broker.store_max_bytes %d less broker.data_max_bytes %d leaves %d bytes, and a bound needs at least %d", st, s.Broker.DataMaxBytes, left, need)
		attrs = append(attrs, "room_bytes", left)
	}
	advice := "raise broker.store_max_bytes"
	switch {
	case s.Broker.StoreMaxBytes == 0 && s.Broker.DataMaxBytes > 0:
		advice = "free disk space or set a larger broker.store_max_bytes, or lower broker.data_max_bytes"
	case s.Broker.StoreMaxBytes == 0:
		advice = "free disk space or set a larger broker.store_max_bytes"
	case s.Broker.DataMaxBytes > 0:
		advice = "raise broker.store_max_bytes or lower broker.data_max_bytes"
	}
	return fmt.Sprintf("the store cannot reserve room for a bounded dead-letter stream%s (four times service.max_message_bytes, below which broker.dlq_max_bytes cannot be set): "+
		"refused messages are kept unbounded for their max age; to bound them, %s, and restart serve", room, advice), attrs
}

// boundAdvice is what Setup's refusal of a stream's byte bound (a
// *broker.BoundError) adds to serve's error: which settings make room,
// and, for the dead letters, the least broker.dlq_max_bytes taken. "" for
// other errors.
func (s *Site) boundAdvice(err error, external bool) string {
	var be *broker.BoundError
	if !errors.As(err, &be) {
		return ""
	}
	if external {
		// A cluster's limits are its nats-server configuration's;
		// broker.store_max_bytes is the embedded broker's.
		switch be.Stream {
		case broker.StreamDeadLetter:
			if s.Broker.DLQMaxBytes > s.dlqMin() {
				return fmt.Sprintf("; lower broker.dlq_max_bytes (to no less than %d, four times service.max_message_bytes) or broker.data_max_bytes, or give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)", s.dlqMin())
			}
			return fmt.Sprintf("; broker.dlq_max_bytes cannot be less than %d (four times service.max_message_bytes): lower broker.data_max_bytes, or give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)", s.dlqMin())
		case broker.StreamData:
			return "; lower broker.data_max_bytes, or give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)"
		case broker.StreamEstimates:
			return "; lower broker.estimate_max_bytes, or give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)"
		case broker.StreamAlarms:
			return "; lower broker.alarm_max_bytes, or give the broker's servers more JetStream storage (max_file_store in the nats-server configuration)"
		}
		return ""
	}
	switch be.Stream {
	case broker.StreamDeadLetter:
		if s.Broker.DLQMaxBytes > s.dlqMin() {
			return fmt.Sprintf("; lower broker.dlq_max_bytes (to no less than %d, four times service.max_message_bytes) or broker.data_max_bytes, or raise broker.store_max_bytes", s.dlqMin())
		}
		return fmt.Sprintf("; broker.dlq_max_bytes cannot be less than %d (four times service.max_message_bytes): lower broker.data_max_bytes, or raise broker.store_max_bytes", s.dlqMin())
	case broker.StreamData:
		return "; lower broker.data_max_bytes, or raise broker.store_max_bytes"
	case broker.StreamEstimates:
		return "; lower broker.estimate_max_bytes or broker.data_max_bytes, or raise broker.store_max_bytes"
	case broker.StreamAlarms:
		return "; lower broker.alarm_max_bytes or broker.data_max_bytes, or raise broker.store_max_bytes"
	}
	return ""
}

// dlqReplacedWarning is the WARN logged when the dead-letter stream stood
// with a bound set otherwise than this serve set it (r; now is the bound
// it has now, 0 for none): serve processes sharing a broker with
// different dead-letter settings replace each other's bound, the last to
// start setting it.
func (s *Site) dlqReplacedWarning(r *broker.DeadLetterReplaced, now int64) string {
	bound := func(n int64) string {
		if n <= 0 {
			return "no bound"
		}
		return fmt.Sprintf("%d bytes", n)
	}
	was := bound(r.Bound) + " found by a serve without broker.dlq_max_bytes"
	if r.Given {
		was = fmt.Sprintf("%s from broker.dlq_max_bytes = %d", bound(r.Bound), r.Bound)
	}
	is := bound(now) + " found for this site file, which gives no broker.dlq_max_bytes"
	if s.Broker.DLQMaxBytes != 0 {
		is = fmt.Sprintf("%s from this site file's broker.dlq_max_bytes", bound(now))
	}
	return fmt.Sprintf("the dead-letter stream's bound was %s; it is now %s. Every serve on this broker should have the same broker.dlq_max_bytes (or none): the last to start sets the bound", was, is)
}

// storeFullAdvice is the ERROR logged when the broker's store fills. The
// embedded broker without broker.store_max_bytes raises its store bound
// when disk space is freed (serve looks every 15 s); a store_max_bytes and
// the stream bounds are read at start, so changing them takes effect only
// after a restart.
const storeFullAdvice = "the broker's store is full: no lease, estimate or sensor batch can be stored until space is freed. " +
	"Free disk space (the embedded broker without broker.store_max_bytes takes it up within 15 s), " +
	"or raise broker.store_max_bytes, or lower broker.data_retention, broker.data_max_bytes, broker.dlq_max_bytes, broker.estimate_retention or broker.estimate_max_bytes, and restart serve " +
	"(a cluster's own limits are in the nats-server configuration)"

// storeFailedAdvice is the ERROR logged once when the embedded broker's
// store has a stream that failed a write.
const storeFailedAdvice = "the broker's store failed a write and refuses every further write to that stream until serve is restarted: restart serve"

// checkStore asks the broker (Config.StoreCheck) whether a stream of its
// store failed a write. Such a stream refuses every write, with no answer
// to the writer, until the broker is restarted: before, serve's heartbeats
// and renewals only timed out, /readyz failed on the heartbeat if that was
// the stream, and nothing said that a restart was needed. The first time
// it is found it is logged at ERROR (once, not at every round), and while
// it lasts /readyz fails and uc_store_failed is 1. Serve does not exit:
// other broker faults (store full, an outage) are waited out the same
// way, and the streams that still work go on being served.
func (s *Service) checkStore() {
	if s.storeCheck == nil {
		return
	}
	err := s.storeCheck()
	if err == nil {
		if s.storeFailed.Swap(nil) != nil {
			s.met.storeFailed.Set(0)
			s.log.Info("the broker's store no longer reports a failed write")
		}
		return
	}
	msg := err.Error()
	if s.storeFailed.Swap(&msg) == nil {
		s.met.storeFailed.Set(1)
		s.log.Error(storeFailedAdvice, "err", err)
	}
}

// noteStore follows the outcome of a write to the broker: a write refused
// for want of storage marks the store full (logged at ERROR, /readyz
// failing, uc_store_full 1: leases cannot be renewed nor estimates stored,
// and the publishers' data is refused) until a write succeeds again.
// Other errors leave the mark as it is.
func (s *Service) noteStore(err error) {
	switch {
	case err == nil:
		if s.storeFull.Swap(nil) != nil {
			s.met.storeFull.Set(0)
			s.log.Info("the broker stores writes again")
		}
	case storeRefused(err):
		msg := err.Error()
		if s.storeFull.Swap(&msg) == nil {
			s.met.storeFull.Set(1)
			s.log.Error(storeFullAdvice, "err", err)
		}
	}
}
