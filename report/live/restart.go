package live

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// HeaderRevision is set on estimates and alarms published after a restart
// request: the asset's read revision (1 after the first restart, and so
// on). Estimates without it are revision 0. When a window was read again
// the estimate of the highest revision supersedes the earlier ones, and
// so do its alarms (none when it raised none).
const HeaderRevision = "Uc-Revision"

// restartPoll is how often a worker looks for a restart request of the
// asset it holds (at most; it looks at its idle-check ticks).
const restartPoll = 250 * time.Millisecond

func restartKey(asset string) string { return "restart." + asset }

// RestartStatus is a restart request as stored in uc_state (key
// "restart.<asset>") and shown by GET /api/v1/assets/{asset}.
type RestartStatus struct {
	// ID names the request (random, hex).
	ID string `json:"id"`
	// Start is the start asked for, as the site file writes it.
	Start string `json:"start"`
	// Seq is the first UC_DATA sequence to read, resolved when the
	// request was taken (so "new" and "24h" mean from the request).
	Seq uint64 `json:"seq"`
	// Requested is when the request was taken, and Via the worker whose
	// API took it.
	Requested time.Time `json:"requested"`
	Via       string    `json:"via"`
	// Applied is when the lease holder placed the new checkpoint and
	// resumed from it (nil while pending), AppliedBy that worker, and
	// Revision the read revision its estimates carry from then on.
	Applied   *time.Time `json:"applied,omitempty"`
	AppliedBy string     `json:"applied_by,omitempty"`
	Revision  int        `json:"revision,omitempty"`
}

// startSeq resolves a start to the first UC_DATA sequence to read for the
// asset, with durations counted back from now: "retained" is the
// stream's first sequence, "new" its last sequence plus one, a time (or
// a duration back) the asset's first message stored at or after it (the
// last sequence plus one when there is none).
func (s *Service) startSeq(ctx context.Context, asset string, start Start, now time.Time) (uint64, error) {
	st, err := s.stores.JS.Stream(ctx, broker.StreamData)
	if err != nil {
		return 0, err
	}
	info, err := st.Info(ctx)
	if err != nil {
		return 0, err
	}
	seq := info.State.LastSeq + 1
	set := start.source(now)
	switch {
	case set.All:
		if info.State.FirstSeq > 0 && info.State.FirstSeq < seq {
			seq = info.State.FirstSeq
		}
	case !set.From.IsZero():
		at, err := s.firstSeqAt(ctx, asset, set.From)
		if err != nil {
			return 0, err
		}
		if at > 0 {
			seq = at
		}
	}
	return seq, nil
}

// RequestRestart records a request that asset re-read UC_DATA from start
// (the asset's configured start when start is nil) and returns it. The
// worker holding the asset, in this process or another, applies it.
func (s *Service) RequestRestart(ctx context.Context, asset string, start *Start) (*RestartStatus, error) {
	if s.stores == nil {
		return nil, errors.New("live: restart: the service is not running")
	}
	a := s.site.Asset(asset)
	if a == nil {
		return nil, fmt.Errorf("live: restart: no asset %q in the site file", asset)
	}
	st := a.Start
	if start != nil {
		st = *start
	}
	now := time.Now()
	seq, err := s.startSeq(ctx, a.Name, st, now)
	if err != nil {
		return nil, fmt.Errorf("live: restart %s: start %q: %w", a.Name, st, err)
	}
	var b [8]byte
	rand.Read(b[:])
	req := &RestartStatus{ID: hex.EncodeToString(b[:]), Start: st.String(), Seq: seq, Requested: now.UTC(), Via: s.id}
	data, _ := json.Marshal(req)
	if _, err := s.stores.State.Put(ctx, restartKey(a.Name), data); err != nil {
		return nil, fmt.Errorf("live: restart %s: %w", a.Name, err)
	}
	s.log.Info("restart requested", "asset", a.Name, "request", req.ID, "start", req.Start, "seq", seq)
	return req, nil
}

// restartStatus returns the asset's last restart request and its
// revision in uc_state, or nil when there is none.
func (s *Service) restartStatus(ctx context.Context, asset string) (*RestartStatus, uint64, error) {
	e, err := s.stores.State.Get(ctx, restartKey(asset))
	if errors.Is(err, jetstream.ErrKeyNotFound) {
		return nil, 0, nil
	}
	if err != nil {
		return nil, 0, err
	}
	var r RestartStatus
	if err := json.Unmarshal(e.Value(), &r); err != nil {
		return nil, 0, fmt.Errorf("restart request: %w", err)
	}
	return &r, e.Revision(), nil
}

// restartBodyMax is the largest restart request body read, bytes.
const restartBodyMax = 64 << 10

// errBodyTooLarge refuses a restart request body over restartBodyMax
// (answered 413).
var errBodyTooLarge = fmt.Errorf("body over %d KiB: a restart request body is one small JSON object, {\"start\": \"...\"}", restartBodyMax>>10)

// restartParams reads the optional start of a restart request from the
// query (start=...) or a JSON body {"start": "..."}; nil means the
// asset's configured start. Errors name the asset as the site file does.
func restartParams(r *http.Request, asset string) (*Start, error) {
	v := r.URL.Query().Get("start")
	given := r.URL.Query().Has("start")
	if r.Body != nil {
		// One byte past the limit is read so that a longer body is
		// refused, not cut: before, a cut that left only whitespace ran
		// the restart from the configured start instead of the one asked.
		body, err := io.ReadAll(io.LimitReader(r.Body, restartBodyMax+1))
		if err != nil {
			return nil, fmt.Errorf("body: %w", err)
		}
		if len(body) > restartBodyMax {
			return nil, errBodyTooLarge
		}
		if len(strings.TrimSpace(string(body))) > 0 {
			if ct := r.Header.Get("Content-Type"); ct != "" {
				if mt, _, _ := mime.ParseMediaType(ct); mt != "application/json" {
					return nil, fmt.Errorf("body: content type %q, want application/json", ct)
				}
			}
			var in struct {
				Start *string `json:"start"`
			}
			dec := json.NewDecoder(strings.NewReader(string(body)))
			dec.DisallowUnknownFields()
			if err := dec.Decode(&in); err != nil {
				return nil, fmt.Errorf("body: %v", err)
			}
			if in.Start != nil {
				if given && *in.Start != v {
					return nil, fmt.Errorf("start given twice (query %q, body %q)", v, *in.Start)
				}
				v, given = *in.Start, true
			}
		}
	}
	if !given {
		return nil, nil
	}
	st, err := ParseStart(v)
	if err != nil {
		return nil, fmt.Errorf("asset %q: %v", asset, err)
	}
	return &st, nil
}

func (s *Service) restart(w http.ResponseWriter, r *http.Request) {
	a := s.assetOr404(w, r)
	if a == nil {
		return
	}
	start, err := restartParams(r, a.Name)
	if errors.Is(err, errBodyTooLarge) {
		httpError(w, http.StatusRequestEntityTooLarge, err.Error())
		return
	}
	if err != nil {
		httpError(w, http.StatusBadRequest, err.Error())
		return
	}
	ctx, cancel := context.WithTimeout(r.Context(), 10*time.Second)
	defer cancel()
	req, err := s.RequestRestart(ctx, a.Name, start)
	if err != nil {
		httpError(w, http.StatusBadGateway, err.Error())
		return
	}
	w.Header().Set("Location", "/api/v1/assets/"+a.Name)
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(http.StatusAccepted)
	json.NewEncoder(w).Encode(req)
}

// asset serves GET /api/v1/assets/{asset}: the listing's entry with the
// last restart request.
func (s *Service) asset(w http.ResponseWriter, r *http.Request) {
	a := s.assetOr404(w, r)
	if a == nil {
		return
	}
	ai, err := s.assetInfo(r.Context(), a)
	if err != nil {
		httpError(w, http.StatusBadGateway, err.Error())
		return
	}
	writeJSON(w, ai)
}

// pendingRestart returns the asset's restart request when it is not yet
// applied, with its revision in uc_state. The worker calls it when it
// takes the asset (after loading the checkpoint, before reading) and at
// every poll, so it also hands the checkpoint's read revision to the
// processor, which writes it into the payloads.
func (w *assetWorker) pendingRestart() (*RestartStatus, uint64, error) {
	w.proc.revision = w.ck.Revision
	parent := context.Background()
	if w.lctx != nil {
		parent = w.lctx // a lost lease does not wait for the answer
	}
	ctx, cancel := context.WithTimeout(parent, 10*time.Second)
	defer cancel()
	req, rev, err := w.svc.restartStatus(ctx, w.asset.Name)
	if err != nil {
		return nil, 0, fmt.Errorf("live: asset %s: %w", w.asset.Name, err)
	}
	if req == nil || req.Applied != nil {
		return nil, 0, nil
	}
	return req, rev, nil
}

// applyRestart places the checkpoint of a restart request and marks the
// request applied. The consumer must be stopped. Open windows, windows
// waiting for commissioning and the step alarm's previous currents are
// dropped: reading starts afresh at req.Seq with the next read revision.
// A checkpoint that already records the request (its holder stopped
// between placing it and marking the request) is kept.
func (w *assetWorker) applyRestart(req *RestartStatus, rev uint64) error {
	if w.ck.Restart != req.ID {
		w.asm = w.svc.newAssetAssembler(w.asset)
		w.asm.lastSeq = req.Seq - 1
		w.proc.prev = map[string]float64{}
		w.proc.prevEnd, w.proc.frozen = nil, nil
		w.proc.active, w.proc.prevAt, w.proc.prevMisfit = nil, 0, 0
		w.pending, w.pendDur = nil, 0
		// The silence already alarmed is the same silence after the
		// re-read: it is not alarmed again (silenceAtStart).
		w.ck = checkpoint{Start: req.Start, Revision: w.ck.Revision + 1, Restart: req.ID, SilentSince: w.ck.SilentSince}
		w.proc.revision = w.ck.Revision
		if err := w.saveCheckpoint(); err != nil {
			return err
		}
		w.log.Info("restart applied", "request", req.ID, "start", req.Start, "seq", req.Seq, "revision", w.ck.Revision)
	}
	now := time.Now().UTC()
	req.Applied, req.AppliedBy, req.Revision = &now, w.svc.id, w.ck.Revision
	data, _ := json.Marshal(req)
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if _, err := w.svc.stores.State.Update(ctx, restartKey(w.asset.Name), data, rev); err != nil {
		// A newer request replaced this one: the next poll applies it.
		w.log.Info("restart request replaced while being applied", "request", req.ID, "err", err)
	}
	return nil
}

// msgID is the message id of window index k (and the prefix of its
// alarms' ids): "<asset>/<k>" in revision 0, "<asset>/<k>/r<n>" after
// the n-th restart, so that a window read again is stored again while a
// window published twice within one revision (takeover) is stored once.
func (w *assetWorker) msgID(k int64) string {
	id := w.asset.Name + "/" + strconv.FormatInt(k, 10)
	if w.ck.Revision > 0 {
		id += "/r" + strconv.Itoa(w.ck.Revision)
	}
	return id
}
