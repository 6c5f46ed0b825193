package main

import (
	"slices"
	"testing"

	"undercurrent/report"
)

// TestLocateACNetCurrentNote: an AC run that finds a current notes that
// the current read is the net current the sensors see (a cable's sheath,
// armour or bonded trunking carries an induced return whose field, outside
// it, is a line's where the cable is, so that no misfit shows it); the
// same log located as DC, which reads no alternating current, carries no
// such note.
func TestLocateACNetCurrentNote(t *testing.T) {
	_, log := acWalkAt(t, t.TempDir(), "50.0", "")
	ac := locateDoc(t, "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0", log)
	if !slices.Contains(ac.Notes, report.NetCurrentCaution) {
		t.Errorf("AC run: notes %q lack the net current caution", ac.Notes)
	}
	dc := locateDoc(t, "--group-by", "group", "--reference-z", "0", log)
	if slices.Contains(dc.Notes, report.NetCurrentCaution) {
		t.Errorf("DC run: notes carry the AC net current caution: %q", dc.Notes)
	}
}
