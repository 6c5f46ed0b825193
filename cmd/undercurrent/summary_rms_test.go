package main

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"undercurrent/report"
)

// TestSummaryRMSColumn: the terminal's rms column gives each fit's
// residual RMS to three significant figures with their trailing zeros, as
// the crew report's table of fits does ("1.00", not "1", beside "1.01";
// a trailing zero is a significant figure, so "1" claims less than
// "1.00"), and a dash for a fit that failed before estimating any (not 0,
// which would read as a perfect fit).
func TestSummaryRMSColumn(t *testing.T) {
	src := report.Source{Kind: report.KindLine, Current: 12.5, CurrentSigma: 0.1, Depth: 1.1, DepthSigma: 0.01}
	doc := &report.Document{Signal: report.Signal{Mode: report.SignalDC}}
	want := map[string]string{"T01": "1.00", "T02": "0.950", "T03": "12.0", "T04": "1.01", "T05": "-"}
	for _, g := range []report.Group{
		{Key: "T01", RMS: 1, OK: true, Status: "converged"},
		{Key: "T02", RMS: 0.95, OK: true, Status: "converged"},
		{Key: "T03", RMS: 12.04, OK: true, Status: "converged"},
		{Key: "T04", RMS: 1.0104, OK: true, Status: "converged"},
		{Key: "T05", Points: 1, Problem: "the fit failed: inverse: 1 readings are too few for a line fit"},
	} {
		if g.OK {
			g.Sources = []report.Source{src}
		}
		doc.Groups = append(doc.Groups, g)
	}
	var buf bytes.Buffer
	printSummary(&buf, doc, time.Second, 0)
	out := buf.String()
	lines := strings.Split(out, "\n")
	header := -1
	for i, l := range lines {
		if strings.HasPrefix(l, "group ") {
			header = i
		}
	}
	if header < 0 {
		t.Fatalf("no table:\n%s", out)
	}
	end := strings.Index(lines[header], "rms (nT)") + len("rms (nT)")
	for _, l := range lines[header+1:] {
		key, _, _ := strings.Cut(l, " ")
		w, ok := want[key]
		if !ok {
			continue
		}
		delete(want, key)
		r := []rune(l) // the columns are counted in characters ("±")
		if len(r) < end {
			t.Errorf("row %q ends before the rms column", l)
			continue
		}
		if got := strings.TrimSpace(string(r[end-9 : end])); got != w {
			t.Errorf("%s: rms %q, want %q\n%s", key, got, w, out)
		}
		if g := doc.Groups[key[2]-'1']; w != "-" {
			if html, _ := report.GroupRMS(&g); html != w {
				t.Errorf("%s: the report's table gives %q, the terminal %q", key, html, w)
			}
		}
	}
	if len(want) > 0 {
		t.Errorf("rows missing for %v:\n%s", want, out)
	}
}
