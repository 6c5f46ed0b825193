package calibrate

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLoadFileWords checks what the robustness review found in reading a
// calibration file: a UTF-8 byte order mark was refused as "invalid
// character 'ï'" (it is read now), a bad date gave Go's layout text
// ("parsing time ... as \"2006-01-02T15:04:05Z07:00\"") and now names the
// date and where it is, a file cut short was called "not a calibration
// file" and now is said to be cut short there, an offset of 1e12 nT and a
// mirrored matrix (negative determinant, which calibrate never writes)
// were accepted. Invented values.
func TestLoadFileWords(t *testing.T) {
	dir := t.TempDir()
	const good = "{\"version\": 1, \"method\": \"zero\",\n \"created\": \"2026-11-30T09:12:00Z\",\n \"offset_nt\": [1, 2, 3], \"matrix\": [[1,0,0],[0,1,0],[0,0,1]]}\n"
	write := func(body string) string {
		p := filepath.Join(dir, "cal.json")
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	if c, err := Load(write("\xef\xbb\xbf" + good)); err != nil || c.Offset != [3]float64{1, 2, 3} {
		t.Errorf("with a BOM: %v", err)
	}
	for _, tc := range []struct{ name, body, want string }{
		{"bad date", strings.Replace(good, "2026-11-30T09:12:00Z", "not a date", 1), `cal.json:2:13: "not a date" is not a date and time: created and logs_taken's first and last are RFC 3339 times`},
		{"cut", good[:60], "cal.json:2:28: the file ends here, inside its JSON: a calibration file cut short"},
		{"huge offset", strings.Replace(good, "[1, 2, 3]", "[1e12, 2, 3]", 1), "offset_nt[0] is 1e+12 nT, beyond +-1e+06 nT"},
		{"mirrored", strings.Replace(good, "[[1,0,0]", "[[-1,0,0]", 1), "matrix has a negative determinant (-1): it mirrors an axis"},
	} {
		_, err := Load(write(tc.body))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.name, err, tc.want)
		}
		if err != nil && strings.Contains(err.Error(), "2006-01-02") {
			t.Errorf("%s: Go's layout text in %q", tc.name, err)
		}
	}
}
