package ingest

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// sharedStampsLog is an invented log of the named sensors logged on shared
// stamps, 0.1 s apart: one row per sensor and stamp, in turn; extra rows
// are appended after the last stamp's.
func sharedStampsLog(sensors []string, stamps int, group bool, extra ...string) string {
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz")
	if group {
		b.WriteString(",group")
	}
	b.WriteString("\n")
	for i := 0; i < stamps; i++ {
		for k, s := range sensors {
			fmt.Fprintf(&b, "%.1f,%d,0,0.3,1200,19200,-45000", 1776760800+0.1*float64(i), k)
			if group {
				b.WriteString("," + s)
			}
			b.WriteString("\n")
		}
	}
	for _, e := range extra {
		b.WriteString(e + "\n")
	}
	return b.String()
}

// TestInspectRepeatsPerGroup: with a group column a repeated time is a
// row whose time an earlier row of its own group at that stamp has, so
// five sensors logged on shared stamps repeat nothing (before, each row
// after a stamp's first was one: 4 per stamp, 21.6 M on an hour's log at
// 1200 Hz), while a sensor that reads twice at one stamp still does.
// Without a group column every row that shares the time of the row before
// is one, as before; a log rounded to one time is still told so.
func TestInspectRepeatsPerGroup(t *testing.T) {
	sensors := []string{"fl-w2", "fl-w1", "fl-e1", "fl-e2", "fl-n1"}
	for _, tc := range []struct {
		name string
		text string
		want int
	}{
		{"clean, grouped", sharedStampsLog(sensors, 20, true), 0},
		{"one sensor twice at the last stamp", sharedStampsLog(sensors, 20, true, "1776760801.9,1,0,0.3,1200,19200,-45000,fl-w1"), 1},
		{"no group column", sharedStampsLog(sensors, 20, false), 20 * 4},
	} {
		in, err := Inspect(writeFile(t, "log.csv", tc.text))
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if in.Time.Repeated != tc.want || in.Time.Backwards != 0 {
			t.Errorf("%s: %d repeated, %d backwards; want %d and 0", tc.name, in.Time.Repeated, in.Time.Backwards, tc.want)
		}
		if math.Abs(in.Time.Interval-0.1) > 1e-6 && tc.name != "no group column" {
			t.Errorf("%s: interval %g s, want each sensor's 0.1 s", tc.name, in.Time.Interval)
		}
	}
	// Every row at one time: the sensors' first rows there are no
	// repeats, but the log is still one rounded to a single time.
	in, err := Inspect(writeFile(t, "one.csv", sharedStampsLog(sensors, 1, true, "1776760800.0,0,0,0.3,1200,19200,-45000,fl-w2", "1776760800.0,1,0,0.3,1200,19200,-45000,fl-w1")))
	if err != nil {
		t.Fatal(err)
	}
	if in.Time.Repeated != 2 || !strings.Contains(strings.Join(in.Warnings, "\n"), "every one of the 7 rows has the same time") {
		t.Errorf("one time: %d repeated, warnings %q; want 2 and the one-time warning", in.Time.Repeated, in.Warnings)
	}
}
