package live

import (
	"strings"
	"testing"
)

// The embedded broker may run without accounts only on loopback
// (127.0.0.0/8 and ::1 are loopback by RFC 1122 and RFC 4291; "" is the
// default 127.0.0.1; "localhost" by name), or off it with the explicit
// allow_anonymous; with users or a token it may listen anywhere.
func TestCheckEmbeddedBrokerOffLoopback(t *testing.T) {
	cases := []struct {
		name   string
		broker string
		refuse bool
	}{
		{"defaults", ``, false},
		{"loopback", `listen = "127.0.0.2:4222"` + "\n" + `mqtt = "127.0.0.2:1883"`, false},
		{"ipv6 loopback", `listen = "[::1]:4222"` + "\n" + `mqtt = "off"`, false},
		{"localhost", `listen = "localhost:4222"` + "\n" + `mqtt = "localhost:1883"`, false},
		{"empty host", `listen = ":4222"` + "\n" + `mqtt = ":1883"`, false},
		{"every interface", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"`, true},
		{"every interface, mqtt off", `listen = "[::]:4222"` + "\n" + `mqtt = "off"`, true},
		{"LAN address", `listen = "192.0.2.7:4222"` + "\n" + `mqtt = "192.0.2.7:1883"`, true},
		{"host name", `listen = "gateway-hub:4222"` + "\n" + `mqtt = "off"`, true},
		{"opted in", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"` + "\nallow_anonymous = true", false},
		{"token", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"` + "\n" + `token = "t0k"`, false},
		{"users", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"` + "\n[[broker.users]]\nname = \"a\"\npassword = \"b\"", false},
		// TLS alone hides the traffic but lets anyone connect; client
		// certificates required (mutual TLS) authenticate.
		{"TLS only", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"` + "\n" + `listen_tls_cert = "b.pem"` + "\n" + `listen_tls_key = "b-key.pem"`, true},
		{"mutual TLS", `listen = "0.0.0.0:4222"` + "\n" + `mqtt = "0.0.0.0:1883"` + "\n" + `listen_tls_cert = "b.pem"` + "\n" + `listen_tls_key = "b-key.pem"` + "\n" + `listen_tls_client_ca = "ca.pem"`, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := testSite(t, strings.Replace(testSiteText, "[[asset]]", "[broker]\n"+tc.broker+"\n\n[[asset]]", 1))
			err := s.CheckEmbeddedBroker()
			if tc.refuse != (err != nil) {
				t.Fatalf("CheckEmbeddedBroker: %v; want refused %v", err, tc.refuse)
			}
			if err != nil && (!strings.Contains(err.Error(), "off loopback") || !strings.Contains(err.Error(), "allow_anonymous = true")) {
				t.Errorf("refusal %q does not say why and how to allow it", err)
			}
			if open := s.OpenBroker(); (open != "") != (tc.refuse || tc.name == "opted in") {
				t.Errorf("OpenBroker %q", open)
			}
		})
	}
}
