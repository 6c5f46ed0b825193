package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// serve refuses a bad --http address before it connects to the broker,
// and does not check [[broker.users]] (accounts of the embedded broker
// only) when --broker names an external one; without --broker they are
// still checked. Nothing listens on the --broker port (46199), so a
// serve that gets as far as connecting fails there instead.
func TestServeStartChecksBeforeBroker(t *testing.T) {
	site, err := os.ReadFile(filepath.Join("..", "..", "testdata", "site", "harrow-fen.toml"))
	if err != nil {
		t.Fatal(err)
	}
	blank := filepath.Join(t.TempDir(), "blank-gateway.toml")
	if err := os.WriteFile(blank, []byte(strings.Replace(string(site), `password = "change-me-gateway"`, `password = ""`, 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	none := "nats://127.0.0.1:46199"
	cases := []struct {
		name      string
		args      []string
		want, not string
	}{
		{"bad --http before the broker", []string{"serve", "--config", "../../testdata/site/harrow-fen.toml", "--broker", none, "--http", "127.0.0.1:4620x"}, "--http", "connect"},
		{"users not checked with --broker", []string{"serve", "--config", blank, "--broker", none, "--http", "-"}, "connect " + none, "broker.users"},
		{"users checked for the embedded broker", []string{"serve", "--config", blank, "--data", t.TempDir(), "--http", "-"}, "broker.users[2]: name and password are required", "connect"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := run(context.Background(), tc.args, &out, &errOut)
			if code == 0 || !strings.Contains(errOut.String(), tc.want) || strings.Contains(errOut.String(), tc.not) {
				t.Fatalf("exit %d, stderr %q; want a failure naming %q and not %q", code, errOut.String(), tc.want, tc.not)
			}
		})
	}
}
