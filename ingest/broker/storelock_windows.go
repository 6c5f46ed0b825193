package broker

import (
	"errors"
	"os"

	"golang.org/x/sys/windows"
)

// tryLock takes an exclusive LockFileEx lock, failing at once, on one byte
// of f at offset 2^32: busy when another handle holds it. The byte lies
// past the process id written at the start, because Windows locks are
// mandatory: a lock on the id itself would keep the refused process from
// reading whose lock it is.
func tryLock(f *os.File) (busy bool, err error) {
	ol := windows.Overlapped{OffsetHigh: 1}
	err = windows.LockFileEx(windows.Handle(f.Fd()), windows.LOCKFILE_EXCLUSIVE_LOCK|windows.LOCKFILE_FAIL_IMMEDIATELY, 0, 1, 0, &ol)
	if errors.Is(err, windows.ERROR_LOCK_VIOLATION) {
		return true, nil
	}
	return false, err
}
