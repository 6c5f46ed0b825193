package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestInspectLogWithoutTime: inspect describes a log without a time
// column, which calibrate reads, instead of refusing it: "time: none"
// saying it is fit for calibrate only, no sampling, the field columns
// with where their unit came from, and the unit check. Before, inspect
// refused it ("no column for time"), so the tool meant for checking how a
// --zero log's unit was read could not open the log. The field is the
// Earth's (about 50 000 nT; IGRF) written in µT under nT-less names: the
// check says µT, as for a log with time.
func TestInspectLogWithoutTime(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "kestrel-spin-no-clock.csv")
	body := "bx,by,bz\n-0.42,17.60,-46.90\n17.61,0.43,-46.91\n-0.41,-17.59,-46.89\n"
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := runCmd("inspect", path)
	if code != 0 {
		t.Fatalf("inspect on a log without time: exit %d, stderr %q", code, errOut)
	}
	for _, want := range []string{
		"rows   3",
		"time   none: the log has no time column: it is fit for calibrate only",
		"(absent: no time)",
		"probably in uT (try --unit bx=uT,by=uT,bz=uT)",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "sampling") || strings.Contains(out, "missing values") {
		t.Errorf("inspect output speaks of sampling or missing times for a log without time:\n%s", out)
	}
	code, out, errOut = runCmd("inspect", "--json", path)
	if code != 0 {
		t.Fatalf("inspect --json: exit %d, stderr %q", code, errOut)
	}
	var doc struct {
		NoTime  bool `json:"no_time"`
		Columns []struct {
			Column   string `json:"column"`
			UnitFrom string `json:"unit_from"`
			Missing  int    `json:"missing"`
		} `json:"columns"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if !doc.NoTime || len(doc.Columns) != 4 || doc.Columns[0].Column != "time" || doc.Columns[0].Missing != 0 || doc.Columns[1].UnitFrom != "default" {
		t.Errorf("inspect --json: %+v; want no_time, the time column absent with nothing missing, bx's unit by default", doc)
	}
}
