package broker

import (
	"os"

	"golang.org/x/sys/windows"
)

// freeBytes is GetDiskFreeSpaceEx's free bytes available to the caller
// on the volume holding dir: like f_bavail, it leaves out what disk quotas
// keep from this user.
func freeBytes(dir string) (int64, error) {
	p, err := windows.UTF16PtrFromString(dir)
	if err != nil {
		return 0, err
	}
	var avail, total, free uint64
	if err := windows.GetDiskFreeSpaceEx(p, &avail, &total, &free); err != nil {
		return 0, &os.PathError{Op: "GetDiskFreeSpaceEx", Path: dir, Err: err}
	}
	return int64(avail), nil
}
