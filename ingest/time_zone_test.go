package ingest

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// The European Union's summer time (Directive 2000/84/EC, Articles 2 and
// 3) begins at 01:00 UTC on the last Sunday of March and ends at 01:00
// UTC on the last Sunday of October; Germany's standard time is UTC+1
// (MEZ), its summer time UTC+2 (MESZ). In 2026 those Sundays are 29
// March and 25 October (1 January 2026 is a Thursday: 29 March is 87
// days later, 25 October 297, both multiples of 7 plus 3). So, by hand:
// on 29 March Berlin's clocks go from 01:59:59 to 03:00:00 (02:xx does
// not exist), and on 25 October from 02:59:59 back to 02:00:00 (02:xx
// happens twice, first at +02:00, then at +01:00).

// berlinLog is a log across both changes of 2026, its times Berlin wall
// clock readings written without an offset, with the instants they stand
// for worked out by hand from the rule above (the offset of each row
// chosen by hand, the UTC civil time then turned into seconds).
var berlinLog = []struct {
	local string // as a logger in Berlin writes it
	off   int    // hours east of UTC in force, by the rule above
	why   string
}{
	{"2026-01-15T12:00:00", 1, "winter"},
	{"2026-03-29T01:50:00", 1, "ten minutes before the clocks go forward"},
	{"2026-03-29T03:00:00", 2, "the first minute of summer time (01:00Z)"},
	{"2026-03-29T03:10:00", 2, "summer time"},
	{"2026-07-01T12:00:00", 2, "summer"},
	{"2026-10-25T02:40:00", 2, "the repeated hour, first time round"},
	{"2026-10-25T02:50:00", 2, "the repeated hour, first time round"},
	{"2026-10-25T02:00:00", 1, "the repeated hour again, after the clocks went back at 01:00Z"},
	{"2026-10-25T02:10:00", 1, "the repeated hour, second time round"},
	{"2026-10-25T03:00:00", 1, "standard time"},
}

// wantBerlin is the instant of row i of berlinLog, in Unix seconds.
func wantBerlin(t *testing.T, i int) float64 {
	t.Helper()
	w, err := time.Parse("2006-01-02T15:04:05", berlinLog[i].local)
	if err != nil {
		t.Fatal(err)
	}
	return float64(w.Unix() - int64(berlinLog[i].off)*3600)
}

func berlin(t *testing.T) *time.Location {
	t.Helper()
	loc, err := LoadTimeZone("Europe/Berlin")
	if err != nil {
		t.Fatal(err)
	}
	return loc
}

// TestTimeZoneAcrossClockChanges: a log read in Europe/Berlin gives each
// reading the offset in force, on both sides of both changes; the hour
// repeated in October is read keeping the times in order, with warnings
// naming where; no warning says the times lack an offset. The same log
// with dates day first (--date-order dmy) reads the same. Before, a log
// could be read only at one fixed offset (WithTimeOffset): the readings
// after one change or the other came out an hour off.
func TestTimeZoneAcrossClockChanges(t *testing.T) {
	loc := berlin(t)
	var iso, dmy strings.Builder
	iso.WriteString("time,x,y,z,bx,by,bz\n")
	dmy.WriteString("time;x;y;z;bx;by;bz\n")
	for i, r := range berlinLog {
		fmt.Fprintf(&iso, "%s,%d,0,0,458,16021,-46258\n", r.local, i)
		w, _ := time.Parse("2006-01-02T15:04:05", r.local)
		fmt.Fprintf(&dmy, "%s;%d;0;0;458;16021;-46258\n", w.Format("02.01.2006 15:04:05"), i)
	}
	for _, c := range []struct {
		name, text string
		opts       []Option
	}{
		{"iso.csv", iso.String(), nil},
		{"dmy.csv", dmy.String(), []Option{WithDateOrder(DateOrderDMY)}},
	} {
		s, err := ReadSamples(writeFile(t, c.name, c.text), append(c.opts, WithTimeZone(loc), WithWorkers(4), withChunkBytes(64))...)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for i := range berlinLog {
			if got, want := s.Time[i], wantBerlin(t, i); got != want {
				t.Errorf("%s row %d %s (%s): %s, want %s", c.name, i, berlinLog[i].local, berlinLog[i].why,
					time.Unix(int64(got), 0).UTC().Format(time.RFC3339), time.Unix(int64(want), 0).UTC().Format(time.RFC3339))
			}
		}
		w := strings.Join(s.Warnings, "\n")
		if strings.Contains(w, "give no UTC offset") {
			t.Errorf("%s: warned of times without an offset although the zone was given:\n%s", c.name, w)
		}
		// Header line 1: the repeated hour starts on line 7, the step
		// back is on line 9.
		for _, want := range []string{
			c.name + ":7: column time: ",
			"falls in the hour repeated when the clocks of Europe/Berlin went back: it and the times after it are read at +02:00 (the first time round)",
			c.name + ":9: column time: ",
			"are read at +01:00 (the second time round), keeping the log's times in order",
		} {
			if !strings.Contains(w, want) {
				t.Errorf("%s: warnings lack %q:\n%s", c.name, want, w)
			}
		}
	}

	// One fixed offset, as before, is right on one side of a change
	// only, and the step back of the repeated hour stops the read.
	_, err := ReadSamples(writeFile(t, "fixed.csv", iso.String()), WithTimeOffset(time.Hour))
	wantErr(t, err, `fixed.csv:9: column time: time goes backwards: "2026-10-25T02:00:00" after "2026-10-25T02:50:00"`)
	s, err := ReadSamples(writeFile(t, "fixed.csv", iso.String()), WithTimeOffset(time.Hour), WithTimeOrder(TimeAnyOrder))
	if err != nil {
		t.Fatal(err)
	}
	if got, want := s.Time[2]-wantBerlin(t, 2), 3600.0; got != want {
		t.Errorf("at +01:00 the first reading of summer time is %g s late, want %g", got, want)
	}
}

// TestTimeZoneGapRefused: a Berlin time in the hour skipped on 29 March
// 2026 (02:00 to 02:59:59 do not exist, by the rule above) is refused at
// its line, naming the change and what to do.
func TestTimeZoneGapRefused(t *testing.T) {
	text := "time,x,y,z,bx,by,bz\n" +
		"2026-03-29T01:50:00,0,0,0,458,16021,-46258\n" +
		"2026-03-29T02:30:00,1,0,0,458,16021,-46258\n"
	_, err := ReadSamples(writeFile(t, "gap.csv", text), WithTimeZone(berlin(t)))
	wantErr(t, err, `gap.csv:3: column time: "2026-03-29T02:30:00" is a time that does not exist in Europe/Berlin: on 2026-03-29 its clocks went forward from +01:00 to +02:00`)
	wantErr(t, err, "--time-offset +01:00")
}

// TestTimeZoneKeepsOwnOffsetAndNumbers: with a zone given, a time with
// its own offset keeps it and a time in seconds is not changed, each
// with a warning that the zone did not apply; a zone and an offset
// together, or a zone with a column that says UTC, are refused.
func TestTimeZoneKeepsOwnOffsetAndNumbers(t *testing.T) {
	loc := berlin(t)
	s, err := ReadSamples(writeFile(t, "own.csv", "time,x,y,z,bx,by,bz\n2026-07-01T12:00:00+03:00,0,0,0,458,16021,-46258\n2026-07-01T12:00:00,1,0,0,458,16021,-46258\n"), WithTimeZone(loc))
	if err != nil {
		t.Fatal(err)
	}
	noon := float64(time.Date(2026, 7, 1, 12, 0, 0, 0, time.UTC).Unix())
	if s.Time[0] != noon-3*3600 || s.Time[1] != noon-2*3600 {
		t.Errorf("times %v, want %v (its own +03:00) and %v (Berlin summer time, +02:00)", s.Time, noon-3*3600, noon-2*3600)
	}
	wantWarning(t, s.Warnings, `own.csv:2: column time: "2026-07-01T12:00:00+03:00" carries its own UTC offset and is read with it; the time zone Europe/Berlin applies only to times written without one`)

	s, err = ReadSamples(writeFile(t, "secs.csv", "time,x,y,z,bx,by,bz\n1782900000,0,0,0,458,16021,-46258\n"), WithTimeZone(loc))
	if err != nil {
		t.Fatal(err)
	}
	if s.Time[0] != 1782900000 {
		t.Errorf("seconds read as %v, want them unchanged", s.Time[0])
	}
	wantWarning(t, s.Warnings, "secs.csv:2: column time: 1782900000 is a number, read as seconds")

	_, err = ReadSamples(writeFile(t, "both.csv", "time,x,y,z,bx,by,bz\n2026-07-01T12:00:00,0,0,0,458,16021,-46258\n"), WithTimeZone(loc), WithTimeOffset(time.Hour))
	wantErr(t, err, "time zone Europe/Berlin and time offset +01:00 given together")

	_, err = ReadSamples(writeFile(t, "utc.csv", "time,x,y,z,bx,by,bz\n2026-07-01T12:00:00,0,0,0,458,16021,-46258\n"), WithTimeZone(loc), WithUnits("time=UTC"))
	wantErr(t, err, "the time zone given (--time-zone Europe/Berlin) says they are local times")

	for _, bad := range []string{"", "Local", "Europe/Berlinn", "+01:00"} {
		if _, err := LoadTimeZone(bad); err == nil {
			t.Errorf("LoadTimeZone(%q) took it", bad)
		}
	}
}

// TestTimeZoneArrowTimestamps: an Arrow or Parquet timestamp column
// without a time zone holds wall-clock readings: with a zone given they
// are read as the zone's, across both changes, as text times are; with a
// fixed offset, at that offset (before, they were read as UTC whatever
// the offset given, with the warning that they give none).
func TestTimeZoneArrowTimestamps(t *testing.T) {
	loc := berlin(t)
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond}},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		for i, r := range berlinLog {
			w, _ := time.Parse("2006-01-02T15:04:05", r.local)
			b.Field(0).(*array.TimestampBuilder).Append(arrow.Timestamp(w.UnixMilli()))
			for k := 1; k < 4; k++ {
				b.Field(k).(*array.Float64Builder).Append(float64(i + 1))
			}
		}
	}
	for _, name := range []string{"wall.arrow", "wall.parquet"} {
		p := writeArrowBatches(t, name, sc, fill)
		s, err := ReadSamples(p, WithTimeZone(loc), WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for i := range berlinLog {
			if got, want := s.Time[i], wantBerlin(t, i); got != want {
				t.Errorf("%s row %d %s (%s): %s, want %s", name, i, berlinLog[i].local, berlinLog[i].why,
					time.Unix(int64(got), 0).UTC().Format(time.RFC3339), time.Unix(int64(want), 0).UTC().Format(time.RFC3339))
			}
		}
		w := strings.Join(s.Warnings, "\n")
		if strings.Contains(w, "without a time zone") {
			t.Errorf("%s: warned of timestamps without a zone although one was given:\n%s", name, w)
		}
		if !strings.Contains(w, "are read at +01:00 (the second time round)") {
			t.Errorf("%s: no warning of the repeated hour:\n%s", name, w)
		}

		s, err = ReadSamples(p, WithTimeOffset(time.Hour), WithTimeOrder(TimeAnyOrder), WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s at +01:00: %v", name, err)
		}
		if got, want := s.Time[0], wantBerlin(t, 0); got != want {
			t.Errorf("%s at +01:00: January noon read as %v, want %v", name, got, want)
		}
		if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "without a time zone") {
			t.Errorf("%s at +01:00: warned of timestamps without a zone although the offset was given:\n%s", name, w)
		}
	}
}

// wantWarning fails unless one of ws holds want.
func wantWarning(t *testing.T, ws []string, want string) {
	t.Helper()
	for _, w := range ws {
		if strings.Contains(w, want) {
			return
		}
	}
	t.Errorf("no warning holds %q:\n%s", want, strings.Join(ws, "\n"))
}
