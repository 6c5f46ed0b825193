package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"
	"github.com/spf13/pflag"

	"undercurrent/ingest"
	"undercurrent/ingest/broker"
	"undercurrent/report/live"
)

type replayOptions struct {
	asset    string
	sensor   string
	speed    float64
	broker   string
	batch    time.Duration
	format   string
	now      bool
	shift    float64
	resume   bool
	maxAhead time.Duration
	maxBytes int
	user     string
	password string
	token    string
	// TLS and credentials for the broker.
	tlsCA, tlsCert, tlsKey, creds string
	wait                          time.Duration
	read                          readFlags
	// runs holds the log put in time order on disk (--time-order any),
	// nil to read the log itself.
	runs *sortedRuns
}

func init() {
	var o replayOptions
	register(&command{
		name:    "replay",
		usage:   "LOG --asset ASSET [flags]",
		summary: "publish a recorded log as live sensor messages (tests, demos, re-processing)",
		long: `Replay reads a log (any format undercurrent reads) and publishes it to the
broker as live sensor batches on uc.data.ASSET.SENSOR, paced by --speed.
The log's group column names the sensor of each row (or give --sensor for
a log of one sensor); fields are the sensor's own readings, and positions
come from the site file, not the log. Time must run forward within each
sensor's rows, while the rows of different sensors may interleave or
follow one another (the default --time-order here is per-group); with
--time-order any the rows are put in time order first, with a warning. A
sensor may not have two readings at one time. A batch repeated within the
broker's duplicate window (two minutes) is not stored twice (message ids),
so an interrupted replay can be run again at once; repeated later, it is
stored again and the pipeline refuses it as late or out of order (no
estimate is made twice, but a window the interruption cut short stays
partial, and the refused batches fill the dead-letter streams): then
give --resume, which sends only each sensor's batches after the last
sample the broker holds for it. With --now the log is shifted by whole minutes, so windows line
up as in the log, and the shift is printed at the start ("times shifted
by N s"): to send the rest of such a replay, give --shift N --resume in
place of --now (the advice printed on an interruption says so); times more than --max-ahead ahead of the clock are held
back until they are not, since the pipeline refuses them (a hold of a
second or more is said once, with the time it lasts until). With serve
running, an --asset its site file does not list is refused (the
pipeline would dead-letter every batch); with none running, replay
cannot tell.

The log is read twice, so that it need not be held whole: once to check it
and count its batches (nothing is sent from a log refused), then to send
its batches as they are cut. A log whose sensors' rows follow one
another instead of running together in time is read once per sensor
and the reads merged by time, in bounded memory too; one read with
--time-order any is first put in time order on disk, in sorted runs in
a folder of the system's temporary folder ($TMPDIR, 52 bytes a row),
removed when the replay ends or is interrupted.

Replay reads the data stream's state and waits for the broker's
acknowledgement of every batch (JetStream), so its account must be allowed
the JetStream API ($JS.API.>) and replies (_INBOX.>) besides publishing:
in testdata/site/harrow-fen.toml that is the pipeline account; the gateway
account only publishes (plain NATS or MQTT) and cannot replay. Leave
--user and --password out for a broker without accounts. A batch larger
than the site file's max_message_bytes (1 MiB by default) would be refused
whole by the pipeline, so replay refuses to send one (--max-message-bytes):
give a shorter --batch.

Examples (recorded.arrows is written by "undercurrent simulate
testdata/scenarios/harrow-fen-fixed.toml -o recorded.arrows", as in
README.md; each needs "undercurrent serve --config
testdata/site/harrow-fen.toml" running, and each is a replay of its own
on a fresh store: the second sends one sensor's readings alone, so after
the first on the same store the pipeline would hold or refuse them as out
of step with the other sensors; add --resume to send only what a replay
cut short left):
  undercurrent replay recorded.arrows --asset fenwick-lane --speed 1 --user pipeline --password change-me-pipeline
  undercurrent replay recorded.arrows --asset fenwick-lane --sensor fl-w1 --speed 0 --format arrow --user pipeline --password change-me-pipeline
  undercurrent replay recorded.arrows --asset fenwick-lane --now --broker nats://127.0.0.1:4222 --user pipeline --password change-me-pipeline`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.StringVar(&o.asset, "asset", "", "asset `NAME` in the site file (required)")
			fs.StringVar(&o.sensor, "sensor", "", "sensor `NAME` for a log without a group column, or to send one group only")
			fs.Float64Var(&o.speed, "speed", 1, "replay rate relative to real time, `X` (0: as fast as the broker acknowledges)")
			fs.StringVar(&o.broker, "broker", "nats://127.0.0.1:4222", "NATS `URL` of the broker")
			fs.DurationVar(&o.batch, "batch", 100*time.Millisecond, "batch `DURATION` per message (each message must stay within --max-message-bytes)")
			fs.IntVar(&o.maxBytes, "max-message-bytes", 1<<20, "refuse to send a batch larger than `N` bytes: the site file's max_message_bytes, beyond which the pipeline refuses messages (0: no limit)")
			fs.StringVar(&o.format, "format", "json", "payload encoding: json or arrow")
			fs.BoolVar(&o.now, "now", false, "shift times by whole minutes so the log starts within the last minute (makes an old log look live)")
			fs.Float64Var(&o.shift, "shift", 0, "add `S` seconds to every time")
			fs.BoolVar(&o.resume, "resume", false, "send only each sensor's batches after the last sample the broker holds for it: the rest of a replay cut short, also after the broker's two-minute duplicate window")
			fs.DurationVar(&o.maxAhead, "max-ahead", time.Hour, "never send times more than `DURATION` (less a minute) ahead of the clock: the site file's max_ahead, beyond which the pipeline refuses batches; a log shifted with --now and replayed faster than real time is slowed to the clock there (0: no limit)")
			fs.StringVar(&o.user, "user", "", "broker user")
			fs.StringVar(&o.password, "password", "", "broker password")
			fs.StringVar(&o.token, "token", "", "broker token")
			fs.StringVar(&o.tlsCA, "tls-ca", "", "PEM `FILE` of the authorities to trust for the broker's certificate")
			fs.StringVar(&o.tlsCert, "tls-cert", "", "client certificate PEM `FILE` for the broker")
			fs.StringVar(&o.tlsKey, "tls-key", "", "client key PEM `FILE` for the broker")
			fs.StringVar(&o.creds, "credentials", "", "NATS credentials `FILE` for the broker")
			fs.DurationVar(&o.wait, "wait", 10*time.Second, "wait up to `DURATION` for the broker's data stream (created by serve)")
			o.read.add(fs)
			o.read.addMissing(fs)
			// The broker needs each sensor's readings in order, not the
			// whole log's (scanReplay).
			o.read.timeOrder = "per-group"
			fs.Lookup("time-order").DefValue = "per-group"
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			return runReplay(ctx, &o, fs, args, stdout, stderr)
		},
	})
}

func runReplay(ctx context.Context, o *replayOptions, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
	if len(args) != 1 {
		return usageErrorf("replay takes one LOG, got %s", plural(len(args), "argument"))
	}
	if o.asset == "" {
		return usageErrorf("--asset is required")
	}
	if err := broker.ValidToken(o.asset); err != nil {
		return usageErrorf("--asset: %v", err)
	}
	if o.speed < 0 || math.IsNaN(o.speed) || math.IsInf(o.speed, 0) {
		return usageErrorf("--speed %v: want a finite rate, 0 or more (0: as fast as the broker acknowledges)", o.speed)
	}
	if math.IsNaN(o.shift) || math.IsInf(o.shift, 0) {
		return usageErrorf("--shift %v: want a finite number of seconds", o.shift)
	}
	if o.batch <= 0 {
		return usageErrorf("--batch %v: want a positive duration", o.batch)
	}
	if o.maxAhead < 0 {
		return usageErrorf("--max-ahead %v: want 0 (no limit) or a positive duration", o.maxAhead)
	}
	if o.wait < 0 {
		return usageErrorf("--wait %v: want 0 (look once) or a positive duration", o.wait)
	}
	if o.maxBytes < 0 {
		return usageErrorf("--max-message-bytes %d: want 0 (no limit) or a positive size", o.maxBytes)
	}
	enc := map[string]string{"json": broker.ContentJSON, "arrow": broker.ContentArrow}[o.format]
	if enc == "" {
		return usageErrorf("--format %q: want json or arrow", o.format)
	}
	if o.now && o.shift != 0 {
		return usageErrorf("give --now or --shift, not both")
	}
	if o.now && o.resume {
		// --now shifts by the clock at each run: a second run's times
		// are not the first's.
		return usageErrorf("give --resume without --now: --now shifts the log by the clock of each run, so the rest would not line up with what was stored; give the first run's shift with --shift")
	}
	src, first, last, stop, err := replayLog(ctx, o, fs, args[0], stdout, stderr)
	if err != nil {
		return err
	}
	defer stop()
	set := &broker.ReplaySettings{Speed: o.speed, Encoding: enc, Shift: o.shift, MaxAhead: o.maxAhead, Resume: o.resume, Mark: true,
		Notify: func(msg string) { fmt.Fprintf(stderr, "replay: %s\n", msg) }}
	if o.maxAhead > 2*replayAheadMargin {
		set.MaxAhead = o.maxAhead - replayAheadMargin
	}
	if o.now {
		// A whole number of minutes, so that windows that divide a minute
		// (the site file's 1 s and 10 s) line up with the log's as they
		// did: a fractional shift splits every window in two.
		set.Shift = math.Floor((float64(time.Now().UnixNano())/1e9-first)/60) * 60
	}
	// again is how to send the rest of this replay: --now shifts by each
	// run's clock, so the rest is sent with this run's shift instead.
	again := "run the same replay again with --resume"
	if o.now {
		again = fmt.Sprintf("run the same replay again with --shift %s --resume in place of --now", shiftText(set.Shift))
		fmt.Fprintf(stderr, "replay: --now: times shifted by %s s (to send the rest of this replay later, give --shift %s --resume in place of --now)\n", shiftText(set.Shift), shiftText(set.Shift))
	}
	if t0 := first + set.Shift; t0 < minReplayTime {
		return fmt.Errorf("%s: the first time, %.3f s, is before 2000-01-01 (Unix seconds): the pipeline refuses such times; make the log start now with --now, or add seconds with --shift", args[0], t0)
	}
	if t1 := last + set.Shift; t1 > maxReplayTime {
		return fmt.Errorf("%s: the last time, %s s, is after 9999-12-31 (Unix seconds): no clock reaches it; give a --shift that brings the log to the clock's years (--now starts it now)", args[0], strconv.FormatFloat(t1, 'g', 6, 64))
	}
	nc, err := broker.Connect(o.broker, "undercurrent replay", broker.Auth{User: o.user, Password: o.password, Token: o.token, UserFrom: "--user",
		CAFile: o.tlsCA, CertFile: o.tlsCert, KeyFile: o.tlsKey, CredsFile: o.creds})
	if err != nil {
		return err
	}
	defer nc.Close()
	js, err := jetstream.New(nc)
	if err != nil {
		return err
	}
	if err := waitForStream(ctx, js, o.wait); err != nil {
		return err
	}
	if err := checkAssetServed(ctx, js, o.asset); err != nil {
		return err
	}
	bar, done := batchProgress(stderr, "replaying")
	set.Progress = bar
	st, err := broker.ReplayFrom(ctx, js, src, set)
	done()
	var stopped *broker.StoppedError
	if errors.As(err, &stopped) {
		// Interrupted: say what is stored and how to send the rest, as
		// for a broker that stopped answering.
		return &notedInterrupt{err: err, note: stopped.Stored + "; to send the rest, " + again + ", which skips each sensor's batches up to the last sample the broker holds for it"}
	}
	if err != nil && live.StoreRefused(err) && ctx.Err() == nil && st != nil {
		// The broker's store is full: say what was stored and how to
		// send the rest, as for a broker that stopped answering, instead
		// of the bare "insufficient resources" (err_code 10023).
		return fmt.Errorf("%w: the broker's store is full (see serve's log: it says what to free or raise); %s; to send the rest once there is room, %s, which skips each sensor's batches up to the last sample the broker holds for it",
			err, st.StoredText(src.Total), again)
	}
	if err != nil {
		if o.now {
			// The broker-gone advice names --resume alone, which --now
			// refuses: give this run's shift.
			return &rewordedError{err: err, msg: strings.ReplaceAll(err.Error(), "run the same replay again with --resume", again)}
		}
		return err
	}
	if o.resume {
		fmt.Fprintf(stdout, "skipped %d batches the broker already held (--resume)\n", st.Resumed)
		if st.Batches == 0 {
			fmt.Fprintf(stdout, "nothing left to send for asset %s: the broker holds every batch of the log\n", o.asset)
			return nil
		}
	}
	fmt.Fprintf(stdout, "replayed %d samples in %d batches for asset %s, sensors %v, times %.3f to %.3f (%d already stored)\n",
		st.Samples, st.Batches, o.asset, st.Sensors, st.From, st.To, st.Duplicates)
	if st.HeldBack > 0 {
		fmt.Fprintf(stdout, "held back %d batches that would have run more than %v ahead of the clock (--max-ahead): the pipeline refuses those\n", st.HeldBack, o.maxAhead)
	}
	return nil
}

// shiftText writes a shift in seconds as --shift takes it back.
func shiftText(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// rewordedError is err with its message reworded (Unwrap gives err).
type rewordedError struct {
	err error
	msg string
}

func (e *rewordedError) Error() string { return e.msg }
func (e *rewordedError) Unwrap() error { return e.err }

// checkBatchBytes refuses a replay whose largest batch (of each sensor,
// by samples) encodes to more than limit bytes: the pipeline would
// dead-letter every such message as oversized and make no estimate.
func checkBatchBytes(path string, batches []*broker.Batch, format string, limit int, dur time.Duration) error {
	if limit <= 0 {
		return nil
	}
	largest := map[string]*broker.Batch{}
	for _, b := range batches {
		if c := largest[b.Sensor]; c == nil || b.Len() > c.Len() {
			largest[b.Sensor] = b
		}
	}
	for _, b := range largest {
		var data []byte
		var err error
		if format == "arrow" {
			data, err = broker.EncodeArrow(b)
		} else {
			data, err = broker.EncodeJSON(b)
		}
		if err != nil {
			return err
		}
		if len(data) > limit {
			return fmt.Errorf("%s: a %v batch of sensor %s (%d samples) is %d bytes as %s, more than --max-message-bytes %d (the site file's max_message_bytes, beyond which the pipeline refuses the message): give a shorter --batch",
				path, dur, b.Sensor, b.Len(), len(data), format, limit)
		}
	}
	return nil
}

// minReplayTime is 2000-01-01T00:00:00Z in Unix seconds: the pipeline
// refuses earlier sample times as malformed.
const minReplayTime = 946684800

// maxReplayTime is 9999-12-31T23:59:59Z in Unix seconds: a later time
// (a --shift of 1e300) is no clock's, and a wait for it overflows.
const maxReplayTime = 253402300799

// checkAssetServed refuses an --asset that no running serve's site file
// lists, when the running workers' heartbeats tell (live.ServedAssets):
// the pipeline would send every batch to its dead-letter stream while
// replay reported success. With no serve running (or one of an earlier
// version) it cannot be told, and the replay goes on.
func checkAssetServed(ctx context.Context, js jetstream.JetStream, asset string) error {
	c, cancel := context.WithTimeout(ctx, 5*time.Second)
	defer cancel()
	assets, known, err := live.ServedAssets(c, js)
	if err != nil && ctx.Err() != nil {
		return ctx.Err()
	}
	if err != nil || !known || slices.Contains(assets, asset) {
		return nil // not readable (an account without the bucket's rights): not told
	}
	return fmt.Errorf("--asset %s: the site file of the running serve does not list it (its assets: %s): the pipeline would refuse every batch, into its dead-letter stream; check the name, or add the asset to the site file and restart serve", asset, strings.Join(assets, ", "))
}

// replayAheadMargin keeps replayed times this far inside --max-ahead, for
// the time a batch takes to reach the broker and for clocks a little apart.
const replayAheadMargin = time.Minute

// replayLog reads the log for sending: its batches' source, the first
// time of its first batch to send and its last time, and a function that
// stops the source's read (and removes a sorted log's runs). Its warnings
// go to stdout, and progress to a terminal's stderr. The log is read twice
// (scanReplay, replaySource), to be sent in bounded memory; a log read
// with --time-order any is first put in time order in runs on disk
// (sortLog), which both reads then merge.
func replayLog(ctx context.Context, o *replayOptions, fs *pflag.FlagSet, path string, stdout, stderr io.Writer) (_ *broker.ReplaySource, _, _ float64, _ func(), err error) {
	o.runs = nil
	opts, err := o.read.options(fs)
	if err != nil {
		return nil, 0, 0, nil, err
	}
	if err := o.read.checkIAGA("LOG", path); err != nil {
		return nil, 0, 0, nil, err
	}
	// A reading no survey gives (1e200 nT) is sent on, with a warning,
	// for serve to refuse (dead-letter) as it would from a gateway.
	opts = append(opts, ingest.WithImplausibleValues(true))
	if fs == nil || !fs.Changed("time-order") {
		opts = append(opts, ingest.WithTimeOrder(ingest.TimeOrderedPerGroup))
	} else if order, _ := ingest.ParseTimeOrder(o.read.timeOrder); order == ingest.TimeAnyOrder {
		progress, done := rowProgress(stderr, "sorting")
		runs, err := o.sortLog(ctx, path, append(opts[:len(opts):len(opts)], progress))
		done()
		if err != nil {
			return nil, 0, 0, nil, err
		}
		o.runs = runs
		defer func() {
			if err != nil {
				runs.remove()
				o.runs = nil
			}
		}()
	}
	progress, done := rowProgress(stderr, "checking")
	sc, err := o.scanReplay(ctx, path, append(opts[:len(opts):len(opts)], progress), nil, 0)
	done()
	if err != nil {
		return nil, 0, 0, nil, err
	}
	for _, w := range sc.read.warns {
		fmt.Fprintf(stdout, "warning: %s\n", w)
	}
	if sc.over > 0 {
		fmt.Fprintf(stdout, "warning: %s\n", fieldOverText(path, sc.over, sc.overBatches, sc.firstOver))
	}
	largest := make([]*broker.Batch, 0, len(sc.largest))
	for _, name := range sc.sensors {
		largest = append(largest, sc.largest[name])
	}
	if err := checkBatchBytes(path, largest, o.format, o.maxBytes, o.batch); err != nil {
		return nil, 0, 0, nil, err
	}
	src, _, stop, err := o.replaySource(ctx, path, opts, sc)
	if err != nil {
		return nil, 0, 0, nil, err
	}
	if runs := o.runs; runs != nil {
		readStop := stop
		stop = func() {
			readStop()
			runs.remove()
			o.runs = nil
		}
	}
	return src, sc.first, sc.last, stop, nil
}

// fieldOverText words the warning about readings whose |B| is above the
// 0.1 T that serve takes (broker.MaxFieldNT; serve refuses each batch
// holding one to uc.dlq.malformed, but they are sent all the same, as a
// gateway would send them): n readings above the
// bound in nb batches, first the first of them.
func fieldOverText(path string, n, nb int, first string) string {
	nbText := "1 batch"
	if nb > 1 {
		nbText = fmt.Sprintf("%d batches", nb)
	}
	return fmt.Sprintf("%s: %s with |B| above 0.1 T (%g nT), which no magnetometer reading of a buried conductor gives (a corrupt value or a wrong unit; the first: %s): serve refuses the %s holding them to uc.dlq.malformed, and their windows go without those samples",
		path, plural(n, "reading"), float64(broker.MaxFieldNT), first, nbText)
}

// waitForStream waits until the data stream exists (serve creates it).
func waitForStream(ctx context.Context, js jetstream.JetStream, d time.Duration) error {
	deadline := time.Now().Add(d)
	for {
		c, cancel := context.WithTimeout(ctx, 2*time.Second)
		_, err := js.Stream(c, broker.StreamData)
		cancel()
		if err == nil {
			return nil
		}
		if !errors.Is(err, jetstream.ErrStreamNotFound) && time.Now().After(deadline) {
			return fmt.Errorf("broker: reading the %s stream's state: %w (replay needs an account allowed the JetStream API, $JS.API.>, and replies, _INBOX.>: a publish-only account cannot replay; see replay --help)", broker.StreamData, err)
		}
		if time.Now().After(deadline) {
			return fmt.Errorf("no %s stream on the broker after %v: is undercurrent serve running?", broker.StreamData, d)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(100 * time.Millisecond):
		}
	}
}
