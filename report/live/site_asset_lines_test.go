package live

import (
	"strconv"
	"strings"
	"testing"
)

// TestSiteAssetValueLine: an [[asset]] value that decodes but that
// validate refuses (mode, frequency, window against the frequency, model,
// commission, noise, earth_field, a sensor's or a conductor's name listed
// twice or not a valid name, range_nt, a zero direction, a kind, the
// alarm settings) is refused at the line and column of its value, in its
// own asset, sensor or conductor. Before, these named the asset and the
// file but no line ("site.toml: asset \"fenwick-lane\": mode ...").
func TestSiteAssetValueLine(t *testing.T) {
	for _, c := range []struct {
		name, old, new string
		want           []string
	}{
		{"mode", `mode = "ac"`, `mode = "hybrid"`, []string{`asset "fenwick-lane": mode "hybrid"`}},
		{"nan frequency", `frequency = 50.0`, `frequency = nan`, []string{`asset "fenwick-lane": frequency NaN`}},
		{"zero frequency", `frequency = 50.0`, `frequency = 0.0`, []string{`frequency 0: mode "ac" needs`}},
		{"window under two cycles", `window = "1s"`, `window = "30ms"`, []string{"fewer than two cycles at 50 Hz"}},
		{"model", `model = "fixed"`, `model = "guess"`, []string{`model "guess"`}},
		{"commission shorter than window", `commission = "2m"`, `commission = "5s"`, []string{`asset "kestrel-moor": commission 5s is shorter`}},
		{"noise", `noise = 2.0`, `noise = -1.0`, []string{"noise -1"}},
		{"noise, second asset", `noise = 0.5`, `noise = nan`, []string{`asset "kestrel-moor": noise NaN`}},
		{"earth_field", `noise = 0.5`, `earth_field = [5.0, 1.0]`, []string{`asset "kestrel-moor": earth_field [5 1]`}},
		{"sensor listed twice", `name = "fl-w1"`, `name = "fl-w2"`, []string{`sensor "fl-w2" listed twice`}},
		{"bad sensor name", `name = "fl-e1"`, `name = "fl.e1"`, []string{"sensor 3: broker: name \"fl.e1\""}},
		{"range_nt", `orientation = [90.0, 0.0, 0.0]`, `range_nt = -5.0`, []string{`sensor "fl-n1": range_nt -5`}},
		{"conductor listed twice", `name = "return"`, `name = "go"`, []string{`conductor "go" listed twice`}},
		{"zero direction", `direction = [0.0, 1.0, 0.0]`, `direction = [0.0, 0.0, 0.0]`, []string{`conductor "go": direction is zero`}},
		{"kind", `kind = "line"`, `kind = "arc"`, []string{`conductor "go": kind "arc"`}},
		{"alarm threshold", `max_current = 400.0`, `max_current = -1.0`, []string{"max_current -1"}},
		{"alarm threshold, second asset", `step = 0.5`, `step = nan`, []string{`asset "kestrel-moor": alarms: thresholds must be non-negative (got step NaN)`}},
		{"balance", `balance = ["go", "return"]`, `balance = ["go", "earth"]`, []string{`balance names conductor "earth"`}},
		{"asset listed twice", `name = "kestrel-moor"`, `name = "fenwick-lane"`, []string{`asset "fenwick-lane" listed twice`}},
		{"bad asset name", `name = "kestrel-moor"`, `name = "kestrel moor"`, []string{`asset 2: name`}},
	} {
		t.Run(c.name, func(t *testing.T) {
			refusedAtValue(t, c.old, c.new, c.want)
		})
	}
}

// TestSiteAbsentKeyLine: a refusal for a key the file leaves out names
// the key that asked for it or, with none, the header of the table: mode
// "ac" without a frequency names the mode line, and a conductor without
// a direction names its [[asset.conductor]] header. Before, neither named
// a line.
func TestSiteAbsentKeyLine(t *testing.T) {
	for _, c := range []struct {
		name, old, at, want string
	}{
		{"frequency absent", "frequency = 50.0\n", `mode = "ac"`, `mode "ac" needs a frequency`},
		{"direction absent", "  direction = [0.0, 1.0, 0.0]\n", "  [[asset.conductor]]\n  name = \"go\"", `conductor "go": direction is zero`},
	} {
		t.Run(c.name, func(t *testing.T) {
			text, _ := harrowFenText(t, c.old, "")
			i := strings.Index(text, c.at)
			if i < 0 {
				t.Fatalf("%q is not in the site file", c.at)
			}
			line := strings.Count(text[:i], "\n") + 1
			_, err := ParseSite("site.toml", []byte(text))
			if err == nil {
				t.Fatal("accepted")
			}
			if msg := err.Error(); !strings.Contains(msg, "site.toml:"+strconv.Itoa(line)+":") || !strings.Contains(msg, c.want) {
				t.Errorf("%q: want line %d and %q", msg, line, c.want)
			}
		})
	}
}

// TestSiteTLSPairLine: tls_cert without tls_key (or the other way round)
// is refused at the line of the one given. Before, the message named the
// file only.
func TestSiteTLSPairLine(t *testing.T) {
	for _, key := range []string{"tls_cert", "tls_key"} {
		text := strings.Replace(testSiteText, "[service]", "[broker]\n"+key+" = \"pki/worker.pem\"\n\n[service]", 1)
		line := strings.Count(text[:strings.Index(text, key+" =")], "\n") + 1
		_, err := ParseSite("kestrel.toml", []byte(text))
		at := "kestrel.toml:" + strconv.Itoa(line) + ":" + strconv.Itoa(len(key)+4) + ": "
		if err == nil || !strings.Contains(err.Error(), at) || !strings.Contains(err.Error(), "give tls_cert and tls_key together") {
			t.Errorf("%s alone: %v; want it refused at %q", key, err, at)
		}
	}
}
