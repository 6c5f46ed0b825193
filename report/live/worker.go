package live

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"sort"
	"strconv"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// checkpoint is an asset's processing state in uc_state, written after
// each group of published windows. A successor resumes reading UC_DATA at
// ResumeSeq and drops samples before Done.
type checkpoint struct {
	Done      float64            `json:"done"`       // end of the last published window, s
	Window    int64              `json:"window"`     // its index
	ResumeSeq uint64             `json:"resume_seq"` // first UC_DATA sequence to read again
	LastSeq   uint64             `json:"last_seq"`   // last UC_DATA sequence examined
	Prev      map[string]float64 `json:"prev"`       // last currents, for the step alarm
	// PrevAt is the end of the window Prev was taken from (absent in a
	// checkpoint written before it was kept: no gap is then judged).
	PrevAt float64 `json:"prev_at,omitempty"`
	// Ongoing holds the latched alarms' conditions that still hold (see
	// latch), so that a successor neither raises them again nor loses
	// their clearing.
	Ongoing map[string]*latchedState `json:"ongoing,omitempty"`
	Worker  string                   `json:"worker"`
	// Start records the site-file start that placed the first checkpoint
	// (empty when the asset began with everything retained).
	Start string `json:"start,omitempty"`
	// Revision counts the restart requests applied to the asset; it
	// suffixes the message ids (see msgID). Restart is the id of the last
	// one, so that a successor does not apply it twice.
	Revision int    `json:"revision,omitempty"`
	Restart  string `json:"restart,omitempty"`
	// SilentSince is the start of the silence the asset's silent alarm
	// was last raised for (RFC 3339), so that a successor does not raise
	// it again for the same silence.
	SilentSince string `json:"silent_since,omitempty"`
	// DataLost is the message of a data-lost alarm not yet carried by an
	// estimate: it goes on the first window ending after DataLostAt (the
	// first sample after the data removed), so that a successor marks it
	// if this worker stops before.
	DataLost   string  `json:"data_lost,omitempty"`
	DataLostAt float64 `json:"data_lost_at,omitempty"`
	// SilentOpen is the asset's silent alarm raised and not yet cleared:
	// the first window published after data comes again carries its
	// cleared record (see clearSilence), also for a successor.
	SilentOpen *openSilence `json:"silent_open,omitempty"`
	// SilentEarly is the asset's silent alarm raised before its first
	// published window (see checkSilence), until that window is published.
	SilentEarly *earlySilence `json:"silent_early,omitempty"`
	// OutOfOrder holds, by sensor, the runs of batches refused as out of
	// order since the sensor's last batch accepted (see noteOutOfOrder),
	// so that a successor neither raises their alarm again nor loses its
	// clearing.
	OutOfOrder map[string]*outOfOrderRun `json:"out_of_order,omitempty"`
}

// earlySilence is an asset-wide silent alarm raised before the asset's
// first published window, and where it was stored: the first window may
// turn out to start before it (data with earlier sensor times), and the
// alarm is then moved to that window (see placeEarlySilence).
// openSilence is the asset's silent alarm in the checkpoint until its
// cleared record is published: the window it is stored in and that
// window's start, and the silence's start as in its message.
type openSilence struct {
	Window int64   `json:"window"`
	Start  float64 `json:"start"`
	Since  string  `json:"since"`
}

type earlySilence struct {
	Alarm Alarm  `json:"alarm"`
	Seq   uint64 `json:"seq"`   // its UC_ALARM sequence
	Since string `json:"since"` // the silence's start, as in its message id
}

func checkpointKey(asset string) string { return "checkpoint." + asset }
func geometryKey(asset string) string   { return "geometry." + asset }

// assetWorker processes one asset while this worker holds its lease.
type assetWorker struct {
	svc   *Service
	asset *AssetConfig
	log   *slog.Logger
	sens  map[string]int
	asm   *assembler
	proc  *processor
	ck    checkpoint
	// commissioning: windows waiting for the geometry.
	pending []*window
	pendDur float64
	// pendReds are the held windows' reduced readings, in their order;
	// misfits counts the commissioning fits in a row that failed other
	// than for want of current; waiting says the asset's endpoint shows
	// a commissioning state (Service.waiting: waiting for current, or
	// failing); failAlarmed that the run of failed fits was alarmed
	// (commissionFailing).
	pendReds    []*reduced
	misfits     int
	waiting     bool
	failAlarmed bool
	// lastData is the wall time of the last batch filed or held (or of
	// taking the asset); silent says the asset's silent alarm is raised.
	lastData time.Time
	silent   bool
	// backlogTo is the broker's time of the asset's last stored batch when
	// the worker took the asset (zero: none). Batches stored no later are
	// backlog: reading them again does not move lastData, which
	// silenceAtStart already set from the broker's time of the last one,
	// so that a takeover does not date a silence from its own start.
	backlogTo time.Time
	// backlogSeq is that batch's data stream sequence: until the worker
	// has read up to it (a re-read after a restart request, a takeover
	// behind), the asset's silent alarm waits (checkSilence), so that it
	// is not placed among windows of data still to be read.
	backlogSeq uint64
	// stall is when the worker last found the stream holding data for the
	// asset that its consumer had not delivered while an idle close was
	// due (see storedAhead); zero when it is not waiting for such data.
	stall, stallLooked time.Time
	// unreadable is when the data stream first failed to answer in a
	// row (zero once it answers).
	unreadable time.Time
	// overlapLogged is when each sensor's overlapping data was last
	// logged (see noteOverlap).
	overlapLogged map[string]time.Time
	// refusedLog gathers, per dead-letter reason, the messages refused
	// since the last line logged for that reason (see noteRefused).
	refusedLog map[string]*refusedRun
	// implausibleLogged holds the implausible checks the last window
	// failed (logged when they began to fail).
	implausibleLogged map[string]bool
	// ctx is the context run was given: its cause says whether the
	// processing is to drain or to stop at once (see fenced).
	ctx context.Context
	// lctx is a context that ends when the processing must stop at once
	// (nil before run).
	lctx context.Context
	// removed, when set, is the range of data stream sequences the broker
	// removed that this worker was to read from (see noteRemoved).
	removed *removedRange
}

// removedRange is a range of UC_DATA sequences removed before the
// asset's worker read them, from a checkpoint whose resume sequence is
// below the stream's first. sure says some of them were the asset's (its
// checkpoint had read them into windows not yet published); otherwise
// they may all be other assets', and the asset's first sample after them
// tells (see noteRemoved).
type removedRange struct {
	from, to uint64
	sure     bool
}

func (s *Service) newAssetWorker(a *AssetConfig) (*assetWorker, error) {
	proc, err := newProcessor(a, s.id)
	if err != nil {
		return nil, err
	}
	proc.gapAfter = s.site.Service.SilentAfter.Seconds()
	w := &assetWorker{svc: s, asset: a, log: s.log.With("asset", a.Name), sens: map[string]int{}, proc: proc}
	for i, sn := range a.Sensors {
		w.sens[sn.Name] = i
	}
	w.asm = s.newAssetAssembler(a)
	return w, nil
}

// newAssetAssembler returns the assembler of asset a: a sensor silent for
// the idle time no longer counts in the quorum that closes windows.
func (s *Service) newAssetAssembler(a *AssetConfig) *assembler {
	asm := newAssembler(a.Window.Duration, s.site.Service.Grace.Duration, len(a.Sensors))
	asm.stale = s.site.Service.Idle.Duration
	return asm
}

// run reads the asset's data from its checkpoint until ctx ends, then
// drains: messages already fetched are processed, complete windows are
// published and the checkpoint is written.
func (w *assetWorker) run(ctx context.Context) error {
	defer w.svc.met.dataLag.forget(w.asset.Name)
	// Not held any more: its consumer lag is no longer this worker's to
	// report (a gauge left behind read as a fresh value).
	defer w.svc.met.pending.DeleteLabelValues(w.asset.Name)
	defer w.svc.waiting.Delete(w.asset.Name)
	w.ctx = ctx
	// lctx ends only when the processing must stop at once (see fenced),
	// so that a broker call waiting for an answer gives up then too.
	lctx, lcancel := context.WithCancel(context.Background())
	defer lcancel()
	defer context.AfterFunc(ctx, func() {
		if w.fenced() != nil {
			lcancel()
		}
	})()
	w.lctx = lctx
	defer func() { w.flushRefused(time.Now(), true) }()
	err := w.runAsset(ctx)
	if f := w.fenced(); f != nil && (err == nil || errors.Is(err, f)) {
		return nil // stopped on purpose; logged where it stopped
	}
	return err
}

func (w *assetWorker) runAsset(ctx context.Context) error {
	st := w.svc.stores
	bg := context.Background()
	if e, err := st.State.Get(bg, checkpointKey(w.asset.Name)); err == nil {
		if err := json.Unmarshal(e.Value(), &w.ck); err != nil {
			return fmt.Errorf("live: asset %s: checkpoint: %w", w.asset.Name, err)
		}
		w.asm.done = w.ck.Done
		w.asm.lastSeq = w.ck.LastSeq
		for k, v := range w.ck.Prev {
			w.proc.prev[k] = v
		}
		w.proc.prevAt = w.ck.PrevAt
		w.proc.active = w.ck.Ongoing
	} else if !errors.Is(err, jetstream.ErrKeyNotFound) {
		return fmt.Errorf("live: asset %s: checkpoint: %w", w.asset.Name, err)
	} else if err := w.placeStart(bg); err != nil {
		return err
	}
	if err := w.loadGeometry(bg); err != nil {
		return err
	}
	// A restart request taken while no worker held the asset.
	if req, rev, err := w.pendingRestart(); err != nil {
		return err
	} else if req != nil {
		if err := w.applyRestart(req, rev); err != nil {
			return err
		}
	}
	for {
		req, rev, err := w.consume(ctx)
		var site *needsSiteError
		if errors.As(err, &site) {
			return w.halt(ctx, err)
		}
		if err != nil || req == nil {
			return err
		}
		if err := w.applyRestart(req, rev); err != nil {
			return err
		}
	}
}

// halt stops the asset for a failure that only a mended site file can
// mend (a commissioning needsSiteError): the error is logged once and
// shown on the asset's endpoint, and the worker holds the asset without
// reading its data until ctx ends (serve stops), so that neither it nor
// another worker takes it again to fail the same way every lease round.
// The data stays in the broker for when serve runs with the mended file.
func (w *assetWorker) halt(ctx context.Context, err error) error {
	w.log.Error("asset stopped until the site file is mended and serve restarted", "err", err)
	w.svc.stopped.Store(w.asset.Name, err.Error())
	defer w.svc.stopped.Delete(w.asset.Name)
	<-ctx.Done()
	return nil
}

// consume reads UC_DATA from the checkpoint until ctx ends, then drains
// (messages already fetched are processed, complete windows are published
// and the checkpoint is written) and returns nil. When a restart request
// for the asset appears it stops at once, without writing a checkpoint
// (the request replaces it), and returns the request.
func (w *assetWorker) consume(ctx context.Context) (*RestartStatus, uint64, error) {
	st := w.svc.stores
	bg := context.Background()
	cfg := jetstream.OrderedConsumerConfig{FilterSubjects: []string{broker.DataFilter(w.asset.Name)}, DeliverPolicy: jetstream.DeliverAllPolicy}
	if w.ck.ResumeSeq > 0 {
		cfg.DeliverPolicy = jetstream.DeliverByStartSequencePolicy
		cfg.OptStartSeq = w.ck.ResumeSeq
	}
	cons, err := st.JS.OrderedConsumer(bg, broker.StreamData, cfg)
	if err != nil {
		return nil, 0, fmt.Errorf("live: asset %s: consumer: %w", w.asset.Name, err)
	}
	it, err := cons.Messages(jetstream.PullMaxMessages(512))
	if err != nil {
		return nil, 0, fmt.Errorf("live: asset %s: consumer: %w", w.asset.Name, err)
	}
	// Messages stored up to now are a backlog: reading them does not show
	// that the asset's publisher is sending (see assembler.backlog).
	w.asm.backlog, w.asm.fresh, w.asm.resumeIdle = 0, false, w.svc.site.Service.ResumeIdle.Duration
	if ds, err := st.JS.Stream(bg, broker.StreamData); err != nil {
		w.log.Warn("data stream not readable: idle closes count backlog as new data", "err", err)
	} else if info, err := ds.Info(bg); err != nil {
		w.log.Warn("data stream not readable: idle closes count backlog as new data", "err", err)
	} else {
		w.asm.backlog = info.State.LastSeq
		// The checkpoint says where to read from; a stream whose first
		// sequence is past it has removed (data_retention, data_max_bytes)
		// data this worker never read.
		if rs := w.ck.ResumeSeq; rs > 0 && info.State.FirstSeq > rs {
			w.removed = &removedRange{from: rs, to: info.State.FirstSeq - 1, sure: rs <= w.ck.LastSeq}
		}
	}
	w.log.Info("asset acquired", "resume_seq", w.ck.ResumeSeq, "done", w.ck.Done, "revision", w.ck.Revision, "backlog_to", w.asm.backlog)
	msgs := make(chan jetstream.Msg, 64)
	// The reader stops when rctx ends, whatever the iterator does: after
	// a broker restart an iterator told to drain can go on delivering
	// from a consumer it recreated, and its Stop is then a no-op.
	rctx, rcancel := context.WithCancel(bg)
	defer rcancel()
	go func() {
		defer close(msgs)
		for {
			m, err := it.Next(jetstream.NextContext(rctx))
			if err != nil {
				return
			}
			if deliveryGate != nil {
				deliveryGate(m)
			}
			select {
			case msgs <- m:
			case <-rctx.Done():
				return
			}
		}
	}()
	// stop ends the reading without waiting for the reader, which may be
	// held in the client while the broker does not answer: it returns as
	// soon as Next does, dropping what it had.
	stop := func() {
		rcancel()
		it.Stop()
	}
	w.lastData, w.silent = w.silenceAtStart(bg)
	tick := time.NewTicker(w.tickEvery())
	defer tick.Stop()
	var polled time.Time
	var drainEnd <-chan time.Time
	done := ctx.Done()
	for {
		// A lost lease is looked at before anything else: select picks
		// among ready cases at random, and a message handled after the
		// loss would be processed by a worker without the lease.
		if err := w.fenced(); err != nil {
			stop()
			w.log.Warn("asset processing stopped: "+err.Error()+"; nothing more is published or checkpointed by this worker", "last_seq", w.asm.lastSeq)
			return nil, 0, err
		}
		select {
		case <-done:
			done = nil
			it.Drain()
			drainEnd = time.After(w.svc.drainLimit())
		case <-drainEnd:
			// The consumer went on delivering past the messages it had
			// fetched (or never closed): stop reading. Complete windows
			// are published; the open ones stay for the next holder.
			w.log.Warn("drain did not end in time: reading stopped", "limit", w.svc.drainLimit(), "last_seq", w.asm.lastSeq)
			stop()
			return nil, 0, w.saveCheckpoint()
		case m, ok := <-msgs:
			if !ok {
				// Drained: complete windows are published; open ones stay
				// for the next holder, who rebuilds them from the checkpoint.
				return nil, 0, w.saveCheckpoint()
			}
			if err := w.handle(m); err != nil {
				stop()
				return nil, 0, err
			}
		case now := <-tick.C:
			if err := w.closeReady(time.Now(), w.svc.site.Service.Idle.Duration); err != nil {
				stop()
				return nil, 0, err
			}
			if err := w.checkSilence(time.Now()); err != nil {
				stop()
				return nil, 0, err
			}
			if done == nil || now.Sub(polled) < restartPoll {
				continue // draining, or looked a moment ago
			}
			polled = now
			req, rev, err := w.pendingRestart()
			if err != nil {
				w.log.Warn("restart requests not readable", "err", err)
				continue
			}
			if req != nil {
				stop()
				return req, rev, nil
			}
		}
	}
}

// fenced returns the cause when the asset's processing must stop at once
// and write nothing more to the broker (errLeaseLost: another worker may
// hold the asset; errAbandoned: a drain cut short at shutdown), else nil.
func (w *assetWorker) fenced() error {
	if w.ctx == nil {
		return nil
	}
	if c := context.Cause(w.ctx); errors.Is(c, errLeaseLost) || errors.Is(c, errAbandoned) {
		return c
	}
	return nil
}

// deliveryGate, when set (by tests), is called with each message the
// consumer delivers before the worker reads it; blocking in it stalls the
// consumer as losing the broker node that serves it does.
var deliveryGate func(jetstream.Msg)

// wallClock is the time of an asset's first start (a variable so that
// tests can place it).
var wallClock = time.Now

// placeStart applies the asset's start setting when it has no checkpoint.
// "retained" leaves today's path (read everything the stream holds). Any
// other start is resolved once, now, to a UC_DATA sequence, mirroring the
// deliver policies broker.Subscribe uses for the same choices: "new" is
// the stream's last sequence plus one (DeliverNewPolicy), a time or a
// duration back from now is the asset's first message stored at or after
// that time (DeliverByStartTimePolicy; the server looks it up). The
// sequence is written as the asset's first checkpoint straight away, so a
// restart or takeover before the first window resumes from the same
// place instead of resolving "new" or "24h" again.
func (w *assetWorker) placeStart(ctx context.Context) error {
	start := w.asset.Start
	if start.Kind() == StartRetained {
		return nil
	}
	fail := func(err error) error {
		return fmt.Errorf("live: asset %s: start %q: %w", w.asset.Name, start, err)
	}
	ctx, cancel := context.WithTimeout(ctx, 10*time.Second)
	defer cancel()
	seq, err := w.svc.startSeq(ctx, w.asset.Name, start, wallClock())
	if err != nil {
		return fail(err)
	}
	w.asm.lastSeq = seq - 1
	w.ck.Start = start.String()
	w.log.Info("no checkpoint: starting from the site file's start", "start", w.ck.Start, "seq", seq)
	return w.saveCheckpoint()
}

// firstSeqAt returns the sequence of the asset's first UC_DATA message
// stored at or after t, or 0 when there is none. It asks the stream's
// message-get API with start_time and next_by_subj, which resolves the
// time as a DeliverByStartTimePolicy consumer would (the client library
// does not expose start_time).
func (s *Service) firstSeqAt(ctx context.Context, asset string, t time.Time) (uint64, error) {
	seq, err := s.dataSeqLookup(ctx, struct {
		StartTime time.Time `json:"start_time"`
		NextFor   string    `json:"next_by_subj"`
		NoHeaders bool      `json:"no_hdr"`
	}{t.UTC(), broker.DataFilter(asset), true})
	if err != nil {
		return 0, fmt.Errorf("message lookup by time: %w", err)
	}
	return seq, nil
}

// nextDataSeq returns the sequence of the asset's first UC_DATA message at
// or after sequence from, or 0 when the stream holds none.
func (s *Service) nextDataSeq(ctx context.Context, asset string, from uint64) (uint64, error) {
	seq, err := s.dataSeqLookup(ctx, struct {
		Seq       uint64 `json:"seq"`
		NextFor   string `json:"next_by_subj"`
		NoHeaders bool   `json:"no_hdr"`
	}{from, broker.DataFilter(asset), true})
	if err != nil {
		return 0, fmt.Errorf("message lookup by sequence: %w", err)
	}
	return seq, nil
}

// dataSeqLookup sends req to UC_DATA's message-get API and returns the
// sequence of the message found, or 0 when there is none.
func (s *Service) dataSeqLookup(ctx context.Context, req any) (uint64, error) {
	body, err := json.Marshal(req)
	if err != nil {
		return 0, err
	}
	m, err := s.nc.RequestWithContext(ctx, jetstream.DefaultAPIPrefix+"STREAM.MSG.GET."+broker.StreamData, body)
	if err != nil {
		return 0, err
	}
	var resp struct {
		Message *struct {
			Seq uint64 `json:"seq"`
		} `json:"message"`
		Error *struct {
			Code        int    `json:"code"`
			ErrCode     int    `json:"err_code"`
			Description string `json:"description"`
		} `json:"error"`
	}
	if err := json.Unmarshal(m.Data, &resp); err != nil {
		return 0, err
	}
	switch {
	case resp.Error != nil && resp.Error.ErrCode == 10037: // no message found
		return 0, nil
	case resp.Error != nil:
		return 0, fmt.Errorf("%s (code %d)", resp.Error.Description, resp.Error.ErrCode)
	case resp.Message == nil || resp.Message.Seq == 0:
		return 0, fmt.Errorf("empty answer")
	}
	return resp.Message.Seq, nil
}

func (w *assetWorker) tickEvery() time.Duration {
	d := w.svc.site.Service.Idle.Duration / 4
	if d > 250*time.Millisecond {
		d = 250 * time.Millisecond
	}
	if d < 10*time.Millisecond {
		d = 10 * time.Millisecond
	}
	return d
}

// handle files one message and publishes the windows it completes.
func (w *assetWorker) handle(m jetstream.Msg) error {
	met := w.svc.met
	md, err := m.Metadata()
	if err != nil {
		return fmt.Errorf("live: asset %s: message metadata: %w", w.asset.Name, err)
	}
	seq := md.Sequence.Stream
	met.pending.WithLabelValues(w.asset.Name).Set(float64(md.NumPending))
	replayed := seq <= w.ck.LastSeq // already examined by an earlier holder
	subj := m.Subject()
	data := m.Data()
	if max := w.svc.site.Service.MaxMessageBytes; len(data) > max {
		return w.deadLetter(broker.ReasonOversized, subj, seq, data, fmt.Errorf("live: %s: %d bytes, limit %d", subj, len(data), max))
	}
	_, sensor, err := broker.ParseDataSubject(subj)
	if err != nil {
		return w.deadLetter(broker.ReasonMalformed, subj, seq, data, err)
	}
	si, ok := w.sens[sensor]
	if !ok {
		return w.deadLetter(broker.ReasonUnknownSensor, subj, seq, data, fmt.Errorf("live: %s: sensor %q is not listed for asset %s in the site file", subj, sensor, w.asset.Name))
	}
	t0 := time.Now()
	b, err := broker.DecodeLimit(subj, m.Headers().Get(broker.HeaderContentType), data, w.svc.site.maxDecoded())
	met.stage.WithLabelValues("decode").Observe(time.Since(t0).Seconds())
	if errors.Is(err, broker.ErrDecodedTooLarge) {
		return w.deadLetter(broker.ReasonOversized, subj, seq, data, err)
	}
	if err != nil {
		return w.deadLetter(broker.ReasonMalformed, subj, seq, data, err)
	}
	// Judged against the broker's clock when the batch was stored, so that
	// reading the message again later gives the same answer.
	if err := checkTimes(subj, b, md.Timestamp, w.svc.site.Service.MaxAhead.Duration); err != nil {
		return w.deadLetter(broker.ReasonMalformed, subj, seq, data, err)
	}
	if w.removed != nil {
		if err := w.noteRemoved(b.Time[0]); err != nil {
			return err
		}
	}
	t0 = time.Now()
	marked := m.Headers().Get(broker.HeaderReplay) == "1"
	w.asm.clock, w.asm.marked = md.Timestamp, marked
	res, _ := w.asm.addMsg(si, seq, b, t0, subj, data)
	w.asm.clock, w.asm.marked = time.Time{}, false
	met.stage.WithLabelValues("assemble").Observe(time.Since(t0).Seconds())
	switch res {
	case outOfRange:
		return w.deadLetter(broker.ReasonMalformed, subj, seq, data,
			fmt.Errorf("live: %s: times %v to %v give window indices beyond %v", subj, b.Time[0], b.Time[b.Len()-1], float64(maxWindowIndex)))
	case heldBack:
		w.noteData(md.Timestamp, t0)
		met.messages.WithLabelValues(w.asset.Name, "held").Inc()
		w.log.Warn("batch held: far ahead of every other sensor", "subject", subj, "seq", seq, "start", b.Time[0])
		return w.refuseRejected(t0)
	case heldAhead:
		w.noteData(md.Timestamp, t0)
		met.messages.WithLabelValues(w.asset.Name, "held").Inc()
		if h := w.asm.ahead[si]; len(h) == 1 {
			w.log.Warn("batch held: it jumps ahead of the sensor's pace and of the broker's clock (a gateway clock stepped forward?); refused if the sensor's next batch goes back before it, processed as dated if the sensor goes on in line with it",
				"subject", subj, "seq", seq, "start", unixString(b.Time[0]), "stored", md.Timestamp.UTC().Format(time.RFC3339Nano))
		}
		if err := w.refuseRejected(t0); err != nil {
			return err
		}
		return w.closeReady(t0, 0)
	case outOfOrder:
		// A batch `undercurrent replay` marked is not counted: a replay run
		// again sends what the service already has, and loses nothing.
		if !replayed && !marked {
			if err := w.noteOutOfOrder(sensor, seq, md.Timestamp, b.Time[0], b.Time[b.Len()-1]); err != nil {
				return err
			}
		}
		return w.deadLetter(broker.ReasonOutOfOrder, subj, seq, data,
			fmt.Errorf("live: %s: batch from %v to %v is not after the sensor's last sample (%v)", subj, b.Time[0], b.Time[b.Len()-1], w.asm.water[si]))
	case late:
		if replayed {
			met.messages.WithLabelValues(w.asset.Name, "skipped").Inc()
			return nil
		}
		return w.deadLetter(broker.ReasonLate, subj, seq, data,
			fmt.Errorf("live: %s: samples from %v to %v fall in windows already published", subj, b.Time[0], b.Time[b.Len()-1]))
	}
	w.noteData(md.Timestamp, t0)
	met.messages.WithLabelValues(w.asset.Name, "accepted").Inc()
	if !replayed {
		if err := w.inOrder(sensor); err != nil {
			return err
		}
	}
	met.samples.WithLabelValues(w.asset.Name).Add(float64(b.Len() - w.asm.overlap))
	if k := w.asm.overlap; k > 0 {
		w.noteOverlap(sensor, subj, seq, k, b)
	}
	if err := w.refuseRejected(t0); err != nil {
		return err
	}
	return w.closeReady(t0, 0)
}

// noteRemoved is called with the first sample time of the first batch of
// the asset read after the worker found that the broker had removed data
// it was to read (w.removed). The asset lost data when the removed range
// held part of its open windows (sure), or when its data resumes a whole
// window or more after the end of its last published window, or nothing
// was ever published for it. Then it logs a WARN, counts the removed
// sequences in uc_data_discarded_messages_total, raises a data-lost alarm
// in the window after the last published one, and marks the first
// estimate after the gap (Estimate.DataLost). Otherwise the sequences
// removed were other assets' (already read by their workers), and this
// is logged at INFO.
func (w *assetWorker) noteRemoved(resume float64) error {
	rm := w.removed
	w.removed = nil
	L := w.asset.Window.Seconds()
	done := w.ck.Done
	if !rm.sure && done > 0 && resume < done+L {
		w.log.Info("the broker removed data stream messages before this worker read them, but the asset's data goes on from its last published window: none of its data was lost",
			"first_seq", rm.from, "last_seq", rm.to, "data_from", unixString(resume))
		return nil
	}
	n := rm.to - rm.from + 1
	w.svc.met.discarded.WithLabelValues(w.asset.Name).Add(float64(n))
	span, from := "before "+unixString(resume), "nothing published yet"
	if done > 0 {
		from = unixString(done)
		span = "from " + from + " to " + unixString(resume)
	}
	msg := fmt.Sprintf("data of asset %s %s was removed by the broker (data_retention or data_max_bytes) before it was processed: data stream sequences %d to %d (%d messages, some of them perhaps other assets') were gone when its worker came to read them",
		w.asset.Name, span, rm.from, rm.to, n)
	w.log.Warn("data removed by the broker before it was processed: windows are missing (raise data_max_bytes or data_retention, or keep a worker running)",
		"first_seq", rm.from, "last_seq", rm.to, "messages", n, "lost_from", from, "data_from", unixString(resume))
	idx := w.ck.Window + 1
	if done == 0 {
		idx = w.asm.index(resume)
	}
	win := &window{Index: idx, Start: float64(idx) * L, End: float64(idx+1) * L}
	al := w.proc.alarm(win, AlarmDataLost, "", float64(n), 0, msg)
	if err := w.publishAlarm(al, w.msgID(idx)+"/"+al.Kind+"/"+strconv.FormatUint(rm.from, 10)); err != nil {
		return err
	}
	w.ck.DataLost, w.ck.DataLostAt = msg, resume
	return nil
}

// noteImplausible counts a window's implausible checks in
// uc_implausible_windows_total and logs a WARN when a check starts to
// fail, once until it passes again.
func (w *assetWorker) noteImplausible(win *window, alarms []Alarm) {
	failing := map[string]bool{}
	for _, al := range alarms {
		if al.Kind != AlarmImplausible {
			continue
		}
		failing[al.Subject] = true
		w.svc.met.implausible.WithLabelValues(w.asset.Name, al.Subject).Inc()
		if !w.implausibleLogged[al.Subject] {
			w.log.Warn("readings implausible: estimates are marked quality \"implausible\" while this lasts (logged once; counted in uc_implausible_windows_total)",
				"check", al.Subject, "window", win.Index, "start", unixString(win.Start), "reason", al.Message)
		}
	}
	for check := range w.implausibleLogged {
		if !failing[check] {
			w.log.Info("readings plausible again", "check", check, "window", win.Index)
		}
	}
	w.implausibleLogged = failing
}

// overlapLogEvery is how often, at most, an overlap of one sensor's data
// is logged (every one is counted in uc_overlap_samples_total).
const overlapLogEvery = time.Minute

// noteOverlap counts the k samples of a batch (b, as sent) that repeated
// what its sensor had already sent, dropped by the assembler while the
// rest were filed, and logs it once per overlapLogEvery per sensor.
func (w *assetWorker) noteOverlap(sensor, subj string, seq uint64, k int, b *broker.Batch) {
	w.svc.met.overlap.WithLabelValues(w.asset.Name).Add(float64(k))
	if w.overlapLogged == nil {
		w.overlapLogged = map[string]time.Time{}
	}
	if now := time.Now(); now.Sub(w.overlapLogged[sensor]) >= overlapLogEvery {
		w.overlapLogged[sensor] = now
		w.log.Info("batch overlaps data already received: the repeated samples are dropped, the rest kept (logged once a minute per sensor; counted in uc_overlap_samples_total)",
			"subject", subj, "seq", seq, "repeated", k, "kept", b.Len()-k, "start", b.Time[0])
	}
}

// refusedLogEvery is how often, at most, a line is logged per asset and
// dead-letter reason for the messages refused since the last (every one
// is counted in uc_dead_letters_total and uc_messages_total, and stored
// in uc.dlq.<reason>): one replay whose times overlapped published
// windows logged 13,620 lines, one per message, in 23 s (rv24d t4).
const refusedLogEvery = time.Minute

// refusedRun is the messages of one reason refused since the last line
// logged for it: how many, their first and last sequences, the last's
// error, and when the line before was logged.
type refusedRun struct {
	logged  time.Time
	n       int
	lo, hi  uint64
	lastErr error
}

// noteRefused logs a refused message: at once, with its error, when no
// line was logged for its reason within refusedLogEvery; else it is
// gathered into the next line for that reason (flushRefused).
func (w *assetWorker) noteRefused(now time.Time, reason string, seq uint64, cause error) {
	if w.refusedLog == nil {
		w.refusedLog = map[string]*refusedRun{}
	}
	r := w.refusedLog[reason]
	if r != nil && now.Sub(r.logged) < refusedLogEvery {
		if r.n == 0 || seq < r.lo {
			r.lo = seq
		}
		if seq > r.hi {
			r.hi = seq
		}
		r.n++
		r.lastErr = cause
		return
	}
	if r != nil && r.n > 0 {
		w.logRefused(now, reason, r)
	}
	w.refusedLog[reason] = &refusedRun{logged: now}
	w.log.Warn("message refused (more refused for the same reason within a minute are logged together)", "reason", reason, "seq", seq, "err", cause)
}

// flushRefused logs, per reason, the messages gathered since the last
// line once refusedLogEvery has passed since it, or at once when all
// (the processing ends).
func (w *assetWorker) flushRefused(now time.Time, all bool) {
	reasons := make([]string, 0, len(w.refusedLog))
	for reason := range w.refusedLog {
		reasons = append(reasons, reason)
	}
	sort.Strings(reasons)
	for _, reason := range reasons {
		r := w.refusedLog[reason]
		if r.n > 0 && (all || now.Sub(r.logged) >= refusedLogEvery) {
			w.logRefused(now, reason, r)
			*r = refusedRun{logged: now}
		}
	}
}

func (w *assetWorker) logRefused(now time.Time, reason string, r *refusedRun) {
	span := "in the last minute"
	if d := now.Sub(r.logged); d > refusedLogEvery+refusedLogEvery/2 {
		span = "in the last " + d.Round(time.Second).String()
	}
	w.log.Warn(fmt.Sprintf("%d refused as %s %s (each stored in %s, counted in uc_dead_letters_total; logged together at most once a minute)",
		r.n, reason, span, broker.DeadLetterSubject(reason)), "reason", reason, "count", r.n, "seq_first", r.lo, "seq_last", r.hi, "last_err", r.lastErr)
}

// noteData records a batch filed or held at wall time now that the
// broker stored at stored: a batch stored after the worker took the
// asset ends any silence and dates the next from now; backlog (see
// backlogTo) leaves the silence as silenceAtStart found it.
func (w *assetWorker) noteData(stored, now time.Time) {
	if !stored.IsZero() && !w.backlogTo.IsZero() && !stored.After(w.backlogTo) {
		return
	}
	w.lastData, w.silent = now, false
}

// silenceAtStart returns, for a worker taking the asset, when its data
// last arrived and whether the silent alarm is already raised for the
// silence since: the broker's time of the asset's last stored batch, or
// the silence a predecessor raised the alarm for when nothing was stored
// after it began, or now when the stream holds nothing for the asset.
func (w *assetWorker) silenceAtStart(ctx context.Context) (time.Time, bool) {
	now := time.Now()
	var last time.Time
	ctx, cancel := context.WithTimeout(ctx, 5*time.Second)
	defer cancel()
	if ds, err := w.svc.stores.JS.Stream(ctx, broker.StreamData); err == nil {
		if m, err := ds.GetLastMsgForSubject(ctx, broker.DataFilter(w.asset.Name)); err == nil {
			last = m.Time
			w.backlogTo, w.backlogSeq = m.Time, m.Sequence
		} else if !errors.Is(err, jetstream.ErrMsgNotFound) {
			w.log.Warn("last data time not readable: silence counted from now", "err", err)
		}
	}
	if since, err := time.Parse(time.RFC3339Nano, w.ck.SilentSince); err == nil && !last.After(since) {
		return since, true
	}
	if last.IsZero() || last.After(now) {
		return now, false
	}
	return last, false
}

// checkSilence raises the asset's silent alarm once no batch has been
// filed for SilentAfter of wall time: the windows it would have had are
// never opened, so no window raises the per-sensor silent alarms. The
// alarm is placed in the window after the last published one.
//
// Before the asset's first published window it goes in the window of
// the asset's earliest sample not yet published (an open window, one
// waiting for commissioning, or a sensor's last sample), or, with no data
// at all, of the wall clock. Data that comes later may start earlier
// (a replay of a recorded log, a backfill, a gateway whose clock lags):
// the alarm is kept in the checkpoint (SilentEarly), and when the first
// window is published before it, it is moved there (placeEarlySilence),
// so that the asset's alarms stay stored in window order, which the
// range queries' binary search needs.
func (w *assetWorker) checkSilence(now time.Time) error {
	after := w.svc.site.Service.SilentAfter.Duration
	quiet := now.Sub(w.lastData)
	if w.silent || after <= 0 || quiet < after {
		return nil
	}
	if w.backlogSeq > 0 && w.asm.lastSeq < w.backlogSeq {
		return nil // stored data still to read: the silence comes after it
	}
	w.silent = true
	L := w.asset.Window.Seconds()
	idx := w.ck.Window + 1
	early := w.ck.Done == 0
	if early {
		idx = int64(math.Floor(float64(now.UnixNano()) / 1e9 / L))
		if k, ok := w.firstUnpublished(); ok {
			idx = k
		}
	}
	win := &window{Index: idx, Start: float64(idx) * L, End: float64(idx+1) * L}
	since := w.lastData.UTC().Format(time.RFC3339)
	al := w.proc.alarm(win, AlarmSilent, "", quiet.Seconds(), after.Seconds(),
		fmt.Sprintf("no data from any sensor of asset %s for %.0f s of wall time (since %s)", w.asset.Name, quiet.Seconds(), since))
	w.log.Warn("asset silent", "since", since)
	ack, err := w.publishAlarmAck(al, w.msgID(idx)+"/"+al.Kind+"/"+since, true)
	if err != nil {
		return err
	}
	if early {
		w.ck.SilentEarly = &earlySilence{Alarm: al, Seq: ack.Sequence, Since: since}
	}
	w.ck.SilentOpen = &openSilence{Window: al.Window, Start: al.Start, Since: since}
	w.ck.SilentSince = w.lastData.UTC().Format(time.RFC3339Nano)
	return w.saveCheckpoint()
}

// firstUnpublished returns the window index of the asset's earliest
// sample not yet published: its first open window, its first window
// waiting for commissioning, or a sensor's last sample; false when the
// worker holds none.
func (w *assetWorker) firstUnpublished() (int64, bool) {
	idx, ok := int64(math.MaxInt64), false
	take := func(k int64) {
		if k < idx {
			idx, ok = k, true
		}
	}
	if len(w.asm.open) > 0 {
		take(w.asm.open[0].idx)
	}
	if len(w.pending) > 0 {
		take(w.pending[0].Index)
	}
	for _, t := range w.asm.water {
		if !math.IsInf(t, -1) {
			take(w.asm.index(t))
		}
	}
	return idx, ok
}

// placeEarlySilence is called before window win is published. When the
// asset's silent alarm raised before its first published window
// (SilentEarly) is dated after win, it is stored again in win and the
// first copy deleted, so that no alarm of the asset is stored before a
// window that starts earlier; either way it is then no longer early. A
// copy that cannot be deleted is logged: the range queries tolerate it
// (see readRun), at the cost of reading past it.
func (w *assetWorker) placeEarlySilence(win *window) error {
	es := w.ck.SilentEarly
	if es == nil {
		return nil
	}
	if win.Index < es.Alarm.Window {
		al := es.Alarm
		L := w.asset.Window.Seconds()
		al.Window, al.Start, al.End = win.Index, float64(win.Index)*L, float64(win.Index+1)*L
		al.Revision = w.proc.revision
		if _, err := w.publishAlarmAck(al, w.msgID(win.Index)+"/"+al.Kind+"/"+es.Since, false); err != nil {
			return err
		}
		if so := w.ck.SilentOpen; so != nil && so.Since == es.Since {
			so.Window, so.Start = al.Window, al.Start
		}
		if err := w.fenced(); err != nil {
			return err
		}
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		err := w.deleteAlarm(ctx, es.Seq)
		cancel()
		if err != nil && !errors.Is(err, jetstream.ErrMsgNotFound) {
			w.log.Warn("asset silent alarm stored again in the first window, but its first copy could not be deleted: alarm range queries read past it", "seq", es.Seq, "window", win.Index, "err", err)
		} else {
			w.log.Info("asset silent alarm moved to the asset's first window, which starts before it", "from_window", es.Alarm.Window, "window", win.Index)
		}
	}
	w.ck.SilentEarly = nil
	return nil
}

// clearSilence appends to window win's alarms the cleared record of the
// asset's silent alarm (SilentOpen) once data has come again (review
// rv29a, finding 8: the alarm was never cleared, unlike a sensor's
// silence), in the first window published from the alarm's own on; once
// it is stored the checkpoint written with the window forgets the alarm.
// Windows counts
// the windows from the alarm's to this one, which had no data.
func (w *assetWorker) clearSilence(win *window, alarms []Alarm) []Alarm {
	so := w.ck.SilentOpen
	if so == nil || w.silent || win.Index < so.Window {
		return alarms
	}
	al := w.proc.alarm(win, AlarmSilent, "", 0, w.svc.site.Service.SilentAfter.Seconds(),
		fmt.Sprintf("data from asset %s again: the silence since %s has ended", w.asset.Name, so.Since))
	al.Cleared, al.Since, al.Windows = true, so.Start, int(win.Index-so.Window)
	return append(alarms, al)
}

// deleteAlarm deletes message seq of the alarm stream.
func (w *assetWorker) deleteAlarm(ctx context.Context, seq uint64) error {
	st, err := w.svc.stores.JS.Stream(ctx, broker.StreamAlarms)
	if err != nil {
		return err
	}
	return st.DeleteMsg(ctx, seq)
}

// message is a JSON message on subject with the asset's revision, when it
// has one, in its headers.
func (w *assetWorker) message(subject string, data []byte) *nats.Msg {
	m := nats.NewMsg(subject)
	m.Data = data
	m.Header.Set(broker.HeaderContentType, broker.ContentJSON)
	if w.ck.Revision > 0 {
		m.Header.Set(HeaderRevision, strconv.Itoa(w.ck.Revision))
	}
	return m
}

// publishAlarm publishes al on its asset's alarm subject with the message
// ID id (the broker drops a repeat) and counts it unless it was a repeat.
func (w *assetWorker) publishAlarm(al Alarm, id string) error {
	_, err := w.publishAlarmAck(al, id, true)
	return err
}

// publishAlarmAck is publishAlarm returning the broker's answer; count
// false leaves the alarm out of uc_alarms_total (an alarm moved).
func (w *assetWorker) publishAlarmAck(al Alarm, id string, count bool) (*jetstream.PubAck, error) {
	ad, err := json.Marshal(al)
	if err != nil {
		// A non-finite value (solve leaves none): the alarm is kept,
		// its numbers left out rather than sending an empty message.
		w.log.Error("alarm value not encodable: published without it", "kind", al.Kind, "window", al.Window, "value", al.Value, "threshold", al.Threshold)
		al.Value, al.Threshold = 0, 0
		ad, _ = json.Marshal(al)
	}
	ack, err := w.svc.publishFenced(w.fenced, w.message(broker.AlarmSubject(w.asset.Name, al.Kind), ad), id)
	if err != nil {
		return nil, err
	}
	if count && !ack.Duplicate && !al.Cleared {
		w.svc.met.alarms.WithLabelValues(w.asset.Name, al.Kind).Inc()
	}
	return ack, nil
}

// refuseRejected dead-letters the batches the assembler held (far ahead
// of the other sensors, or of their sensor's pace and the broker's clock)
// and then gave up, or filed after their windows were published (as
// late), counts the samples of held batches filed, and raises the
// clock-jump alarms (noteJumps). A held batch is dead-lettered even when
// a checkpoint written while it was held counts it as examined (its
// dead letter's message id keeps a takeover from storing it twice within
// the broker's duplicate window).
func (w *assetWorker) refuseRejected(now time.Time) error {
	for _, h := range w.asm.takeRejected() {
		b := h.b
		what := "more than grace plus a window ahead of every other sensor of the asset"
		if h.clock {
			what = "more than grace plus a window ahead of the broker's clock and of where the sensor's pace put it"
		}
		err := w.storeDeadLetter(broker.ReasonMalformed, h.subj, h.seq, h.data,
			fmt.Errorf("live: %s: batch from %v (%s) to %v started %s and was given up: %s",
				h.subj, b.Time[0], unixString(b.Time[0]), b.Time[b.Len()-1], what, h.why))
		if err != nil {
			return err
		}
	}
	lateHeld, samples := w.asm.takeFiled()
	w.svc.met.samples.WithLabelValues(w.asset.Name).Add(float64(samples))
	for _, h := range lateHeld {
		b := h.b
		err := w.storeDeadLetter(broker.ReasonLate, h.subj, h.seq, h.data,
			fmt.Errorf("live: %s: samples from %v (%s) to %v fall in windows already published: %s",
				h.subj, b.Time[0], unixString(b.Time[0]), b.Time[b.Len()-1], h.why))
		if err != nil {
			return err
		}
	}
	return w.noteJumps()
}

// noteJumps raises a clock-jump alarm for each run of a sensor's batches
// held as ahead of the broker's clock (see clockAhead) that was given up
// (one per episode: repeats are logged) or filed as dated, and logs those
// the clock reached. The alarm goes in
// the window after the last published one (or the asset's earliest
// unpublished one), as data-lost does, so that the alarm history stays
// in window order.
func (w *assetWorker) noteJumps() error {
	for _, j := range w.asm.takeJumps() {
		sensor := w.asset.Sensors[j.sensor].Name
		if !j.given && !j.confirmed {
			w.log.Info("batches held as ahead of the broker's clock filed: "+j.why, "sensor", sensor, "from", unixString(j.from), "batches", j.batches)
			continue
		}
		if j.repeat {
			// The same episode as the sensor's last alarm: logged only.
			w.log.Warn("sensor clock jump again", "sensor", sensor, "ahead_s", j.ahead, "given_up", j.given, "from", unixString(j.from), "batches", j.batches)
			continue
		}
		var msg string
		if j.given {
			msg = fmt.Sprintf("sensor %s of asset %s sent %d batch(es) dated %s to %s, %.0f s ahead of the broker's clock and out of line with its own pace; they were refused (uc.dlq.malformed), not processed: %s",
				sensor, w.asset.Name, j.batches, unixString(j.from), unixString(j.to), j.ahead, j.why)
		} else {
			why := j.why
			if j.along >= 0 {
				why = fmt.Sprintf("it is in line with sensor %s, whose jump was confirmed", w.asset.Sensors[j.along].Name)
			}
			msg = fmt.Sprintf("sensor %s of asset %s sends data dated %.0f s ahead of the broker's clock (from %s), a jump from its own pace; it kept to that clock (%s), so its data is processed as dated: check the gateway's clock, as data it sends once its clock is set back will be refused as out of order until the new times pass the jumped ones",
				sensor, w.asset.Name, j.ahead, unixString(j.from), why)
		}
		w.log.Warn("sensor clock jump", "sensor", sensor, "ahead_s", j.ahead, "given_up", j.given, "from", unixString(j.from), "batches", j.batches)
		L := w.asset.Window.Seconds()
		idx := w.ck.Window + 1
		if w.ck.Done == 0 {
			idx = w.asm.index(j.from)
			if k, ok := w.firstUnpublished(); ok && k < idx {
				idx = k
			}
		}
		win := &window{Index: idx, Start: float64(idx) * L, End: float64(idx+1) * L}
		al := w.proc.alarm(win, AlarmClockJump, sensor, j.ahead, w.asm.aheadMargin(), msg)
		if err := w.publishAlarm(al, w.msgID(idx)+"/"+al.Kind+"/"+sensor+"/"+strconv.FormatFloat(j.from, 'f', -1, 64)); err != nil {
			return err
		}
	}
	return nil
}

// minSensorTime is the earliest sample time accepted, 2000-01-01T00:00:00Z
// in Unix seconds: earlier times are a gateway that lost its clock or
// sends time since power-up. A log with such times is replayed with
// --now or --shift.
const minSensorTime = 946684800

// checkTimes refuses a batch whose sample times cannot be Unix seconds
// from a working clock: before 2000-01-01, or more than ahead past stored
// (the broker's clock when the batch was stored), as a timestamp in
// milliseconds or microseconds would be. Such a batch would otherwise
// become the sensor's last sample and make every correct batch after it
// out of order.
func checkTimes(subj string, b *broker.Batch, stored time.Time, ahead time.Duration) error {
	first, last := b.Time[0], b.Time[b.Len()-1] // times increase (Decode checks)
	if first < minSensorTime {
		return fmt.Errorf("live: %s: sample time %v is before 2000-01-01T00:00:00Z (%d); times are Unix seconds", subj, first, minSensorTime)
	}
	limit := float64(stored.UnixNano())/1e9 + ahead.Seconds()
	if last > limit {
		hint := ""
		for _, u := range []struct {
			f    float64
			name string
		}{{1e3, "milliseconds"}, {1e6, "microseconds"}, {1e9, "nanoseconds"}} {
			if v := last / u.f; v >= minSensorTime && v <= limit {
				hint = fmt.Sprintf(" (it reads as Unix %s: times are Unix seconds)", u.name)
				break
			}
		}
		return fmt.Errorf("live: %s: sample time %v (%s) is more than %v ahead of the broker's clock (%s)%s",
			subj, last, unixString(last), ahead, stored.UTC().Format(time.RFC3339), hint)
	}
	return nil
}

// unixString formats Unix seconds as RFC 3339, or says the time is past
// the year 5000.
func unixString(t float64) string {
	if !(math.Abs(t) < 1e11) {
		return "after the year 5000"
	}
	sec, frac := math.Modf(t)
	return time.Unix(int64(sec), int64(frac*1e9)).UTC().Format(time.RFC3339)
}

// deadLetter refuses message seq to uc.dlq.<reason>, once: a message
// that an earlier holder's checkpoint counts as examined (seq <= LastSeq,
// read again because it precedes a window that was still open) was
// already refused, as the checkpoint moves past a message only after its
// dead letter is stored; it is counted as skipped. Once stored, the
// message counts as examined, and when no window is open (nor waiting
// for commissioning) the checkpoint is written at once, so that a
// successor resumes after it instead of refusing it again.
func (w *assetWorker) deadLetter(reason, subj string, seq uint64, data []byte, cause error) error {
	if seq <= w.ck.LastSeq {
		w.svc.met.messages.WithLabelValues(w.asset.Name, "skipped").Inc()
		return nil
	}
	return w.storeDeadLetter(reason, subj, seq, data, cause)
}

// storeDeadLetter is deadLetter without the check for a message an
// earlier holder examined.
func (w *assetWorker) storeDeadLetter(reason, subj string, seq uint64, data []byte, cause error) error {
	w.svc.met.messages.WithLabelValues(w.asset.Name, "dead-letter").Inc()
	w.svc.met.deadLetters.WithLabelValues(reason).Inc()
	w.noteRefused(time.Now(), reason, seq, cause)
	if err := w.fenced(); err != nil {
		return err
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if err := broker.DeadLetter(ctx, w.svc.stores.JS, reason, subj, seq, data, w.svc.site.Service.MaxMessageBytes, cause); err != nil {
		return err
	}
	if seq > w.asm.lastSeq {
		w.asm.lastSeq = seq
	}
	if len(w.asm.open) == 0 && len(w.pending) == 0 {
		return w.saveCheckpoint()
	}
	return nil
}

// closeReady publishes the windows that can be closed now. An idle close
// waits while the stream holds data for the asset that the consumer has
// not delivered (see storedAhead): that data belongs in the open windows,
// and closing them would refuse it as late.
func (w *assetWorker) closeReady(now time.Time, idle time.Duration) error {
	w.flushRefused(now, false)
	if idle > 0 && w.asm.idleDue(now, idle) {
		wait, restart := w.storedAhead(now)
		if restart {
			w.asm.arrival = now
		}
		if wait || restart {
			idle = 0
		}
	} else if !w.stall.IsZero() {
		w.log.Info("idle close no longer put off", "after", now.Sub(w.stall).Round(time.Millisecond))
		w.stall = time.Time{}
	}
	ws := w.asm.ready(now, idle)
	if err := w.refuseRejected(now); err != nil {
		return err
	}
	if len(ws) == 0 {
		return nil
	}
	for _, win := range ws {
		w.svc.met.windows.WithLabelValues(w.asset.Name, win.Reason).Inc()
		if err := w.window(win); err != nil {
			return err
		}
	}
	return w.saveCheckpoint()
}

// stallLookEvery is how often a worker waiting on a stalled consumer asks
// the stream again.
const stallLookEvery = time.Second

// storedAhead is asked when an idle close is due. It reports wait when
// UC_DATA holds a message for the asset after the last one the worker was
// given: the ordered consumer has stalled (the broker node serving it was
// lost and the client is recreating it, resuming after the last message
// delivered), so the silence is not the publishers'. It reports wait too
// while the stream cannot be read (no leader: the publishers cannot store
// either), for up to resume_idle, after which idle closes go ahead. When
// the stream answers again holding nothing newer after such a wait, it
// reports restart: the publishers may have been cut off as well, and
// their idle time runs again from now. While waiting it asks the stream
// at most once per stallLookEvery.
func (w *assetWorker) storedAhead(now time.Time) (wait, restart bool) {
	if !w.stall.IsZero() && now.Sub(w.stallLooked) < stallLookEvery {
		return true, false
	}
	w.stallLooked = now
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	seq, err := w.svc.nextDataSeq(ctx, w.asset.Name, w.asm.lastSeq+1)
	if err != nil {
		if w.unreadable.IsZero() {
			w.unreadable = now
		}
		if limit := max(w.svc.site.Service.ResumeIdle.Duration, w.svc.site.Service.Idle.Duration); now.Sub(w.unreadable) >= limit {
			if !w.stall.IsZero() {
				w.log.Warn("data stream still not readable: windows close on idle", "for", now.Sub(w.unreadable).Round(time.Second), "err", err)
				w.stall = time.Time{}
			}
			return false, false
		}
	} else {
		w.unreadable = time.Time{}
		if seq == 0 {
			stalled := !w.stall.IsZero()
			if stalled {
				w.log.Info("idle close no longer put off; idle time starts again", "after", now.Sub(w.stall).Round(time.Millisecond))
				w.stall = time.Time{}
			}
			return false, stalled
		}
	}
	if w.stall.IsZero() {
		w.stall = now
		w.svc.met.stalls.WithLabelValues(w.asset.Name).Inc()
		if err != nil {
			w.log.Warn("idle close put off: data stream not readable", "last_seq", w.asm.lastSeq, "err", err)
		} else {
			w.log.Warn("idle close put off: the data stream holds messages the consumer has not delivered", "last_seq", w.asm.lastSeq, "next_stored", seq)
		}
	}
	return true, false
}

// window processes one closed window: commissioning or solve, publish.
func (w *assetWorker) window(win *window) error {
	if w.asset.Model == "commission" && w.proc.est != nil {
		// A recommission request deletes the stored geometry: start again.
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		_, err := w.svc.stores.State.Get(ctx, geometryKey(w.asset.Name))
		cancel()
		if errors.Is(err, jetstream.ErrKeyNotFound) {
			w.log.Info("geometry forgotten; commissioning again", "from", win.Start)
			w.proc.est, w.proc.names, w.proc.dirs, w.proc.shifts = nil, nil, nil, nil
		}
	}
	if win.Reason == "idle" && !anyUsable(win) {
		w.dropEmpty(win)
		return nil
	}
	if w.proc.est == nil {
		return w.commission(win)
	}
	return w.publishWindow(win, nil)
}

// anyUsable reports whether a sensor gave win at least minSamples samples.
func anyUsable(win *window) bool {
	for i := range win.Sensors {
		if win.Sensors[i].len() >= minSamples {
			return true
		}
	}
	return false
}

// dropEmpty passes over a window closed on idle in which no sensor gave
// enough samples to use: a straggler sample or two after the feed
// stopped (a sensor clock a few milliseconds ahead puts its last sample
// in the next window). It is not an estimate (no currents, and it would
// replace the last real one as latest) nor a reason for per-sensor silent
// alarms (the whole feed stopped, which the asset's silent alarm tells);
// it is logged and counted as uc_estimates_total{result="empty"}.
func (w *assetWorker) dropEmpty(win *window) {
	n := 0
	for i := range win.Sensors {
		n += win.Sensors[i].len()
	}
	w.log.Info("window closed on idle with too few samples from every sensor to use: no estimate", "window", win.Index, "start", unixString(win.Start), "samples", n, "least_per_sensor", minSamples)
	w.svc.met.estimates.WithLabelValues(w.asset.Name, "empty").Inc()
	if len(w.pending) == 0 {
		w.ck.Done, w.ck.Window = win.End, win.Index
	}
}

func (w *assetWorker) publishWindow(win *window, r *reduced) error {
	met := w.svc.met
	t0 := time.Now()
	if r == nil {
		r = w.proc.reduce(win)
	}
	t1 := time.Now()
	est, alarms := w.proc.solve(win, r)
	// Every implausible window is counted and its start logged, also
	// while its alarm is held (latch drops the alarm after the onset).
	raw := alarms
	alarms = w.proc.latch(win, est, alarms)
	if w.ck.DataLost != "" && win.End > w.ck.DataLostAt {
		est.DataLost = w.ck.DataLost
	}
	if err := w.proc.solveErr; err != nil {
		w.log.Warn("window not solved", "window", win.Index, "sensors", est.Sensors, "err", err)
	}
	t2 := time.Now()
	met.stage.WithLabelValues("reduce").Observe(t1.Sub(t0).Seconds())
	met.stage.WithLabelValues("solve").Observe(t2.Sub(t1).Seconds())
	data, err := json.Marshal(est)
	if err != nil {
		// solve leaves no non-finite number in an estimate; should one
		// come through, the window fails instead of stopping the asset
		// (the same message would fail again on every retry).
		w.log.Error("estimate not encodable: window published as failed", "window", win.Index, "err", err)
		est, alarms = w.proc.failed(win, est, r.alarms, fmt.Sprintf("no estimate: the window's estimate could not be encoded (%v; see the log)", err))
		if data, err = json.Marshal(est); err != nil {
			return fmt.Errorf("live: asset %s: encode estimate: %w", w.asset.Name, err)
		}
	}
	if est.Quality == "failed" {
		met.estimates.WithLabelValues(w.asset.Name, "failed").Inc()
	}
	w.noteImplausible(win, raw)
	if err := w.placeEarlySilence(win); err != nil {
		return err
	}
	alarms = w.clearSilence(win, alarms)
	id := w.msgID(win.Index)
	ack, err := w.svc.publishFenced(w.fenced, w.message(broker.EstimateSubject(w.asset.Name), data), id)
	if err != nil {
		return err
	}
	if ack.Duplicate {
		met.estimates.WithLabelValues(w.asset.Name, "duplicate").Inc()
	} else {
		met.estimates.WithLabelValues(w.asset.Name, "published").Inc()
	}
	for _, al := range alarms {
		if err := w.publishAlarm(al, alarmID(id, al)); err != nil {
			return err
		}
		if al.Kind == AlarmSilent && al.Subject == "" && al.Cleared {
			w.ck.SilentOpen = nil
		}
	}
	if err := w.fenced(); err != nil {
		return err
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if _, err := w.svc.stores.Latest.Put(ctx, w.asset.Name, data); err != nil {
		return fmt.Errorf("live: asset %s: latest: %w", w.asset.Name, err)
	}
	now := time.Now()
	met.stage.WithLabelValues("publish").Observe(now.Sub(t2).Seconds())
	met.latency.WithLabelValues(w.asset.Name).Observe(now.Sub(win.Closed).Seconds())
	met.dataLag.published(w.asset.Name, win.End)
	w.ck.Done, w.ck.Window = win.End, win.Index
	if est.DataLost != "" {
		w.ck.DataLost, w.ck.DataLostAt = "", 0
	}
	if w.svc.onEstimate != nil {
		w.svc.onEstimate(est, now.Sub(win.Closed))
	}
	return nil
}

func (w *assetWorker) saveCheckpoint() error {
	if err := w.fenced(); err != nil {
		return err
	}
	t0 := time.Now()
	resume := w.asm.resumeSeq()
	if len(w.pending) > 0 && w.pending[0].minSeq < resume {
		resume = w.pending[0].minSeq
	}
	w.ck.ResumeSeq = resume
	w.ck.LastSeq = w.asm.lastSeq
	w.ck.Prev = w.proc.prev
	w.ck.PrevAt = w.proc.prevAt
	w.ck.Ongoing = w.proc.active
	w.ck.Worker = w.svc.id
	data, _ := json.Marshal(w.ck)
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if _, err := w.svc.stores.State.Put(ctx, checkpointKey(w.asset.Name), data); err != nil {
		w.svc.noteStore(err)
		return fmt.Errorf("live: asset %s: checkpoint: %w", w.asset.Name, err)
	}
	w.svc.met.stage.WithLabelValues("checkpoint").Observe(time.Since(t0).Seconds())
	return nil
}
