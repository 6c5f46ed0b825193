package main

// Tests of serve and replay with real processes: a broker started by the
// test on a random loopback port, serve workers re-executed from the test
// binary, and replay run as a user would. Everything stays on 127.0.0.1,
// polls instead of sleeping and is bounded in time.

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
	"undercurrent/inverse"
	"undercurrent/report/live"
)

// TestServeHelperProcess is not a test: it is the entry point of the serve
// workers the tests below start (the test binary re-executed with
// UNDERCURRENT_HELPER_ARGS set). It behaves like main.
func TestServeHelperProcess(t *testing.T) {
	args := os.Getenv("UNDERCURRENT_HELPER_ARGS")
	if args == "" {
		t.Skip("helper process entry point")
	}
	// Never outlive the test: exit if the parent goes away, and after two
	// minutes in any case.
	parent := os.Getppid()
	go func() {
		for start := time.Now(); time.Since(start) < 2*time.Minute; time.Sleep(200 * time.Millisecond) {
			if os.Getppid() != parent {
				break
			}
		}
		os.Exit(3)
	}()
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, strings.Split(args, "\x1f"), os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// worker is a serve process.
type worker struct {
	id   string
	cmd  *exec.Cmd
	log  string
	done chan struct{} // closed when the process has exited
	err  error         // its exit, valid after done
}

func startWorker(t *testing.T, dir, id string, args ...string) *worker {
	t.Helper()
	w := &worker{id: id, log: filepath.Join(dir, id+".log"), done: make(chan struct{})}
	f, err := os.Create(w.log)
	if err != nil {
		t.Fatal(err)
	}
	w.cmd = exec.Command(os.Args[0], "-test.run=^TestServeHelperProcess$", "-test.v=false")
	w.cmd.Env = append(os.Environ(), "UNDERCURRENT_HELPER_ARGS="+strings.Join(append([]string{"serve", "--worker", id}, args...), "\x1f"))
	w.cmd.Stdout, w.cmd.Stderr = f, f
	if err := w.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { w.err = w.cmd.Wait(); f.Close(); close(w.done) }()
	t.Cleanup(func() {
		w.cmd.Process.Kill()
		<-w.done
		if t.Failed() {
			b, _ := os.ReadFile(w.log)
			t.Logf("log of worker %s:\n%s", id, b)
		}
	})
	return w
}

// Simulated fixed-sensor log: three sensors 1 m apart across a line along
// north at 1.5 m below them; the current steps by 0.5 A every 0.5 s window.
var (
	simSensors = [][3]float64{{-1, 0, 0.3}, {0, 0, 0.3}, {1, 0, 0.3}}
	simLine    = inverse.Line{Point: [3]float64{0.2, 0, -1.2}, Dir: [3]float64{0, 1, 0}}
	simEarth   = [3]float64{1520, 17850, -45760} // nT, a mid-latitude field (common practice)
)

const (
	simT0     = 1764650000.0
	simRate   = 100.0
	simWindow = 0.5
)

func simCurrent(k int) float64 { return 10 + 0.5*float64(k) }

// writeSimLog writes seconds of data as CSV (time, group, bx, by, bz) and
// returns the window means per sensor, for a direct fit.
func writeSimLog(t *testing.T, path string, seconds float64) (means map[int][][3]float64) {
	return writeSimLogAs(t, path, seconds, false)
}

// writeSimLogAs writes the simulated log; withPositions writes the columns
// time, x, y, z, sensor, win, bx, by, bz instead, so that locate can fit
// each window (--group-by win) and replay names sensors with
// --columns group=sensor.
func writeSimLogAs(t *testing.T, path string, seconds float64, withPositions bool) (means map[int][][3]float64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(6, 6))
	var b bytes.Buffer
	if withPositions {
		b.WriteString("time,x,y,z,sensor,win,bx,by,bz\n")
	} else {
		b.WriteString("time,group,bx,by,bz\n")
	}
	n := int(seconds * simRate)
	perWin := int(simWindow * simRate)
	means = map[int][][3]float64{}
	for i := 0; i < n; i++ {
		k := i / perWin
		if means[k] == nil {
			means[k] = make([][3]float64, len(simSensors))
		}
		tt := simT0 + float64(i)/simRate
		for s, pos := range simSensors {
			f := simLine.Field(pos, simCurrent(k))
			var v [3]float64
			for j := range 3 {
				v[j] = f[j]*1e9 + simEarth[j] + 0.5*rng.NormFloat64()
				// Round as the CSV does, so the direct fit sees the same numbers.
				v[j] = math.Round(v[j]*1e4) / 1e4
				means[k][s][j] += v[j] / float64(perWin)
			}
			if withPositions {
				fmt.Fprintf(&b, "%.4f,%g,%g,%g,s%d,w%02d,%.4f,%.4f,%.4f\n", tt, pos[0], pos[1], pos[2], s, k, v[0], v[1], v[2])
			} else {
				fmt.Fprintf(&b, "%.4f,s%d,%.4f,%.4f,%.4f\n", tt, s, v[0], v[1], v[2])
			}
		}
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return means
}

const simSite = `
name = "Harrow Fen substation (test)"
[service]
http = "-"
lease_ttl = "1s"
idle = "500ms"
[[asset]]
name = "fenwick-lane"
mode = "dc"
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
  name = "cable"
  point = [0.2, 0, -1.2]
  direction = [0, 1, 0]
`

func readEstimates(t *testing.T, js jetstream.JetStream) []live.Estimate {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	st, err := js.Stream(ctx, broker.StreamEstimates)
	if err != nil {
		return nil
	}
	info, err := st.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var out []live.Estimate
	for seq := info.State.FirstSeq; seq <= info.State.LastSeq && info.State.Msgs > 0; seq++ {
		m, err := st.GetMsg(ctx, seq)
		if err != nil {
			continue
		}
		var e live.Estimate
		if err := json.Unmarshal(m.Data, &e); err != nil {
			t.Fatal(err)
		}
		out = append(out, e)
	}
	return out
}

func pollUntil(t *testing.T, timeout time.Duration, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(timeout)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out after %v waiting for %s", timeout, what)
		}
		time.Sleep(25 * time.Millisecond)
	}
}

// Reliability (issue 6): SIGKILL the worker holding the asset in the middle
// of a replay; after the takeover every window has exactly one estimate,
// and the estimates agree with the truth and with a direct fit of the same
// data (inverse.FitStrengths on the window means). SIGTERM then drains the
// survivor, which hands its lease back.
func TestServeSurvivesSIGKILL(t *testing.T) {
	needSignals(t) // the survivor is drained by SIGTERM
	if testing.Short() {
		t.Skip("starts a broker and three processes")
	}
	dir, srv, site := startSimBroker(t)
	const seconds = 20.0
	logPath := filepath.Join(dir, "fenwick-fixed.csv")
	means := writeSimLog(t, logPath, seconds)
	nWin := int(seconds / simWindow)

	workers := map[string]*worker{}
	for _, id := range []string{"w1", "w2"} {
		workers[id] = startWorker(t, dir, id, "--config", site, "--broker", srv.ClientURL())
	}
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	lease := func() string {
		kv, err := js.KeyValue(context.Background(), broker.BucketLease)
		if err != nil {
			return ""
		}
		e, err := kv.Get(context.Background(), "fenwick-lane")
		if err != nil {
			return ""
		}
		return string(e.Value())
	}
	pollUntil(t, 30*time.Second, "a worker to take the asset", func() bool { return lease() != "" })

	// Replay at ten times real time (about 2 s) in the background.
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	var replayOut, replayErr bytes.Buffer
	var wg sync.WaitGroup
	wg.Add(1)
	var code int
	go func() {
		defer wg.Done()
		code = run(ctx, []string{"replay", logPath, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "10", "--format", "arrow"}, &replayOut, &replayErr)
	}()
	pollUntil(t, 30*time.Second, "the first estimates", func() bool { return len(readEstimates(t, js)) >= 6 })
	victim := lease()
	if err := workers[victim].cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	<-workers[victim].done
	killedAt := len(readEstimates(t, js))
	wg.Wait()
	if code != 0 {
		t.Fatalf("replay exited %d: %s", code, replayErr.String())
	}
	if !strings.Contains(replayOut.String(), "replayed 6000 samples") {
		t.Errorf("replay output: %q", replayOut.String())
	}
	pollUntil(t, 30*time.Second, fmt.Sprintf("%d estimates", nWin), func() bool { return len(readEstimates(t, js)) >= nWin })
	survivor := map[string]string{"w1": "w2", "w2": "w1"}[victim]

	// SIGTERM drains the survivor: it exits 0 and hands the lease back.
	s := workers[survivor]
	s.cmd.Process.Signal(syscall.SIGTERM)
	select {
	case <-s.done:
		if s.err != nil {
			t.Errorf("survivor after SIGTERM: %v", s.err)
		}
	case <-time.After(20 * time.Second):
		t.Fatal("survivor did not exit within 20 s of SIGTERM")
	}
	if h := lease(); h != "" {
		t.Errorf("lease still held by %q after a graceful stop", h)
	}
	logText, _ := os.ReadFile(s.log)
	if !strings.Contains(string(logText), "drained") {
		t.Errorf("survivor log does not report draining:\n%s", logText)
	}

	// No worker is left to publish: the stored estimates are final.
	ests := readEstimates(t, js)
	if killedAt >= nWin {
		t.Fatalf("the victim had published every window before it was killed; the test did not test a takeover")
	}

	k0 := int64(math.Floor(simT0/simWindow + 1e-7))
	seen := map[int64]int{}
	var bySurvivor int
	est, _ := live.NewInverseEstimator("dc", []live.ConductorConfig{{Name: "cable", Kind: "line", Point: simLine.Point, Direction: simLine.Dir}})
	for _, e := range ests {
		k := int(e.Window - k0)
		seen[e.Window-k0]++
		if e.Worker == survivor {
			bySurvivor++
		}
		if len(e.Conductors) != 1 || e.Quality != "good" {
			t.Errorf("window %d: %+v", k, e)
			continue
		}
		c := e.Conductors[0]
		// Truth, within five reported sigma.
		if math.Abs(c.Current-simCurrent(k)) > 5*c.CurrentSigma {
			t.Errorf("window %d: %.4f +- %.2g A, truth %.2f A", k, c.Current, c.CurrentSigma, simCurrent(k))
		}
		// A direct fit of the same window means gives the same answer.
		out, err := est.Solve(&live.SolveInput{Points: simSensors, Fields: means[k]})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(c.Current-out.Current[0]) > 1e-6*math.Abs(out.Current[0]) {
			t.Errorf("window %d: pipeline %.9f A, direct fit %.9f A", k, c.Current, out.Current[0])
		}
	}
	for k := int64(0); k < int64(nWin); k++ {
		if seen[k] != 1 {
			t.Errorf("window %d has %d estimates, want exactly one", k, seen[k])
		}
	}
	if len(ests) != nWin {
		t.Errorf("%d estimates, want %d", len(ests), nWin)
	}
	if bySurvivor == 0 {
		t.Errorf("worker %s published nothing after %s was killed", survivor, victim)
	}
}

// syncBuffer is a bytes.Buffer safe for one writer and one reader.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// serve with its embedded broker and auth: unauthenticated clients are
// refused, the pipeline user replays, estimates appear, Ctrl-C stops it.
func TestServeEmbeddedBrokerWithAuth(t *testing.T) {
	if testing.Short() {
		t.Skip("runs serve with an embedded broker")
	}
	dir := t.TempDir()
	site := filepath.Join(dir, "site.toml")
	text := strings.Replace(simSite, "[service]", `[broker]
listen = "127.0.0.1:0"
mqtt = "127.0.0.1:0"
user = "pipeline"
password = "harrow-fen-pipeline"
  [[broker.users]]
  name = "pipeline"
  password = "harrow-fen-pipeline"
  [[broker.users]]
  name = "gateway"
  password = "fenwick-gw"
  publish = ["uc.data.>"]
[service]`, 1)
	os.WriteFile(site, []byte(text), 0o644)
	logPath := filepath.Join(dir, "fenwick-fixed.csv")
	writeSimLog(t, logPath, 2)

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var stderr syncBuffer
	done := make(chan int, 1)
	go func() {
		done <- run(ctx, []string{"serve", "--config", site, "--data", filepath.Join(dir, "store")}, &bytes.Buffer{}, &stderr)
	}()
	re := regexp.MustCompile(`nats=(nats://\S+)`)
	var url string
	pollUntil(t, 30*time.Second, "the embedded broker", func() bool {
		m := re.FindStringSubmatch(stderr.String())
		if m != nil {
			url = m[1]
		}
		return url != "" && strings.Contains(stderr.String(), "serving")
	})
	if _, err := broker.Connect(url, "anon", broker.Auth{}); err == nil {
		t.Error("an unauthenticated client connected to the embedded broker")
	}
	var out, errOut bytes.Buffer
	if c := run(ctx, []string{"replay", logPath, "--asset", "fenwick-lane", "--broker", url, "--speed", "0"}, &out, &errOut); c == 0 {
		t.Error("replay without credentials succeeded")
	}
	if c := run(ctx, []string{"replay", logPath, "--asset", "fenwick-lane", "--broker", url, "--speed", "0",
		"--user", "pipeline", "--password", "harrow-fen-pipeline"}, &out, &errOut); c != 0 {
		t.Fatalf("replay: exit %d: %s", c, errOut.String())
	}
	nc, err := broker.Connect(url, "test", broker.Auth{User: "pipeline", Password: "harrow-fen-pipeline"})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	pollUntil(t, 30*time.Second, "4 estimates", func() bool { return len(readEstimates(t, js)) >= 4 })
	cancel()
	select {
	case c := <-done:
		if c != 0 {
			t.Errorf("serve exited %d after cancel:\n%s", c, stderr.String())
		}
	case <-time.After(20 * time.Second):
		t.Fatal("serve did not stop within 20 s")
	}
}

func TestServeReplayUsage(t *testing.T) {
	cases := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"serve needs a config", []string{"serve"}, 2, "--config SITE is required"},
		{"serve takes no arguments", []string{"serve", "--config", "x.toml", "extra"}, 2, "takes no arguments"},
		{"serve reports a bad site file", []string{"serve", "--config", "no-such-site.toml", "--broker", "nats://127.0.0.1:1"}, 1, "no-such-site.toml"},
		{"replay needs an asset", []string{"replay", "log.csv"}, 2, "--asset is required"},
		{"replay needs one log", []string{"replay", "--asset", "a"}, 2, "one LOG"},
		{"replay refuses a bad format", []string{"replay", "log.csv", "--asset", "a", "--format", "xml"}, 2, "--format"},
		{"replay names a missing log", []string{"replay", "no-such-log.csv", "--asset", "a"}, 1, "no-such-log.csv"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := run(context.Background(), tc.args, &out, &errOut)
			if code != tc.code || !strings.Contains(errOut.String(), tc.want) {
				t.Fatalf("exit %d, stderr %q; want exit %d and %q", code, errOut.String(), tc.code, tc.want)
			}
		})
	}
}

// Reliability (issue 6): estimates from replaying a simulated log through
// serve agree with locate on the same log within their uncertainties
// (locate fits the geometry of each window; serve holds it).
func TestReplayAgreesWithLocate(t *testing.T) {
	if testing.Short() {
		t.Skip("runs serve, replay and locate")
	}
	dir, srv, site := startSimBroker(t)
	const seconds = 5.0
	logPath := filepath.Join(dir, "fenwick-fixed.csv")
	writeSimLogAs(t, logPath, seconds, true)
	nWin := int(seconds / simWindow)

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	served := make(chan int, 1)
	var serveErr syncBuffer
	go func() {
		served <- run(ctx, []string{"serve", "--config", site, "--broker", srv.ClientURL(), "--worker", "w1"}, &bytes.Buffer{}, &serveErr)
	}()
	var out, errOut bytes.Buffer
	if c := run(ctx, []string{"replay", logPath, "--asset", "fenwick-lane", "--columns", "group=sensor", "--speed", "0", "--broker", srv.ClientURL()}, &out, &errOut); c != 0 {
		t.Fatalf("replay: exit %d: %s", c, errOut.String())
	}
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	pollUntil(t, 30*time.Second, fmt.Sprintf("%d estimates", nWin), func() bool { return len(readEstimates(t, js)) >= nWin })
	cancel()
	if c := <-served; c != 0 {
		t.Fatalf("serve exited %d: %s", c, serveErr.String())
	}

	out.Reset()
	errOut.Reset()
	if c := run(context.Background(), []string{"locate", logPath, "--group-by", "win", "--count", "1", "--json"}, &out, &errOut); c != 0 {
		t.Fatalf("locate: exit %d: %s", c, errOut.String())
	}
	var doc struct {
		Groups []struct {
			Key     string `json:"key"`
			OK      bool   `json:"ok"`
			Sources []struct {
				Current      float64 `json:"current_a"`
				CurrentSigma float64 `json:"current_sigma_a"`
			} `json:"sources"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(out.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	located := map[string][2]float64{}
	for _, g := range doc.Groups {
		if g.OK && len(g.Sources) == 1 {
			located[g.Key] = [2]float64{g.Sources[0].Current, g.Sources[0].CurrentSigma}
		}
	}
	k0 := int64(math.Floor(simT0/simWindow + 1e-7))
	ests := readEstimates(t, js)
	if len(ests) != nWin {
		t.Fatalf("%d estimates, want %d", len(ests), nWin)
	}
	for _, e := range ests {
		key := fmt.Sprintf("w%02d", e.Window-k0)
		l, ok := located[key]
		if !ok {
			t.Errorf("locate has no fit for window %s", key)
			continue
		}
		c := e.Conductors[0]
		// Four combined sigma (the e2e tests' criterion); the sign of a
		// fitted line's direction is the fit's choice, so compare magnitudes.
		tol := 4 * math.Hypot(c.CurrentSigma, l[1])
		if d := math.Abs(math.Abs(c.Current) - math.Abs(l[0])); d > tol {
			t.Errorf("window %s: serve %.4f +- %.2g A, locate %.4f +- %.2g A", key, c.Current, c.CurrentSigma, l[0], l[1])
		}
	}
}

// startSimBroker starts an embedded broker (MQTT off) with its store in a
// temporary directory, shut down when the test ends, and writes simSite
// beside it. It returns the directory, the broker and the site file.
func startSimBroker(t *testing.T) (dir string, srv *broker.Server, site string) {
	t.Helper()
	dir = t.TempDir()
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: filepath.Join(dir, "store"), MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	site = filepath.Join(dir, "site.toml")
	if err := os.WriteFile(site, []byte(simSite), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, srv, site
}
