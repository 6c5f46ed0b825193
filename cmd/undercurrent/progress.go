package main

import (
	"io"
	"time"

	"github.com/schollz/progressbar/v3"

	"undercurrent/ingest"
)

// rowProgress returns an ingest option that shows the rows read so far on
// stderr when it is a terminal, and a function that clears the display.
// When stderr is not a terminal the option does nothing and the display
// stays quiet.
func rowProgress(stderr io.Writer, desc string) (ingest.Option, func()) {
	w := progressOn(stderr)
	if w == nil {
		return ingest.WithProgress(nil), func() {}
	}
	bar := progressbar.NewOptions64(-1,
		progressbar.OptionSetWriter(w),
		progressbar.OptionSetDescription(desc),
		progressbar.OptionShowCount(),
		progressbar.OptionSetItsString("rows"),
		progressbar.OptionShowIts(),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100*time.Millisecond))
	return ingest.WithProgress(func(rows int64) { _ = bar.Set64(rows) }), func() { _ = bar.Finish() }
}
