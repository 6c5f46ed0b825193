package broker

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// storeLockName is the lock file a running embedded broker holds in its
// store directory.
const storeLockName = "undercurrent.lock"

// lockStore takes an exclusive lock on the lock file in dir (flock on Unix
// systems, storelock_unix.go; LockFileEx on Windows, storelock_windows.go),
// creating dir, and writes this process's id into it. Two brokers on one
// store would append to the same JetStream files, each with its own view
// of them in memory: the second is refused, naming the first. The lock
// goes with the process (close the file, or the process ends).
func lockStore(dir string) (*os.File, error) {
	if err := os.MkdirAll(dir, 0o750); err != nil {
		return nil, fmt.Errorf("store %s: %w", dir, err)
	}
	path := filepath.Join(dir, storeLockName)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("store %s: lock: %w", dir, err)
	}
	if busy, err := tryLock(f); err != nil || busy {
		defer f.Close()
		if err == nil {
			b, _ := os.ReadFile(path)
			if pid, err := strconv.Atoi(strings.TrimSpace(string(b))); err == nil {
				return nil, fmt.Errorf("store %s is in use by process %d (lock file %s)", dir, pid, path)
			}
			return nil, fmt.Errorf("store %s is in use by another process (lock file %s)", dir, path)
		}
		return nil, fmt.Errorf("store %s: lock %s: %w", dir, path, err)
	}
	if err := f.Truncate(0); err == nil {
		_, err = f.WriteAt([]byte(strconv.Itoa(os.Getpid())+"\n"), 0)
	}
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("store %s: lock %s: %w", dir, path, err)
	}
	return f, nil
}
