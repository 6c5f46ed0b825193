package calibrate

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// writeFileAtomic writes via a temporary file in the same directory and
// renames it into place; on any error nothing is left at path.
func writeFileAtomic(path string, write func(w io.Writer) error) (err error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return fmt.Errorf("calibrate: %w", err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	if err = write(f); err != nil {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	if err = os.Rename(f.Name(), path); err != nil {
		return fmt.Errorf("calibrate: %w", err)
	}
	return nil
}
