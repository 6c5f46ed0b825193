package main

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// cutLastGroup simulates the scenario at path and writes it to a log whose
// last group (the log's last column) keeps only its first share of
// readings, as a log cut short mid-traverse; it returns that log's path
// and the last group's key.
func cutLastGroup(t *testing.T, path string, share float64) (string, string) {
	t.Helper()
	dir := t.TempDir()
	full := filepath.Join(dir, "full.csv")
	mustCLI(t, "simulate", path, "-o", full)
	raw, err := os.ReadFile(full)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(raw), "\n")
	for len(lines) > 0 && strings.TrimSpace(lines[len(lines)-1]) == "" {
		lines = lines[:len(lines)-1]
	}
	groupOf := func(l string) string {
		l = strings.TrimRight(l, "\r\n")
		return l[strings.LastIndex(l, ",")+1:]
	}
	last := groupOf(lines[len(lines)-1])
	first := len(lines) - 1
	for first > 0 && groupOf(lines[first-1]) == last {
		first--
	}
	keep := first + int(share*float64(len(lines)-first))
	cut := filepath.Join(dir, fmt.Sprintf("cut%.0f.csv", 100*share))
	if err := os.WriteFile(cut, []byte(strings.Join(lines[:keep], "")), 0o644); err != nil {
		t.Fatal(err)
	}
	return cut, last
}

// cutDoc is what TestLocateLogCutMidTraverse reads of locate's document.
type cutDoc struct {
	Groups []struct {
		Key     string `json:"key"`
		OK      bool   `json:"ok"`
		Problem string `json:"problem"`
	} `json:"groups"`
	Findings []docFinding `json:"findings"`
}

// TestLocateLogCutMidTraverse: a log cut short partway through its last
// traverse, keeping 30 to 60 % of that traverse's readings, leaves a fit
// that sees one flank of the line's field. Before, that fit was called
// sound (Kestrel Moor, DC: "21 sound" with T21 cut to 30 %) and, on the
// demo (AC, two cables), drove a current-step finding on conductor 2
// between T30 and T31 (0.37 to 2.5 A "leaving" a cable that loses none
// there). Now the traverse is named as ending before it crosses the line
// (the log may be cut short), is not sound, and is in no step finding.
// No traverse of the whole logs is named so.
func TestLocateLogCutMidTraverse(t *testing.T) {
	kestrel := filepath.Join("..", "..", "testdata", "scenarios", "kestrel-moor-step.toml")
	demo := filepath.Join("..", "..", "testdata", "demo", "fenwick-lane.toml")
	cases := []struct {
		path  string
		share float64
		args  []string
	}{
		{kestrel, 0.3, nil},
		{kestrel, 0.45, nil},
		{kestrel, 0.6, nil},
		{demo, 0.45, []string{"--freq", "50", "--window", "0.1"}},
	}
	for _, c := range cases {
		log, last := cutLastGroup(t, c.path, c.share)
		doc := locateInto[cutDoc](t, append(append([]string{"--group-by", "group"}, c.args...), log)...)
		name := fmt.Sprintf("%s cut to %.0f%% of %s", filepath.Base(c.path), 100*c.share, last)
		found := false
		for _, g := range doc.Groups {
			if g.Key != last {
				continue
			}
			found = true
			if !strings.Contains(g.Problem, "traverse "+last+" ends before it crosses the line") && !strings.Contains(g.Problem, "traverse "+last+" ends less than one depth past the line") {
				t.Errorf("%s: its problem %q does not say that the traverse ends before it crosses the line", name, g.Problem)
			}
			if !strings.Contains(g.Problem, "the log may be cut short") {
				t.Errorf("%s: its problem %q does not say that the log may be cut short", name, g.Problem)
			}
		}
		if !found {
			t.Fatalf("%s: no group %s in the document", name, last)
		}
		poor := false
		for _, f := range doc.Findings {
			if f.Kind == "poor-fit" && slices.Contains(f.Groups, last) && f.Severity != "info" {
				poor = true
			}
			if (f.Kind == "current-step" || f.Kind == "current-change") && slices.Contains(f.Groups, last) {
				t.Errorf("%s: a %s finding on conductor %d takes in %s: %s", name, f.Kind, f.Conductor, last, f.Message)
			}
		}
		if !poor {
			t.Errorf("%s: no poor-fit caution names %s, so it is counted sound", name, last)
		}
	}
	// The whole logs: no traverse named so.
	for _, c := range cases[2:] {
		full := filepath.Join(t.TempDir(), "full.csv")
		mustCLI(t, "simulate", c.path, "-o", full)
		doc := locateInto[cutDoc](t, append(append([]string{"--group-by", "group"}, c.args...), full)...)
		for _, g := range doc.Groups {
			if strings.Contains(g.Problem, "cut short") {
				t.Errorf("whole %s: %s is named as cut short: %s", filepath.Base(c.path), g.Key, g.Problem)
			}
		}
	}
}
