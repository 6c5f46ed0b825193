package ingest

import (
	"errors"
	"io/fs"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// A log that cannot be opened or read keeps the operating system's error as
// the *Error's cause (Err), so that errors.Is tells a missing file
// (fs.ErrNotExist, the Go standard library's sentinel) from bad data; the
// text is as before. Before, the cause survived only as text in Msg, and
// errors.Is(err, fs.ErrNotExist) was false.
func TestOpenErrorKeepsCause(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "nosuch.csv")
	calls := map[string]func(string) error{
		"ReadSamples": func(p string) error { _, err := ReadSamples(p); return err },
		"Open": func(p string) error {
			r, err := Open(p)
			if err == nil {
				r.Release()
			}
			return err
		},
		"Inspect": func(p string) error { _, err := Inspect(p); return err },
	}
	for name, call := range calls {
		err := call(missing)
		var ie *Error
		if !errors.As(err, &ie) || !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("%s(missing): err %v, want an *Error that is fs.ErrNotExist", name, err)
		}
		if err == nil || !strings.HasSuffix(err.Error(), missing+": cannot open: no such file or directory") {
			t.Errorf("%s(missing): text %q", name, err)
		}
		// A directory given as the log: the cause is the system's EISDIR.
		err = call(dir)
		if !errors.As(err, &ie) || !errors.Is(err, syscall.EISDIR) {
			t.Errorf("%s(directory): err %v, want an *Error that is EISDIR", name, err)
		}
	}
}
