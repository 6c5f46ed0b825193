//go:build !unix && !windows

package broker

import "os"

// tryLock has no file lock to take on this system (no flock nor
// LockFileEx): the store is not guarded against a second broker.
func tryLock(f *os.File) (busy bool, err error) { return false, nil }
