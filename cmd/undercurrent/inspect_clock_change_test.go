package main

import (
	"fmt"
	"strings"
	"testing"
	"time"
)

// twoTraverseLog returns a CSV of two traverses, T01 walked before 08:00
// UTC on 2 November 2014 and T02 after, a reading every 5 s, their times
// written in layout in the zone the clock showed: the United States'
// Mountain zone went back from MDT (UTC-06:00) to MST (UTC-07:00) then
// (from memory of the time-zone rules), so that local times without their
// offset step back from 01:59:55 to 01:00:00 between the traverses.
// shift moves every time (to take the same log to a July afternoon).
func twoTraverseLog(layout string, shift time.Duration) string {
	change := time.Date(2014, 11, 2, 8, 0, 0, 0, time.UTC)
	mdt, mst := time.FixedZone("MDT", -6*3600), time.FixedZone("MST", -7*3600)
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,group\n")
	for i := 0; i < 12; i++ {
		tm := change.Add(time.Duration(5*i-30) * time.Second)
		loc, g := mdt, "T01"
		if !tm.Before(change) {
			loc, g = mst, "T02"
		}
		fmt.Fprintf(&b, "%s,%d,0,0.25,%d,20500,-47500,%s\n", tm.In(loc).Add(shift).Format(layout), i%6, 3300+i, g)
	}
	return b.String()
}

// TestInspectClockChangeNotPerGroup: a log in local time without offsets
// across the night the clocks went back steps back an hour less the
// sampling between two traverses. inspect advised "--time-order per-group
// reads it", which accepts the repeated hour an hour early. It must not
// advise per-group then, and must name the clock change (also when
// per-group or any is given); a log whose traverses were logged one after
// another out of order on a July afternoon keeps the advice, and the log
// written with its offsets runs forward.
func TestInspectClockChangeNotPerGroup(t *testing.T) {
	naive := ingestTemp(t, "harrow-naive.csv", twoTraverseLog("2006-01-02T15:04:05", 0))
	_, _, _, _, warns := inspectTime(t, naive)
	if anyHas(warns, "per-group reads it") {
		t.Errorf("per-group advised for a step back at a clock change: %q", warns)
	}
	if !anyHas(warns, "the clocks went back an hour") || !anyHas(warns, "from 2014-11-02T01:59:55 to 2014-11-02T01:00:00") {
		t.Errorf("no word of the clock change: %q", warns)
	}
	for _, order := range []string{"per-group", "any"} {
		if _, _, _, _, warns := inspectTime(t, "--time-order", order, naive); !anyHas(warns, "the clocks went back an hour") {
			t.Errorf("--time-order %s: no word of the clock change: %q", order, warns)
		}
	}
	// A locate reading it per group says so too (the reader's warning).
	code, _, errOut := cli(t, "locate", "--json", "--time-order", "per-group", "--group-by", "group", naive)
	if !strings.Contains(errOut, "the clocks go back an hour") {
		t.Errorf("locate --time-order per-group (exit %d): no warning of the clock change:\n%s", code, errOut)
	}

	// The same traverses on 2 July, 14:00 to 15:00: no clock goes back;
	// per-group is the right advice.
	july := ingestTemp(t, "harrow-july.csv", strings.ReplaceAll(strings.ReplaceAll(twoTraverseLog("2006-01-02T15:04:05", 13*time.Hour), "2014-11-02", "2014-07-02"), "2014-11-03", "2014-07-03"))
	if _, _, _, _, warns := inspectTime(t, july); !anyHas(warns, "per-group reads it") || anyHas(warns, "clocks went back") {
		t.Errorf("traverses out of order in July: %q, want per-group advised and no clock change", warns)
	}
	zoned := ingestTemp(t, "harrow-zoned.csv", twoTraverseLog(time.RFC3339, 0))
	if back, _, _, _, warns := inspectTime(t, zoned); back != 0 || anyHas(warns, "clocks went back") {
		t.Errorf("the log with its offsets: %d steps back, %q", back, warns)
	}
}
