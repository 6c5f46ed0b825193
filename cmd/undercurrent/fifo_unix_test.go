//go:build unix

package main

import "golang.org/x/sys/unix"

// mkfifo makes a named pipe (POSIX mkfifo) at path.
func mkfifo(path string) error { return unix.Mkfifo(path, 0o600) }
