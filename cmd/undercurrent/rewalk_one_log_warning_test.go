package main

import (
	"strings"
	"testing"
	"time"
)

// TestRewalkInOneLogOneWarning: the Kestrel Moor survey
// (testdata/scenarios/kestrel-moor-step.toml, 21 traverses) walked again
// a day later (its start moved on 24 h), both days in one log. Each
// re-walked traverse drew a warning of its own, 21 alike of some 600
// characters each at the head of the warnings, where the same survey in
// two logs draws one (found in review). Now the log draws one warning:
// it names the first six groups and the 15 more, the pause and when the
// first and the second walks began (the scenario's start and a day
// later, to the second), and the later walks' names.
func TestRewalkInOneLogOneWarning(t *testing.T) {
	sc, _ := scenario(t, "kestrel-moor-step.toml")
	start, err := time.Parse(time.RFC3339, sc.Start)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	args := walkAgain(t, dir, "kestrel-moor-step.toml", nil)
	joined := joinLogs(t, dir, "kestrel-both.csv", args[4], args[5])
	r := locateRewalk(t, dir, "one-log", append(append([]string(nil), args[:4]...), joined))
	var got []string
	for _, w := range r.warnings {
		if strings.Contains(w, "the same ground again after a pause") || strings.Contains(w, "the same ground again after pauses") {
			got = append(got, w)
		}
	}
	if len(got) != 1 {
		t.Fatalf("%d warnings of traverses walked again, want one for the log:\n%s", len(got), strings.Join(got, "\n"))
	}
	const layout = "2006-01-02T15:04:05.000Z"
	for _, want := range []string{
		joined + ": the groups T01, T02, T03, T04, T05, T06 and 15 more cover the same ground again",
		"the first walks from " + start.UTC().Format(layout),
		"the second walks from " + start.Add(24*time.Hour).UTC().Format(layout),
		"named T01 (walk 2) (and so on)",
		"(walks-differ)",
	} {
		if !strings.Contains(got[0], want) {
			t.Errorf("the warning lacks %q:\n%s", want, got[0])
		}
	}
}
