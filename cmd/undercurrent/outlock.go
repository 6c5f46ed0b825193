package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
)

// A run that writes a result directory (locate -o DIR, demo -o DIR)
// holds the lock file .DIR.lock beside it from before it touches anything
// (restoreOldDirs, removeStaleTemps) to its end, so that a second run
// naming the same DIR is refused at once, with the first's pid and start
// time, and writes nothing. Before, two such runs both staged and both
// replaced DIR, and one's restore of a hidden earlier result could take
// the .DIR.old-* the other was between its renames with.
//
// Where the system has flock (outlock_flock.go) the lock is the kernel's:
// a run killed outright (kill -9, a power cut) holds it no longer, and
// the .DIR.lock it left is taken over by the next run. Elsewhere
// (outlock_excl.go) the file is created exclusively and a file naming a
// process that is gone is taken over.
//
// The file holds "pid PID\nstarted TIME\n". A run that ends removes it.

// lockName returns the path of the lock file of the result directory dir.
func lockName(dir string) string {
	dir = filepath.Clean(dir)
	return filepath.Join(filepath.Dir(dir), "."+filepath.Base(dir)+".lock")
}

// lockOutDir takes the lock of the result directory dir for this run and
// returns the function that releases it. A directory whose parent does
// not exist yet is not locked (nothing of another run can be there yet
// but the parents it is making; see DEVELOPERS.md). A lock another live
// run holds gives a *busyError.
func lockOutDir(dir string) (release func(), err error) {
	path := lockName(dir)
	if fi, err := os.Stat(filepath.Dir(path)); err != nil || !fi.IsDir() {
		return func() {}, nil
	}
	release, err = takeLock(path, holderText(os.Getpid(), time.Now()))
	var be *busyError
	var pe *os.PathError
	switch {
	case errors.As(err, &be):
		be.dir = dir
	case errors.As(err, &pe):
		// Worded as every failed write is, "FILE: cannot write: REASON".
		err = &pathWriteError{path: path, err: pe.Err}
	}
	return release, err
}

// checkOutPlace checks, before the lock file is made beside it, that the
// result directory dir can be made or replaced where it is: dir, when it
// exists, is a directory, and the nearest existing directory above it can
// be written in (checkDirParents). What it returns is a usage error
// naming -o. Before, the lock was taken first, and a directory that could
// not be written in gave "open /proc/.x.lock: no such file or
// directory" with exit status 1 (found in review). checkOutDir checks
// the rest (what dir holds) once the run knows its names.
func checkOutPlace(dir string) error {
	fi, err := os.Lstat(dir)
	switch {
	case err == nil && !fi.IsDir():
		return usageErrorf("-o %s: exists and is not a directory", dir)
	case err != nil && !notThere(err):
		return usageErrorf("-o %s: %v", dir, err)
	}
	if err := checkDirParents(dir); err != nil {
		return usageErrorf("-o %s: %v", dir, err)
	}
	return nil
}

// holderText is what a lock file says of the run holding it.
func holderText(pid int, started time.Time) string {
	return fmt.Sprintf("pid %d\nstarted %s\n", pid, started.UTC().Format(time.RFC3339))
}

// readHolder reads the pid and start time a lock file's text gives (0 and
// "" for what it lacks).
func readHolder(text string) (pid int, started string) {
	for _, l := range strings.Split(text, "\n") {
		k, v, _ := strings.Cut(strings.TrimSpace(l), " ")
		switch k {
		case "pid":
			pid, _ = strconv.Atoi(v)
		case "started":
			started = v
		}
	}
	return pid, started
}

// busyError is a result directory another run is writing.
type busyError struct {
	dir     string
	pid     int
	started string
}

func (e *busyError) Error() string {
	who := "another run"
	switch {
	case e.pid > 0 && e.started != "":
		who = fmt.Sprintf("another run (pid %d, started %s)", e.pid, e.started)
	case e.pid > 0:
		who = fmt.Sprintf("another run (pid %d)", e.pid)
	}
	return fmt.Sprintf("%s is being written by %s: nothing was written; wait for it to end or give another -o (its lock is %s)", e.dir, who, lockName(e.dir))
}
