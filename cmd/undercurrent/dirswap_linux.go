//go:build linux

package main

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// exchangeDirs swaps the entries a and b in one step (renameat2 with
// RENAME_EXCHANGE): both names exist at every instant, so a run killed
// during the swap leaves either the old or the new directory under each
// name, never a name missing. swapped is false, with no error, where the
// kernel or the file system cannot exchange (ENOSYS before Linux 3.15,
// EINVAL on a file system without it): the caller moves them one by one.
func exchangeDirs(a, b string) (swapped bool, err error) {
	err = unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_EXCHANGE)
	switch {
	case err == nil:
		return true, nil
	case errors.Is(err, unix.ENOSYS), errors.Is(err, unix.EINVAL), errors.Is(err, unix.ENOTSUP):
		return false, nil
	}
	return false, &os.LinkError{Op: "exchange", Old: a, New: b, Err: err}
}
