package ingesttest

import (
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// PKI is the files of a throwaway certificate authority made for a test
// (WritePKI): the CA's certificate, a server certificate for 127.0.0.1,
// ::1 and localhost, and a client certificate, each with its key, all
// PEM.
type PKI struct {
	CA                    string
	ServerCert, ServerKey string
	ClientCert, ClientKey string
}

// WritePKI makes a new ECDSA P-256 certificate authority named caName,
// a server and a client certificate signed by it, valid from an hour ago
// for a day, and writes them to dir (ca.pem, server.pem, server-key.pem,
// client.pem, client-key.pem). Two calls make two unrelated authorities.
func WritePKI(t testing.TB, dir, caName string) PKI {
	t.Helper()
	write := func(name, typ string, der []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, pem.EncodeToMemory(&pem.Block{Type: typ, Bytes: der}), 0o600); err != nil {
			t.Fatal(err)
		}
		return p
	}
	caKey, caCert, caDER := newCert(t, caName, nil, nil, nil)
	sKey, _, sDER := newCert(t, "localhost", caCert, caKey, &x509.Certificate{
		DNSNames: []string{"localhost"}, IPAddresses: []net.IP{net.IPv4(127, 0, 0, 1), net.IPv6loopback}})
	cKey, _, cDER := newCert(t, caName+" client", caCert, caKey, &x509.Certificate{})
	return PKI{
		CA:         write("ca.pem", "CERTIFICATE", caDER),
		ServerCert: write("server.pem", "CERTIFICATE", sDER), ServerKey: write("server-key.pem", "EC PRIVATE KEY", ecKey(t, sKey)),
		ClientCert: write("client.pem", "CERTIFICATE", cDER), ClientKey: write("client-key.pem", "EC PRIVATE KEY", ecKey(t, cKey)),
	}
}

// newCert makes a certificate named name, signed by parent (a
// self-signed CA when parent is nil) with leaf's names.
func newCert(t testing.TB, name string, parent *x509.Certificate, parentKey *ecdsa.PrivateKey, leaf *x509.Certificate) (*ecdsa.PrivateKey, *x509.Certificate, []byte) {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	serial, err := rand.Int(rand.Reader, new(big.Int).Lsh(big.NewInt(1), 62))
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{
		SerialNumber: serial,
		Subject:      pkix.Name{CommonName: name},
		NotBefore:    time.Now().Add(-time.Hour),
		NotAfter:     time.Now().Add(24 * time.Hour),
		KeyUsage:     x509.KeyUsageDigitalSignature,
		ExtKeyUsage:  []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth, x509.ExtKeyUsageClientAuth},
	}
	if leaf != nil {
		tmpl.DNSNames, tmpl.IPAddresses = leaf.DNSNames, leaf.IPAddresses
	}
	if parent == nil {
		tmpl.IsCA, tmpl.BasicConstraintsValid = true, true
		tmpl.KeyUsage |= x509.KeyUsageCertSign
		parent, parentKey = tmpl, key
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, parent, &key.PublicKey, parentKey)
	if err != nil {
		t.Fatal(err)
	}
	c, err := x509.ParseCertificate(der)
	if err != nil {
		t.Fatal(err)
	}
	return key, c, der
}

func ecKey(t testing.TB, k *ecdsa.PrivateKey) []byte {
	t.Helper()
	b, err := x509.MarshalECPrivateKey(k)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
