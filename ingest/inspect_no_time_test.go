package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestInspectWithoutTime: Inspect of a log without a time column, opened
// with WithTimeOptional, says so (NoTime), counts no missing times, gives
// no time span, and still checks the field's size: the Earth's field
// (22 000 to 67 000 nT; IGRF) written in µT under plain names is flagged
// as µT.
func TestInspectWithoutTime(t *testing.T) {
	path := filepath.Join(t.TempDir(), "shield-less-spin.csv")
	if err := os.WriteFile(path, []byte("bx,by,bz\n-0.42,17.60,-46.90\n17.61,0.43,-46.91\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Inspect(path); err == nil {
		t.Errorf("Inspect without WithTimeOptional: no error; want the missing time column")
	}
	in, err := Inspect(path, WithTimeOptional(true))
	if err != nil {
		t.Fatal(err)
	}
	if !in.NoTime || in.Rows != 2 || in.Time.Duration != 0 || in.Time.Interval != 0 {
		t.Errorf("NoTime %v, rows %d, time %+v; want no time, 2 rows, no span", in.NoTime, in.Rows, in.Time)
	}
	if tc := colStats(in, ColTime); tc == nil || tc.Missing != 0 {
		t.Errorf("time column %+v; want present, absent in the file, nothing missing", tc)
	}
	found := false
	for _, w := range in.Warnings {
		if strings.HasPrefix(w, "field:") && strings.Contains(w, "probably in uT") {
			found = true
		}
		if strings.HasPrefix(w, "missing values") {
			t.Errorf("warning %q: a log without time has no missing times", w)
		}
	}
	if !found {
		t.Errorf("warnings %q; want the field flagged as uT", in.Warnings)
	}
}
