package ingest

import (
	"bytes"
	"fmt"
	"strconv"
	"strings"
	"time"
)

// DateOrder is the order of day, month and year in dates written with
// slashes, dots or dashes between them (21/04/2026, 4/21/2026, 21.04.2026),
// as spreadsheets and loggers write them in their locale (WithDateOrder).
type DateOrder int

const (
	// DateOrderNone reads no such date: only RFC 3339 times (and their
	// near forms) and numbers are times. It is the default.
	DateOrderNone DateOrder = iota
	// DateOrderDMY is day, month, year: 21/04/2026, 21.04.2026.
	DateOrderDMY
	// DateOrderMDY is month, day, year: 4/21/2026.
	DateOrderMDY
	// DateOrderYMD is year, month, day: 2026/04/21, 2026.04.21.
	DateOrderYMD
)

func (o DateOrder) String() string {
	switch o {
	case DateOrderNone:
		return ""
	case DateOrderDMY:
		return "dmy"
	case DateOrderMDY:
		return "mdy"
	case DateOrderYMD:
		return "ymd"
	}
	return fmt.Sprintf("DateOrder(%d)", int(o))
}

// ParseDateOrder parses "dmy", "mdy" or "ymd" (any case).
func ParseDateOrder(s string) (DateOrder, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "dmy":
		return DateOrderDMY, nil
	case "mdy":
		return DateOrderMDY, nil
	case "ymd":
		return DateOrderYMD, nil
	}
	return DateOrderNone, fmt.Errorf("ingest: unknown date order %q (want dmy, mdy or ymd)", s)
}

// WithDateOrder reads text times whose date is written with '/', '.' or
// '-' between its parts in the order o, as 21/04/2026 09:40:00.000 (dmy),
// 21.04.2026 09:40 (dmy) or 4/21/2026 9:40:05 (mdy): a day and month of
// one or two digits, a year of four, then optionally a space (or T) and a
// time of day on the 24-hour clock, h:mm or h:mm:ss with an optional
// fraction after '.' or ','. Such a time carries no UTC offset: it is read
// as UTC, with the warning that it may be a local time, unless
// WithTimeOffset gives its offset. A date that does not exist in that
// order (31/02/2026, or month 21 in 4/21/2026 read as dmy) is an error
// naming its place. Without this option such dates are refused, the
// message naming the orders the value allows.
func WithDateOrder(o DateOrder) Option {
	return func(c *config) {
		switch o {
		case DateOrderNone, DateOrderDMY, DateOrderMDY, DateOrderYMD:
			c.dateOrder = o
		default:
			c.fail("date order %d: want DateOrderDMY, DateOrderMDY or DateOrderYMD", int(o))
		}
	}
}

// maxZoneOffset bounds a zone's UTC offset: the zones in use run from
// -12:00 to +14:00.
const maxZoneOffset = 14 * time.Hour

// ParseTimeOffset parses a fixed UTC offset as ISO 8601 writes it: +hh:mm,
// -hh:mm, +hhmm or +hh, or Z (also UTC) for UTC itself, as +01:00, -05:30,
// +0100 or Z. The offset must lie within a day's zones (-12:00 to +14:00)
// and its minutes below 60.
func ParseTimeOffset(s string) (time.Duration, error) {
	t := strings.TrimSpace(s)
	switch strings.ToUpper(t) {
	case "Z", "UTC", "+00:00", "-00:00", "+0000", "-0000", "+00", "-00":
		return 0, nil
	}
	bad := fmt.Errorf("ingest: time offset %q: want a UTC offset as +hh:mm, -hh:mm, +hhmm or Z (such as +01:00, -05:30, +0100)", s)
	if len(t) < 3 || (t[0] != '+' && t[0] != '-') {
		return 0, bad
	}
	sign, d := time.Duration(1), t[1:]
	if t[0] == '-' {
		sign = -1
	}
	var hh, mm string
	switch {
	case len(d) == 5 && d[2] == ':':
		hh, mm = d[:2], d[3:]
	case len(d) == 4:
		hh, mm = d[:2], d[2:]
	case len(d) == 2:
		hh, mm = d, "00"
	default:
		return 0, bad
	}
	h, err1 := strconv.Atoi(hh)
	m, err2 := strconv.Atoi(mm)
	if err1 != nil || err2 != nil || strings.ContainsAny(hh+mm, "+- ") {
		return 0, bad
	}
	if m >= 60 {
		return 0, fmt.Errorf("ingest: time offset %q: %d minutes (want below 60)", s, m)
	}
	off := sign * (time.Duration(h)*time.Hour + time.Duration(m)*time.Minute)
	if off < -12*time.Hour || off > maxZoneOffset {
		return 0, fmt.Errorf("ingest: time offset %q: no time zone is that far from UTC (they run from -12:00 to +14:00)", s)
	}
	return off, nil
}

// WithTimeOffset reads text times written without a UTC offset as the
// local times of the fixed offset off east of UTC (+01:00 is
// time.Hour, -05:30 is -5h30m), instead of as UTC with a warning that
// they may be local times: the offset is stated, so no such warning is
// given. Times that carry their own offset (or Z) keep it. Timestamps
// stored as numbers (seconds since 1970) and Arrow timestamp columns
// with a time zone are not changed; Arrow timestamp columns without one
// hold wall-clock readings and are read at the offset too. A time column that says its times are UTC (its unit or
// name) with an offset other than 0 is an error.
func WithTimeOffset(off time.Duration) Option {
	return func(c *config) {
		if off < -12*time.Hour || off > maxZoneOffset || off%time.Minute != 0 {
			c.fail("time offset %v: want whole minutes from -12:00 to +14:00", off)
			return
		}
		c.timeOffset, c.timeOffsetSet = off, true
	}
}

// timeText says how text times are read: loc is the zone of times
// written without an offset (nil: UTC), stated whether the user gave it,
// order the date order of slash, dot or dash dates (none: refused). zone
// is the IANA zone given by WithTimeZone (nil: none), in which such times
// are read by their wall clock (zoneInstant) rather than through loc.
type timeText struct {
	loc    *time.Location
	stated bool
	order  DateOrder
	zone   *time.Location
}

// timeTextOf is the timeText of the options in c.
func timeTextOf(c *config) timeText {
	var tt timeText
	if c == nil {
		return tt
	}
	tt.order = c.dateOrder
	if c.timeOffsetSet {
		tt.stated = true
		tt.loc = time.UTC
		if c.timeOffset != 0 {
			tt.loc = time.FixedZone(offsetText(c.timeOffset), int(c.timeOffset/time.Second))
		}
	}
	if c.timeZone != nil {
		if c.timeOffsetSet {
			c.fail("time zone %s and time offset %s given together: give one (the zone, when the log crosses a change of the clocks)", c.timeZone, offsetText(c.timeOffset))
		}
		tt.stated, tt.loc, tt.zone = true, time.UTC, c.timeZone
	}
	return tt
}

// offsetText writes an offset as +hh:mm.
func offsetText(off time.Duration) string {
	s := "+"
	if off < 0 {
		s, off = "-", -off
	}
	m := int(off / time.Minute)
	return fmt.Sprintf("%s%02d:%02d", s, m/60, m%60)
}

// parse reads a text time into Unix seconds. zoned is true when the text
// carries its offset or the offset was stated (WithTimeOffset): the
// time is then not one that may be a local time read as UTC. bad is
// non-empty when b is a date in the local form that WithDateOrder reads
// but not a real date or time in the order given: it says why.
func (tt timeText) parse(b []byte) (v float64, zoned, ok bool, bad string) {
	r := tt.read(b)
	return r.v, r.own || tt.stated, r.ok, r.bad
}

// timeRead is a text time as read (timeText.read): v in Unix seconds,
// own when the text carries its own UTC offset (or Z, or " UTC"), inZone
// when it was read by its wall clock in the zone of WithTimeZone (v is
// then the earlier of the two instants an hour repeated when the clocks
// go back gives: zoneClock.resolve chooses), ok when it is a time; bad
// says why a text in a local date form, or one the zone skips (gap), is
// no time.
type timeRead struct {
	v               float64
	own, inZone, ok bool
	gap             bool
	bad             string
}

// read reads a text time (see timeRead).
func (tt timeText) read(b []byte) timeRead {
	if tt.zone != nil {
		r := tt.readIn(b, time.UTC)
		if r.ok && !r.own {
			at, n := zoneInstant(r.v, tt.zone)
			if n == 0 {
				return timeRead{gap: true, bad: gapText(r.v, tt.zone)}
			}
			r.v, r.inZone = at, true
		}
		return r
	}
	return tt.readIn(b, tt.loc)
}

// readIn reads a text time, one without its offset at loc (nil: UTC).
func (tt timeText) readIn(b []byte, loc *time.Location) timeRead {
	if v, zoned, ok := parseTimestampIn(b, loc); ok {
		return timeRead{v: v, own: zoned, ok: true}
	}
	if tt.order == DateOrderNone {
		return timeRead{}
	}
	if loc == nil {
		loc = time.UTC
	}
	if w, rest := zoneWord(b); utcWord(w) {
		// A local date saying it is UTC, as "02.02.2026 15:00:00 UTC".
		if t, bad, form := parseLocalDate(rest, tt.order, time.UTC); form && bad == "" {
			return timeRead{v: unixSeconds(t), own: true, ok: true}
		}
	}
	t, bad, form := parseLocalDate(b, tt.order, loc)
	if !form || bad != "" {
		return timeRead{bad: bad}
	}
	return timeRead{v: unixSeconds(t), ok: true}
}

// zoneWord splits a trailing zone word off a time text: " MEZ", " CET",
// " UTC", " Z" after a time of day (a text holding a ':'), two to five
// ASCII letters. w is "" when there is none.
func zoneWord(b []byte) (w string, rest []byte) {
	i := bytes.LastIndexByte(b, ' ')
	if i <= 0 || bytes.IndexByte(b[:i], ':') < 0 {
		return "", b
	}
	word := b[i+1:]
	if len(word) < 1 || len(word) > 5 {
		return "", b
	}
	for _, c := range word {
		if !(c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z') {
			return "", b
		}
	}
	if len(word) == 1 && word[0] != 'Z' {
		return "", b
	}
	switch strings.ToUpper(string(word)) {
	case "AM", "PM":
		return "", b // the 12-hour clock's, which the time's own message refuses
	}
	return string(word), bytes.TrimRight(b[:i], " ")
}

// utcWord says whether a zone word after a time (zoneWord) names UTC:
// "Z", or "UTC" or "GMT" in any case (found in review: "utc" and "GMT"
// got the hint to give --time-offset as for MEZ or CET).
func utcWord(w string) bool {
	return w == "Z" || strings.EqualFold(w, "UTC") || strings.EqualFold(w, "GMT")
}

// localDate splits a date written in a local form, with '/', '.' or '-'
// between three groups of digits, then optionally ' ' or 'T' and a time
// of day: parts are the date's three numbers as written, clock the rest
// (nil: none). ok is false when b does not have that form.
func localDate(b []byte) (parts [3][]byte, sep byte, clock []byte, ok bool) {
	date := b
	if i := bytes.IndexAny(b, " T"); i >= 0 {
		date, clock = b[:i], bytes.TrimLeft(b[i+1:], " ")
		if len(clock) == 0 {
			return parts, 0, nil, false
		}
	}
	for _, s := range []byte{'/', '.', '-'} {
		if bytes.Count(date, []byte{s}) == 2 {
			sep = s
			break
		}
	}
	if sep == 0 || (sep == '-' && len(date) > 4 && date[4] == '-') {
		return parts, 0, nil, false // none, or ISO 8601's own order
	}
	f := bytes.Split(date, []byte{sep})
	for i := range f {
		if len(f[i]) == 0 || len(f[i]) > 4 || len(bytes.Trim(f[i], "0123456789")) != 0 {
			return parts, 0, nil, false
		}
		parts[i] = f[i]
	}
	// One group of four digits (the year), first or last.
	if (len(parts[0]) == 4) == (len(parts[2]) == 4) || len(parts[1]) > 2 {
		return parts, 0, nil, false
	}
	return parts, sep, clock, true
}

// parseLocalDate reads b as a date in the local form (localDate) in the
// order o, at loc. form is false when b does not have that form; bad
// says why one that has it is not a real date or time.
func parseLocalDate(b []byte, o DateOrder, loc *time.Location) (t time.Time, bad string, form bool) {
	parts, _, clock, ok := localDate(b)
	if !ok {
		return t, "", false
	}
	y, m, d, bad := dateIn(parts, o)
	if bad != "" {
		return t, bad + orderAllowed(parts), true
	}
	var hh, mm, ss, ns int
	if clock != nil {
		if hh, mm, ss, ns, bad = parseClock(clock); bad != "" {
			return t, bad, true
		}
	}
	return time.Date(y, time.Month(m), d, hh, mm, ss, ns, loc), "", true
}

// dateIn reads the date parts (localDate) in the order o; bad says why
// they make no real date in it.
func dateIn(parts [3][]byte, o DateOrder) (y, m, d int, bad string) {
	n := func(p []byte) int { v, _ := strconv.Atoi(string(p)); return v }
	yp, other := parts[2], parts[0]
	switch o {
	case DateOrderDMY:
		d, m, y = n(parts[0]), n(parts[1]), n(parts[2])
	case DateOrderMDY:
		m, d, y = n(parts[0]), n(parts[1]), n(parts[2])
	case DateOrderYMD:
		y, m, d = n(parts[0]), n(parts[1]), n(parts[2])
		yp, other = parts[0], parts[2]
	default:
		return 0, 0, 0, "no date order is given"
	}
	if len(yp) != 4 || len(other) > 2 {
		return 0, 0, 0, fmt.Sprintf("its year is not where the date order %s given by --date-order puts it, in four digits", o)
	}
	if m < 1 || m > 12 {
		return 0, 0, 0, fmt.Sprintf("read in the date order %s given by --date-order, its month is %d", o, m)
	}
	if last := daysIn(y, m); d < 1 || d > last {
		return 0, 0, 0, fmt.Sprintf("read in the date order %s given by --date-order, its day is %d, and %s %d has %d days", o, d, time.Month(m), y, last)
	}
	return y, m, d, ""
}

// parseClock reads a time of day on the 24-hour clock: h:mm, h:mm:ss or
// h:mm:ss with a fraction after '.' or ','. why says what is wrong.
func parseClock(c []byte) (hh, mm, ss, ns int, why string) {
	bad := "its time of day is not h:mm or h:mm:ss (24-hour clock, a fraction of a second after '.' or ','; no AM/PM, no UTC offset)"
	var frac []byte
	if i := bytes.IndexAny(c, ".,"); i >= 0 {
		c, frac = c[:i], c[i+1:]
		if len(frac) == 0 || len(frac) > 9 || len(bytes.Trim(frac, "0123456789")) != 0 {
			return 0, 0, 0, 0, bad
		}
	}
	f := bytes.Split(c, []byte(":"))
	if len(f) < 2 || len(f) > 3 || (frac != nil && len(f) != 3) {
		return 0, 0, 0, 0, bad
	}
	var v [3]int
	for i, p := range f {
		if len(p) == 0 || len(p) > 2 || (i > 0 && len(p) != 2) || len(bytes.Trim(p, "0123456789")) != 0 {
			return 0, 0, 0, 0, bad
		}
		v[i], _ = strconv.Atoi(string(p))
	}
	if v[0] > 23 || v[1] > 59 || v[2] > 59 {
		return 0, 0, 0, 0, fmt.Sprintf("its time of day %s is past 23:59:59", c)
	}
	for i := 0; i < 9; i++ {
		ns *= 10
		if i < len(frac) {
			ns += int(frac[i] - '0')
		}
	}
	return v[0], v[1], v[2], ns, ""
}

func daysIn(y, m int) int {
	return time.Date(y, time.Month(m)+1, 0, 0, 0, 0, 0, time.UTC).Day()
}

// dateOrders lists the orders in which the date parts (localDate) make
// a real date.
func dateOrders(parts [3][]byte) []DateOrder {
	var out []DateOrder
	for _, o := range []DateOrder{DateOrderDMY, DateOrderMDY, DateOrderYMD} {
		if _, _, _, bad := dateIn(parts, o); bad == "" {
			out = append(out, o)
		}
	}
	return out
}

// orderAllowed says, for a message, which date orders the parts allow:
// "" when they allow none or all.
func orderAllowed(parts [3][]byte) string {
	os := dateOrders(parts)
	switch len(os) {
	case 1:
		return fmt.Sprintf("; this date is real only in the order %s: --date-order %s", os[0], os[0])
	case 2:
		return fmt.Sprintf("; this date is real in the orders %s and %s", os[0], os[1])
	}
	return ""
}
