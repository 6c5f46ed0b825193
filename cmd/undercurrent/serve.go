package main

import (
	"cmp"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"os"
	"os/signal"
	"path/filepath"
	"strconv"
	"syscall"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/spf13/pflag"

	"undercurrent/ingest/broker"
	"undercurrent/report/live"
)

type serveOptions struct {
	config   string
	broker   string
	data     string
	http     string
	worker   string
	user     string
	password string
	token    string
	logLevel string
	// debugAddr serves Go's runtime profiles when given (servedebug.go).
	debugAddr string
	// brokerWait bounds the wait at start for a --broker that does not
	// answer yet.
	brokerWait time.Duration
	// TLS and credentials for --broker; the site file's [broker] keys
	// when empty.
	tlsCA, tlsCert, tlsKey, creds string
}

func init() {
	var o serveOptions
	register(&command{
		name:    "serve",
		usage:   "--config SITE [flags]",
		summary: "run the continuous pipeline: live sensor data in, currents and alarms out",
		long: `Serve reads the site file (assets, sensors, conductors, windows, alarm
thresholds; see testdata/site/harrow-fen.toml) and runs the live pipeline:
sensor batches arriving on uc.data.<asset>.<sensor> (NATS, or MQTT topic
uc/data/<asset>/<sensor>) are windowed per asset, calibrated, demodulated
for AC and solved with the conductor geometry held; estimates go to
uc.est.<asset> and alarms to uc.alarm.<asset>.<kind>, both kept in the
broker, and refused messages to uc.dlq.<reason> (data for an asset the
site file does not list go to uc.dlq.unknown-asset).

By default serve starts an embedded NATS server with JetStream (file store
in --data) and its MQTT listener, at the addresses in the site file's
[broker] table. With --broker it joins an existing NATS server or cluster
instead, waiting up to --broker-wait (30 s) at start for one that does not
answer yet. Several serve processes against one broker share the assets: each
asset is handled by one worker at a time, in order, and another takes over
within the lease time when a worker dies. SIGTERM or Ctrl-C drains: complete
windows are published and leases handed back before exit. Serve does not
reload: SIGHUP is logged ("no reload: restart serve to apply site-file
changes") and serve carries on with the settings it started with; an
edit to the site file while serve runs is logged once at WARN. Windows has
no SIGTERM nor SIGHUP to send: there Ctrl-C or Ctrl-Break drains, and
closing the console window starts the drain but Windows ends the process
a few seconds later, finished or not. The start line logs the version
(and VCS revision), the site file's path and a digest of it; /metrics has
uc_build_info{version,revision}.

HTTP API (loopback by default): /healthz, /readyz, /metrics,
/api/v1/assets, /api/v1/assets/ASSET, /api/v1/assets/ASSET/latest,
/api/v1/assets/ASSET/history?from=&to=&limit=&format=csv&revisions=,
/api/v1/alarms?asset=&kind=&from=&to=&since=&limit=&revisions= (503 "broker
unreachable" at once while the connection to the broker is down, which
is logged once when lost and once when back). from and to are window
starts (seconds or RFC 3339; from <= start < to), since is when an alarm was
stored, and a parameter an endpoint does not take is refused; a listing
returns the first limit results of its range (default 10000, at most
100000), and one cut short answers the headers X-Uc-More: true and
X-Uc-Next-From (the from to ask again with). A lasting condition
(over-current, imbalance, a conductor's share of the current above its
max_share, or below its min_share as low-share, a silent, stuck or
saturated sensor) is alarmed once when it begins, again (marked
worsened) each time over-current, imbalance or share reaches 1.5 times
the value last alarmed or a low share falls to two thirds of it, and
once, marked cleared (with the window's value and the peak; not counted in
uc_alarms_total), when it ends. POST /api/v1/assets/ASSET/recommission and
POST /api/v1/assets/ASSET/restart?start= (re-read the asset from "new", a
duration back such as "24h", an RFC 3339 time or "retained") need the
service token. --debug-addr 127.0.0.1:6060 serves Go's runtime profiles
(/debug/pprof/, for measuring memory and CPU) on a listener of its own,
on loopback only; it is off unless given.

Examples:
  undercurrent serve --config testdata/site/harrow-fen.toml --data /var/lib/undercurrent
  undercurrent serve --config testdata/site/harrow-fen.toml --broker nats://10.0.0.1:4222,nats://10.0.0.2:4222,nats://10.0.0.3:4222
  undercurrent serve --config testdata/site/harrow-fen.toml --http 127.0.0.1:9000 --worker edge-2`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.StringVar(&o.config, "config", "", "site file `SITE` (TOML)")
			fs.StringVar(&o.broker, "broker", "", "join the NATS server or cluster at `URL` (comma-separated) instead of starting one")
			fs.DurationVar(&o.brokerWait, "broker-wait", 30*time.Second, "with --broker, how long to wait at start for a broker that does not answer yet")
			fs.StringVar(&o.data, "data", "undercurrent-data", "JetStream store `DIR` of the embedded broker")
			fs.StringVar(&o.http, "http", "", "HTTP API listen `ADDR` (default from the site file; \"-\" for none)")
			fs.StringVar(&o.worker, "worker", "", "worker `ID` used in leases and estimates (default host-pid-random)")
			fs.StringVar(&o.user, "user", "", "broker user (default from the site file)")
			fs.StringVar(&o.password, "password", "", "broker password (default from the site file, or $UNDERCURRENT_BROKER_PASSWORD)")
			fs.StringVar(&o.token, "token", "", "broker token (default from the site file)")
			fs.StringVar(&o.tlsCA, "tls-ca", "", "PEM `FILE` of the authorities to trust for the broker's certificate (default [broker] tls_ca)")
			fs.StringVar(&o.tlsCert, "tls-cert", "", "client certificate PEM `FILE` for the broker (default [broker] tls_cert)")
			fs.StringVar(&o.tlsKey, "tls-key", "", "client key PEM `FILE` for the broker (default [broker] tls_key)")
			fs.StringVar(&o.creds, "credentials", "", "NATS credentials `FILE` for the broker (default [broker] credentials)")
			fs.StringVar(&o.logLevel, "log-level", "info", "log `LEVEL`: debug, info, warn or error")
			fs.StringVar(&o.debugAddr, "debug-addr", "", "serve Go's runtime profiles (pprof) at http://`ADDR`/debug/pprof/; loopback only, off by default")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			return runServe(ctx, &o, args, stderr)
		},
	})
}

func runServe(ctx context.Context, o *serveOptions, args []string, stderr io.Writer) error {
	if len(args) != 0 {
		return usageErrorf("serve takes no arguments (got %q)", args[0])
	}
	if o.config == "" {
		return usageErrorf("--config SITE is required")
	}
	var level slog.Level
	if err := level.UnmarshalText([]byte(o.logLevel)); err != nil {
		return usageErrorf("--log-level %q: want debug, info, warn or error", o.logLevel)
	}
	log := slog.New(slog.NewTextHandler(stderr, &slog.HandlerOptions{Level: level}))
	site, err := live.LoadSite(o.config)
	if err != nil {
		return err
	}
	sitePath := o.config
	if abs, err := filepath.Abs(o.config); err == nil {
		sitePath = abs
	}
	siteDigest := fileDigest(o.config)
	// No reload: a SIGHUP (the usual "reload" signal) would otherwise end
	// serve at once without a word (rv24d t1).
	hup := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	defer signal.Stop(hup)
	hctx, hcancel := context.WithCancel(ctx)
	defer hcancel()
	go func() {
		for {
			select {
			case <-hctx.Done():
				return
			case <-hup:
				log.Warn("SIGHUP: no reload: restart serve to apply site-file changes; serving on with the settings it started with", "site_file", sitePath, "site_digest", siteDigest)
			}
		}
	}()
	watch := time.NewTicker(siteWatchEvery)
	defer watch.Stop()
	go newSiteWatch(o.config, siteDigest, log).run(hctx, watch.C)
	if err := checkHTTPAddr(cmp.Or(o.http, site.Service.HTTP)); err != nil {
		return err
	}
	if o.debugAddr != "" {
		ln, err := listenDebug(o.debugAddr)
		if err != nil {
			return err
		}
		defer ln.Close()
		go serveDebug(hctx, ln, log)
	}
	auth := broker.Auth{User: site.Broker.User, Password: site.Broker.Password, Token: site.Broker.Token, UserFrom: site.Path + " [broker] user",
		CAFile: cmp.Or(o.tlsCA, site.Broker.TLSCA), CertFile: cmp.Or(o.tlsCert, site.Broker.TLSCert), KeyFile: cmp.Or(o.tlsKey, site.Broker.TLSKey),
		CredsFile: cmp.Or(o.creds, site.Broker.Credentials)}
	if o.user != "" {
		auth.User, auth.UserFrom = o.user, "--user"
	}
	if o.password != "" {
		auth.Password = o.password
	} else if p := os.Getenv("UNDERCURRENT_BROKER_PASSWORD"); p != "" {
		auth.Password = p
	}
	if o.token != "" {
		auth.Token = o.token
	}
	url := o.broker
	var storeBytes int64
	var storeCheck func() error
	var embedded *broker.Server
	if url == "" {
		if err := site.CheckEmbeddedBroker(); err != nil {
			return err
		}
		cfg, err := embeddedConfig(site, o.data)
		if err != nil {
			return err
		}
		cfg.Logf = func(format string, a ...any) { log.Debug(fmt.Sprintf(format, a...)) }
		cfg.Errorf = func(format string, a ...any) { log.Error(fmt.Sprintf(format, a...)) }
		srv, err := broker.StartServer(cfg)
		if err != nil {
			return err
		}
		defer srv.Shutdown()
		embedded = srv
		url = srv.ClientURL()
		storeBytes = srv.MaxStore()
		storeCheck = srv.StoreWriteError
		log.Info("embedded broker started", "nats", url, "mqtt", srv.MQTTAddr(), "store", o.data)
		if open := site.OpenBroker(); open != "" {
			log.Warn("the embedded broker listens off loopback with no accounts ([broker] allow_anonymous = true): anyone who can reach it may read, forge and delete all data, estimates, alarms and checkpoints; add [[broker.users]] or a [broker] token",
				"listen", open)
		}
		gctx, gcancel := context.WithCancel(ctx)
		defer gcancel()
		go growStore(gctx, srv, log)
	}
	var nc *nats.Conn
	if o.broker != "" {
		// A broker started together with serve may not listen yet: wait
		// for it (up to --broker-wait), saying so once, instead of
		// exiting at once (review rv24d, finding 9).
		nc, err = broker.ConnectWait(ctx, url, "undercurrent serve", auth, max(o.brokerWait, 0), func(msg string) { log.Info(msg) })
	} else {
		// Within the process: the listener's TLS (and client
		// certificates) are for other hosts; serve's own connection
		// needs no CA file nor a certificate naming the listen address.
		nc, err = embedded.ConnectInProcess("undercurrent serve", auth)
	}
	if err != nil {
		if o.broker != "" && errors.Is(err, nats.ErrNoServers) {
			return fmt.Errorf("%w (--broker; --broker-wait %v)", err, o.brokerWait)
		}
		return err
	}
	defer nc.Close()
	rev := vcsRevision()
	svc, err := live.New(live.Config{Site: site, Conn: nc, Worker: o.worker, HTTP: o.http, Logger: log, External: o.broker != "", StoreBytes: storeBytes, StoreCheck: storeCheck,
		Version: toolVersion(), Revision: rev})
	if err != nil {
		return err
	}
	log.Info("serving", "site", site.Name, "assets", len(site.Assets), "version", toolVersion(), "revision", rev, "site_file", sitePath, "site_digest", siteDigest)
	return svc.Run(ctx)
}

// siteWatchEvery is how often serve looks whether its site file changed.
const siteWatchEvery = 15 * time.Second

// fileDigest is the first 12 hex digits of the SHA-256 of the file at
// path, or "unreadable" when it cannot be read.
func fileDigest(path string) string {
	data, err := os.ReadFile(path)
	if err != nil {
		return "unreadable"
	}
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])[:12]
}

// siteWatch looks whether the site file at path still has the digest
// serve started with, and logs a WARN once for each new digest: serve
// does not reload, so an edit takes effect only at a restart (rv24d: a
// change while serve ran was not noticed at all). A new digest is taken
// once two looks in a row find it, so that a file caught half written
// (an editor's save, a copy) is not reported. A file back to the digest
// in force is logged at INFO.
type siteWatch struct {
	path, digest string
	log          *slog.Logger
	// reported is the digest last logged (digest at start); seen the
	// one the last look found when it was neither.
	reported, seen string
}

func newSiteWatch(path, digest string, log *slog.Logger) *siteWatch {
	return &siteWatch{path: path, digest: digest, log: log, reported: digest}
}

// run looks at each tick until ctx ends.
func (w *siteWatch) run(ctx context.Context, tick <-chan time.Time) {
	for {
		select {
		case <-ctx.Done():
			return
		case <-tick:
			w.look()
		}
	}
}

func (w *siteWatch) look() {
	d := fileDigest(w.path)
	if d == w.reported {
		w.seen = ""
		return
	}
	if d != w.seen {
		w.seen = d // looked at again before it is reported
		return
	}
	w.reported, w.seen = d, ""
	if d == w.digest {
		w.log.Info("the site file is back to the one serve started with", "site_file", w.path, "site_digest", d)
		return
	}
	w.log.Warn("the site file changed since serve started: serve does not reload; restart serve to apply it", "site_file", w.path, "site_digest_in_force", w.digest, "site_digest_now", d)
}

// growStoreEvery is how often serve looks for freed disk space to raise
// the embedded broker's store bound with.
const growStoreEvery = 15 * time.Second

// growStore raises the embedded broker's store bound when disk space has
// been freed (broker.Server.GrowStore; not with [broker] store_max_bytes),
// so that a store that filled the disk takes writes again without a
// restart. A failure is logged once.
func growStore(ctx context.Context, srv *broker.Server, log *slog.Logger) {
	t := time.NewTicker(growStoreEvery)
	defer t.Stop()
	warned := false
	for {
		select {
		case <-ctx.Done():
			return
		case <-t.C:
		}
		from, to, err := srv.GrowStore()
		switch {
		case err != nil && !warned:
			warned = true
			log.Warn("the embedded broker's store bound cannot follow the free disk space; after freeing space, restart serve", "err", err)
		case err == nil && to > from:
			log.Info("disk space freed: the embedded broker's store bound raised", "from_bytes", from, "to_bytes", to)
		}
	}
}

// embeddedConfig turns the site's [broker] table into the embedded server's settings.
func embeddedConfig(site *live.Site, dir string) (broker.ServerConfig, error) {
	cfg := broker.ServerConfig{StoreDir: dir, Name: "undercurrent", Token: site.Broker.Token, MaxStore: site.Broker.StoreMaxBytes,
		TLSCert: site.Broker.ListenTLSCert, TLSKey: site.Broker.ListenTLSKey, TLSClientCA: site.Broker.ListenTLSClientCA}
	var err error
	if cfg.SyncAlways, cfg.SyncInterval, err = site.Broker.SyncSetting(); err != nil {
		return cfg, err
	}
	host, port, err := splitAddr(site.Broker.Listen, "broker.listen")
	if err != nil {
		return cfg, err
	}
	cfg.Host, cfg.Port = host, port
	if site.Broker.MQTT == "off" {
		cfg.MQTTPort = -1
	} else {
		mh, mp, err := splitAddr(site.Broker.MQTT, "broker.mqtt")
		if err != nil {
			return cfg, err
		}
		if mh != host {
			return cfg, fmt.Errorf("%s: broker.mqtt host %q differs from broker.listen host %q", site.Path, mh, host)
		}
		cfg.MQTTPort = mp
	}
	for _, u := range site.Broker.Users {
		cfg.Users = append(cfg.Users, broker.User{Name: u.Name, Password: u.Password, Publish: u.Publish, Subscribe: u.Subscribe})
	}
	return cfg, nil
}

// checkHTTPAddr refuses an HTTP API address that cannot be listened on
// ("-" is none), before serve touches the broker.
func checkHTTPAddr(addr string) error {
	if addr == "-" {
		return nil
	}
	if _, err := net.ResolveTCPAddr("tcp", addr); err != nil {
		return usageErrorf("--http / [service] http %q: want host:port (\"-\" for no HTTP API): %v", addr, err)
	}
	return nil
}

func splitAddr(addr, key string) (string, int, error) {
	h, p, err := net.SplitHostPort(addr)
	if err != nil {
		return "", 0, fmt.Errorf("%s %q: want host:port", key, addr)
	}
	n, err := strconv.Atoi(p)
	if err != nil || n < 0 || n > 65535 {
		return "", 0, fmt.Errorf("%s %q: port %q is not a number from 0 to 65535", key, addr, p)
	}
	return h, n, nil
}
