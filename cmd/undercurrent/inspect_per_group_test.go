package main

import (
	"strings"
	"testing"
)

// TestInspectPerGroupWithoutGroups: --time-order per-group asks for time
// forward within each value of the group column; a log without one is
// read as one stretch, which locate refuses when its time goes backwards.
// inspect --time-order per-group on such a log suggested per-group as the
// remedy; it says now that the log has no group column, and how to map
// one, as locate's refusal bears out. Invented fixture at 1 s sampling,
// two rows swapped.
func TestInspectPerGroupWithoutGroups(t *testing.T) {
	swapped := ingestTemp(t, "swapped.csv", "time,x,y,z,bx,by,bz\n"+
		"1776760800,0,0,0.25,450,16000,-46250\n1776760801,0,0.5,0.25,451,16001,-46251\n"+
		"1776760802,0,1,0.25,452,16002,-46252\n1776760803,0,1.5,0.25,453,16003,-46253\n"+
		"1776760805,0,2.5,0.25,455,16005,-46255\n1776760804,0,2,0.25,454,16004,-46254\n"+
		"1776760806,0,3,0.25,456,16006,-46256\n1776760807,0,3.5,0.25,457,16007,-46257\n")
	back, _, gaps, _, warns := inspectTime(t, "--time-order", "per-group", swapped)
	want := "time: goes backwards once: --time-order per-group asks for time forward within each group, but the log has no group column (map one with --column group=NAME)"
	if back != 1 || gaps != 0 || !anyHas(warns, want) || anyHas(warns, "(per-group: forward within each group") {
		t.Errorf("per-group on a log without groups: %d backwards, %d gaps, warnings %q; want 1, no gap and %q", back, gaps, warns, want)
	}
	if code, _, errOut := cli(t, "locate", "--time-order", "per-group", swapped); code == 0 || !strings.Contains(errOut, "time goes backwards") {
		t.Errorf("locate --time-order per-group on the log: exit %d, want a refusal as inspect says:\n%s", code, errOut)
	}
	// Without --time-order, per-group is still named among the choices.
	if _, _, _, _, warns := inspectTime(t, swapped); !anyHas(warns, "(per-group: forward within each group; any)") {
		t.Errorf("ordered: warnings %q, want the --time-order choices", warns)
	}
}
