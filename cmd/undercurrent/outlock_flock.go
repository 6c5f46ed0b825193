//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"syscall"
	"time"
)

// takeLock takes the flock of the file path (made when missing), writes
// text into it and returns the function that removes the file and lets
// the lock go. A lock held by another open file (another process, or
// another run in this one) gives a *busyError naming its holder.
func takeLock(path, text string) (func(), error) {
	for range 20 {
		f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
		if err != nil {
			return nil, err
		}
		if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
			defer f.Close()
			if errors.Is(err, syscall.EWOULDBLOCK) {
				return nil, holderOf(f)
			}
			return nil, fmt.Errorf("lock %s: %w", path, err)
		}
		// The holder removes the file as it ends: a lock taken on a file
		// opened just before is on a name no other run sees; try again.
		fi, err1 := f.Stat()
		now, err2 := os.Stat(path)
		if err1 != nil || err2 != nil || !os.SameFile(fi, now) {
			f.Close()
			continue
		}
		if err := f.Truncate(0); err == nil {
			_, err = f.WriteAt([]byte(text), 0)
		}
		return func() {
			os.Remove(path)
			f.Close()
		}, nil
	}
	return nil, fmt.Errorf("lock %s: the file kept being replaced", path)
}

// holderOf reads who holds the lock of f; the holder writes it just
// after taking the lock, so an empty file is read once more a moment
// later.
func holderOf(f *os.File) *busyError {
	var be busyError
	for try := 0; try < 2; try++ {
		if b, err := io.ReadAll(io.NewSectionReader(f, 0, 1<<10)); err == nil && len(b) > 0 {
			be.pid, be.started = readHolder(string(b))
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	return &be
}
