package live

import (
	"io"
	"log/slog"
	"net/http"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// A broker outage under the service (review rv24d, finding 8). Before: the log repeated
// "heartbeat failed" at every round and never said the connection was
// lost or back, API queries answered 502 after their timeouts,
// uc_pending_messages kept its last value and no metric showed the
// connection. Now the loss and the reconnection are logged once each,
// a run of failed heartbeats once (and counted when one succeeds), the
// API answers 503 "broker unreachable" while the connection is down,
// uc_broker_connected follows it, the pending gauges are left out while
// they cannot be fresh, and an asset no longer held has none.
func TestBrokerOutageSaidOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("stops a broker under the service")
	}
	dir, port, h := restartableBroker(t)
	srv := h.srv
	nc, err := broker.Connect(srv.ClientURL(), "test-publisher", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	h.nc = nc
	h.js, _ = jetstream.New(nc)
	var logs syncBuffer
	log := slog.New(slog.NewTextHandler(&logs, &slog.HandlerOptions{Level: slog.LevelInfo}))
	svc, stop := h.runConfig(t, Config{Site: testSite(t, testSiteText), Worker: "w1", NewEstimator: newMean, Logger: log}, "w1")
	get := func(path string) (int, string) {
		t.Helper()
		resp, err := http.Get("http://" + svc.HTTPAddr() + path)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		return resp.StatusCode, string(body)
	}
	count := func(s string) int { return strings.Count(logs.String(), s) }
	h.publish(0, 2)
	waitFor(t, 30*time.Second, "a pending gauge and a connected broker", func() bool {
		_, m := get("/metrics")
		return strings.Contains(m, `uc_pending_messages{asset="fenwick-lane"}`) && strings.Contains(m, "\nuc_broker_connected 1\n")
	})

	srv.Shutdown()
	waitFor(t, 30*time.Second, "the loss to be logged", func() bool { return count("broker connection lost") > 0 })
	code, body := get("/api/v1/assets")
	if code != http.StatusServiceUnavailable || !strings.Contains(body, "broker unreachable") {
		t.Errorf("/api/v1/assets while the broker is down: %d %s, want 503 broker unreachable", code, body)
	}
	if code, body := get("/api/v1/alarms"); code != http.StatusServiceUnavailable {
		t.Errorf("/api/v1/alarms while the broker is down: %d %s, want 503", code, body)
	}
	_, m := get("/metrics")
	if !strings.Contains(m, "\nuc_broker_connected 0\n") {
		t.Error("uc_broker_connected is not 0 while the broker is down")
	}
	if strings.Contains(m, "uc_pending_messages{") {
		t.Error("uc_pending_messages reported while the broker is down (it cannot be fresh)")
	}
	// Several rounds fail (each a quarter lease TTL); the run is said once.
	waitFor(t, 60*time.Second, "five failed heartbeats", func() bool {
		svc.beats.mu.Lock()
		defer svc.beats.mu.Unlock()
		return svc.beats.n >= 5
	})
	if n := count(`msg="heartbeat failed`); n != 1 {
		t.Errorf("heartbeat failure logged %d times in a run of at least 5, want once:\n%s", n, logs.String())
	}
	if n := count("broker connection lost"); n != 1 {
		t.Errorf("connection loss logged %d times, want once", n)
	}

	srv, err = broker.StartServer(broker.ServerConfig{StoreDir: dir, Port: port, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	waitFor(t, 60*time.Second, "the reconnection and a heartbeat to be logged", func() bool {
		return count("broker reconnected") > 0 && count("heartbeat succeeds again") > 0
	})
	l := logs.String()
	if !strings.Contains(l, "down_for=") {
		t.Errorf("the reconnection does not say how long the broker was down:\n%s", l)
	}
	if !strings.Contains(l, "failed_beats=") {
		t.Errorf("the recovered heartbeat does not count the failures:\n%s", l)
	}
	waitFor(t, 30*time.Second, "the API to answer again", func() bool {
		code, _ := get("/api/v1/assets")
		return code == http.StatusOK
	})
	if _, m := get("/metrics"); !strings.Contains(m, "\nuc_broker_connected 1\n") {
		t.Error("uc_broker_connected is not 1 once the broker is back")
	}
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	// Drained: no asset is held, so none has a consumer lag to report.
	mfs, err := svc.met.reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	for _, mf := range mfs {
		if mf.GetName() == "uc_pending_messages" && len(mf.GetMetric()) > 0 {
			t.Errorf("uc_pending_messages still has %d series after every asset was handed back", len(mf.GetMetric()))
		}
	}
}
