package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCalibrateReferenceChecked: --reference is the site's field magnitude
// in nT. A value outside the Earth's surface range (about 22 000 to
// 67 000 nT in the IGRF; from memory) is refused before any work, with a
// hint when it looks like µT; one within it but far (over 10%) from the
// size the sensor reads the spin's field as is a mistyped value, refused
// too: a typo of 5009.5 for 50095 made every current ten times too small,
// every fit sound (found in review). The walk-through's own value is
// accepted.
func TestCalibrateReferenceChecked(t *testing.T) {
	dir := t.TempDir()
	spin := spinLog(t, dir)
	out := filepath.Join(dir, "cal.json")
	for _, c := range []struct{ ref, want string }{
		{"5009.5", "the Earth's field at the surface is 20000-70000 nT"},
		{"50.0954", "in µT? 50.0954 µT is 50095.4 nT"},
		{"40000", "a magnetometer's scale is not that far out"},
	} {
		code, _, stderr := cli(t, "calibrate", "--spin", spin, "--reference", c.ref, "-o", out)
		if code != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("--reference %s: exit %d, %s", c.ref, code, stderr)
		}
		if _, err := os.Stat(out); err == nil {
			t.Fatalf("--reference %s: a refused run wrote %s", c.ref, out)
		}
	}
	mustCLI(t, "calibrate", "--spin", spin, "--reference", "50095.4", "-o", out)
}
