package live

import "testing"

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
			refusedAtValue(t, c.old, c.new, c.want)
		})
	}
	// A sensor 5 cm from a conductor is allowed.
	text, _ := harrowFenText(t, `position = [0.5, 0.0, 0.3]`, `position = [0.15, 0.0, -0.75]`)
	if _, err := ParseSite("site.toml", []byte(text)); err != nil {
		t.Errorf("a sensor 5 cm from a conductor: %v", err)
	}
}
