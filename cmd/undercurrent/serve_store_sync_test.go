package main

import (
	"strings"
	"testing"
	"time"

	"undercurrent/report/live"
)

// The embedded broker acknowledged batches that it synced to the disk
// only every two minutes (nats-server's default, which it was started
// with and no setting could change), so a power cut could lose batches a
// gateway had been told were stored. [broker] store_sync reaches the
// server: "always" (every write synced before it is acknowledged) or a
// duration; unset keeps nats-server's default; anything else is refused
// naming the setting and its line and column.
func TestEmbeddedConfigStoreSync(t *testing.T) {
	parse := func(line string) (*live.Site, error) {
		return live.ParseSite("site.toml", []byte(`
[broker]
listen = "127.0.0.1:43222"
mqtt = "off"
`+line+`
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
	}
	for _, c := range []struct {
		line   string
		always bool
		every  time.Duration
	}{
		{``, false, 0},
		{`store_sync = "always"`, true, 0},
		{`store_sync = "10s"`, false, 10 * time.Second},
	} {
		site, err := parse(c.line)
		if err != nil {
			t.Errorf("%q: %v", c.line, err)
			continue
		}
		cfg, err := embeddedConfig(site, t.TempDir())
		if err != nil {
			t.Fatal(err)
		}
		if cfg.SyncAlways != c.always || cfg.SyncInterval != c.every {
			t.Errorf("%q: embedded broker sync always %v every %v; want %v, %v", c.line, cfg.SyncAlways, cfg.SyncInterval, c.always, c.every)
		}
	}
	for _, bad := range []string{`store_sync = "often"`, `store_sync = "-1s"`} {
		// Named at its line and column (line 5 of the text above, the
		// value after "store_sync = "), as other site-file values are.
		if _, err := parse(bad); err == nil || !strings.Contains(err.Error(), "site.toml:5:14: broker.store_sync") {
			t.Errorf("%q: error %v, want one naming site.toml:5:14 and broker.store_sync", bad, err)
		}
	}
}
