package ingest

import (
	"fmt"
	"math"
	"sort"
	"time"
)

// A step back in time in a log read in time order is refused. The refusal
// shows the two times as the file writes them, with the place of the
// earlier one; before, it showed both as Unix seconds ("1414890015 after
// 1414893590"), which the user had to decode to see a step back of an hour
// less the sampling (found in review).

// backwardsMsg words the step back from prev (written prevText, at
// prevAt: "line 2218", "batch 0 row 4") to t (written text). An empty
// text is shown as the time in seconds. naive: both were written without
// a UTC offset, so that they may be local times (and the log's time unit
// did not say UTC); a step back that looks like the hour repeated when
// the clocks go back (ClockChangeBack) is then said to be one.
func backwardsMsg(t, prev float64, text, prevText, prevAt string, naive bool) string {
	if text == "" {
		text = formatSeconds(t)
	}
	if prevText == "" {
		prevText = formatSeconds(prev)
	}
	// A number as it is (seconds since 1970 with the time they stand
	// for), a text in quotes.
	show := func(text string, t float64) string {
		if _, ok := parseNumber([]byte(text)); !ok {
			return quoteText(text)
		}
		if t >= 1e8 && t < 1e11 {
			return text + " (" + time.Unix(0, int64(math.Round(t*1e3))*1e6).UTC().Format("2006-01-02T15:04:05.999Z07:00") + ")"
		}
		return text
	}
	at := ""
	if prevAt != "" {
		at = " (" + prevAt + ")"
	}
	msg := fmt.Sprintf("time goes backwards: %s after %s%s, %s back", show(text, t), show(prevText, prev), at, durationText(prev-t))
	if naive && ClockChangeBack(t, prev) {
		h := math.Ceil(prev/3600) * 3600
		msg += fmt.Sprintf(", an hour less the %s from one reading to the next, across %s: local times written without their UTC offset across the night the clocks went back an hour (the hour before %s repeated)? Write each time with its offset (summer time's before the change, standard time's after it); read in any order, or per group, the readings of the repeated hour would be placed an hour early, and a base correction would pair them with the wrong base readings",
			durationText(3600-(prev-t)), time.Unix(int64(h), 0).UTC().Format("15:04"), time.Unix(int64(h), 0).UTC().Format("15:04"))
	}
	return msg
}

// ClockChangeBack reports whether a step back in time from prev to t, both
// seconds read from local times written without their UTC offset, looks
// like the hour that repeats when the clocks go back from summer to
// standard time: a step back of 45 to 60 minutes over which the clock
// passed a whole hour (prev before it, t plus an hour at or after it) of
// 00:00 to 03:00, in February to April or September to November. From
// memory of the time-zone rules: North America's clocks go back at 02:00,
// the European Union's at 03:00 local time (01:00 UTC), the United
// Kingdom's at 02:00, south-east Australia's and New Zealand's at 03:00 (in
// April), Chile's and Paraguay's at midnight; every such change falls in
// those months.
func ClockChangeBack(t, prev float64) bool {
	back := prev - t
	if !(back > 2700 && back <= 3600) || math.IsNaN(t) {
		return false
	}
	h := math.Ceil(prev/3600) * 3600
	if h > t+3600 {
		return false
	}
	c := time.Unix(int64(h), 0).UTC()
	if c.Hour() > 3 {
		return false
	}
	switch c.Month() {
	case time.February, time.March, time.April, time.September, time.October, time.November:
		return true
	}
	return false
}

// durationText words a length of time d, seconds: "59 min 35 s", "3 h 2
// min", "0.5 s".
func durationText(d float64) string {
	switch {
	case d < 60:
		return fmt.Sprintf("%.3g s", d)
	case d < 3600:
		m := math.Floor(d / 60)
		if s := math.Round(d - 60*m); s > 0 && s < 60 {
			return fmt.Sprintf("%.0f min %.0f s", m, s)
		}
		return fmt.Sprintf("%.0f min", math.Round(d/60))
	case d < 86400*3:
		h := math.Floor(d / 3600)
		if m := math.Round((d - 3600*h) / 60); m > 0 && m < 60 {
			return fmt.Sprintf("%.0f h %.0f min", h, m)
		}
		return fmt.Sprintf("%.0f h", math.Round(d/3600))
	}
	return fmt.Sprintf("%.1f days", d/86400)
}

// textNaive reports whether a time written as text was written without a
// UTC offset in a log whose time unit does not say UTC: it may be a local
// time.
func (p *plan) textNaive(text string) bool {
	if p.timeUTC {
		return false
	}
	_, zoned, ok, _ := p.cfg.timeText.parse([]byte(text))
	return ok && !zoned
}

// noteClockChange looks at the times t of a batch, in file order, of a log
// read per group or in any order, whose times were written without their
// UTC offset: a step back like the hour repeated when the clocks go back
// (ClockChangeBack) is accepted by those orders with the repeated hour's
// readings an hour early, and is warned about, once (name: the file).
// Before, such a log was read without a word but the one that its times
// give no offset.
func (p *plan) noteClockChange(t []float64, name string) {
	if p.clockWarned {
		return
	}
	for _, v := range t {
		if v != v {
			continue
		}
		if v < p.clockLast && p.naiveWarned && ClockChangeBack(v, p.clockLast) {
			p.clockWarned = true
			f := func(v float64) string {
				return time.Unix(0, int64(math.Round(v*1e3))*1e6).UTC().Format("2006-01-02T15:04:05.999")
			}
			p.warn("%s: column %s: time steps back from %s to %s, %s, an hour less the time between the readings, as local times written without their UTC offset do across the night the clocks go back an hour (the hour before %s repeated): read per group or in any order, the readings of the repeated hour are placed an hour early (and a base correction pairs them with the wrong base readings); write each time with its offset (summer time's before the change, standard time's after it)",
				name, p.header[p.src[cTime]], f(p.clockLast), f(v), durationText(p.clockLast-v), time.Unix(int64(math.Ceil(p.clockLast/3600)*3600), 0).UTC().Format("15:04"))
			return
		}
		p.clockLast = v
	}
}

// ClockChangeForward words the first step within a group (g, nil: one
// group) of times t, in file order, that looks like the hour skipped when
// the clocks go forward, local times being read with one fixed offset (or
// none): a step of an hour give or take one sample interval (the median
// step of the group's readings) while the position (x, y) moved by about
// one sample spacing (at most three times the median), in February to
// April or September to November (the months of every such change; see
// ClockChangeBack), that skips a whole hour of the clock's own reading:
// the reading before lies before a whole hour of the clock, from 22:00
// to 03:00 (the hours clocks go forward from), the reading after within
// one interval after the next whole hour. off is the UTC offset, s, the
// times were read with (0 for times read as UTC), so that t+off is what
// the clock showed. The caller gives it only times written as text
// without an offset: times that carry one, and seconds since 1970, cannot
// be local times misread. Read so, the readings after the change are an
// hour late, and a base correction pairs them with base readings of an
// hour later. "" when there is none.
//
// Found in review: a stationary sensor (which moves 0 m, one spacing)
// whose logger stopped for an hour, 00:34:59 to 01:35:00 in UTC seconds,
// was warned of; a clock's change skips from just before a whole hour to
// just after the next, which such a pause rarely does.
func ClockChangeForward(t, x, y []float64, g []string, off float64) string {
	n := len(t)
	if n < 3 || len(x) != n || len(y) != n {
		return ""
	}
	same := func(i int) bool { return g == nil || g[i] == g[i-1] }
	var dt, ds []float64
	for i := 1; i < n; i++ {
		if !same(i) {
			continue
		}
		if d := t[i] - t[i-1]; d > 0 && d < 3000 {
			dt = append(dt, d)
			ds = append(ds, math.Hypot(x[i]-x[i-1], y[i]-y[i-1]))
		}
	}
	if len(dt) < 2 {
		return ""
	}
	sort.Float64s(dt)
	sort.Float64s(ds)
	iv, sp := dt[len(dt)/2], ds[len(ds)/2]
	for i := 1; i < n; i++ {
		d := t[i] - t[i-1]
		if !same(i) || math.Abs(d-3600) > iv || math.IsNaN(d) {
			continue
		}
		if move := math.Hypot(x[i]-x[i-1], y[i]-y[i-1]); !(move <= 3*sp+1e-9) {
			continue
		}
		switch time.Unix(int64(t[i]), 0).UTC().Month() {
		case time.February, time.March, time.April, time.September, time.October, time.November:
		default:
			continue
		}
		// The clock's whole hour at or before the reading after the
		// step: the skipped hour is the one before it.
		after := t[i] + off
		hour := 3600 * math.Floor(after/3600)
		if after-hour > 1.5*iv || t[i-1]+off >= hour-3600 {
			continue
		}
		if h := time.Unix(int64(hour-3600), 0).UTC().Hour(); h < 22 && h > 3 {
			continue
		}
		f := func(v float64) string {
			return time.Unix(0, int64(math.Round(v*1e3))*1e6).UTC().Format("2006-01-02T15:04:05.999")
		}
		where := ""
		if g != nil {
			where = fmt.Sprintf(" in group %q", g[i])
		}
		return fmt.Sprintf("time steps forward from %s to %s%s, %s, an hour give or take the time between the readings, while the sensor moved only %.3g m (about one reading's spacing, %.3g m): local times written without their UTC offset across the night the clocks went forward an hour? Read with one offset (or none), the readings after the change are an hour late, and a base correction pairs them with base readings an hour off; write each time with its offset (standard time's before the change, summer time's after it)",
			f(t[i-1]), f(t[i]), where, durationText(d), math.Hypot(x[i]-x[i-1], y[i]-y[i-1]), sp)
	}
	return ""
}
