package main

import (
	"testing"
	"time"
)

// TestProgressRateWaits: the progress line's rate is shown only once half
// a second has passed, and then as rows over the time since the start: the
// first rate, over the microseconds before the first batch came, read
// 3234708393 rows/s for a log read at 1-3 million rows a second. The
// counts and times are invented, not measured.
func TestProgressRateWaits(t *testing.T) {
	for _, c := range []struct {
		rows    int64
		elapsed time.Duration
		want    string
	}{
		{15918, 5 * time.Microsecond, ""},
		{400000, 499 * time.Millisecond, ""},
		{0, time.Second, ""},
		{1200000, time.Second, ", 1.2M rows/s"},
		{9000000, 4 * time.Second, ", 2.2M rows/s"},
		{45000, 3 * time.Second, ", 15k rows/s"},
		{300, 2 * time.Second, ", 150 rows/s"},
		{1900000, 2 * time.Second, ", 950k rows/s"},
		{25000000, 2 * time.Second, ", 12M rows/s"},
	} {
		if got := rateText(c.rows, c.elapsed); got != c.want {
			t.Errorf("%d rows in %v: %q, want %q", c.rows, c.elapsed, got, c.want)
		}
	}
}
