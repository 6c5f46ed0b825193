package main

import (
	"bytes"
	"context"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// serve --broker with the broker not up yet (review rv24d, finding 9): before, serve
// exited within a second with "nats: no servers available for
// connection". Now it says once that it waits, comes up when the broker
// does, and, when none comes within --broker-wait, ends with an error
// that names the URL and says to start the broker first.
func TestServeWaitsForBroker(t *testing.T) {
	if testing.Short() {
		t.Skip("runs serve and a broker started after it")
	}
	dir := t.TempDir()
	site := filepath.Join(dir, "site.toml")
	if err := os.WriteFile(site, []byte(simSite), 0o644); err != nil {
		t.Fatal(err)
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	port := ln.Addr().(*net.TCPAddr).Port
	ln.Close() // nothing listens there now
	url := "nats://" + ln.Addr().String()

	var failed bytes.Buffer
	code := run(context.Background(), []string{"serve", "--config", site, "--broker", url, "--broker-wait", "300ms", "--http", "-"}, &bytes.Buffer{}, &failed)
	if code != 1 || !strings.Contains(failed.String(), url) || !strings.Contains(failed.String(), "start the broker first") {
		t.Errorf("serve with no broker: exit %d, stderr %q; want exit 1 naming %s and saying to start the broker first", code, failed.String(), url)
	}

	var errOut syncBuffer

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	served := make(chan int, 1)
	go func() {
		served <- run(ctx, []string{"serve", "--config", site, "--broker", url, "--broker-wait", "2m", "--http", "127.0.0.1:0", "--worker", "w1"}, &bytes.Buffer{}, &errOut)
	}()
	pollUntil(t, 60*time.Second, "serve to say it waits for the broker", func() bool {
		return strings.Contains(errOut.String(), "no broker answers at "+url)
	})
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: filepath.Join(dir, "store"), Host: "127.0.0.1", Port: port, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	pollUntil(t, 60*time.Second, "serve to come up once the broker does", func() bool {
		return strings.Contains(errOut.String(), "http api listening") // after the streams are set up
	})
	if n := strings.Count(errOut.String(), "no broker answers"); n != 1 {
		t.Errorf("the wait was logged %d times, want once:\n%s", n, errOut.String())
	}
	cancel()
	if c := <-served; c != 0 {
		t.Fatalf("serve exited %d: %s", c, errOut.String())
	}
}
