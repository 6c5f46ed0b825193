package main

import (
	"bytes"
	"encoding/json"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"undercurrent/report"
)

// cautionsAfter checks that out lists every safety caution (report.Cautions)
// under a "cautions:" line that comes after the line starting with after
// and, when before is not empty, before the line starting with before.
func cautionsAfter(t *testing.T, what, out, after, before string) {
	t.Helper()
	lines := strings.Split(out, "\n")
	at, from, to := -1, -1, len(lines)
	for i, l := range lines {
		switch {
		case strings.HasPrefix(l, after) && at < 0:
			from = i
		case l == "cautions:":
			at = i
		case before != "" && strings.HasPrefix(l, before):
			to = i
		}
	}
	if at < 0 || from < 0 || at < from || at > to {
		t.Fatalf("%s: no \"cautions:\" line between %q and %q:\n%s", what, after, before, out)
	}
	for i, c := range report.Cautions {
		if at+1+i >= to || strings.TrimSpace(lines[at+1+i]) != c {
			t.Errorf("%s: caution %d is not %q:\n%s", what, i+1, c, out)
		}
	}
}

// TestSummaryCautions: the terminal summaries of locate and demo end with
// the safety cautions report.html opens with, after the findings and
// before the line saying where the results are, so that a crew reading
// only the terminal sees them; locate --json carries them in the
// document's "cautions" member instead.
func TestSummaryCautions(t *testing.T) {
	doc := &report.Document{
		Signal:   report.Signal{Mode: report.SignalDC},
		Groups:   []report.Group{{Key: "T01", Points: 21, RMS: 2, OK: true}},
		Findings: []report.Finding{{Kind: "shallow-cover", Severity: report.SeverityWarning, Message: "cover is less than the 0.60 m minimum (fixture)"}},
	}
	var buf bytes.Buffer
	printFindings(&buf, doc)
	cautionsAfter(t, "demo", buf.String(), "  warning  cover is less", "")
	buf.Reset()
	printSummary(&buf, doc, time.Second, 0)
	cautionsAfter(t, "locate", buf.String(), "  warning  cover is less", "")

	_, path := scenario(t, "two-conductors.toml")
	dir := t.TempDir()
	log := filepath.Join(dir, "two.csv")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "locate", "--group-by", "group", log, "-o", filepath.Join(dir, "res"))
	cautionsAfter(t, "locate -o", out, "findings", "results in ")
	js := mustCLI(t, "locate", "--group-by", "group", "--json", log)
	var top struct {
		Cautions []string `json:"cautions"`
	}
	if err := json.Unmarshal([]byte(js), &top); err != nil {
		t.Fatalf("locate --json: %v", err)
	}
	if !reflect.DeepEqual(top.Cautions, report.Cautions) {
		t.Errorf("locate --json cautions %q, want %q", top.Cautions, report.Cautions)
	}
}
