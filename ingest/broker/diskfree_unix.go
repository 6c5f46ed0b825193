//go:build linux || darwin || freebsd

package broker

import "golang.org/x/sys/unix"

// freeBytes is f_bavail × f_bsize from statfs: the space an unprivileged
// user may still write, without the blocks kept for root.
func freeBytes(dir string) (int64, error) {
	var fs unix.Statfs_t
	if err := unix.Statfs(dir, &fs); err != nil {
		return 0, err
	}
	return int64(fs.Bavail) * int64(fs.Bsize), nil
}
