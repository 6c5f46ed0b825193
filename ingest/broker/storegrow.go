package broker

import (
	"fmt"
	"os"
	"path/filepath"
)

// The embedded server's store limit. nats-server sizes a store without a
// limit once, when it starts, at 75% of the disk space then free plus
// what the store already holds, and keeps that limit: freeing disk space
// later changes nothing until a restart, and it refuses to raise such a
// derived limit on a reload. StartServer therefore gives the server that
// same limit explicitly (autoStore), which a reload may raise, and
// GrowStore raises it when disk space has been freed.

// diskFree returns the bytes free to an unprivileged user on the file
// system holding dir (statfs's f_bavail on Unix systems, diskfree_unix.go;
// GetDiskFreeSpaceEx's bytes free to the caller on Windows,
// diskfree_windows.go). It is a variable so that tests can place it.
var diskFree = freeBytes

// dirBytes returns the bytes of the regular files under dir.
func dirBytes(dir string) int64 {
	var n int64
	filepath.WalkDir(dir, func(_ string, d os.DirEntry, err error) error {
		if err == nil && d.Type().IsRegular() {
			if info, err := d.Info(); err == nil {
				n += info.Size()
			}
		}
		return nil
	})
	return n
}

// autoStoreLimit is the store limit nats-server derives for a store
// without one: three quarters of the free disk space plus of used, the
// bytes the store holds.
func autoStoreLimit(dir string, used int64) (int64, error) {
	for { // a store not made yet: the file system it will be made on
		if _, err := os.Stat(dir); err == nil || filepath.Dir(dir) == dir {
			break
		}
		dir = filepath.Dir(dir)
	}
	free, err := diskFree(dir)
	if err != nil {
		return 0, err
	}
	return (free + used) / 4 * 3, nil
}

// GrowStore raises the store limit of a server started without
// ServerConfig.MaxStore to what the disk space free now gives (as at
// start), when that is more than the limit by over 1% and 1 MiB, so that a
// store that filled the disk takes writes again once space is freed. It
// returns the limit before and after (equal when unchanged). A server
// started with MaxStore keeps it.
func (s *Server) GrowStore() (from, to int64, err error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if !s.autoStore || s.opts == nil {
		return 0, 0, nil
	}
	js := s.ns.JetStreamConfig()
	if js == nil {
		return 0, 0, nil
	}
	from = js.MaxStore
	var used int64
	if info, err := s.ns.Jsz(nil); err == nil {
		used = int64(info.Store)
	}
	want, err := autoStoreLimit(s.cfg.StoreDir, used)
	if err != nil {
		return from, from, fmt.Errorf("broker: store limit: %w", err)
	}
	if want <= from+max(from/100, 1<<20) {
		return from, from, nil
	}
	if err := s.setMaxStore(want); err != nil {
		return from, from, err
	}
	return from, want, nil
}

// setMaxStore raises the running server's store limit to n by reloading
// its options with that limit (nats-server applies a raised limit at
// once; it refuses a lowered one). s.mu is held.
func (s *Server) setMaxStore(n int64) error {
	o := *s.opts
	o.JetStreamMaxStore = n
	if err := s.ns.ReloadOptions(&o); err != nil {
		return fmt.Errorf("broker: raising the store limit to %d bytes: %w", n, err)
	}
	s.opts = &o
	return nil
}

// MaxStore is the server's store limit now, bytes (0 when JetStream is
// not running).
func (s *Server) MaxStore() int64 {
	s.mu.Lock()
	defer s.mu.Unlock()
	if js := s.ns.JetStreamConfig(); js != nil {
		return js.MaxStore
	}
	return 0
}
