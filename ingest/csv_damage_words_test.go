package ingest

import (
	"strings"
	"testing"
)

// TestCSVDamageWords: NUL bytes amid a line (a logger that lost power
// mid-write) were reported as the "short row" they made, where a file of
// NULs at line 1 got the clear "the line holds NUL bytes"; and a last line
// cut inside a quoted value was refused outright ("unterminated quote"),
// where the same line cut outside quotes is left out with a warning. Now
// the NUL bytes are named at their line and byte, and both cut lines are
// left out alike. Invented values.
func TestCSVDamageWords(t *testing.T) {
	write := func(name, text string) string { return writeFile(t, name, text) }
	head := "time,x,y,z,bx,by,bz,group\n0,0,0,0.3,1,18000,-44000,\"T01\"\n1,0.1,0,0.3,1,18000,-44000,\"T01\"\n"
	_, err := ReadSamples(write("nul.csv", head+"2,0.2,0,0.3,1,18\x00\x00\x00\x00\n3,0.3,0,0.3,1,18000,-44000,\"T01\"\n"), WithAllocator(checked(t)))
	if err == nil || !strings.Contains(err.Error(), `nul.csv:4: column by: "18\x00\x00\x00\x00" holds NUL bytes (from byte 17 of the line): binary bytes amid the text`) || strings.Contains(err.Error(), "short row") {
		t.Errorf("NUL bytes mid-file: %v", err)
	}
	for _, c := range []struct{ name, last, want string }{
		{"cutquote.csv", "2,0.2,0,0.3,1,18000,-44000,\"T0", "cutquote.csv:4: column group: the last line has no line end and its quoted value"},
		{"whole.csv", "2,0.2,0,0.3,1,18000,-44000,\"T02\"", ""}, // closed: read
	} {
		s, err := ReadSamples(write(c.name, head+c.last), WithAllocator(checked(t)))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if c.want == "" {
			if len(s.Time) != 3 {
				t.Errorf("%s: %d rows, want 3", c.name, len(s.Time))
			}
			continue
		}
		if len(s.Time) != 2 || len(s.Warnings) == 0 || !strings.Contains(strings.Join(s.Warnings, "\n"), c.want) {
			t.Errorf("%s: %d rows, warnings %q; want 2 rows and %q", c.name, len(s.Time), s.Warnings, c.want)
		}
	}
}
