package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
	"undercurrent/ingest/ingesttest"
)

// The embedded broker's listener had no TLS. With [broker]
// listen_tls_cert, listen_tls_key and listen_tls_client_ca (a throwaway
// authority made with crypto/x509 by ingesttest.WritePKI) serve starts
// its broker on tls:// requiring client certificates, with no accounts
// (mutual TLS authenticates), and reaches it itself in-process. replay
// without the CA, or with the CA but no client certificate, is refused;
// with --tls-ca, --tls-cert and --tls-key it stores the log and estimates
// follow; a second serve worker joins over tls:// with the same flags.
func TestServeEmbeddedBrokerMutualTLS(t *testing.T) {
	if testing.Short() {
		t.Skip("runs serve with an embedded broker")
	}
	dir := t.TempDir()
	pki := ingesttest.WritePKI(t, dir, "Fenwick Lane test CA")
	site := filepath.Join(dir, "site.toml")
	text := strings.Replace(simSite, "[service]", `[broker]
listen = "127.0.0.1:0"
mqtt = "off"
listen_tls_cert = "server.pem"
listen_tls_key = "server-key.pem"
listen_tls_client_ca = "ca.pem"
[service]`, 1)
	if err := os.WriteFile(site, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	logPath := filepath.Join(dir, "fenwick-fixed.csv")
	writeSimLog(t, logPath, 2)

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var stderr syncBuffer
	done := make(chan int, 1)
	go func() {
		done <- run(ctx, []string{"serve", "--config", site, "--data", filepath.Join(dir, "store"), "--http", "-"}, &bytes.Buffer{}, &stderr)
	}()
	re := regexp.MustCompile(`nats=(tls://\S+)`)
	var url string
	pollUntil(t, 30*time.Second, "the embedded broker on tls://", func() bool {
		m := re.FindStringSubmatch(stderr.String())
		if m != nil {
			url = m[1]
		}
		select {
		case c := <-done:
			t.Fatalf("serve exited %d:\n%s", c, stderr.String())
		default:
		}
		return url != "" && strings.Contains(stderr.String(), "serving")
	})
	replay := func(extra ...string) (int, string) {
		var out, errOut bytes.Buffer
		c := run(ctx, append([]string{"replay", logPath, "--asset", "fenwick-lane", "--broker", url, "--speed", "0"}, extra...), &out, &errOut)
		return c, errOut.String()
	}
	if c, msg := replay(); c == 0 || !strings.Contains(msg, "tls_ca") {
		t.Errorf("replay without the CA: exit %d, %q; want refused with a hint to give the CA", c, msg)
	}
	if c, _ := replay("--tls-ca", pki.CA); c == 0 {
		t.Error("replay without a client certificate succeeded")
	}
	if c, msg := replay("--tls-ca", pki.CA, "--tls-cert", pki.ClientCert, "--tls-key", pki.ClientKey); c != 0 {
		t.Fatalf("replay with the CA and a client certificate: exit %d: %s", c, msg)
	}
	nc, err := broker.Connect(url, "test", broker.Auth{CAFile: pki.CA, CertFile: pki.ClientCert, KeyFile: pki.ClientKey})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	pollUntil(t, 30*time.Second, "4 estimates", func() bool { return len(readEstimates(t, js)) >= 4 })

	// A second worker joins the embedded broker over TLS.
	var stderr2 syncBuffer
	done2 := make(chan int, 1)
	go func() {
		done2 <- run(ctx, []string{"serve", "--config", site, "--broker", url, "--http", "-",
			"--tls-ca", pki.CA, "--tls-cert", pki.ClientCert, "--tls-key", pki.ClientKey}, &bytes.Buffer{}, &stderr2)
	}()
	pollUntil(t, 30*time.Second, "the second worker serving", func() bool {
		select {
		case c := <-done2:
			t.Fatalf("second worker exited %d:\n%s", c, stderr2.String())
		default:
		}
		// Set up once its streams are (the dead-letter line, "max_age=",
		// comes after them): cancelled before, serve exits as
		// interrupted (130), as TestServeSIGHUPNoReload found.
		return strings.Contains(stderr2.String(), "serving") && strings.Contains(stderr2.String(), "max_age=")
	})
	cancel()
	for i, d := range []chan int{done2, done} {
		select {
		case c := <-d:
			if c != 0 {
				t.Errorf("serve %d exited %d after cancel", i, c)
			}
		case <-time.After(20 * time.Second):
			t.Fatalf("serve %d did not stop within 20 s", i)
		}
	}
}
