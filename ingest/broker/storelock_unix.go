//go:build unix

package broker

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// tryLock takes flock(LOCK_EX|LOCK_NB) on f: busy when another open file
// holds it.
func tryLock(f *os.File) (busy bool, err error) {
	err = unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB)
	if errors.Is(err, unix.EWOULDBLOCK) {
		return true, nil
	}
	return false, err
}
