package ingest

import (
	"fmt"
	"strings"
	"testing"
	"time"
)

// localLog writes a log of the instants at (UTC), each time written by
// stamp, with a comma or another delimiter.
func localLog(at []time.Time, delim string, stamp func(time.Time) string) string {
	var b strings.Builder
	b.WriteString(strings.Join([]string{"time", "bx", "by", "bz"}, delim) + "\n")
	for i, t := range at {
		fmt.Fprintf(&b, "%s%s%d%s17600%s-46900\n", stamp(t), delim, i, delim, delim)
	}
	return b.String()
}

// surveyInstants are three readings across midnight UTC, 21/22 April 2026,
// with fractions of a second.
func surveyInstants() []time.Time {
	t0 := time.Date(2026, 4, 21, 23, 59, 58, 250e6, time.UTC)
	return []time.Time{t0, t0.Add(1500 * time.Millisecond), t0.Add(3 * time.Second)}
}

func unixOf(at []time.Time) []float64 {
	out := make([]float64, len(at))
	for i, t := range at {
		out[i] = float64(t.Unix()) + float64(t.Nanosecond())/1e9
	}
	return out
}

func naiveWarning(r []string) string {
	for _, w := range r {
		if strings.Contains(w, "give no UTC offset") {
			return w
		}
	}
	return ""
}

// TestTimeOffsetLocalTimes: a logger on a zone's local time at UTC+02:00
// writes its times without the offset (ISO 8601's local time, RFC 3339
// section 5.6 requires the offset). WithTimeOffset(+2 h) must read them as
// the same instants as the RFC 3339 copy of the log with "+02:00" written
// into each time, computed here by Go's time package, with no warning that
// they may be local times; without it they are read 2 h late, with that
// warning, as before. Times that carry their own offset (Z, -05:00) keep
// it under any WithTimeOffset.
func TestTimeOffsetLocalTimes(t *testing.T) {
	at := surveyInstants()
	want := unixOf(at)
	cest := time.FixedZone("", 2*3600)
	rfc := localLog(at, ",", func(t time.Time) string { return t.In(cest).Format("2006-01-02T15:04:05.000Z07:00") })
	local := localLog(at, ",", func(t time.Time) string { return t.In(cest).Format("2006-01-02 15:04:05.000") })

	ref, err := ReadSamples(writeFile(t, "rfc.csv", rfc))
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(ref.Time, want) {
		t.Fatalf("RFC 3339 copy: %v, want %v", ref.Time, want)
	}
	r, err := Open(writeFile(t, "local.csv", local), WithTimeOffset(2*time.Hour), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	s, err := Collect(r)
	r.Release()
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(s.Time, ref.Time) {
		t.Errorf("local times with WithTimeOffset(+02:00): %v, want the RFC 3339 copy's %v", s.Time, ref.Time)
	}
	if w := naiveWarning(Warnings(r)); w != "" || s.NaiveTime {
		t.Errorf("the offset was given, yet: %q (NaiveTime %v)", w, s.NaiveTime)
	}
	// Without the offset: 2 h late, with the warning.
	r, err = Open(writeFile(t, "local.csv", local))
	if err != nil {
		t.Fatal(err)
	}
	s, err = Collect(r)
	r.Release()
	if err != nil {
		t.Fatal(err)
	}
	if s.Time[0]-want[0] != 7200 || naiveWarning(Warnings(r)) == "" {
		t.Errorf("without the offset: first time %v (want %v, 2 h late) and warnings %q", s.Time[0], want[0]+7200, Warnings(r))
	}
	// Zoned times keep their offset, whatever offset is given.
	for _, layout := range []string{"2006-01-02T15:04:05.000Z07:00", "2006-01-02 15:04:05.000Z0700"} {
		for _, zone := range []*time.Location{time.UTC, time.FixedZone("", -5*3600)} {
			text := localLog(at, ",", func(t time.Time) string { return t.In(zone).Format(layout) })
			s, err := ReadSamples(writeFile(t, "zoned.csv", text), WithTimeOffset(2*time.Hour))
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(s.Time, want) {
				t.Errorf("%s in %v with WithTimeOffset(+02:00): %v, want %v (not shifted)", layout, zone, s.Time, want)
			}
		}
	}
	// Arrow text column too.
	var inCEST []string
	for _, tm := range at {
		inCEST = append(inCEST, tm.In(cest).Format("2006-01-02T15:04:05.000"))
	}
	p := writeTextTimeArrow(t, "local.arrows", inCEST)
	r, err = Open(p, WithTimeOffset(2*time.Hour))
	if err != nil {
		t.Fatal(err)
	}
	s, err = Collect(r)
	r.Release()
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(s.Time, want) || naiveWarning(Warnings(r)) != "" {
		t.Errorf("Arrow text with WithTimeOffset(+02:00): %v, want %v; warnings %q", s.Time, want, Warnings(r))
	}
}

// TestDateOrder: dates in a local order, as spreadsheets write them
// (21/04/2026 09:40:00.000 day first, 4/21/2026 9:40:05 month first,
// 21.04.2026 09:40 with dots), read with WithDateOrder at the instants Go's
// time package gives for the same civil date and time; with
// WithTimeOffset as that offset's local times. The same text is read in
// CSV and in an Arrow string column.
func TestDateOrder(t *testing.T) {
	at := surveyInstants()
	want := unixOf(at)
	whole := func(t time.Time) time.Time { return t.Truncate(time.Second) }
	minute := func(t time.Time) time.Time { return t.Truncate(time.Minute) }
	for _, c := range []struct {
		name  string
		order DateOrder
		delim string
		stamp func(time.Time) string
		at    func(time.Time) time.Time // the instant the text keeps
	}{
		{"dmy slashes, fraction with a point", DateOrderDMY, ",", func(t time.Time) string { return t.Format("02/01/2006 15:04:05.000") }, nil},
		{"dmy slashes, fraction with a comma", DateOrderDMY, ";", func(t time.Time) string { return t.Format("02/01/2006 15:04:05,000") }, nil},
		{"dmy dots, minutes", DateOrderDMY, ";", func(t time.Time) string { return t.Format("02.01.2006 15:04") }, minute},
		{"dmy one digit", DateOrderDMY, ",", func(t time.Time) string { return t.Format("2/1/2006 15:04:05.000") }, nil},
		{"mdy one digit", DateOrderMDY, ",", func(t time.Time) string { return t.Format("1/2/2006 15:04:05") }, whole},
		{"mdy two digits", DateOrderMDY, ",", func(t time.Time) string { return t.Format("01/02/2006 15:04:05.000") }, nil},
		{"ymd slashes", DateOrderYMD, ",", func(t time.Time) string { return t.Format("2006/01/02 15:04:05.000") }, nil},
	} {
		exp := want
		if c.at != nil {
			var kept []time.Time
			for _, tm := range at {
				kept = append(kept, c.at(tm))
			}
			exp = unixOf(kept)
		}
		text := localLog(at, c.delim, c.stamp)
		s, err := ReadSamples(writeFile(t, "dates.csv", text), WithDateOrder(c.order), WithAllocator(checked(t)))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if !sameFloats(s.Time, exp) || !s.NaiveTime {
			t.Errorf("%s: %v (naive %v), want %v, read as UTC with the warning", c.name, s.Time, s.NaiveTime, exp)
		}
		// The same local times at UTC-05:30 (not a real zone's, but a
		// half hour): read with the offset, 5.5 h later.
		s, err = ReadSamples(writeFile(t, "dates.csv", text), WithDateOrder(c.order), WithTimeOffset(-5*time.Hour-30*time.Minute))
		if err != nil {
			t.Fatalf("%s with an offset: %v", c.name, err)
		}
		for i := range exp {
			if s.Time[i] != exp[i]+5.5*3600 {
				t.Errorf("%s at -05:30: time %d is %v, want %v", c.name, i, s.Time[i], exp[i]+5.5*3600)
				break
			}
		}
		if s.NaiveTime {
			t.Errorf("%s at -05:30: still naive", c.name)
		}
	}
	// An Arrow string column of day-first dates.
	var dates []string
	for _, tm := range at {
		dates = append(dates, tm.Format("02/01/2006 15:04:05.000"))
	}
	p := writeTextTimeArrow(t, "dates.arrows", dates)
	s, err := ReadSamples(p, WithDateOrder(DateOrderDMY))
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(s.Time, want) {
		t.Errorf("Arrow dmy: %v, want %v", s.Time, want)
	}
	_, err = ReadSamples(p, WithDateOrder(DateOrderMDY))
	wantErr(t, err, `dates.arrows: batch 0 row 0: column time: "21/04/2026 23:59:58.250" is not a number or an RFC 3339 time (read in the date order mdy given by --date-order, its month is 21`)
}

// TestDateOrderRefusals: a date that does not exist in the order given
// is refused at its place (file, line, column), saying why; without a date
// order such dates are refused as before, the message now naming
// --date-order and the order the value allows when only one does.
func TestDateOrderRefusals(t *testing.T) {
	log := func(times ...string) string {
		b := "time;bx;by;bz\n"
		for _, tm := range times {
			b += tm + ";1;2;3\n"
		}
		return b
	}
	for _, c := range []struct {
		name  string
		text  string
		order DateOrder
		want  []string
	}{
		{"31 February", log("28/02/2026 10:00", "31/02/2026 10:00"), DateOrderDMY,
			[]string{`log.csv:3: column time: "31/02/2026 10:00"`, "its day is 31, and February 2026 has 28 days"}},
		{"month 21 read as dmy", log("4/21/2026 9:40:05"), DateOrderDMY,
			[]string{`log.csv:2: column time: "4/21/2026 9:40:05"`, "its month is 21", "real only in the order mdy: --date-order mdy"}},
		{"hour 24", log("21/04/2026 24:00"), DateOrderDMY,
			[]string{`log.csv:2: column time:`, "past 23:59:59"}},
		{"AM/PM", log("4/21/2026 9:40 PM"), DateOrderMDY,
			[]string{`log.csv:2: column time:`, "24-hour clock"}},
		{"year first read as dmy", log("2026/04/21 10:00"), DateOrderDMY,
			[]string{`log.csv:2: column time:`, "its year is not where", "real only in the order ymd"}},
		{"no order, day first", log("21/04/2026 09:40:00,000"), DateOrderNone,
			[]string{`log.csv:2: column time: "21/04/2026 09:40:00,000" is not a number or an RFC 3339 time`, "--date-order dmy, mdy or ymd", "real only in the order dmy: --date-order dmy"}},
		{"no order, month first", log("4/21/2026 9:40"), DateOrderNone,
			[]string{"--date-order", "real only in the order mdy"}},
		{"no order, either", log("04/05/2026 9:40"), DateOrderNone,
			[]string{"--date-order", "real in the orders dmy and mdy"}},
	} {
		_, err := ReadSamples(writeFile(t, "log.csv", c.text), WithDateOrder(c.order))
		if err == nil {
			t.Errorf("%s: read", c.name)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %v\nwant %q", c.name, err, w)
			}
		}
		if strings.Contains(err.Error(), "decimal comma") {
			t.Errorf("%s: a decimal-comma hint for a date: %v", c.name, err)
		}
	}
	// A column that says UTC and an offset other than 0 contradict.
	_, err := ReadSamples(writeFile(t, "utc.csv", "Time (UTC),bx,by,bz\n2026-04-21T10:00:00,1,2,3\n"), WithTimeOffset(time.Hour))
	wantErr(t, err, "says its times are UTC")
	if _, err := ReadSamples(writeFile(t, "utc.csv", "Time (UTC),bx,by,bz\n2026-04-21T10:00:00,1,2,3\n"), WithTimeOffset(0)); err != nil {
		t.Errorf("UTC column with offset Z: %v", err)
	}
}

// TestParseTimeOffset: ISO 8601's offset forms, and nonsense refused.
func TestParseTimeOffset(t *testing.T) {
	for in, want := range map[string]time.Duration{
		"+01:00": time.Hour, "-05:30": -5*time.Hour - 30*time.Minute, "+0100": time.Hour, "+02": 2 * time.Hour,
		"Z": 0, "utc": 0, "+14:00": 14 * time.Hour, "-12:00": -12 * time.Hour, "+05:45": 5*time.Hour + 45*time.Minute,
	} {
		got, err := ParseTimeOffset(in)
		if err != nil || got != want {
			t.Errorf("ParseTimeOffset(%q) = %v, %v; want %v", in, got, err, want)
		}
	}
	for _, in := range []string{"", "1", "01:00", "+1:00", "+01:60", "+15:00", "-13:00", "+01:0", "CET", "+0a:00", "++1:00", "+01:00:00"} {
		if got, err := ParseTimeOffset(in); err == nil {
			t.Errorf("ParseTimeOffset(%q) = %v, want an error", in, got)
		}
	}
}
