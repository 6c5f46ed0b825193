package report

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestWritersValidUTF8: whatever bytes a name holds, every file of the
// report is valid UTF-8 (RFC 3629), as results.csv's readers and the
// page's "<meta charset="utf-8">" expect: text that is not is written
// with U+FFFD. Before, a traverse "\xd6l" and a site "Gr\xfcne Aue" from a
// Latin-1 log went into results.csv, findings.csv and report.html as
// raw bytes, which a browser shows as "\uFFFD" and a strict CSV reader
// refuses. Names that are UTF-8 are written as they are.
func TestWritersValidUTF8(t *testing.T) {
	d := fenwickLane(false)
	d.Site = "Umspannwerk Gr\xfcne Aue"
	d.Title = "Leitung Stra\xdfe Nord"
	d.Groups[0].Key = "\xd6l"
	d.Groups[1].Key = "Höhenweg"
	dir := t.TempDir()
	if err := WriteFiles(dir, d); err != nil {
		t.Fatal(err)
	}
	files, err := filepath.Glob(filepath.Join(dir, "*"))
	if err != nil || len(files) < 3 {
		t.Fatalf("files %q, %v", files, err)
	}
	seen := map[string]bool{}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		seen[filepath.Base(f)] = true
		if i := firstBad(b); i >= 0 {
			t.Errorf("%s is not valid UTF-8 at byte %d: %q", filepath.Base(f), i, b[max(0, i-20):min(len(b), i+20)])
		}
	}
	for _, want := range []string{"results.csv", "findings.csv", "report.html"} {
		if !seen[want] {
			t.Errorf("no %s among %v", want, files)
		}
	}
	b, _ := os.ReadFile(filepath.Join(dir, "results.csv"))
	if !strings.Contains(string(b), "\uFFFDl") || !strings.Contains(string(b), "Höhenweg") {
		t.Errorf("results.csv lacks the groups \"\\uFFFDl\" and \"Höhenweg\"")
	}
}

func firstBad(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n == 1 {
			return i
		}
		i += n
	}
	return -1
}
