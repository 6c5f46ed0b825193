package main

import (
	"fmt"
	"io"
	"time"

	"github.com/schollz/progressbar/v3"

	"undercurrent/ingest"
)

// rowProgress returns an ingest option that shows the rows read so far on
// stderr when it is a terminal, and a function that clears the display.
// When stderr is not a terminal the option does nothing and the display
// stays quiet. The rate is the rows read over the time since the display
// started, shown from rateAfter on: a rate over the first milliseconds
// (the first batch, read ahead) came out at billions of rows a second.
func rowProgress(stderr io.Writer, desc string) (ingest.Option, func()) {
	w := progressOn(stderr)
	if w == nil {
		return ingest.WithProgress(nil), func() {}
	}
	bar := progressbar.NewOptions64(-1,
		progressbar.OptionSetWriter(w),
		progressbar.OptionSetDescription(desc),
		progressbar.OptionShowCount(),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100*time.Millisecond))
	start := time.Now()
	shown := ""
	return ingest.WithProgress(func(rows int64) {
		if r := rateText(rows, time.Since(start)); r != shown {
			shown = r
			bar.Describe(desc + r)
		}
		_ = bar.Set64(rows)
	}), func() { _ = bar.Finish() }
}

// rateAfter is the time before a rate is shown.
const rateAfter = 500 * time.Millisecond

// rateText is the rate of rows read in elapsed, for the progress line
// (", 1.2M rows/s", ", 950k rows/s"), with two significant digits at
// least; "" before rateAfter.
func rateText(rows int64, elapsed time.Duration) string {
	if elapsed < rateAfter || rows <= 0 {
		return ""
	}
	r := float64(rows) / elapsed.Seconds()
	unit := ""
	switch {
	case r >= 1e6:
		r, unit = r/1e6, "M"
	case r >= 1e3:
		r, unit = r/1e3, "k"
	}
	d := 0 // decimals: two significant digits below 10
	if unit != "" && r < 10 {
		d = 1
	}
	return fmt.Sprintf(", %.*f%s rows/s", d, r, unit)
}

// batchProgress returns a function that shows the batches sent of the
// total on stderr when it is a terminal, and one that clears the display
// (both do nothing otherwise).
func batchProgress(stderr io.Writer, desc string) (func(done, total int), func()) {
	w := progressOn(stderr)
	if w == nil {
		return nil, func() {}
	}
	var bar *progressbar.ProgressBar
	return func(done, total int) {
			if bar == nil {
				bar = progressbar.NewOptions(total,
					progressbar.OptionSetWriter(w),
					progressbar.OptionSetDescription(desc),
					progressbar.OptionShowCount(),
					progressbar.OptionClearOnFinish(),
					progressbar.OptionThrottle(100*time.Millisecond))
			}
			_ = bar.Set(done)
		}, func() {
			if bar != nil {
				_ = bar.Finish()
			}
		}
}
