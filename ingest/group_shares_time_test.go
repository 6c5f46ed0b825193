package ingest

import (
	"strings"
	"testing"
)

// TestGroupByDateOfJoinedTime: a multi-day log whose time is joined from
// a date and a time-of-day column (time=Date+Time) is grouped by its date
// column (group=Date, as --group-by Date asks): the date is read both as
// the first part of the time and as the group. Before, it was refused as
// "mappings time=Date+Time and group=Date both name the column "Date"
// ... (a typo?)", a mapping the user never typed (--group-by gave it).
// Two data columns naming one column are still refused. Invented values.
func TestGroupByDateOfJoinedTime(t *testing.T) {
	p := writeFile(t, "two-days.csv", "Date,Time,Bx,By,Bz\n"+
		"2026-02-02,14:00:00.0,1.5,2,3\n2026-02-02,14:00:00.5,2.5,2,3\n"+
		"2026-02-03,09:00:00.0,3.5,2,3\n2026-02-03,09:00:00.5,4.5,2,3\n")
	s, err := ReadSamples(p, WithColumns("time=Date+Time", "bx=Bx", "by=By", "bz=Bz"), WithColumns("group=Date"), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	wantGroups := []string{"2026-02-02", "2026-02-02", "2026-02-03", "2026-02-03"}
	if strings.Join(s.Group, " ") != strings.Join(wantGroups, " ") {
		t.Errorf("groups %q, want %q", s.Group, wantGroups)
	}
	// 2026-02-02 14:00 UTC to 2026-02-03 09:00 UTC: 19 h.
	if s.Len() != 4 || s.Time[1]-s.Time[0] != 0.5 || s.Time[2]-s.Time[0] != 19*3600 {
		t.Errorf("times %v, want steps of 0.5 s and 19 h", s.Time)
	}
	if s.Bx[0] != 1.5 || s.Bx[3] != 4.5 {
		t.Errorf("bx %v, want 1.5 ... 4.5", s.Bx)
	}
	_, err = ReadSamples(p, WithColumns("time=Date+Time", "bx=Bx", "by=Bx", "bz=Bz"), WithAllocator(checked(t)))
	wantErr(t, err, "mappings bx=Bx and by=Bx both name the column \"Bx\"")
}

// TestGroupSharingNumberColumnRefused: the group may share only a part of
// a joined time; naming a number column read as data too is refused (the
// CSV reader would read zeros into the data column). Invented values.
func TestGroupSharingNumberColumnRefused(t *testing.T) {
	p := writeFile(t, "g.csv", "time,Bx,By,Bz\n0,1.5,2,3\n1,2.5,2,3\n")
	for _, m := range []string{"group=Bx,bx=Bx", "group=time,time=time"} {
		_, err := ReadSamples(p, WithColumns(m))
		wantErr(t, err, "both name the column")
	}
}
