package live

import (
	"strconv"
	"strings"
	"testing"
)

// With model = "commission" the geometry is fitted as infinite lines, so
// a conductor's kind other than "line", and its from and to, are refused
// at their line and column, saying so and naming model = "fixed" with
// kind = "segment" for finite bars. Before, they were accepted and
// ignored (any kind string passed): a user who described an L-shaped bar
// and its risers as segments was given four infinite lines unawares.
func TestSiteCommissionRefusesSegments(t *testing.T) {
	for _, c := range []struct {
		name, add, key string
	}{
		{"segment", "  kind = \"segment\"\n  from = [0.0, -1.5, -0.8]\n  to = [0.0, 0.5, -0.8]\n", "kind"},
		{"any kind", "  kind = \"bar\"\n", "kind"},
		{"from", "  point = [0.0, 0.0, -1.2]\n  from = [0.0, -1.5, -0.8]\n", "from"},
		{"to", "  to = [0.0, 0.5, -0.8]\n", "to"},
	} {
		t.Run(c.name, func(t *testing.T) {
			text, line := harrowFenText(t, "  name = \"pipe\"\n", "  name = \"pipe\"\n"+c.add)
			lines := strings.Split(text, "\n")
			at := 0
			for i := line; i < len(lines); i++ {
				if strings.HasPrefix(strings.TrimSpace(lines[i]), c.key+" =") {
					at = i + 1
					break
				}
			}
			col := strings.Index(lines[at-1], "=") + 3
			_, err := ParseSite("site.toml", []byte(text))
			if err == nil {
				t.Fatal("accepted")
			}
			msg := err.Error()
			for _, w := range []string{"site.toml:" + strconv.Itoa(at) + ":" + strconv.Itoa(col) + ": ", `conductor "pipe"`, "fits infinite lines", `model = "fixed"`, `kind = "segment"`} {
				if !strings.Contains(msg, w) {
					t.Errorf("%q does not say %q", msg, w)
				}
			}
		})
	}
	// kind = "line" says what commissioning fits: accepted.
	text, _ := harrowFenText(t, "  name = \"pipe\"\n", "  name = \"pipe\"\n  kind = \"line\"\n")
	if _, err := ParseSite("site.toml", []byte(text)); err != nil {
		t.Errorf("kind = \"line\": %v", err)
	}
}
