package ingest

import (
	"fmt"
	"math"
	"strings"
	"time"

	// The zone database is built in, so that a machine without one
	// (a bare container, Windows) reads the same zones.
	_ "time/tzdata"
)

// LoadTimeZone loads the IANA time zone name, as Europe/Berlin or
// America/New_York, from the zone database built into the program. UTC
// is a zone too; "Local" (the machine's own zone) and "" are refused, so
// that a log reads the same on every machine.
func LoadTimeZone(name string) (*time.Location, error) {
	n := strings.TrimSpace(name)
	if n == "" || strings.EqualFold(n, "local") {
		return nil, fmt.Errorf("ingest: time zone %q: want an IANA zone name, such as Europe/Berlin or America/New_York (the machine's own zone is not read)", name)
	}
	loc, err := time.LoadLocation(n)
	if err != nil {
		return nil, fmt.Errorf("ingest: time zone %q: not an IANA zone name (want a name such as Europe/Berlin, America/New_York or UTC; a fixed offset such as +01:00 is --time-offset's)", name)
	}
	return loc, nil
}

// WithTimeZone reads times written without a UTC offset (text times,
// and Arrow timestamp columns without a time zone) as local times of the
// IANA zone loc (LoadTimeZone), whose offset follows the zone's changes
// of the clocks: a log across a change reads right on both sides of it.
// Times that carry their own offset (or Z) keep it, with a warning that
// the zone was not used for them; times stored as numbers (seconds since
// 1970, UTC by definition) are not changed, with a warning saying so.
//
// The hour repeated when the clocks go back is read so that the log's
// times do not go backwards: the first time round at the earlier offset
// (summer time's), and once the times step back, at the later one,
// with a warning naming the first reading read so. A time the change
// skips (the hour lost when the clocks go forward) is an error naming
// its place: a logger whose clock did not change wrote it. A time column
// that says its times are UTC (its unit or name) with a zone other than
// UTC is an error, and so is WithTimeOffset given with it. Reading a CSV
// file in a zone parses it on one goroutine (the repeated hour is
// resolved in file order).
func WithTimeZone(loc *time.Location) Option {
	return func(c *config) {
		if loc == nil {
			c.fail("time zone: nil location")
			return
		}
		c.timeZone = loc
	}
}

// zoneProbe is how far from a wall-clock time the zone's offsets are
// looked up: a change of the clocks lies within a day of the times it
// makes repeat or skip.
const zoneProbe = 26 * 3600

// zoneInstant reads the wall-clock time wall (Unix seconds of that clock
// reading taken as UTC) in loc: at is the earliest instant at which the
// zone's clocks read wall, n how many there are (1; 2 in the hour
// repeated when the clocks go back, at the first of which the clocks
// still show the offset before the change; 0 in the hour skipped when
// they go forward). time.Date picks one of two without saying which
// (for Europe's zones the later), so the candidates are found here: one
// for each offset the zone has within a day of wall.
func zoneInstant(wall float64, loc *time.Location) (at float64, n int) {
	sec := math.Floor(wall)
	frac := wall - sec
	s := int64(sec)
	best := int64(0)
	var seen [3]int
	for k, p := range []int64{s - zoneProbe, s, s + zoneProbe} {
		_, off := time.Unix(p, 0).In(loc).Zone()
		seen[k] = off
		dup := false
		for j := 0; j < k; j++ {
			dup = dup || seen[j] == off
		}
		if dup {
			continue
		}
		u := s - int64(off)
		if _, o := time.Unix(u, 0).In(loc).Zone(); o != off {
			continue
		}
		if n == 0 || u < best {
			best = u
		}
		n++
	}
	if n == 0 {
		return math.NaN(), 0
	}
	return float64(best) + frac, n
}

// laterInstant is the second instant whose wall clock in loc reads as at
// does, when at lies in the hour repeated when the clocks go back (the
// first time round): ok is false otherwise.
func laterInstant(at float64, loc *time.Location) (later float64, ok bool) {
	sec := math.Floor(at)
	t := time.Unix(int64(sec), 0).In(loc)
	_, off1 := t.Zone()
	_, end := t.ZoneBounds()
	if end.IsZero() {
		return 0, false
	}
	_, off2 := end.Zone()
	if off2 >= off1 {
		return 0, false
	}
	u := at + float64(off1-off2)
	if u < float64(end.Unix()) {
		return 0, false
	}
	return u, true
}

// gapText says why the wall-clock time wall is no time in loc.
func gapText(wall float64, loc *time.Location) string {
	s := int64(math.Floor(wall))
	_, before := time.Unix(s-zoneProbe, 0).In(loc).Zone()
	_, after := time.Unix(s+zoneProbe, 0).In(loc).Zone()
	w := time.Unix(s, 0).UTC()
	return fmt.Sprintf("is a time that does not exist in %s: on %s its clocks went forward from %s to %s, skipping %s: a logger whose clock kept the old offset wrote it? Read this log with that offset (--time-offset %s) or write the times with their offsets",
		loc, w.Format("2006-01-02"), offsetText(time.Duration(before)*time.Second), offsetText(time.Duration(after)*time.Second), w.Format("15:04:05"), offsetText(time.Duration(before)*time.Second))
}

// zoneClock resolves, in the order a log is read, the times read in its
// zone (WithTimeZone) that fall in the hour repeated when the clocks go
// back: the earlier instant while it does not step back from the time
// before, else the later one. It also notes, once each, the times that
// kept their own offset and the numbers that ignore the zone. Its notes
// are warnings for the reader to give.
type zoneClock struct {
	loc   *time.Location
	last  float64 // the last time read, NaN before the first
	early bool    // a repeated-hour time read the first time round
	late  bool    // one read the second time round
	own   bool    // a time with its own offset was noted
	num   bool    // a number was noted
	notes []string
}

func newZoneClock(loc *time.Location) *zoneClock {
	if loc == nil {
		return nil
	}
	return &zoneClock{loc: loc, last: math.NaN()}
}

// take passes on the time v read at where ("log.csv:12", "log.parquet:
// batch 0 row 4", the column named) as written text; r is how it was
// read (nil: a number, or a timestamp with its own zone when own). It
// returns the time, resolved when it is in the repeated hour.
func (z *zoneClock) take(v float64, r *timeRead, own bool, where, text string) float64 {
	if z == nil || v != v {
		return v
	}
	switch {
	case r != nil && r.inZone:
		if later, ok := laterInstant(v, z.loc); ok {
			first := z.last != z.last || v >= z.last
			if !first {
				v = later
			}
			z.noteRepeat(first, v, where, text)
		}
	case own || (r != nil && r.own):
		if !z.own {
			z.own = true
			z.notes = append(z.notes, fmt.Sprintf("%s: %s carries its own UTC offset and is read with it; the time zone %s applies only to times written without one", where, quoteText(text), z.loc))
		}
	case r == nil:
		if !z.num {
			z.num = true
			z.notes = append(z.notes, fmt.Sprintf("%s: %s is a number, read as seconds (since 1970 UTC, or the log's own unit): the time zone %s applies only to times written as dates without an offset", where, text, z.loc))
		}
	}
	z.last = v
	return v
}

// noteRepeat notes the first time read in the repeated hour the first
// time round (first) and the first read the second time round.
func (z *zoneClock) noteRepeat(first bool, v float64, where, text string) {
	if first && z.early || !first && z.late {
		return
	}
	t := time.Unix(int64(math.Floor(v)), 0).In(z.loc)
	_, off := t.Zone()
	o := offsetText(time.Duration(off) * time.Second)
	// How far the clocks went back: from this offset to the next one
	// (first time round), or from the one before to this (second).
	start, end := t.ZoneBounds()
	var back int
	if first && !end.IsZero() {
		_, next := end.Zone()
		back = off - next
	} else if !first && !start.IsZero() {
		_, prev := start.Add(-time.Second).Zone()
		back = prev - off
	}
	span, that := repeatedSpan(time.Duration(back) * time.Second)
	if first {
		z.early = true
		z.notes = append(z.notes, fmt.Sprintf("%s: %s falls in %s repeated when the clocks of %s went back: it and the times after it are read at %s (the first time round) while the log's times go forward; check the readings of %s", where, quoteText(text), span, z.loc, o, that))
		return
	}
	z.late = true
	z.notes = append(z.notes, fmt.Sprintf("%s: %s falls in %s repeated when the clocks of %s went back and steps back from the time before: it and the times of %s after it are read at %s (the second time round), keeping the log's times in order", where, quoteText(text), span, z.loc, that, o))
}

// repeatedSpan names the wall-clock time repeated when the clocks go back
// by d, as "the hour" and "that hour" for the usual hour, else by its
// length ("the 30 minutes" and "those 30 minutes" at Lord Howe Island).
func repeatedSpan(d time.Duration) (the, that string) {
	switch {
	case d == time.Hour || d <= 0:
		return "the hour", "that hour"
	case d%time.Hour == 0:
		n := int(d / time.Hour)
		return fmt.Sprintf("the %d hours", n), fmt.Sprintf("those %d hours", n)
	default:
		n := int(d / time.Minute)
		return fmt.Sprintf("the %d minutes", n), fmt.Sprintf("those %d minutes", n)
	}
}

// flush returns the notes taken since the last call.
func (z *zoneClock) flush() []string {
	if z == nil || len(z.notes) == 0 {
		return nil
	}
	n := z.notes
	z.notes = nil
	return n
}
