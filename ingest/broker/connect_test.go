package broker

import (
	"net"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"

	"undercurrent/ingest/ingesttest"
)

// A failed connect names the URL and what to check: an http:// URL (the
// monitoring port's) is refused at once, a port that sends no NATS
// greeting is named as probably not the client port, and a refused login
// names the user and where it came from.
func TestConnectErrorsNameTheCause(t *testing.T) {
	_, err := Connect("nats://127.0.0.1:46151,http://127.0.0.1:46152", "test", Auth{})
	if err == nil || !strings.Contains(err.Error(), "http://127.0.0.1:46152") || !strings.Contains(err.Error(), "monitoring port") {
		t.Errorf("http:// URL: %v; want it named as the monitoring port's", err)
	}

	// A port that closes without a greeting, as an MQTT listener does.
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	silent := ln.Addr().String()
	defer ln.Close()
	go func() {
		for {
			c, err := ln.Accept()
			if err != nil {
				return
			}
			c.Close()
		}
	}()
	_, err = Connect("nats://"+silent, "test", Auth{})
	if err == nil || !strings.Contains(err.Error(), silent) || !strings.Contains(err.Error(), "NATS client port") {
		t.Errorf("a port without a NATS greeting: %v; want the URL and a hint about the client port", err)
	}

	srv, err := StartServer(ServerConfig{StoreDir: t.TempDir(), Host: "127.0.0.1", Port: 0, MQTTPort: -1,
		Users: []User{{Name: "pipeline", Password: "harrow-fen-pipeline"}}})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	_, err = Connect(srv.ClientURL(), "test", Auth{User: "pipeline", Password: "wrong", UserFrom: "site.toml [broker] user"})
	if err == nil || !strings.Contains(err.Error(), `user "pipeline"`) || !strings.Contains(err.Error(), "site.toml [broker] user") {
		t.Errorf("a wrong password: %v; want the user and where it came from", err)
	}
	nc, err := Connect(srv.ClientURL(), "test", Auth{User: "pipeline", Password: "harrow-fen-pipeline"})
	if err != nil {
		t.Fatalf("the right password: %v", err)
	}
	nc.Close()
}

// Connect reaches a broker that requires TLS with a client certificate,
// given the CA file and the client's certificate and key (a private
// authority generated with crypto/x509 by ingesttest.WritePKI: simulated truth), and says
// what to set when the CA is not given.
func TestConnectTLSWithPrivateCA(t *testing.T) {
	pki := ingesttest.WritePKI(t, t.TempDir(), "Kestrel Moor test CA")
	caFile, srvCert, srvKey := pki.CA, pki.ServerCert, pki.ServerKey
	cliCert, cliKey := pki.ClientCert, pki.ClientKey

	tc, err := server.GenTLSConfig(&server.TLSConfigOpts{CertFile: srvCert, KeyFile: srvKey, CaFile: caFile, Verify: true})
	if err != nil {
		t.Fatal(err)
	}
	ns, err := server.NewServer(&server.Options{Host: "127.0.0.1", Port: server.RANDOM_PORT, NoSigs: true, TLS: true, TLSVerify: true, TLSConfig: tc, TLSTimeout: 2})
	if err != nil {
		t.Fatal(err)
	}
	go ns.Start()
	defer func() { ns.Shutdown(); ns.WaitForShutdown() }()
	if !ns.ReadyForConnections(10 * time.Second) {
		t.Fatal("TLS server not ready")
	}
	url := "tls://" + ns.Addr().String()

	nc, err := Connect(url, "test", Auth{CAFile: caFile, CertFile: cliCert, KeyFile: cliKey})
	if err != nil {
		t.Fatalf("with the CA and a client certificate: %v", err)
	}
	if !nc.TLSRequired() {
		t.Error("connected without TLS")
	}
	nc.Close()
	if _, err := Connect(url, "test", Auth{CertFile: cliCert, KeyFile: cliKey}); err == nil || !strings.Contains(err.Error(), "tls_ca") {
		t.Errorf("without the CA file: %v; want a hint to set tls_ca", err)
	}
	if _, err := Connect(url, "test", Auth{CAFile: caFile}); err == nil {
		t.Error("connected without the client certificate the broker requires")
	}
	if _, err := Connect(url, "test", Auth{CAFile: caFile, CertFile: cliCert}); err == nil || !strings.Contains(err.Error(), "key file") {
		t.Errorf("a certificate without its key: %v; want both asked for", err)
	}
}
