package ingest

import (
	"bytes"
	"strconv"
	"strings"
	"time"
)

// pow10 holds the powers of ten that are exact in float64.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNumber parses a decimal number. Plain decimals of up to 15
// significant digits with a small exponent take an exact fast path: the
// integer mantissa and the power of ten are both exact in float64, so one
// multiplication or division rounds correctly (Clinger, PLDI 1990). Anything
// else goes to strconv.ParseFloat, so the result is always the correctly
// rounded value and shortest-form output round-trips. Only plain decimals
// (and the spellings of infinity and NaN, which the callers refuse or take
// as missing) reach strconv.ParseFloat: it also takes Go's literal syntax,
// digit separators ("1_50" as 150) and hexadecimal mantissas ("0x1p4" as
// 16), which no logger writes and which in a log are corruption.
func parseNumber(b []byte) (float64, bool) {
	if v, ok := parseFast(b); ok {
		return v, true
	}
	if len(b) == 0 || !(decimalText(b) || infNaNText(b)) {
		return 0, false
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return v, true // ±Inf or 0 after rounding; caught by the finiteness check
		}
		return 0, false
	}
	return v, true
}

// decimalText reports whether b is a plain decimal number:
// [sign] digits [. [digits]] or [sign] . digits, then an optional
// exponent e or E, [sign], digits.
func decimalText(b []byte) bool {
	i, n := 0, len(b)
	if i < n && (b[i] == '-' || b[i] == '+') {
		i++
	}
	nd := 0
	for i < n && b[i]-'0' < 10 {
		i, nd = i+1, nd+1
	}
	if i < n && b[i] == '.' {
		i++
		for i < n && b[i]-'0' < 10 {
			i, nd = i+1, nd+1
		}
	}
	if nd == 0 {
		return false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < n && (b[i] == '-' || b[i] == '+') {
			i++
		}
		es := i
		for i < n && b[i]-'0' < 10 {
			i++
		}
		if i == es {
			return false
		}
	}
	return i == n
}

// infNaNText reports whether b is a spelling of infinity or NaN that
// strconv.ParseFloat reads: [sign] inf, infinity or nan, in any case.
func infNaNText(b []byte) bool {
	if len(b) > 0 && (b[0] == '-' || b[0] == '+') {
		b = b[1:]
	}
	switch string(bytes.ToLower(b)) {
	case "inf", "infinity", "nan":
		return true
	}
	return false
}

func parseFast(b []byte) (float64, bool) {
	v, end, ok := parseFastAt(b, 0)
	return v, ok && end == len(b)
}

// parseFastAt parses the number that starts at b[i] and stops at the first
// byte that cannot continue it, returning that position. ok is false when
// there is no number there or it needs the slow path (more than 19 digits,
// a mantissa above 2^53 or an exponent beyond +-22, where one rounding
// step is no longer exact).
func parseFastAt(b []byte, i int) (v float64, end int, ok bool) {
	n := len(b)
	neg := false
	if i < n && (b[i] == '-' || b[i] == '+') {
		neg = b[i] == '-'
		i++
	}
	var mant uint64
	start := i
	for i < n && b[i]-'0' < 10 {
		mant = mant*10 + uint64(b[i]-'0')
		i++
	}
	nd := i - start
	exp := 0
	if i < n && b[i] == '.' {
		i++
		fs := i
		for i < n && b[i]-'0' < 10 {
			mant = mant*10 + uint64(b[i]-'0')
			i++
		}
		exp = fs - i
		nd += i - fs
	}
	if nd == 0 || nd > 19 || mant > 1<<53 {
		return 0, i, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '-' || b[i] == '+') {
			eneg = b[i] == '-'
			i++
		}
		es, e := i, 0
		for i < n && b[i]-'0' < 10 && i-es < 4 {
			e = e*10 + int(b[i]-'0')
			i++
		}
		if i == es || (i < n && b[i]-'0' < 10) {
			return 0, i, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	f := float64(mant)
	switch {
	case mant == 0 || exp == 0:
	case exp > 0 && exp <= 22:
		f *= pow10[exp]
	case exp < 0 && exp >= -22:
		f /= pow10[-exp]
	default:
		return 0, i, false
	}
	if neg {
		f = -f
	}
	return f, i, true
}

// timeLayouts are the timestamp forms read; zoned says whether the form
// carries a UTC offset (or "Z").
var timeLayouts = []struct {
	layout string
	zoned  bool
}{
	{time.RFC3339Nano, true},
	{"2006-01-02T15:04:05.999999999", false},
	{"2006-01-02 15:04:05.999999999Z07:00", true},
	{"2006-01-02 15:04:05.999999999", false},
	{"2006-01-02T15:04Z07:00", true},
	// ISO 8601's other forms of the UTC offset, as strftime's %z and
	// many loggers write it: ±hhmm (basic) and ±hh. RFC 3339 allows
	// only ±hh:mm; these were refused.
	{"2006-01-02T15:04:05.999999999Z0700", true},
	{"2006-01-02 15:04:05.999999999Z0700", true},
	{"2006-01-02T15:04:05.999999999Z07", true},
	{"2006-01-02 15:04:05.999999999Z07", true},
	{"2006-01-02 15:04", false},
	{"2006-01-02", false},
}

// parseTimestamp parses an RFC 3339 timestamp (or the same with a space for
// the T, with an ISO 8601 offset ±hhmm or ±hh, or without a zone, taken
// as UTC) into Unix seconds.
func parseTimestamp(b []byte) (float64, bool) {
	v, _, ok := parseTimestampZone(b)
	return v, ok
}

// parseTimestampZone is parseTimestamp that also tells whether the text
// gives its zone (a UTC offset, "Z" or " UTC"); one without is read as UTC.
func parseTimestampZone(b []byte) (v float64, zoned, ok bool) {
	return parseTimestampIn(b, nil)
}

// parseTimestampIn is parseTimestampZone that reads a time written without
// a zone at loc (nil: UTC); one with its offset keeps it.
func parseTimestampIn(b []byte, loc *time.Location) (v float64, zoned, ok bool) {
	if len(b) < 10 || b[4] != '-' {
		return 0, false, false
	}
	if loc == nil {
		loc = time.UTC
	}
	s := string(b)
	utc := false
	if n := len(b); n > 4 && b[n-4] == ' ' && utcWord(string(b[n-3:])) {
		s, utc = s[:len(s)-4]+"Z", true
	}
	for _, l := range timeLayouts {
		if t, err := time.ParseInLocation(l.layout, s, loc); err == nil {
			return unixSeconds(t), l.zoned || utc, true
		}
	}
	return 0, false, false
}

// timeHint says what a time that is neither a number nor an RFC 3339
// time looks like, for the message refusing it: a time of day without its
// date (a logger's separate Date and Time columns), or a date written with
// slashes (a spreadsheet's locale), naming --date-order and, when the
// value rules out all but one order, that order. order is the date order
// given and bad why the value is no real date in it (timeText.parse).
// "" when it looks like neither.
func timeHint(b []byte, order DateOrder, bad string) string {
	if w, rest := zoneWord(b); w != "" {
		if utcWord(w) {
			return timeHint(rest, order, bad)
		}
		h := " (" + strconv.Quote(w) + " after the time is a time-zone word, which is not read: export the times without it and give the zone's offset from UTC with --time-offset, as --time-offset +01:00 for MEZ or CET, +02:00 for MESZ or CEST; or write times with their offset, as in 2026-04-21T08:40:00+01:00"
		if order == DateOrderNone {
			if _, _, _, ok := localDate(rest); ok {
				h += "; the date also needs its order, with --date-order dmy, mdy or ymd"
			}
		}
		return h + ")"
	}
	clock := func(b []byte) bool { // h:mm, hh:mm:ss, hh:mm:ss.fff
		n := 0
		for _, part := range bytes.Split(b, []byte(":")) {
			n++
			if len(part) == 0 {
				return false
			}
			for i, c := range part {
				if (c < '0' || c > '9') && !(n == 3 && i >= 2 && (c == '.' || c == ',')) {
					return false
				}
			}
		}
		return n == 2 || n == 3
	}
	if clock(b) {
		return " (a time of day without its date? time needs the date too: join a separate date column to it: map time to both, DATE+TIME (on the command line --column time=DATE+TIME), or write times as in 2026-04-21T08:40:00Z)"
	}
	if parts, _, _, ok := localDate(b); ok {
		if order != DateOrderNone {
			return " (" + bad + ")"
		}
		return " (a date in a local order, as a spreadsheet writes them? give the order of day, month and year with --date-order dmy, mdy or ymd, or write times as RFC 3339, as in 2026-04-21T08:40:00Z" + orderAllowed(parts) + ")"
	}
	date, _, _ := bytes.Cut(b, []byte(" ")) // 21/04/26, 2026/4/21/9
	for _, sep := range []byte{'/', '.'} {
		if len(date) >= 6 && bytes.Count(date, []byte{sep}) >= 2 && len(bytes.Trim(date, "0123456789"+string(sep))) == 0 {
			return " (a date in a local order, as a spreadsheet writes them? --date-order dmy, mdy or ymd reads a day and month of one or two digits and a year of four, then a time h:mm or h:mm:ss on the 24-hour clock; or write times as RFC 3339, as in 2026-04-21T08:40:00Z)"
		}
	}
	return ""
}

func unixSeconds(t time.Time) float64 {
	return float64(t.Unix()) + float64(t.Nanosecond())/1e9
}

// isMissingText reports whether b marks a missing value: an empty cell,
// or, in any case, NaN, NA, N/A, #N/A (a spreadsheet's), null, None, or a
// lone - or -- (a logger's "no value"; no number is a dash alone).
func isMissingText(b []byte) bool {
	if len(b) > 4 {
		return false
	}
	switch strings.ToLower(string(b)) {
	case "", "nan", "na", "n/a", "#n/a", "null", "none", "-", "--":
		return true
	}
	return false
}

// missingMarkers lists the texts isMissingText takes, for messages.
const missingMarkers = "an empty cell, NaN, NA, N/A, #N/A, null, None, - and --, in any case"

// markerHint is what an error adds for a refused text t that may be a
// missing-value marker (no digit, a word or a few signs: "n.a.",
// "#VALUE!", "missing", "?"), "" for other texts. It does not say the
// text is one: a word in a numeric column may as well be a column read
// in the wrong place.
func markerHint(t []byte) string {
	if len(t) == 0 || len(t) > 12 {
		return ""
	}
	for _, c := range t {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z':
		case strings.IndexByte("#/.-?!*_ ", c) >= 0:
		default:
			return ""
		}
	}
	return " (if it marks a missing value: the only texts read as missing are " + missingMarkers + ")"
}

func finite(v float64) bool { return v-v == 0 }

func unixTime(sec, nsec int64) time.Time { return time.Unix(sec, nsec) }
