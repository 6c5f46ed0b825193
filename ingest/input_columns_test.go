package ingest

import (
	"slices"
	"testing"
)

// TestSamplesColumnsAndUnread: ReadSamples gives the input's column names
// and those that feed nothing (a traverse name under a name not read as
// the group column), for messages that name the column a flag should have
// given; mapped with WithColumns, the column is read and no longer unread.
func TestSamplesColumnsAndUnread(t *testing.T) {
	path := writeFile(t, "log.csv", "time,x,y,z,bx,by,bz,Line,fix\n"+
		"0,0,0,0,1,2,3,T01,1\n1,1,0,0,1,2,3,T02,2\n")
	s, err := ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"time", "x", "y", "z", "bx", "by", "bz", "Line", "fix"}; !slices.Equal(s.Columns, want) {
		t.Errorf("Columns %q, want %q", s.Columns, want)
	}
	if want := []string{"Line", "fix"}; !slices.Equal(s.Unread, want) {
		t.Errorf("Unread %q, want %q", s.Unread, want)
	}
	s, err = ReadSamples(path, WithColumns("group=Line"))
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"fix"}; !slices.Equal(s.Unread, want) || !slices.Equal(s.Group, []string{"T01", "T02"}) {
		t.Errorf("with group=Line: Unread %q, groups %q; want [fix], [T01 T02]", s.Unread, s.Group)
	}
}
