package ingest

import (
	"strings"
	"testing"
	"time"
)

// A time with a trailing zone word ("15:00:00.000 MEZ", as German Windows
// tools write it) was refused with a message about decimal points, which
// the same time without the word does not need. The message names the
// word and offers the offset; " UTC" after a local date is read as UTC.
func TestTimeZoneWord(t *testing.T) {
	for _, v := range []string{"2026-02-02 15:00:00.000 MEZ", "02.02.2026 15:00:00,000 CET"} {
		text := "time;x;y;z;bx;by;bz\n" + v + ";0;0;0;1,5;2;3\n"
		_, err := ReadSamples(writeFile(t, "log.csv", text), WithDateOrder(DateOrderDMY))
		wantErr(t, err, "after the time is a time-zone word, which is not read")
		wantErr(t, err, "--time-offset")
		if e := err.Error(); strings.Contains(e, "decimal point") {
			t.Errorf("error %q still blames the decimal point", e)
		}
	}
	text := "time;x;y;z;bx;by;bz\n02.02.2026 15:00:00 UTC;0;0;0;1,5;2;3\n"
	s, err := ReadSamples(writeFile(t, "log.csv", text), WithDateOrder(DateOrderDMY), WithTimeOffset(time.Hour))
	if err != nil {
		t.Fatal(err)
	}
	if want := float64(time.Date(2026, 2, 2, 15, 0, 0, 0, time.UTC).Unix()); s.Time[0] != want {
		t.Errorf("time %v, want %v (UTC, the offset given is for times without a zone)", s.Time[0], want)
	}
}

// "utc" and "GMT" (in any case) after a time name UTC as "UTC" does:
// they got the hint to give --time-offset "+01:00 for MEZ or CET"
// (found in review). Both the local date form and the ISO form with a
// space are read as UTC, with no warning that the times give no offset,
// and the offset given for times without a zone leaves them alone.
// Fails before the change.
func TestTimeZoneWordUTCSpellings(t *testing.T) {
	want := float64(time.Date(2026, 2, 2, 15, 0, 0, 0, time.UTC).Unix())
	for _, v := range []string{"02.02.2026 15:00:00 utc", "02.02.2026 15:00:00 GMT", "2026-02-02 15:00:00 gmt", "2026-02-02 15:00:00 Utc"} {
		text := "time;x;y;z;bx;by;bz\n" + v + ";0;0;0;1,5;2;3\n"
		for _, opts := range [][]Option{{WithDateOrder(DateOrderDMY)}, {WithDateOrder(DateOrderDMY), WithTimeOffset(time.Hour)}} {
			s, err := ReadSamples(writeFile(t, "log.csv", text), opts...)
			if err != nil {
				t.Errorf("%q: %v", v, err)
				continue
			}
			if s.Time[0] != want {
				t.Errorf("%q: time %v, want %v (UTC)", v, s.Time[0], want)
			}
			if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "give no UTC offset") {
				t.Errorf("%q: warned %q", v, w)
			}
		}
	}
}
