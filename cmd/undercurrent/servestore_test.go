package main

import (
	"testing"

	"undercurrent/report/live"
)

// The embedded broker's store size could not be set from the site file
// (it was always most of the disk free at start): [broker]
// store_max_bytes reaches the server's JetStream store bound.
func TestEmbeddedConfigStoreMaxBytes(t *testing.T) {
	site, err := live.ParseSite("site.toml", []byte(`
[broker]
listen = "127.0.0.1:43222"
mqtt = "off"
store_max_bytes = 3_000_000_000
[[asset]]
name = "fenwick-lane"
  [[asset.sensor]]
  name = "s1"
  position = [0, 0, 0.3]
  [[asset.conductor]]
  name = "go"
  point = [0, 0, -1]
  direction = [0, 1, 0]
`))
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := embeddedConfig(site, t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	if cfg.MaxStore != 3_000_000_000 {
		t.Errorf("embedded broker store bound %d, want the site file's 3000000000", cfg.MaxStore)
	}
}
