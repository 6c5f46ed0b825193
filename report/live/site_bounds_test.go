package live

import (
	"strconv"
	"strings"
	"testing"
)

// TestSiteBounds: a NaN, infinite or absurd sensor position or
// orientation, conductor point, a sensor placed on a conductor, a window
// of a million hours and a max_message_bytes past any memory are refused
// at their line and column with what is allowed. Before, each was
// accepted; with a NaN orientation serve ran and logged "window not
// solved ... phasor east is (NaN+NaNi)" every window, naming no key.
func TestSiteBounds(t *testing.T) {
	for _, c := range []struct {
		name, old, new string
		want           []string
	}{
		{"nan orientation", `orientation = [0.0, 0.0, 0.0]`, `orientation = [nan, 0.0, 0.0]`, []string{`sensor "fl-w2": orientation`, "within +-360"}},
		{"inf orientation", `orientation = [90.0, 0.0, 0.0]`, `orientation = [inf, 0.0, 0.0]`, []string{`sensor "fl-n1": orientation`}},
		{"nan position, second asset", `position = [0.0, -1.0, 0.5]`, `position = [nan, -1.0, 0.5]`, []string{`asset "kestrel-moor": sensor "km-b": position`, "within +-1e6"}},
		{"huge position", `position = [0.5, 0.0, 0.3]`, `position = [1e15, 0.0, 0.3]`, []string{`sensor "fl-e1": position`}},
		{"nan point", `point = [0.15, 0.0, -0.8]`, `point = [0.15, 0.0, nan]`, []string{`conductor "return": point`, "finite"}},
		{"sensor on conductor", `position = [0.5, 0.0, 0.3]`, `position = [0.15, 0.0, -0.8]`, []string{`sensor "fl-e1"`, `from conductor "return"`, "at least 0.01 m"}},
		{"huge window", `window = "10s"`, `window = "1000000h"`, []string{`asset "kestrel-moor": window`, "want 1ms to 24h0m0s"}},
		{"huge message", `max_message_bytes = 1048576`, `max_message_bytes = 9223372036854775807`, []string{"up to 67108864"}},
	} {
		t.Run(c.name, func(t *testing.T) {
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
			for _, w := range c.want {
				if !strings.Contains(msg, w) {
					t.Errorf("%q does not say %q", msg, w)
				}
			}
		})
	}
	// A sensor 5 cm from a conductor is allowed.
	text, _ := harrowFenText(t, `position = [0.5, 0.0, 0.3]`, `position = [0.15, 0.0, -0.75]`)
	if _, err := ParseSite("site.toml", []byte(text)); err != nil {
		t.Errorf("a sensor 5 cm from a conductor: %v", err)
	}
}
