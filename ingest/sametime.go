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
