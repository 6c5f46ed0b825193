package ingest

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestStalledPipeGivesWayToContext: a log read from a named pipe whose
// writer is alive but sends nothing more (a logger's FIFO, ssh ... tail
// -f |) stops with the context's error once the context of WithContext
// ends, for a read that waits for the first bytes (Open) as for one that
// waits mid-log (Next, the reader holding part of a chunk). Before,
// WithContext was looked at only between batches, so a read went on
// waiting until the writer sent more or closed the pipe: SIGTERM did not
// stop convert while its input was idle.
func TestStalledPipeGivesWayToContext(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz\n")
	for i := range 8000 { // 0.3 MB, less than the reader's 1 MiB chunk
		fmt.Fprintf(&b, "%.2f,%.2f,0,0,100,18650,-45200\n", 1.7e9+0.01*float64(i), 0.01*float64(i))
	}
	for i, c := range []struct {
		name    string
		written string // what the writer sends before it stalls
	}{
		{"waiting for the first bytes", ""},
		{"waiting mid-log", b.String()},
	} {
		t.Run(c.name, func(t *testing.T) {
			fifo := filepath.Join(dir, fmt.Sprintf("kestrel-moor-logger-%d.csv", i))
			if err := mkfifo(fifo); err != nil {
				t.Skipf("no named pipes here: %v", err)
			}
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			done := make(chan error, 1)
			go func() {
				r, err := Open(fifo, WithContext(ctx))
				if err != nil {
					done <- err
					return
				}
				defer r.Release()
				for r.Next() {
				}
				done <- r.Err()
			}()
			// The writer opens the pipe (which lets the reader's open
			// return), sends what it has and then holds it open.
			w, err := os.OpenFile(fifo, os.O_WRONLY, 0)
			if err != nil {
				t.Fatal(err)
			}
			defer w.Close()
			if _, err := w.WriteString(c.written); err != nil {
				t.Fatal(err)
			}
			// Let the reader reach its wait (the check below holds
			// whether it has or not; before, it hung only if it had).
			time.Sleep(200 * time.Millisecond)
			cancel()
			select {
			case err := <-done:
				if !errors.Is(err, context.Canceled) {
					t.Errorf("stopped with %v, want the context's error", err)
				}
			case <-time.After(time.Minute): // a hang, not a timing check
				t.Fatal("the read still waits on the idle pipe a minute after the context ended")
			}
		})
	}
}
