package live

import (
	"path/filepath"
	"strings"
	"testing"
	"time"
	"undercurrent/ingest/ingesttest"
)

func TestExampleSiteLoads(t *testing.T) {
	s, err := LoadSite(filepath.Join(ingesttest.RepoRoot(t), "testdata", "site", "harrow-fen.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Assets) != 2 {
		t.Fatalf("%d assets, want 2", len(s.Assets))
	}
	fl := s.Asset("fenwick-lane")
	if fl == nil || fl.Mode != "ac" || fl.Frequency != 50 || len(fl.Sensors) != 5 || len(fl.Conductors) != 2 {
		t.Fatalf("fenwick-lane parsed as %+v", fl)
	}
	if fl.Window.Duration != time.Second || fl.Alarms.MaxImbalance != 5 {
		t.Errorf("window %v, max_imbalance %v", fl.Window, fl.Alarms.MaxImbalance)
	}
	km := s.Asset("kestrel-moor")
	if km == nil || km.Model != "commission" || km.Commission.Duration != 2*time.Minute {
		t.Fatalf("kestrel-moor parsed as %+v", km)
	}
	if s.Service.LeaseTTL.Duration != 5*time.Second || len(s.Broker.Users) != 2 {
		t.Errorf("service %+v broker users %d", s.Service, len(s.Broker.Users))
	}
}

const minimalSite = `
[[asset]]
name = "fenwick-lane"
  [[asset.sensor]]
  name = "s1"
  position = [0, 0, 0.3]
  [[asset.conductor]]
  name = "go"
  point = [0, 0, -1]
  direction = [0, 1, 0]
`

func TestParseSiteErrors(t *testing.T) {
	cases := []struct {
		name, text, want string
	}{
		{"syntax error gives line and column", "name = \"x\"\n[[asset]] x\n", "site.toml:2:"},
		{"unknown key", minimalSite + "  [asset.alarms]\n  max_currnt = 4\n", "unknown key asset.alarms.max_currnt"},
		{"bad mode", strings.Replace(minimalSite, `name = "fenwick-lane"`, "name = \"fenwick-lane\"\nmode = \"hvdc\"", 1), `mode "hvdc"`},
		{"ac without frequency", strings.Replace(minimalSite, `name = "fenwick-lane"`, "name = \"fenwick-lane\"\nmode = \"ac\"", 1), "needs a frequency"},
		{"bad duration", strings.Replace(minimalSite, `name = "fenwick-lane"`, "name = \"fenwick-lane\"\nwindow = \"fortnight\"", 1), `"fortnight" is not a duration`},
		{"bad asset name", strings.Replace(minimalSite, `"fenwick-lane"`, `"fenwick lane"`, 1), `asset 1: name`},
		{"zero direction", strings.Replace(minimalSite, "direction = [0, 1, 0]", "direction = [0, 0, 0]", 1), "direction is zero"},
		{"no conductors for fixed", strings.Split(minimalSite, "  [[asset.conductor]]")[0], `needs at least one [[asset.conductor]]`},
		{"no assets", "name = \"empty\"\n", "no [[asset]] tables"},
		{"balance names unknown conductor", minimalSite + "  [asset.alarms]\n  balance = [\"go\", \"back\"]\n", `conductor "back"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseSite("site.toml", []byte(tc.text))
			if err == nil {
				t.Fatalf("accepted; want an error containing %q", tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "live: site.toml") {
				t.Fatalf("error %q, want one starting \"live: site.toml\" containing %q", err, tc.want)
			}
		})
	}
}

func TestParseSiteDefaults(t *testing.T) {
	s, err := ParseSite("site.toml", []byte(minimalSite))
	if err != nil {
		t.Fatal(err)
	}
	a := s.Assets[0]
	if a.Mode != "dc" || a.Model != "fixed" || a.Window.Duration != time.Second || a.Alarms.MaxChi2 != 25 {
		t.Errorf("defaults: %+v", a)
	}
	if s.Service.HTTP != "127.0.0.1:8470" || s.Broker.Listen != "127.0.0.1:4222" || s.Service.MaxMessageBytes != 1<<20 {
		t.Errorf("service defaults: %+v %+v", s.Service, s.Broker)
	}
}
