package report

import (
	"reflect"
	"strings"
	"testing"
)

// TestFitNotesMerged: notes of one kind, the same words with other
// numbers, are one line in "Notes from the fits", each number given as the
// range it spans over the notes (a range a note gives, "3.1-4.3", counts
// with both its ends) and the groups of them all listed; notes about
// different conductors stay apart, as do notes of other words. Before,
// each note with its own numbers was a line of its own: 56 of the 106
// notes of a 120-traverse survey were the one note on correlated
// residuals.
func TestFitNotesMerged(t *testing.T) {
	d := fenwickLane(false)
	corr := func(w, lo, hi, lag string) string {
		return "residuals correlated: the current's uncertainty is widened " + w + " times, the others " + lo + "-" + hi + " times (lag-1 autocorrelation " + lag + ")"
	}
	d.Groups[4].Notes = []string{corr("5.3", "3.1", "4.3", "0.93")}
	d.Groups[0].Notes = []string{corr("2.2", "2.1", "2.2", "0.59"), "robust weights applied"}
	d.Groups[2].Notes = []string{corr("3.8", "2.5", "5.1", "0.84")}
	d.Groups[1].Sources = append(d.Groups[1].Sources, d.Groups[1].Sources[0])
	d.Groups[1].Sources[0].Conductor, d.Groups[1].Sources[1].Conductor = 1, 2
	d.Groups[1].Sources[1].Notes = []string{"weak line (0.3% of the strongest current)"}
	d.Groups[3].Sources = append(d.Groups[3].Sources, d.Groups[3].Sources[0])
	d.Groups[3].Sources[0].Conductor, d.Groups[3].Sources[1].Conductor = 1, 3
	d.Groups[3].Sources[1].Notes = []string{"weak line (0.9% of the strongest current)"}
	got := fitNotes(d)
	want := []string{
		"residuals correlated: the current's uncertainty is widened 2.2–5.3 times, the others 2.1–5.1 times (lag-1 autocorrelation 0.59–0.93) (3 groups: T01, T03, T05)",
		"robust weights applied (1 group: T01)",
		"conductor 2: weak line (0.3% of the strongest current) (1 group: T02)",
		"conductor 3: weak line (0.9% of the strongest current) (1 group: T04)",
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("notes\n%q\nwant\n%q", got, want)
	}
}

// TestSlightMisfitsMerged: in the findings table's row of slight misfits
// the notes of one kind are one item, with their numbers, their groups
// and each value's range, the group's own name standing as "each group";
// a note of other words keeps its own item. Before, the row held one
// bullet per note: 50 on a 120-traverse survey, over 6 printed pages.
func TestSlightMisfitsMerged(t *testing.T) {
	d := fenwickLane(false)
	misfit := func(key, ch, rms, sig string) Finding {
		return Finding{Kind: "poor-fit", Severity: SeverityInfo, Groups: []string{key},
			Message: "fit at " + key + " (chainage " + ch + " m) misses " + rms + " nT RMS of a " + sig + " nT signal: the straight-line model is only approximate here (a bend)"}
	}
	d.Findings = []Finding{
		{Kind: "shallow-cover", Severity: SeverityWarning, Message: "fixture warning"},
		misfit("T02", "15.0", "10.8", "1579"),
		misfit("T03", "30.0", "5.72", "1454"),
		{Kind: "poor-fit", Severity: SeverityInfo, Groups: []string{"T07"}, Message: "fit at T07 (chainage 90.0 m) misses 6.1 nT RMS of a 2000 nT signal: most likely the current step"},
		misfit("T04", "45.0", "8.5", "1857"),
	}
	row := minorMisfitRow(d, minorMisfits(d))
	want := []string{
		"2, 3, 5 (3 notes; groups T02, T03, T04): fit at each group (chainage 15.0–45.0 m) misses 5.72–10.8 nT RMS of a 1454–1857 nT signal: the straight-line model is only approximate here (a bend)",
		"4: fit at T07 (chainage 90.0 m) misses 6.1 nT RMS of a 2000 nT signal: most likely the current step",
	}
	if !reflect.DeepEqual(row.Items, want) {
		t.Errorf("items\n%q\nwant\n%q", row.Items, want)
	}
	if !strings.HasPrefix(row.Message, "4 fits miss") {
		t.Errorf("row's message %q no longer counts the 4 notes", row.Message)
	}
}

// TestMergedNotesKeepLineCounts: a count of lines is what a note says, not
// a value, so "2 lines fit better" and "2-3 lines fit better" stay apart
// (merged, a review found the tee's note no longer said which group hinted
// at 3 lines), while the same count in two groups still merges.
func TestMergedNotesKeepLineCounts(t *testing.T) {
	d := fenwickLane(false)
	better := func(n, chi string) string {
		return n + " fit the readings better (chi-square lower by " + chi + ")"
	}
	d.Groups[0].Notes = []string{better("2 lines", "41")}
	d.Groups[1].Notes = []string{better("2-3 lines", "97")}
	d.Groups[2].Notes = []string{better("2 lines", "55")}
	got := fitNotes(d)
	want := []string{
		"2 lines fit the readings better (chi-square lower by 41–55) (2 groups: T01, T03)",
		"2-3 lines fit the readings better (chi-square lower by 97) (1 group: T02)",
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("notes\n%q\nwant\n%q", got, want)
	}
}
