package live

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

const testToken = "harrow-fen-test-token"

// stored is an estimate with its read revision and message id.
type stored struct {
	Estimate
	rev string // HeaderRevision ("" for revision 0)
	id  string // Nats-Msg-Id
}

// storedEstimates reads every estimate of fenwick-lane with its headers.
func (h *harness) storedEstimates() []stored {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	st, err := h.js.Stream(ctx, broker.StreamEstimates)
	if err != nil {
		h.t.Fatal(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		h.t.Fatal(err)
	}
	var out []stored
	subj := broker.EstimateSubject("fenwick-lane")
	for seq := info.State.FirstSeq; seq > 0 && seq <= info.State.LastSeq; seq++ {
		m, err := st.GetMsg(ctx, seq)
		if err != nil || m.Subject != subj {
			continue
		}
		var e stored
		if err := json.Unmarshal(m.Data, &e.Estimate); err != nil {
			h.t.Fatal(err)
		}
		e.rev, e.id = m.Header.Get(HeaderRevision), m.Header.Get("Nats-Msg-Id")
		out = append(out, e)
	}
	return out
}

// checkRevisions asserts exactly one estimate for each window of want
// (revision -> windows, counted from t0) with meanEstimator's answer and
// the message id of that revision, and no other estimate.
func checkRevisions(t *testing.T, got []stored, want map[string][]int64) {
	t.Helper()
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	type key struct {
		rev string
		k   int64
	}
	seen := map[key]int{}
	for _, e := range got {
		k := e.Window - k0
		seen[key{e.rev, k}]++
		wantID := fmt.Sprintf("fenwick-lane/%d", e.Window)
		if e.rev != "" {
			wantID += "/r" + e.rev
		}
		if e.id != wantID {
			t.Errorf("window %d revision %q has message id %q, want %q", k, e.rev, e.id, wantID)
		}
		if c := 1001 + 10*float64(k); len(e.Conductors) != 1 || math.Abs(e.Conductors[0].Current-c) > 1e-6 || e.Samples != 150 {
			t.Errorf("window %d revision %q: %d samples, currents %+v, want 150 and %v A", k, e.rev, e.Samples, e.Conductors, c)
		}
	}
	n := 0
	for rev, ks := range want {
		for _, k := range ks {
			n++
			if c := seen[key{rev, k}]; c != 1 {
				t.Errorf("window %d revision %q has %d estimates, want exactly 1", k, rev, c)
			}
		}
	}
	if len(got) != n {
		for _, e := range got {
			t.Logf("stored: window %d revision %q id %q by %s", e.Window-k0, e.rev, e.id, e.Worker)
		}
		t.Errorf("%d estimates stored, want %d", len(got), n)
	}
}

// call sends an API request with the token tok ("" for none) and returns
// the status and body.
func call(t *testing.T, r *running, method, path, tok, body string) (int, string) {
	t.Helper()
	var rd io.Reader
	if body != "" {
		rd = strings.NewReader(body)
	}
	req, err := http.NewRequest(method, "http://"+r.svc.HTTPAddr()+path, rd)
	if err != nil {
		t.Fatal(err)
	}
	if body != "" {
		req.Header.Set("Content-Type", "application/json")
	}
	if tok != "" {
		req.Header.Set("Authorization", "Bearer "+tok)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

// requestRestart posts a restart through r's API and returns the request.
func requestRestart(t *testing.T, r *running, query, body string) RestartStatus {
	t.Helper()
	code, out := call(t, r, "POST", "/api/v1/assets/fenwick-lane/restart"+query, testToken, body)
	if code != http.StatusAccepted {
		t.Fatalf("POST restart%s: %d %s, want 202", query, code, out)
	}
	var req RestartStatus
	if err := json.Unmarshal([]byte(out), &req); err != nil || req.ID == "" || req.Applied != nil {
		t.Fatalf("POST restart%s answered %s (%v), want a pending request with an id", query, out, err)
	}
	return req
}

// waitApplied polls GET /api/v1/assets/fenwick-lane on r until the
// request id is applied and returns its status.
func waitApplied(t *testing.T, r *running, id string) RestartStatus {
	t.Helper()
	var ai AssetInfo
	waitFor(t, 20*time.Second, "restart "+id+" to be applied", func() bool {
		code, out := call(t, r, "GET", "/api/v1/assets/fenwick-lane", "", "")
		if code != http.StatusOK {
			t.Fatalf("GET asset: %d %s", code, out)
		}
		ai = AssetInfo{}
		json.Unmarshal([]byte(out), &ai)
		return ai.Restart != nil && ai.Restart.ID == id && ai.Restart.Applied != nil
	})
	return *ai.Restart
}

func (h *harness) leases() jetstream.KeyValue {
	h.t.Helper()
	kv, err := h.js.KeyValue(context.Background(), broker.BucketLease)
	if err != nil {
		h.t.Fatal(err)
	}
	return kv
}

// Restart to "new" skips a backlog that no worker has read: batches for
// windows 4..7 are stored while the asset's lease is held by a vanished
// worker; a restart requested then is applied by the worker that takes
// the asset next, which reads only what is stored after the request
// (windows 8..11, revision 1). Windows 0..3, published before, stay once.
func TestRestartNewSkipsBacklog(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	r1 := h.start(site, "w1")
	h.publish(0, 2)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	r1.stop(t) // hands the lease back
	kv := h.leases()
	if _, err := kv.Create(context.Background(), "fenwick-lane", []byte("ghost")); err != nil {
		t.Fatal(err)
	}
	// The ghost keeps its lease alive until the request is taken.
	ghost := make(chan struct{})
	renewed := make(chan struct{})
	go func() {
		defer close(renewed)
		for {
			select {
			case <-ghost:
				return
			case <-time.After(200 * time.Millisecond):
				kv.Put(context.Background(), "fenwick-lane", []byte("ghost"))
			}
		}
	}()
	h.publish(2, 2) // the backlog: windows 4..7
	r2 := h.start(site, "w2")
	req := requestRestart(t, r2, "?start=new", "")
	close(ghost)
	<-renewed
	if req.Start != "new" || req.Seq != 2*oldMessages+1 {
		t.Errorf("request %+v, want start \"new\" at sequence %d", req, 2*oldMessages+1)
	}
	if err := kv.Delete(context.Background(), "fenwick-lane"); err != nil { // the ghost's lease ends
		t.Fatal(err)
	}
	st := waitApplied(t, r2, req.ID)
	if st.AppliedBy != "w2" || st.Revision != 1 {
		t.Errorf("applied by %q with revision %d, want w2 and 1", st.AppliedBy, st.Revision)
	}
	h.publish(4, 2) // windows 8..11
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	r2.stop(t)
	checkRevisions(t, h.storedEstimates(), map[string][]int64{"": {0, 1, 2, 3}, "1": {8, 9, 10, 11}})
	if ck := h.readCheckpoint("fenwick-lane"); ck == nil || ck.Revision != 1 || ck.Restart != req.ID || ck.Start != "new" {
		t.Errorf("checkpoint %+v, want revision 1 holding request %s and start \"new\"", ck, req.ID)
	}
}

// Restart to a time re-reads the windows stored from then on while the
// holder keeps running: windows 2 and 3 are published again as revision
// 1 (a new message id, so the broker stores them), 0 and 1 are not, and
// later windows continue in revision 1. The start is given in a JSON body.
func TestRestartFromTimeRereads(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 1) // windows 0, 1
	time.Sleep(20 * time.Millisecond)
	mark := time.Now().UTC().Format(time.RFC3339Nano)
	time.Sleep(20 * time.Millisecond)
	h.publish(1, 1) // windows 2, 3
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	req := requestRestart(t, r, "", `{"start": "`+mark+`"}`)
	if req.Seq != oldMessages/2+1 {
		t.Errorf("request resolved to sequence %d, want %d (the first batch after the mark)", req.Seq, oldMessages/2+1)
	}
	waitApplied(t, r, req.ID)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	h.publish(2, 1) // windows 4, 5
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	r.stop(t)
	checkRevisions(t, h.storedEstimates(), map[string][]int64{"": {0, 1, 2, 3}, "1": {2, 3, 4, 5}})
	// max_current = 1035 A: windows 4 and 5 (1041 and 1051 A) are over
	// it, in revision 1: raised once, at the onset (see latch).
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	st, err := h.js.Stream(ctx, broker.StreamAlarms)
	if err != nil {
		t.Fatal(err)
	}
	info, _ := st.Info(ctx)
	var ids []string
	for seq := info.State.FirstSeq; seq > 0 && seq <= info.State.LastSeq; seq++ {
		if m, err := st.GetMsg(ctx, seq); err == nil && m.Subject == broker.AlarmSubject("fenwick-lane", AlarmOverCurrent) {
			ids = append(ids, m.Header.Get("Nats-Msg-Id")+" rev "+m.Header.Get(HeaderRevision))
		}
	}
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	want := []string{fmt.Sprintf("fenwick-lane/%d/r1/over-current/go rev 1", k0+4)}
	if fmt.Sprint(ids) != fmt.Sprint(want) {
		t.Errorf("over-current alarms %q, want %q", ids, want)
	}
}

// A restart taken by one serve process is applied by the other, which
// holds the asset's lease: "retained" re-reads everything once more.
func TestRestartAppliedByLeaseHolder(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	a := h.start(site, "wa")
	kv := h.leases()
	waitFor(t, 20*time.Second, "wa to hold the asset", func() bool {
		e, err := kv.Get(context.Background(), "fenwick-lane")
		return err == nil && string(e.Value()) == "wa"
	})
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })
	b := h.start(site, "wb")
	req := requestRestart(t, b, "?start=retained", "")
	if req.Via != "wb" || req.Seq != 1 {
		t.Errorf("request %+v, want one taken by wb from sequence 1", req)
	}
	st := waitApplied(t, b, req.ID)
	if st.AppliedBy != "wa" {
		t.Errorf("applied by %q, want the lease holder wa", st.AppliedBy)
	}
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	a.stop(t)
	b.stop(t)
	got := h.storedEstimates()
	checkRevisions(t, got, map[string][]int64{"": {0, 1}, "1": {0, 1, 2, 3}})
	for _, e := range got {
		if e.Worker != "wa" {
			t.Errorf("window %d revision %q published by %s, want wa", e.Window, e.rev, e.Worker)
		}
	}
}

// Restart requests need the token, a listed asset and a valid start; the
// messages for a bad start are the site file's. Without a start the
// asset's configured one is used.
func TestRestartRefused(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	path := "/api/v1/assets/fenwick-lane/restart"
	for _, tc := range []struct {
		name, path, tok, body string
		code                  int
		want                  string
	}{
		{"no token", path + "?start=new", "", "", 401, "bearer token"},
		{"wrong token", path + "?start=new", "wrong", "", 401, "bearer token"},
		{"unknown asset", "/api/v1/assets/no-such/restart?start=new", testToken, "", 404, `no asset \"no-such\"`},
		{"bad word", path + "?start=fortnight", testToken, "", 400, `asset \"fenwick-lane\": start \"fortnight\": want \"retained\", \"new\", a duration`},
		{"negative duration", path + "?start=-2h", testToken, "", 400, "must be positive"},
		{"future time", path + "?start=2999-01-01T00:00:00Z", testToken, "", 400, "is in the future"},
		{"bad body", path, testToken, `{"start": 24}`, 400, "body:"},
		{"unknown field", path, testToken, `{"from": "new"}`, 400, `unknown field \"from\"`},
		{"two starts", path + "?start=new", testToken, `{"start": "1h"}`, 400, "start given twice"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, out := call(t, r, "POST", tc.path, tc.tok, tc.body)
			if code != tc.code || !strings.Contains(out, tc.want) {
				t.Errorf("%d %s, want %d with %s", code, out, tc.code, tc.want)
			}
		})
	}
	code, out := call(t, r, "GET", "/api/v1/assets/fenwick-lane", "", "")
	if code != 200 || strings.Contains(out, `"restart"`) {
		t.Errorf("after refused requests GET asset: %d %s, want 200 without a restart", code, out)
	}
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })
	req := requestRestart(t, r, "", "")
	if req.Start != "retained" || req.Seq != 1 {
		t.Errorf("restart without a start: %+v, want the configured \"retained\" from sequence 1", req)
	}
	waitApplied(t, r, req.ID)
	if code, _ := call(t, r, "GET", "/api/v1/assets/no-such", "", ""); code != 404 {
		t.Errorf("GET unknown asset: %d, want 404", code)
	}
	r.stop(t)
}

// A holder that placed a restart's checkpoint but stopped before marking
// the request applied leaves it pending; the next holder marks it
// without placing it again, so data read since is not read twice.
func TestRestartNotAppliedTwice(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	r := h.start(site, "w1")
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })
	req := requestRestart(t, r, "?start=retained", "")
	waitApplied(t, r, req.ID)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	r.stop(t)
	// Put the request back as pending, as if the holder had stopped
	// between the checkpoint and the mark.
	state, err := h.js.KeyValue(context.Background(), broker.BucketState)
	if err != nil {
		t.Fatal(err)
	}
	pending := req
	pending.Applied = nil
	data, _ := json.Marshal(pending)
	if _, err := state.Put(context.Background(), restartKey("fenwick-lane"), data); err != nil {
		t.Fatal(err)
	}
	r = h.start(site, "w2")
	st := waitApplied(t, r, req.ID)
	if st.AppliedBy != "w2" || st.Revision != 1 {
		t.Errorf("marked by %q with revision %d, want w2 and revision 1 kept", st.AppliedBy, st.Revision)
	}
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	r.stop(t)
	checkRevisions(t, h.storedEstimates(), map[string][]int64{"": {0, 1}, "1": {0, 1, 2, 3}})
}

func TestRestartParams(t *testing.T) {
	for _, tc := range []struct {
		query, body, ctype string
		want               string // "" for the configured start
		err                string
	}{
		{"", "", "", "", ""},
		{"?start=new", "", "", "new", ""},
		{"?start=24h", "", "", "24h", ""},
		{"", `{"start": "2026-12-01T06:00:00Z"}`, "application/json", "2026-12-01T06:00:00Z", ""},
		{"", `{}`, "application/json", "", ""},
		{"?start=new", `{"start": "new"}`, "application/json; charset=utf-8", "new", ""},
		{"", `{"start": "new"}`, "text/plain", "", `content type "text/plain"`},
		{"?start=", "", "", "", `asset "fenwick-lane": start "": want`},
		{"?start=yesterday", "", "", "", `asset "fenwick-lane": start "yesterday": want "retained", "new"`},
		{"", `{"start": "0s"}`, "", "", `asset "fenwick-lane": start "0s": a duration back from the first start must be positive`},
	} {
		r, _ := http.NewRequest("POST", "http://x/api/v1/assets/fenwick-lane/restart"+tc.query, strings.NewReader(tc.body))
		if tc.ctype != "" {
			r.Header.Set("Content-Type", tc.ctype)
		}
		st, err := restartParams(r, "fenwick-lane")
		switch {
		case tc.err != "":
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%s %s: error %v, want one with %q", tc.query, tc.body, err, tc.err)
			}
		case err != nil:
			t.Errorf("%s %s: %v", tc.query, tc.body, err)
		case tc.want == "" && st != nil:
			t.Errorf("%s %s: start %v, want none", tc.query, tc.body, st)
		case tc.want != "" && (st == nil || st.String() != tc.want):
			t.Errorf("%s %s: start %v, want %s", tc.query, tc.body, st, tc.want)
		}
	}
}

// BenchmarkRestartPoll is the cost of one look for a restart request, made
// by each held asset about four times a second (loopback broker).
func BenchmarkRestartPoll(b *testing.B) {
	h := newHarness(b)
	r := h.start(testSite(b, testSiteText), "w1")
	r.stop(b) // no holder applies the request; the connection stays open
	w, err := r.svc.newAssetWorker(r.svc.site.Asset("fenwick-lane"))
	if err != nil {
		b.Fatal(err)
	}
	for _, pending := range []bool{false, true} {
		b.Run(fmt.Sprintf("pending=%v", pending), func(b *testing.B) {
			if pending {
				if _, err := r.svc.RequestRestart(context.Background(), "fenwick-lane", nil); err != nil {
					b.Fatal(err)
				}
			}
			for b.Loop() {
				req, _, err := w.pendingRestart()
				if err != nil || (req != nil) != pending {
					b.Fatalf("pending request %v, %v; want one: %v", req, err, pending)
				}
			}
		})
	}
}
