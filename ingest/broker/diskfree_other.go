//go:build !(linux || darwin || freebsd || windows)

package broker

import (
	"errors"
	"runtime"
)

// freeBytes is not read on this system: the error makes StartServer leave
// the store limit to nats-server's own guess, and GrowStore does nothing.
func freeBytes(dir string) (int64, error) {
	return 0, errors.New("free disk space is not read on " + runtime.GOOS)
}
