package main

import (
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestLocateSummarySmallSigmas: the summary table writes every sigma to
// two significant digits and its value to the same decimal place, however
// small (JCGM 100:2008, GUM section 7.2.6; section 7.2.2 writes
// (100.02147 ± 0.00035) g), and widens its columns to fit. On the
// two-conductors scenario (testdata/scenarios/two-conductors.toml, 2 nT
// noise) the depth sigmas are under a millimetre and were shown as
// "1.200 ± <0.001".
func TestLocateSummarySmallSigmas(t *testing.T) {
	_, path := scenario(t, "two-conductors.toml")
	log := filepath.Join(t.TempDir(), "two.csv")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "locate", "--group-by", "group", log)
	if strings.Contains(out, "<0.001") {
		t.Errorf("a known sigma written as a bound:\n%s", out)
	}
	pair := regexp.MustCompile(`(-?[0-9]+\.([0-9]+)) ± (0\.0*([0-9]+)|[0-9]+\.([0-9]+))`)
	lines := strings.Split(out, "\n")
	header := -1
	for i, l := range lines {
		if strings.HasPrefix(l, "group ") {
			header = i
			break
		}
	}
	if header < 0 {
		t.Fatalf("no table:\n%s", out)
	}
	// The depth column ends where its heading does, on every row.
	end := utf8.RuneCountInString(lines[header][:strings.Index(lines[header], "depth below sensors (m)")+len("depth below sensors (m)")])
	rows := 0
	for _, l := range lines[header+1:] {
		if strings.HasPrefix(l, "findings") || strings.HasPrefix(l, "Conductor ") {
			break
		}
		ps := pair.FindAllStringSubmatchIndex(l, -1)
		if len(ps) != 2 {
			t.Errorf("row %q: %d value ± sigma pairs, want current and depth", l, len(ps))
			continue
		}
		rows++
		for _, p := range pair.FindAllStringSubmatch(l, -1) {
			sig := p[3]
			sigDec := len(sig) - strings.IndexByte(sig, '.') - 1
			if len(p[2]) != sigDec {
				t.Errorf("%q: value to %d decimals, sigma to %d", p[0], len(p[2]), sigDec)
			}
			if d := strings.TrimLeft(strings.ReplaceAll(sig, ".", ""), "0"); len(d) != 2 {
				t.Errorf("%q: sigma to %d significant digits, want 2", p[0], len(d))
			}
		}
		if got := utf8.RuneCountInString(l[:ps[1][1]]); got != end {
			t.Errorf("row %q: depth ends at column %d, its heading at %d", l, got, end)
		}
	}
	// The east feeder carries -20 A beside the west feeder's 30 A: the
	// summary says so in words, and gives its depth (1.6 m below the
	// sensors in the scenario).
	if want := "flowing the opposite way to conductor 1"; !strings.Contains(out, want) {
		t.Errorf("summary does not say %q:\n%s", want, out)
	}
	if want := "depth below the sensors 1.60 m."; !strings.Contains(out, want) {
		t.Errorf("summary does not say %q:\n%s", want, out)
	}
	if rows != 10 {
		t.Errorf("%d rows, want 10 (two conductors on five traverses):\n%s", rows, out)
	}
}

// TestLocateHelpExampleFiles: the help's examples name files that the
// walk-through, the demo or simulate write, or mark them as the user's own
// (your-...). The reviewed help named fenwick-lane-coil.csv and
// coil-response.csv, which nothing writes.
func TestLocateHelpExampleFiles(t *testing.T) {
	_, out, _ := cli(t, "help", "locate")
	i := strings.Index(out, "Examples:\n")
	if i < 0 {
		t.Fatalf("no examples:\n%s", out)
	}
	ex := out[i:]
	if j := strings.Index(ex, "\n\n"); j > 0 {
		ex = ex[:j]
	}
	// The paragraph before the examples says what the files are.
	intro := strings.Join(strings.Fields(out[:i]), " ")
	if !strings.Contains(intro, "stand for your own") {
		t.Errorf("the help does not say which example files are your own")
	}
	known := map[string]bool{
		"survey.csv": true, "base.csv": true, "cal.json": true, // README walk-through
		"out/demo/fenwick-lane.csv": true, // the demo
		"two.csv":                   true, // simulate two-conductors.toml, named above
		"two.json":                  true, // written by the example itself
	}
	files := regexp.MustCompile(`[^\s="]+\.(csv|json|arrows?|parquet|min)\b`).FindAllString(ex, -1)
	if len(files) == 0 {
		t.Fatalf("no file names in the examples:\n%s", ex)
	}
	for _, f := range files {
		if !known[f] && !strings.HasPrefix(f, "your-") {
			t.Errorf("example names %q, which nothing here writes and is not marked as your own", f)
		}
		if strings.HasPrefix(f, "your-") && !strings.Contains(intro, f) {
			t.Errorf("%q is not explained before the examples", f)
		}
	}
}
