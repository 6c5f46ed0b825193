//go:build !(linux || darwin || freebsd || netbsd || openbsd || dragonfly)

package main

import (
	"errors"
	"fmt"
	"os"
	"runtime"
	"syscall"
)

// takeLock creates the file path exclusively and writes text into it; it
// returns the function that removes it. A file already there naming a
// live process gives a *busyError; one naming a process that is gone (a
// run killed outright) or none is taken over.
func takeLock(path, text string) (func(), error) {
	for range 3 {
		f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			_, err = f.WriteString(text)
			f.Close()
			if err != nil {
				os.Remove(path)
				return nil, err
			}
			return func() { os.Remove(path) }, nil
		}
		if !errors.Is(err, os.ErrExist) {
			return nil, err
		}
		b, err := os.ReadFile(path)
		if err != nil && !errors.Is(err, os.ErrNotExist) {
			return nil, err
		}
		pid, started := readHolder(string(b))
		if pid > 0 && alive(pid) {
			return nil, &busyError{pid: pid, started: started}
		}
		os.Remove(path) // stale: its run is gone
	}
	return nil, fmt.Errorf("lock %s: the file kept coming back", path)
}

// alive reports whether the process pid seems to run.
func alive(pid int) bool {
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	if runtime.GOOS == "windows" {
		return true // FindProcess opened it
	}
	return p.Signal(syscall.Signal(0)) == nil
}
