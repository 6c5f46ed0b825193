package main

import (
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"undercurrent/report"
)

// TestLocateTableCoverAndFailedFits: the terminal's table of groups names
// what each depth is measured from, gives the cover first where the ground
// is known, and prints no numbers for a failed fit. Before, its one depth
// column was headed "depth (m)" over depths below the sensors, 0.30 m more
// than the cover with --sensor-height 0.3, and a fit that found no current
// printed "126 ± 182" A at 47.2 m and, 14 m past the cable's end, "0.09 ±
// 0.14" A at 0.636 m (review rv18a, findings 1 and 4). Cover is the depth
// below the ground (DOMAIN.md, minimum cover; NEC Table 300.5 states cover
// as the depth below grade). The readings are the end-past-traverse
// scenario's (testdata/scenarios/open: a 10 A line 1.0 m down ending at N
// 32 m), where the traverses past the end find no current.
func TestLocateTableCoverAndFailedFits(t *testing.T) {
	_, path := scenario(t, filepath.Join("open", "end-past-traverse.toml"))
	log := filepath.Join(t.TempDir(), "end.csv")
	mustCLI(t, "simulate", path, "-o", log)
	header := func(out string) string {
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, "group ") {
				return l
			}
		}
		t.Fatalf("no table:\n%s", out)
		return ""
	}
	failedRow := regexp.MustCompile(`(?m)^T1[012] +[0-9.]+ m +fit failed, no value +- .*fit failed: no current found`)
	for _, tc := range []struct {
		name  string
		args  []string
		heads []string // in order
		says  string
	}{
		{"ground given", []string{"--reference-z", "0"}, []string{"cover (m)"}, "cover is the depth below the ground at up = 0 m"},
		{"sensor height", []string{"--sensor-height", "0.3"}, []string{"cover (m)", "depth below sensors (m)"}, "cover is the depth below the ground: the depth below the sensors' mean height less the sensors' 0.30 m height"},
		{"no ground", nil, []string{"depth below sensors (m)"}, report.NoCoverSentence},
	} {
		out := mustCLI(t, append([]string{"locate", "--group-by", "group", log}, tc.args...)...)
		h := header(out)
		at := 0
		for _, want := range tc.heads {
			i := strings.Index(h[at:], want)
			if i < 0 {
				t.Errorf("%s: heading %q lacks %q in order", tc.name, h, want)
				break
			}
			at += i + len(want)
		}
		if strings.Contains(h, " depth (m)") || strings.Count(h, "(m)") != len(tc.heads) {
			t.Errorf("%s: heading %q: want only the columns %q beside chainage", tc.name, h, tc.heads)
		}
		if !strings.Contains(out, tc.says) {
			t.Errorf("%s: the terminal does not say %q:\n%s", tc.name, tc.says, out)
		}
		if n := len(failedRow.FindAllString(out, -1)); n != 3 {
			t.Errorf("%s: %d rows of T10-T12 marked as failed fits without values, want 3:\n%s", tc.name, n, out)
		}
		// Nothing but dashes between the failed fit's words and its rms.
		for _, l := range strings.Split(out, "\n") {
			if i := strings.Index(l, "fit failed, no value"); i >= 0 && strings.HasPrefix(l, "T1") {
				rest := l[i+len("fit failed, no value"):]
				if j := strings.Index(rest, "fit failed:"); j >= 0 && strings.Contains(rest[:j], "±") {
					t.Errorf("%s: a failed fit's row gives a value: %q", tc.name, l)
				}
			}
		}
	}
}
