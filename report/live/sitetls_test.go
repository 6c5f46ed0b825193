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
