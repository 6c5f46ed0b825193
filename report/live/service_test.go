package live

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// meanEstimator is a test double with a known answer: every conductor's
// "current" is the mean vertical reading over the sensors. These tests
// check the pipeline (windows, ordering, publication, takeover), not the
// physics, which the inverse package tests against published values.
type meanEstimator struct{ n int }

func (m meanEstimator) Solve(in *SolveInput) (*SolveOutput, error) {
	if len(in.Fields) == 0 {
		return nil, fmt.Errorf("no readings")
	}
	var s float64
	for _, f := range in.Fields {
		s += f[2]
	}
	out := &SolveOutput{DOF: len(in.Fields) - 1}
	for i := 0; i < m.n; i++ {
		out.Current = append(out.Current, s/float64(len(in.Fields)))
		out.CurrentSigma = append(out.CurrentSigma, 0.1)
	}
	return out, nil
}

func newMean(mode string, c []ConductorConfig) (Estimator, error) { return meanEstimator{len(c)}, nil }

// testSiteText is a DC asset with three sensors and 0.5 s windows.
const testSiteText = `
[service]
http = "127.0.0.1:0"
token = "harrow-fen-test-token"
lease_ttl = "1s"
idle = "400ms"
max_message_bytes = 65536

[[asset]]
name = "fenwick-lane"
window = "500ms"
  [[asset.sensor]]
  name = "s0"
  position = [-1, 0, 0.3]
  [[asset.sensor]]
  name = "s1"
  position = [0, 0, 0.3]
  [[asset.sensor]]
  name = "s2"
  position = [1, 0, 0.3]
  [[asset.conductor]]
  name = "go"
  point = [0, 0, -1]
  direction = [0, 1, 0]
  [asset.alarms]
  max_current = 1035
`

type harness struct {
	t   testing.TB
	srv *broker.Server
	js  jetstream.JetStream
	nc  *nats.Conn
}

// runService connects to the harness's broker as user, starts the service
// for site (worker "wk") and waits until it is ready; stop cancels it and
// returns what Run returned.
func (h *harness) runService(t testing.TB, site *Site, user string) (svc *Service, stop func() error) {
	t.Helper()
	return h.runConfig(t, Config{Site: site, Worker: "wk"}, user)
}

// runConfig is runService with the service's Config given (its Conn is
// the connection made as user).
func (h *harness) runConfig(t testing.TB, cfg Config, user string) (svc *Service, stop func() error) {
	t.Helper()
	nc, err := broker.Connect(h.srv.ClientURL(), user, broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	cfg.Conn = nc
	svc, err = New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	t.Cleanup(cancel)
	done := make(chan error, 1)
	go func() { done <- svc.Run(ctx) }()
	<-svc.Ready()
	return svc, func() error {
		cancel()
		return <-done
	}
}

// startTestBroker starts an embedded broker storing in dir, without an
// MQTT listener, and connects to it as a publisher; both are shut down
// when the test ends.
func startTestBroker(t testing.TB, dir string) (*broker.Server, *nats.Conn, jetstream.JetStream) {
	t.Helper()
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	nc, err := broker.Connect(srv.ClientURL(), "test-publisher", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, _ := jetstream.New(nc)
	return srv, nc, js
}

func newHarness(t testing.TB) *harness {
	t.Helper()
	srv, nc, js := startTestBroker(t, t.TempDir())
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	if _, err := broker.Setup(ctx, js, broker.StreamSettings{LeaseTTL: time.Second}); err != nil {
		t.Fatal(err)
	}
	return &harness{t: t, srv: srv, js: js, nc: nc}
}

func testSite(t testing.TB, text string) *Site {
	t.Helper()
	s, err := ParseSite("test.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// running is a service started by start.
type running struct {
	svc    *Service
	nc     *nats.Conn
	cancel context.CancelFunc
	done   chan error
}

func (h *harness) start(site *Site, worker string) *running {
	h.t.Helper()
	nc, err := broker.Connect(h.srv.ClientURL(), worker, broker.Auth{})
	if err != nil {
		h.t.Fatal(err)
	}
	svc, err := New(Config{Site: site, Conn: nc, Worker: worker, NewEstimator: newMean})
	if err != nil {
		h.t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	r := &running{svc: svc, nc: nc, cancel: cancel, done: make(chan error, 1)}
	go func() { r.done <- svc.Run(ctx) }()
	select {
	case <-svc.Ready():
	case err := <-r.done:
		h.t.Fatal(err)
	case <-time.After(20 * time.Second):
		h.t.Fatal("service not ready after 20 s")
	}
	h.t.Cleanup(func() { cancel(); nc.Close() })
	return r
}

// stop cancels the service and waits for it to drain.
func (r *running) stop(t testing.TB) {
	t.Helper()
	r.cancel()
	select {
	case err := <-r.done:
		if err != nil {
			t.Fatalf("Run: %v", err)
		}
	case <-time.After(20 * time.Second):
		t.Fatal("service did not drain within 20 s")
	}
}

const t0 = 1764650000.0 // 2025-12-02T04:33:20Z, a live-looking Unix time

// bz of sensor s in window k: 1000 + 10 k + s, with a +-0.001 ripple so
// that no axis is stuck. The mean over sensors s0..s2 is 1001 + 10 k.
func sample(s, k, i int) (bx, by, bz float64) {
	r := 0.001
	if i%2 == 1 {
		r = -r
	}
	return 0.01 * float64(i), 5 + r, 1000 + 10*float64(k) + float64(s) + r
}

// publish sends seconds of 100 Hz data for sensors s0..s2 from time
// t0+from in 0.1 s batches, sensors interleaved.
func (h *harness) publish(from, seconds float64) { h.publishAsset("fenwick-lane", from, seconds) }

func (h *harness) publishAsset(asset string, from, seconds float64) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	nb := int(math.Round(seconds / 0.1))
	for b := 0; b < nb; b++ {
		start := from + 0.1*float64(b)
		for s := 0; s < 3; s++ {
			bt := &broker.Batch{Asset: asset, Sensor: fmt.Sprintf("s%d", s)}
			for i := 0; i < 10; i++ {
				tt := start + float64(i)/100
				k := int(math.Floor(tt/0.5 + 1e-7))
				bx, by, bz := sample(s, k, int(math.Round(tt*100)))
				bt.Time = append(bt.Time, t0+tt)
				bt.Bx, bt.By, bt.Bz = append(bt.Bx, bx), append(bt.By, by), append(bt.Bz, bz)
			}
			enc := broker.ContentJSON
			if b%2 == 1 {
				enc = broker.ContentArrow
			}
			if _, err := broker.PublishBatch(ctx, h.js, bt, enc); err != nil {
				h.t.Fatal(err)
			}
		}
	}
}

func (h *harness) estimates() []Estimate { return h.estimatesOf("fenwick-lane") }

func (h *harness) estimatesOf(asset string) []Estimate {
	h.t.Helper()
	var out []Estimate
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	err := scan(ctx, h.js, broker.StreamEstimates, broker.EstimateSubject(asset), func(d []byte) bool {
		var e Estimate
		if err := json.Unmarshal(d, &e); err != nil {
			h.t.Fatal(err)
		}
		out = append(out, e)
		return true
	})
	if err != nil {
		h.t.Fatal(err)
	}
	return out
}

// waitFor polls cond until it holds or the timeout passes.
func waitFor(t *testing.T, timeout time.Duration, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(timeout)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out after %v waiting for %s", timeout, what)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// waitSamples waits up to 30 s until the samples counted for the
// fenwick-lane asset in the metrics page (uc_samples_total) satisfy ok,
// and fails naming what and the last count read.
func waitSamples(t *testing.T, what string, metrics func() string, ok func(n float64) bool) {
	t.Helper()
	const prefix = `uc_samples_total{asset="fenwick-lane"} `
	last := "none"
	deadline := time.Now().Add(30 * time.Second)
	for {
		for _, l := range strings.Split(metrics(), "\n") {
			if v, found := strings.CutPrefix(l, prefix); found {
				last = v
				if n, err := strconv.ParseFloat(v, 64); err == nil && ok(n) {
					return
				}
			}
		}
		if time.Now().After(deadline) {
			t.Fatalf("timed out after 30s waiting for %s (samples counted: %s)", what, last)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// checkExactlyOnce asserts one estimate per window 0..n-1 with the known
// answer of meanEstimator.
func checkExactlyOnce(t *testing.T, ests []Estimate, n int) {
	t.Helper()
	seen := map[int64]int{}
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	for _, e := range ests {
		k := e.Window - k0
		seen[k]++
		want := 1001 + 10*float64(k)
		if len(e.Conductors) != 1 || math.Abs(e.Conductors[0].Current-want) > 1e-6 {
			t.Errorf("window %d: estimate %+v, want current %v", k, e.Conductors, want)
		}
		if e.Samples != 150 || e.Sensors != 3 {
			t.Errorf("window %d used %d samples from %d sensors, want 150 from 3", k, e.Samples, e.Sensors)
		}
	}
	for k := int64(0); k < int64(n); k++ {
		if seen[k] != 1 {
			t.Errorf("window %d has %d estimates, want exactly 1", k, seen[k])
		}
	}
	if len(ests) != n {
		t.Errorf("%d estimates, want %d", len(ests), n)
	}
}

func TestServiceEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 5) // windows 0..9
	waitFor(t, 30*time.Second, "10 estimates", func() bool { return len(h.estimates()) >= 10 })
	checkExactlyOnce(t, h.estimates(), 10)

	base := "http://" + r.svc.HTTPAddr()
	get := func(path string, code int) string {
		t.Helper()
		resp, err := http.Get(base + path)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		if resp.StatusCode != code {
			t.Fatalf("GET %s: %d %s, want %d", path, resp.StatusCode, body, code)
		}
		return string(body)
	}
	get("/healthz", 200)
	get("/readyz", 200)
	if body := get("/api/v1/assets", 200); !strings.Contains(body, `"worker": "w1"`) {
		t.Errorf("assets: %s", body)
	}
	// The latest-estimate store is written after the estimate's message
	// (worker.go), so the tenth estimate may be listed a moment before it
	// is the latest: wait for it.
	var latest Estimate
	waitFor(t, 10*time.Second, "the latest estimate to be the tenth", func() bool {
		if err := json.Unmarshal([]byte(get("/api/v1/assets/fenwick-lane/latest", 200)), &latest); err != nil {
			t.Fatal(err)
		}
		return latest.End == t0+5
	})
	get("/api/v1/assets/no-such/latest", 404)
	var hist []Estimate
	json.Unmarshal([]byte(get(fmt.Sprintf("/api/v1/assets/fenwick-lane/history?from=%.1f&to=%.1f", t0+1, t0+2), 200)), &hist)
	if len(hist) != 2 || hist[0].Start != t0+1 || hist[1].Start != t0+1.5 {
		t.Errorf("history [1 s, 2 s): %+v", hist)
	}
	csv := get(fmt.Sprintf("/api/v1/assets/fenwick-lane/history?format=csv&from=%.1f", t0+4), 200)
	if lines := strings.Split(strings.TrimSpace(csv), "\n"); len(lines) != 3 || !strings.HasPrefix(lines[0], "asset,window,start") {
		t.Errorf("csv history:\n%s", csv)
	}
	get("/api/v1/assets/fenwick-lane/history?from=yesterday", 400)
	// An unknown format or a reversed range is a client error, said so,
	// not an answer in another format or an empty list.
	for _, c := range []struct{ path, want string }{
		{"/api/v1/assets/fenwick-lane/history?format=xml", `parameter format: \"xml\" is neither \"json\" (the default) nor \"csv\"`},
		{fmt.Sprintf("/api/v1/assets/fenwick-lane/history?from=%.1f&to=%.1f", t0+2, t0+1), "is later than to"},
		{fmt.Sprintf("/api/v1/alarms?from=%.1f&to=%.1f", t0+2, t0+1), "is later than to"},
		{"/api/v1/assets/fenwick-lane/history?from=NaN", "parameter from"},
	} {
		if body := get(c.path, 400); !strings.Contains(body, c.want) {
			t.Errorf("GET %s: %s, want an error with %s", c.path, body, c.want)
		}
	}
	json.Unmarshal([]byte(get("/api/v1/assets/fenwick-lane/history?format=json&limit=3", 200)), &hist)
	if len(hist) != 3 {
		t.Errorf("history?format=json: %d estimates, want 3", len(hist))
	}
	// max_current = 1035: windows 4..9 (1041 A and up) are over it,
	// alarmed once, at the onset in window 4 (see latch).
	var alarms []Alarm
	json.Unmarshal([]byte(get("/api/v1/alarms?asset=fenwick-lane&kind=over-current", 200)), &alarms)
	if k0 := int64(math.Floor(t0/0.5 + 1e-7)); len(alarms) != 1 || alarms[0].Window != k0+4 {
		t.Errorf("%d over-current alarms, want 1, in window 4: %+v", len(alarms), alarms)
	}
	metrics := get("/metrics", 200)
	for _, want := range []string{`uc_estimates_total{asset="fenwick-lane",result="published"} 10`, `uc_samples_total{asset="fenwick-lane"} 1500`, "uc_stage_seconds_bucket", "uc_estimate_latency_seconds"} {
		if !strings.Contains(metrics, want) {
			t.Errorf("metrics lack %q", want)
		}
	}
	// State-changing endpoints need the token.
	post := func(tok string) int {
		req, _ := http.NewRequest("POST", base+"/api/v1/assets/fenwick-lane/recommission", nil)
		if tok != "" {
			req.Header.Set("Authorization", "Bearer "+tok)
		}
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		return resp.StatusCode
	}
	if c := post(""); c != http.StatusUnauthorized {
		t.Errorf("POST without token: %d, want 401", c)
	}
	if c := post("wrong"); c != http.StatusUnauthorized {
		t.Errorf("POST with a wrong token: %d, want 401", c)
	}
	if c := post("harrow-fen-test-token"); c != http.StatusConflict { // a fixed-geometry asset
		t.Errorf("POST with the token: %d, want 409", c)
	}
	r.stop(t)
}

// Reliability (issue 6): malformed, oversized, out-of-order and unknown
// messages each go to a dead-letter subject with the reason, are counted,
// and processing carries on.
func TestDeadLetters(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 1)
	bad := []struct{ subject, payload string }{
		{"uc.data.fenwick-lane.s0", `{"time":[1,2],"bx":[1,"x"],"by":[0,0],"bz":[0,0]}`},
		{"uc.data.fenwick-lane.s1", `{"time":[` + strings.Repeat("1,", 40000) + `1]}`},
		{"uc.data.fenwick-lane.s2", fmt.Sprintf(`{"time":[%v],"bx":[1],"by":[1],"bz":[1]}`, t0+0.5)},
		{"uc.data.fenwick-lane.s9", `{"time":[1],"bx":[1],"by":[1],"bz":[1]}`},
	}
	for _, b := range bad {
		if _, err := h.js.Publish(context.Background(), b.subject, []byte(b.payload)); err != nil {
			t.Fatal(err)
		}
	}
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	checkExactlyOnce(t, h.estimates(), 4)
	want := map[string]string{
		broker.ReasonMalformed:     `field "bx"`,
		broker.ReasonOversized:     "limit 65536",
		broker.ReasonOutOfOrder:    "not after the sensor's last sample",
		broker.ReasonUnknownSensor: `sensor "s9"`,
	}
	st, _ := h.js.Stream(context.Background(), broker.StreamDeadLetter)
	for reason, text := range want {
		m, err := st.GetLastMsgForSubject(context.Background(), broker.DeadLetterSubject(reason))
		if err != nil {
			t.Errorf("no dead letter for %s: %v", reason, err)
			continue
		}
		if got := m.Header.Get(broker.HeaderError); !strings.Contains(got, text) {
			t.Errorf("dead letter %s: error %q lacks %q", reason, got, text)
		}
		if m.Header.Get(broker.HeaderSubject) == "" || m.Header.Get(broker.HeaderSequence) == "" {
			t.Errorf("dead letter %s lacks subject or sequence headers: %v", reason, m.Header)
		}
	}
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	for reason := range want {
		if s := fmt.Sprintf(`uc_dead_letters_total{reason=%q} 1`, reason); !strings.Contains(string(body), s) {
			t.Errorf("metrics lack %s", s)
		}
	}
	r.stop(t)
}

// Reliability (issue 6): a worker that vanishes (its connection drops
// without draining, as when the process is killed) is replaced after the
// lease expires, and every window still has exactly one estimate. The
// SIGKILL version of this test, with real processes, is in
// cmd/undercurrent.
func TestTakeoverExactlyOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	a := h.start(site, "wa")
	h.publish(0, 3)
	waitFor(t, 30*time.Second, "worker a to publish", func() bool { return len(h.estimates()) >= 3 })
	a.nc.Close() // the worker is gone: no drain, no lease hand-back
	b := h.start(site, "wb")
	h.publish(3, 3)
	waitFor(t, 30*time.Second, "12 estimates", func() bool { return len(h.estimates()) >= 12 })
	// Count once no worker can publish any more: a is cut off and b has
	// drained, so a duplicate would already be stored.
	b.stop(t)
	ests := h.estimates()
	checkExactlyOnce(t, ests, 12)
	var fromB int
	for _, e := range ests {
		if e.Worker == "wb" {
			fromB++
		}
	}
	if fromB == 0 {
		t.Error("worker b published nothing; the takeover did not happen")
	}
}

// Reliability (issue 6): graceful shutdown drains; the lease is handed
// back at once, so a successor continues without waiting for it to expire.
func TestDrainHandsOver(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	site.Service.LeaseTTL.Duration = time.Minute // a successor could only start early through a hand-back
	a := h.start(site, "wa")
	var wg sync.WaitGroup
	wg.Add(1)
	go func() { defer wg.Done(); h.publish(0, 2) }()
	waitFor(t, 30*time.Second, "a first estimate", func() bool { return len(h.estimates()) >= 1 })
	a.stop(t)
	wg.Wait()
	b := h.start(site, "wb")
	h.publish(2, 2)
	waitFor(t, 20*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	checkExactlyOnce(t, h.estimates(), 8)
	b.stop(t)
}

// restartableBroker starts an embedded broker on a store directory of
// the test's own, for tests that stop it and start it again on the same
// directory and client port; it returns the directory, the port and a
// harness holding the server.
func restartableBroker(t *testing.T) (dir string, port int, h *harness) {
	t.Helper()
	dir = t.TempDir()
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	u, _ := url.Parse(srv.ClientURL())
	port, _ = strconv.Atoi(u.Port())
	return dir, port, &harness{t: t, srv: srv}
}

// Reliability (issue 6): stop and restart the broker under a running
// service; nothing acknowledged is lost and every window still has
// exactly one estimate.
func TestBrokerRestartUnderService(t *testing.T) {
	if testing.Short() {
		t.Skip("restarts a broker under the service")
	}
	dir, port, h := restartableBroker(t)
	srv := h.srv
	connect := func() {
		nc, err := broker.Connect(srv.ClientURL(), "test-publisher", broker.Auth{})
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(nc.Close)
		h.nc = nc
		h.js, _ = jetstream.New(nc)
	}
	connect()
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 2)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	srv.Shutdown()
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: dir, Port: port, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	h.srv = srv
	connect()
	h.publish(2, 2)
	waitFor(t, 60*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	r.stop(t) // drained: nothing more can land
	checkExactlyOnce(t, h.estimates(), 8)
}

// Scale out (issue 6): a worker that joins later gets a share of the
// assets (the first hands one over after draining it), and each asset
// still has exactly one estimate per window.
func TestWorkSharing(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	two := testSiteText + strings.Replace(testSiteText[strings.Index(testSiteText, "[[asset]]"):], `name = "fenwick-lane"`, `name = "kestrel-moor"`, 1)
	site := testSite(t, two)
	a := h.start(site, "wa")
	holders := func() map[string]string {
		out := map[string]string{}
		kv, err := h.js.KeyValue(context.Background(), broker.BucketLease)
		if err != nil {
			return out
		}
		for _, asset := range []string{"fenwick-lane", "kestrel-moor"} {
			if e, err := kv.Get(context.Background(), asset); err == nil {
				out[asset] = string(e.Value())
			}
		}
		return out
	}
	waitFor(t, 20*time.Second, "wa to hold both assets", func() bool {
		hs := holders()
		return hs["fenwick-lane"] == "wa" && hs["kestrel-moor"] == "wa"
	})
	assets := []string{"fenwick-lane", "kestrel-moor"}
	for _, as := range assets {
		h.publishAsset(as, 0, 1)
	}
	b := h.start(site, "wb")
	waitFor(t, 20*time.Second, "one asset each", func() bool {
		hs := holders()
		return len(hs) == 2 && hs["fenwick-lane"] != hs["kestrel-moor"]
	})
	for _, as := range assets {
		h.publishAsset(as, 1, 2)
	}
	for _, as := range assets {
		waitFor(t, 30*time.Second, "6 estimates of "+as, func() bool { return len(h.estimatesOf(as)) >= 6 })
	}
	a.stop(t) // both drained: nothing more can land
	b.stop(t)
	for _, as := range assets {
		checkExactlyOnce(t, h.estimatesOf(as), 6) // both assets get the same data
	}
}

// Data for an asset that the site file does not list is dead-lettered as
// unknown-asset with the reason, once each even with two workers
// sweeping, is counted, and does not disturb the listed asset.
func TestUnknownAssetDeadLettered(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	r1 := h.start(site, "w1")
	r2 := h.start(site, "w2")
	// Before and after the workers have swept once: both are found.
	ctx := context.Background()
	pubUnknown := func(i int) {
		t.Helper()
		subj := fmt.Sprintf("uc.data.kestrel-moor-spur.p%d", i%2)
		if _, err := h.js.Publish(ctx, subj, []byte(fmt.Sprintf(`{"time":[%d],"bx":[1],"by":[1],"bz":[1]}`, i))); err != nil {
			t.Fatal(err)
		}
	}
	for i := 0; i < 3; i++ {
		pubUnknown(i)
	}
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })
	for i := 3; i < 5; i++ {
		pubUnknown(i)
	}
	// A listed asset without the sensor token: no worker's filter matches.
	if _, err := h.js.Publish(ctx, "uc.data.fenwick-lane", []byte(`{"time":[1],"bx":[1],"by":[1],"bz":[1]}`)); err != nil {
		t.Fatal(err)
	}
	h.publish(1, 1)
	dlq, err := h.js.Stream(ctx, broker.StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	count := func() uint64 {
		info, err := dlq.Info(ctx, jetstream.WithSubjectFilter(broker.DeadLetterSubject(broker.ReasonUnknownAsset)))
		if err != nil {
			t.Fatal(err)
		}
		return info.State.Subjects[broker.DeadLetterSubject(broker.ReasonUnknownAsset)]
	}
	waitFor(t, 30*time.Second, "5 unknown-asset dead letters", func() bool { return count() >= 5 })
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	checkExactlyOnce(t, h.estimates(), 4)
	m, err := dlq.GetLastMsgForSubject(ctx, broker.DeadLetterSubject(broker.ReasonUnknownAsset))
	if err != nil {
		t.Fatal(err)
	}
	if got := m.Header.Get(broker.HeaderError); !strings.Contains(got, `asset "kestrel-moor-spur" is not in the site file`) {
		t.Errorf("dead letter error %q", got)
	}
	if m.Header.Get(broker.HeaderSubject) != "uc.data.kestrel-moor-spur.p0" || m.Header.Get(broker.HeaderSequence) == "" {
		t.Errorf("dead letter headers: %v", m.Header)
	}
	if string(m.Data) != `{"time":[4],"bx":[1],"by":[1],"bz":[1]}` {
		t.Errorf("dead letter payload %q, want the message unchanged", m.Data)
	}
	// Counted by whichever worker dead-lettered each: 5 in all. Poll: the
	// counter moves just after the dead letter is stored.
	metric := func(r *running) float64 {
		resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		for _, line := range strings.Split(string(body), "\n") {
			if v, ok := strings.CutPrefix(line, `uc_dead_letters_total{reason="unknown-asset"} `); ok {
				f, _ := strconv.ParseFloat(v, 64)
				return f
			}
		}
		return 0
	}
	waitFor(t, 10*time.Second, "5 unknown-asset dead letters counted", func() bool { return metric(r1)+metric(r2) == 5 })
	// Once each: when the shared consumer has delivered and had
	// acknowledged every message, no more can come.
	data, err := h.js.Stream(ctx, broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	waitFor(t, 10*time.Second, "the unknown-asset consumer to be drained", func() bool {
		c, err := data.Consumer(ctx, unknownConsumerName(broker.ReasonUnknownAsset+"/kestrel-moor-spur"))
		if err != nil {
			return false
		}
		ci, err := c.Info(ctx)
		return err == nil && ci.NumPending == 0 && ci.NumAckPending == 0 && ci.Delivered.Stream > 0
	})
	if n := count(); n != 5 {
		t.Errorf("%d unknown-asset dead letters, want 5", n)
	}
	waitFor(t, 10*time.Second, "the sensor-less subject dead-lettered", func() bool {
		m, err := dlq.GetLastMsgForSubject(ctx, broker.DeadLetterSubject(broker.ReasonMalformed))
		return err == nil && m.Header.Get(broker.HeaderSubject) == "uc.data.fenwick-lane" &&
			strings.Contains(m.Header.Get(broker.HeaderError), "want uc.data.<asset>.<sensor>")
	})
	r1.stop(t)
	r2.stop(t)
}
