package main

import (
	"os"
	"strings"
	"testing"
)

// TestLoneTraverseMisfitWarned: a single traverse fitted with the wrong
// model is named. The DC go-and-return pair (dcPairScenario: ±10 A, cores
// 0.3 m apart 1.5 m down, 2 nT noise) walked once and fitted with one line
// (--count 1) came out as 0.86 A at 0.75 m (the truth is a pair at 1.5 m)
// missing the readings by 20 times the 2 nT its second differences show,
// "1 sound" with no word: the shared-misfit warning needed two groups, and
// the route's poor-fit check needs three. Simulated truth: the pair's
// field is not one line's, so the one-line fit must miss. The same
// traverse fitted with the automatic count (a pair) and a single line's
// traverse (single-line.toml, walked once) must draw neither.
func TestLoneTraverseMisfitWarned(t *testing.T) {
	dir := t.TempDir()
	if !strings.Contains(dcPairScenario, "count = 7\n") {
		t.Fatal("dcPairScenario no longer sets count = 7")
	}
	pair := simulateText(t, dir, "pair1", strings.Replace(dcPairScenario, "count = 7\n", "count = 1\n", 1), ".csv")
	_, single := scenario(t, "single-line.toml")
	b, err := os.ReadFile(single)
	if err != nil {
		t.Fatal(err)
	}
	raw := string(b)
	if !strings.Contains(raw, "count = 7\n") {
		t.Fatal("single-line.toml no longer sets count = 7")
	}
	one := simulateText(t, dir, "single1", strings.Replace(raw, "count = 7\n", "count = 1\n", 1), ".csv")
	for _, c := range []struct {
		args []string
		warn bool
	}{
		{[]string{"--count", "1", pair}, true},
		{[]string{pair}, false},
		{[]string{one}, false},
	} {
		doc := locateInto[struct {
			Warnings []string `json:"warnings"`
			Groups   []struct {
				Key     string `json:"key"`
				OK      bool   `json:"ok"`
				Problem string `json:"problem"`
			} `json:"groups"`
		}](t, append([]string{"--group-by", "group", "--reference-z", "0"}, c.args...)...)
		if len(doc.Groups) != 1 {
			t.Fatalf("%v: %d groups, want 1", c.args, len(doc.Groups))
		}
		var got string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "do not describe this field") {
				got = w
			}
		}
		g := doc.Groups[0]
		marked := strings.Contains(g.Problem, "the readings themselves show")
		if c.warn {
			if !strings.Contains(got, "the readings themselves show") {
				t.Errorf("%v: warnings %q, want one saying the fit misses the readings", c.args, doc.Warnings)
			}
			if !g.OK || !marked {
				t.Errorf("%v: group %s ok %v, problem %q: want the misfit as its problem", c.args, g.Key, g.OK, g.Problem)
			}
			continue
		}
		if got != "" || marked {
			t.Errorf("%v: warning %q, problem %q", c.args, got, g.Problem)
		}
	}
}
