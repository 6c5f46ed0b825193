package broker

import (
	"bytes"
	"context"
	"crypto/tls"
	"crypto/x509"
	"fmt"
	"io"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/ingesttest"
)

// The embedded broker's listener speaks TLS when given a certificate and
// key (a throwaway authority made by ingesttest.WritePKI with
// crypto/x509): a plaintext client is refused, a client trusting the CA
// connects over tls:// and a replay round trip stores every batch, a
// client trusting another CA is refused, and the process's own client
// reaches it in-process without any certificate.
func TestServerTLSListener(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	pki := ingesttest.WritePKI(t, t.TempDir(), "Kestrel Moor test CA")
	other := ingesttest.WritePKI(t, t.TempDir(), "Another test CA")
	s := startTestServer(t, ServerConfig{MQTTPort: -1, TLSCert: pki.ServerCert, TLSKey: pki.ServerKey})
	url := s.ClientURL()
	if !strings.HasPrefix(url, "tls://") {
		t.Fatalf("client URL %s; want tls://", url)
	}
	plain := strings.Replace(url, "tls://", "nats://", 1)
	if nc, err := Connect(plain, "test", Auth{}); err == nil {
		nc.Close()
		t.Error("a plaintext client connected to a TLS listener")
	}
	if nc, err := Connect(url, "test", Auth{CAFile: other.CA}); err == nil {
		nc.Close()
		t.Error("a client trusting another CA connected")
	} else if !strings.Contains(err.Error(), "tls_ca") {
		t.Errorf("wrong CA: %v; want a hint to set tls_ca", err)
	}

	nc, js := connectJS(t, url, Auth{CAFile: pki.CA})
	if !nc.TLSRequired() {
		t.Error("connected without TLS")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	bs, err := SplitSamples(groupedLog(50), "fenwick-lane", "", 0.1)
	if err != nil {
		t.Fatal(err)
	}
	st, err := Replay(ctx, js, bs, &ReplaySettings{Shift: 10})
	if err != nil {
		t.Fatal(err)
	}
	if st.Batches != len(bs) || st.Duplicates != 0 {
		t.Errorf("replay over TLS: %+v; want %d batches stored", st, len(bs))
	}

	// serve's own connection: in-process, no CA needed, and it sees what
	// the TLS client stored.
	inp, err := s.ConnectInProcess("test", Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer inp.Close()
	ijs, err := jetstream.New(inp)
	if err != nil {
		t.Fatal(err)
	}
	str, err := ijs.Stream(ctx, StreamData)
	if err != nil {
		t.Fatal(err)
	}
	if si, err := str.Info(ctx); err != nil || si.State.Msgs != uint64(len(bs)) {
		t.Errorf("in-process client sees %v messages (%v); want %d", si, err, len(bs))
	}
}

// With a client CA the listener requires a client certificate signed by
// it (mutual TLS): a client without one, or with one from another
// authority, is refused; one with a certificate from the CA connects.
func TestServerMutualTLS(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	pki := ingesttest.WritePKI(t, t.TempDir(), "Kestrel Moor test CA")
	other := ingesttest.WritePKI(t, t.TempDir(), "Another test CA")
	s := startTestServer(t, ServerConfig{MQTTPort: 0, TLSCert: pki.ServerCert, TLSKey: pki.ServerKey, TLSClientCA: pki.CA})
	url := s.ClientURL()
	for _, c := range []struct {
		name string
		auth Auth
	}{
		{"no client certificate", Auth{CAFile: pki.CA}},
		{"a client certificate from another CA", Auth{CAFile: pki.CA, CertFile: other.ClientCert, KeyFile: other.ClientKey}},
	} {
		if nc, err := Connect(url, "test", c.auth); err == nil {
			nc.Close()
			t.Errorf("%s: connected", c.name)
		}
	}
	nc, err := Connect(url, "test", Auth{CAFile: pki.CA, CertFile: pki.ClientCert, KeyFile: pki.ClientKey})
	if err != nil {
		t.Fatalf("a client certificate from the CA: %v", err)
	}
	nc.Close()
	inp, err := s.ConnectInProcess("test", Auth{})
	if err != nil {
		t.Fatalf("in-process: %v", err)
	}
	inp.Close()

	// The MQTT listener speaks the same TLS: an MQTT 3.1.1 CONNECT gets
	// its CONNACK (20 02 00 00, accepted) only over TLS with a client
	// certificate from the CA.
	mqttConnect := []byte{0x10, 13, 0, 4, 'M', 'Q', 'T', 'T', 4, 2, 0, 60, 0, 1, 't'}
	connack := func(c net.Conn) error {
		c.SetDeadline(time.Now().Add(5 * time.Second))
		if _, err := c.Write(mqttConnect); err != nil {
			return err
		}
		got := make([]byte, 4)
		if _, err := io.ReadFull(c, got); err != nil {
			return err
		}
		if !bytes.Equal(got, []byte{0x20, 2, 0, 0}) {
			return fmt.Errorf("CONNACK % x", got)
		}
		return nil
	}
	roots := x509.NewCertPool()
	caPEM, _ := os.ReadFile(pki.CA)
	roots.AppendCertsFromPEM(caPEM)
	cert, err := tls.LoadX509KeyPair(pki.ClientCert, pki.ClientKey)
	if err != nil {
		t.Fatal(err)
	}
	addr := s.MQTTAddr()
	for _, c := range []struct {
		name string
		conf *tls.Config
	}{{"plaintext", nil}, {"TLS without a client certificate", &tls.Config{RootCAs: roots, ServerName: "127.0.0.1"}},
		{"TLS with a client certificate", &tls.Config{RootCAs: roots, ServerName: "127.0.0.1", Certificates: []tls.Certificate{cert}}}} {
		var conn net.Conn
		if c.conf == nil {
			conn, err = net.DialTimeout("tcp", addr, 5*time.Second)
		} else {
			conn, err = tls.DialWithDialer(&net.Dialer{Timeout: 5 * time.Second}, "tcp", addr, c.conf)
		}
		if err == nil {
			err = connack(conn)
			conn.Close()
		}
		if ok := c.conf != nil && c.conf.Certificates != nil; ok != (err == nil) {
			t.Errorf("MQTT %s: %v; want accepted %v", c.name, err, ok)
		}
	}
}

// A listener certificate without its key, a missing file, a file with no
// PEM in it and a client CA that parses to nothing are refused at start,
// naming the file.
func TestServerTLSRefusesBadFiles(t *testing.T) {
	pki := ingesttest.WritePKI(t, t.TempDir(), "Kestrel Moor test CA")
	dir := t.TempDir()
	junk := filepath.Join(dir, "junk.pem")
	if err := os.WriteFile(junk, []byte("not a certificate\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	badCA := filepath.Join(dir, "bad-ca.pem")
	if err := os.WriteFile(badCA, []byte("-----BEGIN CERTIFICATE-----\nAAAA\n-----END CERTIFICATE-----\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	missing := filepath.Join(dir, "missing.pem")
	for _, c := range []struct {
		name          string
		cert, key, ca string
		want1, want2  string
	}{
		{"certificate without key", pki.ServerCert, "", "", "key", pki.ServerCert},
		{"key without certificate", "", pki.ServerKey, "", "certificate", pki.ServerKey},
		{"client CA without certificate", "", "", pki.CA, "certificate", "key"},
		{"missing certificate", missing, pki.ServerKey, "", "certificate", missing},
		{"certificate file without PEM", junk, pki.ServerKey, "", "certificate", junk},
		{"key file without PEM", pki.ServerCert, junk, "", "key", junk},
		{"key of another certificate", pki.ServerCert, pki.ClientKey, "", pki.ClientKey, "private key does not match"},
		{"client CA that does not parse", pki.ServerCert, pki.ServerKey, badCA, "client CA", badCA},
	} {
		_, err := StartServer(ServerConfig{StoreDir: t.TempDir(), MQTTPort: -1, TLSCert: c.cert, TLSKey: c.key, TLSClientCA: c.ca})
		if err == nil || !strings.Contains(err.Error(), c.want1) || !strings.Contains(err.Error(), c.want2) {
			t.Errorf("%s: %v; want %q and %q named", c.name, err, c.want1, c.want2)
		}
	}
}
