package live

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// harrowFenText returns the bundled two-asset site file
// (testdata/site/harrow-fen.toml) with the first occurrence of old
// replaced by new, and the 1-based line of the replacement.
func harrowFenText(t *testing.T, old, new string) (string, int) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(ingesttest.RepoRoot(t), "testdata", "site", "harrow-fen.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	i := strings.Index(text, old)
	if i < 0 {
		t.Fatalf("%q is not in the site file", old)
	}
	return text[:i] + new + text[i+len(old):], strings.Count(text[:i], "\n") + 1
}

// refusedAtValue parses the bundled site file with old replaced by new,
// checks that it is refused at the new value's line and column (just
// after "= ") and that the message says each of want, and returns the
// message.
func refusedAtValue(t *testing.T, old, new string, want []string) string {
	t.Helper()
	text, line := harrowFenText(t, old, new)
	_, err := ParseSite("site.toml", []byte(text))
	if err == nil {
		t.Fatal("the bad value was accepted")
	}
	msg := err.Error()
	col := strings.Index(strings.Split(text, "\n")[line-1], "=") + 3
	at := "site.toml:" + strconv.Itoa(line) + ":" + strconv.Itoa(col) + ": "
	if !strings.Contains(msg, at) {
		t.Errorf("%q does not point at line %d column %d (%q)", msg, line, col, at)
	}
	for _, w := range want {
		if !strings.Contains(msg, w) {
			t.Errorf("%q does not say %q", msg, w)
		}
	}
	return msg
}

// TestSiteValueErrorLine: a value the decoder refuses in the FIRST of two
// [[asset]] tables (or in a sensor of the first) is reported at its own
// line, with the key and the offending text in plain words. Before, the
// TOML library gave the line of the LAST key of that name in the file
// (the second asset's valid window, the last sensor's position), with its
// "toml:" prefix and Go type names ("destination has type float").
func TestSiteValueErrorLine(t *testing.T) {
	for _, c := range []struct {
		name, old, new string
		want           []string
	}{
		{"duration", `window = "1s"`, `window = "1 parsec"`, []string{`"1 parsec" is not a duration`}},
		{"array length", `position = [0.5, 0.0, 0.3]`, `position = [0.5, 0.0]`, []string{"key asset.sensor.position = [0.5, 0.0]", "want 3 values, found 2"}},
		{"type", `frequency = 50.0`, `frequency = "fifty"`, []string{`key asset.frequency = "fifty"`, "want a number, found a string"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			msg := refusedAtValue(t, c.old, c.new, c.want)
			for _, bad := range []string{": toml: ", "toml: line", "destination has type", "TOML array"} {
				if strings.Contains(msg, bad) {
					t.Errorf("%q holds the library's wording %q", msg, bad)
				}
			}
		})
	}
}

// TestSiteSettingErrorLine: a [service] or [broker] value that decodes
// but is out of range (a store_sync that is neither "always" nor a
// positive duration, a lease_ttl under 500 ms, a replica count over 5) is
// refused at its own line and column, as values the decoder refuses are.
// Before, the message named the site file only ("site.toml:
// broker.store_sync \"often\": ...").
func TestSiteSettingErrorLine(t *testing.T) {
	for _, c := range []struct {
		old, new, want string
	}{
		{`# store_sync = "always"`, `store_sync = "often"`, `broker.store_sync "often": want "always"`},
		{`# store_sync = "always"`, `store_sync = "-1s"`, `broker.store_sync "-1s"`},
		{`lease_ttl = "5s"`, `lease_ttl = "100ms"`, `service.lease_ttl 100ms: want at least 500ms`},
		{`replicas = 1`, `replicas = 7`, `broker.replicas 7: want 1 to 5`},
		{`max_message_bytes = 1048576`, `max_message_bytes = -5`, `service.max_message_bytes -5`},
	} {
		t.Run(c.new, func(t *testing.T) {
			text, line := harrowFenText(t, c.old, c.new)
			_, err := ParseSite("site.toml", []byte(text))
			if err == nil {
				t.Fatal("the bad value was accepted")
			}
			msg := err.Error()
			col := strings.Index(strings.Split(text, "\n")[line-1], "=") + 3
			at := "site.toml:" + strconv.Itoa(line) + ":" + strconv.Itoa(col) + ": "
			if !strings.Contains(msg, at) {
				t.Errorf("%q does not point at line %d column %d (%q)", msg, line, col, at)
			}
			if !strings.Contains(msg, c.want) {
				t.Errorf("%q does not say %q", msg, c.want)
			}
		})
	}
}

// TestSiteMissingCalibrationFound: a sensor's calibration file that does
// not exist (or is not a calibration) is refused when the site file is
// read, naming the site file, the line of the calibration key and the
// file, in the "FILE: cannot read: REASON" form. Before, it was found only
// when the asset's worker started, after the embedded broker was up.
func TestSiteMissingCalibrationFound(t *testing.T) {
	missing := filepath.Join(t.TempDir(), "absent.json")
	text, line := harrowFenText(t, `# calibration = "cal/fl-w2.json"`, `calibration = "`+missing+`"`)
	_, err := ParseSite("site.toml", []byte(text))
	if err == nil {
		t.Fatal("a missing calibration file was accepted")
	}
	at := "site.toml:" + strconv.Itoa(line) + ":"
	want := "calibration " + missing + ": cannot read: "
	if msg := err.Error(); !strings.Contains(msg, at) || !strings.Contains(msg, want) || !strings.Contains(msg, "fl-w2") {
		t.Errorf("%q; want %q, %q and the sensor", msg, at, want)
	}
	// A file that is there but is not a calibration is refused too.
	notCal := filepath.Join(t.TempDir(), "notes.json")
	if err := os.WriteFile(notCal, []byte(`{"hello": 1}`), 0o644); err != nil {
		t.Fatal(err)
	}
	text, line = harrowFenText(t, `# calibration = "cal/fl-w2.json"`, `calibration = "`+notCal+`"`)
	if _, err := ParseSite("site.toml", []byte(text)); err == nil || !strings.Contains(err.Error(), "site.toml:"+strconv.Itoa(line)+":") {
		t.Errorf("a file that is not a calibration: %v; want it refused at line %d", err, line)
	}
}
