//go:build !unix

package main

import (
	"errors"
	"runtime"
)

// mkfifo refuses: the tests that feed a named pipe through the file
// system skip here. Windows has no FIFO files (its named pipes live apart,
// under \\.\pipe\, and are not made by path in a directory).
func mkfifo(path string) error {
	return errors.New("no mkfifo on " + runtime.GOOS)
}
