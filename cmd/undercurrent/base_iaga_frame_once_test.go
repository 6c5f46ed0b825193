package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// TestLocateIAGABaseFrameWarnedOnce checks that an IAGA-2002 base whose
// east and north are not geographic is warned of once, in the base
// correction's words (which say what it means for the correction), however
// many survey logs it corrects. Before, the reader warned and the base
// correction warned again for every survey log: three times for two logs.
// The bases are the real Boulder 1-second file BOU20200101vsec.sec
// (INTERMAGNET data from the USGS, ../shared/data/iaga2002/SOURCE.md; H E Z
// F variation data with DECBAS) edited two ways: its Data Type made
// "provisional" (H E Z data other than variation are not turned), and its
// DECBAS line removed (variation data left in the baseline frame). The
// survey is the simulated Kestrel Moor walk-through, which starts at
// 2020-01-01T00:00:00Z as the file does, split into two logs of alternate
// rows.
func TestLocateIAGABaseFrameWarnedOnce(t *testing.T) {
	dir := t.TempDir()
	survey := kestrelSurvey2020(t, dir)
	data, err := os.ReadFile(survey)
	if err != nil {
		t.Fatal(err)
	}
	// The comment lines and the column line head both logs; the data
	// rows go to one and the other in turn.
	var head, odd, even []string
	columns := false
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		switch {
		case ln == "":
		case !columns:
			head = append(head, ln)
			columns = !strings.HasPrefix(ln, "#")
		case len(odd) == len(even):
			odd = append(odd, ln)
		default:
			even = append(even, ln)
		}
	}
	if len(odd) < 100 || len(even) < 100 {
		t.Fatalf("split the survey into %d and %d rows", len(odd), len(even))
	}
	a, b := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	for p, r := range map[string][]string{a: odd, b: even} {
		if err := os.WriteFile(p, []byte(strings.Join(append(append([]string(nil), head...), r...), "")), 0o644); err != nil {
			t.Fatal(err)
		}
	}

	real, err := os.ReadFile(ingesttest.IAGAFile(t, "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	edit := func(name string, f func(ln string) (string, bool)) string {
		var out []string
		changed := false
		for _, ln := range strings.SplitAfter(string(real), "\n") {
			n, keep := f(ln)
			changed = changed || n != ln || !keep
			if keep {
				out = append(out, n)
			}
		}
		if !changed {
			t.Fatalf("%s: the edit changed nothing in the real file", name)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(strings.Join(out, "")), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	provisional := edit("bou-provisional.sec", func(ln string) (string, bool) {
		if strings.HasPrefix(ln, " Data Type") {
			return strings.Replace(ln, "variation", "provisional", 1), true
		}
		return ln, true
	})
	noDECBAS := edit("bou-nodecbas.sec", func(ln string) (string, bool) {
		return ln, !strings.Contains(ln, "DECBAS")
	})
	for _, c := range []struct {
		base, said, reader string
	}{
		{provisional, "holds observatory data in H E Z, which are not turned to geographic north", "IAGA-2002 provisional data in H E Z"},
		{noDECBAS, "header gives no baseline declination (DECBAS)", "without a DECBAS comment"},
	} {
		code, stdout, stderr := cli(t, "locate", "--group-by", "group", "--base", c.base, a, b)
		// The warnings go with the report to stdout; stderr is read too.
		out := stdout + stderr
		if code != 0 {
			t.Fatalf("%s: exit %d\n%s", filepath.Base(c.base), code, out)
		}
		if n := strings.Count(out, c.said); n != 1 {
			t.Errorf("%s: the base correction's frame warning given %d times, want once:\n%s", filepath.Base(c.base), n, out)
		}
		if strings.Contains(out, c.reader) {
			t.Errorf("%s: the reader's frame warning given beside the base correction's:\n%s", filepath.Base(c.base), out)
		}
	}
}

// kestrelSurvey2020 simulates the Kestrel Moor walk-through
// (kestrel-moor-step.toml) started at 2020-01-01T00:00:00Z, when the real
// Boulder 1-second file BOU20200101vsec.sec starts, into dir, and returns
// the log's path.
func kestrelSurvey2020(t *testing.T, dir string) string {
	t.Helper()
	_, path := scenario(t, "kestrel-moor-step.toml")
	text, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	start := regexp.MustCompile(`(?m)^start = ".*"$`)
	if !start.Match(text) {
		t.Fatal("kestrel-moor-step.toml has no start line")
	}
	toml := filepath.Join(dir, "kestrel-2020.toml")
	if err := os.WriteFile(toml, start.ReplaceAll(text, []byte(`start = "2020-01-01T00:00:00Z"`)), 0o644); err != nil {
		t.Fatal(err)
	}
	survey := filepath.Join(dir, "survey.csv")
	mustCLI(t, "simulate", toml, "-o", survey)
	return survey
}
