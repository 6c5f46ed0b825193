package ingest

import (
	"fmt"
	"math"
)

// OneTime describes a time column in which every row holds the same time,
// as a spreadsheet leaves a column of Unix seconds it saved in its General
// format (six significant figures: 1778407200.064 becomes 1.77841E+09,
// in steps of 10000 s): "every one of the 567 rows has the same time
// (1.77841e+09 s, 2026-05-10T10:00:00Z): ...", with the advice. It
// returns "" for fewer than three rows with a finite time or for times that
// differ; NaN times are passed over.
func OneTime(t []float64) string {
	n := 0
	first := math.NaN()
	for _, v := range t {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		if n == 0 {
			first = v
		} else if v != first {
			return ""
		}
		n++
	}
	if n < 3 {
		return ""
	}
	return oneTimeText(n, first)
}

// oneTimeText is OneTime's text for n rows all at time first.
func oneTimeText(n int, first float64) string {
	when := fmt.Sprintf("%.6g s", first)
	if first > 3e8 && first < 4.2e9 { // 1979 to 2103: Unix seconds
		when += ", " + utcString(first)
	}
	return fmt.Sprintf("every one of the %d rows has the same time (%s): was the time column rounded, as a spreadsheet saving it in its General format keeps six significant figures (Unix seconds such as 1778407200.064 become 1.77841E+09, in steps of 10000 s)? Save the times with all their digits (a number format with decimals)", n, when)
}

// CoarseStamps describes times written more coarsely than the readings
// come: most rows share their time with the row before of the same group
// (g, the group of each row; nil for none), and every time is a whole
// minute (a spreadsheet's "dd.mm.yyyy hh:mm"), or a whole second on a log
// of more than two readings a second. It returns the stamps' step (60 or
// 1 s) and a warning, or 0 and "" for other times, for fewer than ten rows
// with a finite time, and for times that are all one (OneTime).
// Read as exact, such times put every reading up to the step early: what
// pairs readings by time (a base station's correction) pairs them up to
// that far off. Rows of different groups that share a time are not
// repeats: fixed sensors logged at 1 Hz, interleaved, share each
// whole-second time exactly (found in review: four sensors at 1 Hz were
// warned of as "written to the second").
func CoarseStamps(t []float64, g []string) (step float64, msg string) {
	n, repeated, distinct := 0, 0, 0
	last := map[string]float64{}
	minute, second := true, true
	for i, v := range t {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		n++
		key := ""
		if i < len(g) {
			key = g[i]
		}
		if prev, ok := last[key]; ok && v == prev {
			repeated++
		} else {
			distinct++
		}
		last[key] = v
		minute = minute && v == 60*math.Round(v/60)
		second = second && v == math.Round(v)
	}
	if n < 10 || distinct < 2 || 2*repeated <= n {
		return 0, ""
	}
	switch {
	case minute:
		step = 60
	case second:
		step = 1
	default:
		return 0, ""
	}
	unit := "minute"
	if step == 1 {
		unit = "second"
	}
	return step, fmt.Sprintf("most readings share their time with the reading before (%.3g readings a time on average), and every time is a whole %s: the times were written to the %s (%g s steps), coarser than the readings come, so each reading's time may be up to %g s off; write the times with seconds and their fractions (in a spreadsheet, a format such as hh:mm:ss,000)",
		float64(n)/float64(distinct), unit, unit, step, step)
}
