package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestConvertStopsOnIdlePipe: SIGTERM stops convert while its input, a
// named pipe, is open but idle (a logger's FIFO, ssh ... tail -f |): it
// prints "interrupted", exits 143 and leaves no output or temporary file,
// as the help says. Before, the signal was acted on only when the next
// read returned, that is when the writer sent more or closed the pipe; a
// service manager's stop ended in SIGKILL.
func TestConvertStopsOnIdlePipe(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "harrow-fen-logger.csv")
	if err := mkfifo(fifo); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	out := filepath.Join(dir, "harrow-fen.arrows")
	ctx, cancel := context.WithCancelCause(context.Background())
	defer cancel(nil)
	type result struct {
		code        int
		out, errOut string
	}
	done := make(chan result, 1)
	go func() {
		var o, e bytes.Buffer
		code := run(ctx, []string{"convert", fifo, out}, &o, &e)
		done <- result{code, o.String(), e.String()}
	}()
	w, err := os.OpenFile(fifo, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz\n")
	for i := range 8000 { // 0.3 MB, then nothing: the writer stays open
		fmt.Fprintf(&b, "%.2f,%.2f,0,0,100,18650,-45200\n", 1.7e9+0.01*float64(i), 0.01*float64(i))
	}
	if _, err := w.WriteString(b.String()); err != nil {
		t.Fatal(err)
	}
	time.Sleep(200 * time.Millisecond) // let the read wait (the checks hold either way)
	cancel(&signalCause{sig: syscall.SIGTERM})
	select {
	case r := <-done:
		if want := "undercurrent convert: interrupted\n"; r.code != 143 || r.errOut != want || r.out != "" {
			t.Errorf("exit %d, stdout %q, stderr %q; want exit 143, no output and %q", r.code, r.out, r.errOut, want)
		}
	case <-time.After(time.Minute): // a hang, not a timing check
		t.Fatal("convert still runs a minute after SIGTERM, its input pipe idle")
	}
	if got := entries(t, dir); len(got) != 1 || got[0] != filepath.Base(fifo) {
		t.Errorf("the directory holds %q, want only the pipe", got)
	}
}
