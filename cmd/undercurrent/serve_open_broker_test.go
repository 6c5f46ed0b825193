package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// Reviewer's case (rv17c finding 3): the example site file with the
// embedded broker's listeners on every interface and its accounts
// removed. Before, serve started with only an INFO line, and any host on
// the network could purge the estimate and alarm streams through the
// JetStream API with no credentials. Now serve refuses to start, before
// it opens the store, naming the addresses and the ways out (accounts, a
// token, loopback, or the explicit allow_anonymous).
func TestServeRefusesOpenBrokerOffLoopback(t *testing.T) {
	site, err := os.ReadFile(filepath.Join("..", "..", "testdata", "site", "harrow-fen.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(site)
	for _, r := range [][2]string{
		{`listen = "127.0.0.1:4222"`, `listen = "0.0.0.0:46197"`},
		{`mqtt = "127.0.0.1:1883"`, `mqtt = "0.0.0.0:46198"`},
		{"user = \"pipeline\"\npassword = \"change-me-pipeline\"\n", ""},
		{"[[broker.users]]\nname = \"pipeline\"\npassword = \"change-me-pipeline\"\n", ""},
		{"[[broker.users]]\n", ""},
		{"name = \"gateway\"\npassword = \"change-me-gateway\"\npublish = [\"uc.data.>\"]\n", ""},
	} {
		if !strings.Contains(text, r[0]) {
			t.Fatalf("site file has no %q to replace", r[0])
		}
		text = strings.Replace(text, r[0], r[1], 1)
	}
	open := filepath.Join(t.TempDir(), "open-broker.toml")
	if err := os.WriteFile(open, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	store := filepath.Join(t.TempDir(), "store")
	var out, errOut bytes.Buffer
	// Bounded, so that a serve that does start (the old behaviour) stops.
	ctx, cancel := context.WithTimeout(context.Background(), 15*time.Second)
	defer cancel()
	code := run(ctx, []string{"serve", "--config", open, "--data", store, "--http", "-"}, &out, &errOut)
	msg := errOut.String()
	for _, want := range []string{`listen = "0.0.0.0:46197"`, `mqtt = "0.0.0.0:46198"`, "[[broker.users]]", "allow_anonymous = true", "127.0.0.1"} {
		if code == 0 || !strings.Contains(msg, want) {
			t.Errorf("exit %d, stderr %q; want a refusal naming %q", code, msg, want)
		}
	}
	if strings.Contains(msg, "embedded broker started") {
		t.Errorf("the broker was started before the refusal: %q", msg)
	}
	if _, err := os.Stat(store); err == nil {
		t.Errorf("store %s created: serve should refuse before opening it", store)
	}
}
