package live

import (
	"path/filepath"
	"strings"
	"testing"
)

// The [broker] TLS and credentials keys: a client certificate needs its
// key, and relative files are taken from the site file's directory, as
// calibration files are.
func TestSiteBrokerTLSKeys(t *testing.T) {
	text := strings.Replace(testSiteText, "[service]", "[broker]\ntls_ca = \"pki/ca.pem\"\ntls_cert = \"pki/worker.pem\"\ntls_key = \"/etc/uc/worker-key.pem\"\ncredentials = \"kestrel.creds\"\n\n[service]", 1)
	s, err := ParseSite(filepath.Join("sites", "kestrel.toml"), []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range [][2]string{
		{s.Broker.TLSCA, filepath.Join("sites", "pki", "ca.pem")},
		{s.Broker.TLSCert, filepath.Join("sites", "pki", "worker.pem")},
		{s.Broker.TLSKey, "/etc/uc/worker-key.pem"},
		{s.Broker.Credentials, filepath.Join("sites", "kestrel.creds")},
	} {
		if c[0] != c[1] {
			t.Errorf("path %q, want %q", c[0], c[1])
		}
	}
	bad := strings.Replace(testSiteText, "[service]", "[broker]\ntls_cert = \"pki/worker.pem\"\n\n[service]", 1)
	if _, err := ParseSite("kestrel.toml", []byte(bad)); err == nil || !strings.Contains(err.Error(), "tls_key") {
		t.Errorf("tls_cert without tls_key: %v; want tls_key asked for", err)
	}
}

// The embedded broker's listener keys: relative files are taken from the
// site file's directory, a certificate needs its key (and a key its
// certificate), and a client CA needs both, each refused naming its key.
func TestSiteBrokerListenTLSKeys(t *testing.T) {
	text := strings.Replace(testSiteText, "[service]", "[broker]\nlisten_tls_cert = \"pki/broker.pem\"\nlisten_tls_key = \"/etc/uc/broker-key.pem\"\nlisten_tls_client_ca = \"pki/ca.pem\"\n\n[service]", 1)
	s, err := ParseSite(filepath.Join("sites", "kestrel.toml"), []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range [][2]string{
		{s.Broker.ListenTLSCert, filepath.Join("sites", "pki", "broker.pem")},
		{s.Broker.ListenTLSKey, "/etc/uc/broker-key.pem"},
		{s.Broker.ListenTLSClientCA, filepath.Join("sites", "pki", "ca.pem")},
	} {
		if c[0] != c[1] {
			t.Errorf("path %q, want %q", c[0], c[1])
		}
	}
	for _, c := range []struct{ keys, want string }{
		{"listen_tls_cert = \"b.pem\"", "broker.listen_tls_key"},
		{"listen_tls_key = \"b-key.pem\"", "broker.listen_tls_cert"},
		{"listen_tls_client_ca = \"ca.pem\"", "broker.listen_tls_client_ca"},
	} {
		bad := strings.Replace(testSiteText, "[service]", "[broker]\n"+c.keys+"\n\n[service]", 1)
		if _, err := ParseSite("kestrel.toml", []byte(bad)); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s alone: %v; want %s named", c.keys, err, c.want)
		}
	}
}
