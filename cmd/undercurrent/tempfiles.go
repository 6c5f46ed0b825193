package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"time"
)

// Every output is written under a temporary name beside it and renamed
// into place, so that it appears whole or not at all:
//
//	.NAME.tmpDIGITS[.EXT]  a file (ingest.WriteFileAtomic, writeLog)
//	.NAME.tmp-DIGITS       a result directory being filled (stageDir)
//	.NAME.old-DIGITS       an earlier result directory being replaced
//
// Earlier versions wrote a log (simulate, convert) and simulate's truth
// table twice over, ingest's atomic writer staging into a second
// temporary file named after the first:
//
//	..NAME.tmpDIGITS[.EXT].tmpDIGITS
//
// A run of theirs killed outright left that file, often most of the
// log's size, and nothing removed it; these are removed too.
//
// An earlier result directory is replaced in one step where the system
// can swap two names (Linux, dirswap_linux.go); elsewhere it is moved aside
// to .NAME.old-DIGITS before the new one is moved in, and a run killed
// between the two leaves NAME missing: the next run asked to write NAME
// puts the earlier results back first (restoreOldDirs), and a
// .NAME.old-DIGITS is never removed as stale while NAME is missing.
//
// A run that fails or is interrupted (Ctrl-C, SIGTERM) removes its own;
// one killed outright (kill -9, a power cut) cannot. The next run asked to
// write NAME removes those of NAME that are stale: untouched for
// staleTempAge, far longer than any file or directory stays open for
// writing (a file being written is touched by every write, a directory by
// every file made in it), so the temporary files of a run still going are
// never taken.
const staleTempAge = time.Hour

// tempSuffix matches what follows ".NAME" in a temporary name, and
// doubleSuffix what follows "..NAME" in the doubly staged name of earlier
// versions.
var (
	tempSuffix   = regexp.MustCompile(`^\.(tmp[0-9]+(\.[A-Za-z0-9]+)?|tmp-[0-9]+|old-[0-9]+)$`)
	doubleSuffix = regexp.MustCompile(`^\.tmp[0-9]+(\.[A-Za-z0-9]+)?\.tmp[0-9]+$`)
)

// staleTemps returns the temporary files and directories of the output
// path that are older than age at now.
func staleTemps(path string, age time.Duration, now time.Time) []string {
	path = filepath.Clean(path)
	dir, base := filepath.Dir(path), filepath.Base(path)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil
	}
	var stale []string
	for _, e := range entries {
		n := e.Name()
		if !hasTempSuffix(n, "."+base, tempSuffix) && !hasTempSuffix(n, ".."+base, doubleSuffix) {
			continue
		}
		p := filepath.Join(dir, n)
		if isOldDir(n, base) && missing(path) {
			continue // the only copy of the earlier results
		}
		if newest(p).After(now.Add(-age)) {
			continue
		}
		stale = append(stale, p)
	}
	return stale
}

// hasTempSuffix reports whether the name n is prefix followed by what
// suffix matches.
func hasTempSuffix(n, prefix string, suffix *regexp.Regexp) bool {
	return len(n) > len(prefix) && n[:len(prefix)] == prefix && suffix.MatchString(n[len(prefix):])
}

// newest returns the latest modification time of p and, for a directory,
// of the entries in it (the zero time when p cannot be read: it is left
// alone only when something in it is recent).
func newest(p string) time.Time {
	fi, err := os.Lstat(p)
	if err != nil {
		return time.Time{}
	}
	t := fi.ModTime()
	if fi.IsDir() {
		entries, _ := os.ReadDir(p)
		for _, e := range entries {
			if info, err := e.Info(); err == nil && info.ModTime().After(t) {
				t = info.ModTime()
			}
		}
	}
	return t
}

// removeStaleTemps removes the stale temporary files and directories of
// each output path. It is quiet: what it removes was never an output.
func removeStaleTemps(paths []string) {
	now := time.Now()
	for _, p := range paths {
		for _, t := range staleTemps(p, staleTempAge, now) {
			os.RemoveAll(t)
		}
	}
}

// swapDirs is stageDir's swap of a new result directory with the earlier
// one (exchangeDirs; a test turns it off to check the two renames).
var swapDirs = exchangeDirs

// oldSuffix matches what follows ".NAME" in the name of an earlier result
// directory moved aside.
var oldSuffix = regexp.MustCompile(`^\.old-[0-9]+$`)

// isOldDir reports whether n names an earlier result directory of the
// output named base moved aside (.base.old-DIGITS).
func isOldDir(n, base string) bool { return hasTempSuffix(n, "."+base, oldSuffix) }

// missing reports whether nothing is at p (not even a broken link).
func missing(p string) bool {
	_, err := os.Lstat(p)
	return errors.Is(err, os.ErrNotExist)
}

// restoreOldDirs puts back an earlier result directory that a run killed
// between its two renames left hidden: for each output path that is
// missing beside a .NAME.old-DIGITS directory, the newest such directory
// is renamed NAME, and w is told. It runs before anything else of the
// command, so the earlier results are there again even if the run then
// fails.
func restoreOldDirs(paths []string, w io.Writer) {
	for _, p := range paths {
		p = filepath.Clean(p)
		if !missing(p) {
			continue
		}
		dir, base := filepath.Dir(p), filepath.Base(p)
		entries, err := os.ReadDir(dir)
		if err != nil {
			continue
		}
		var best string
		var bestTime time.Time
		for _, e := range entries {
			if !e.IsDir() || !isOldDir(e.Name(), base) {
				continue
			}
			q := filepath.Join(dir, e.Name())
			if t := newest(q); best == "" || t.After(bestTime) {
				best, bestTime = q, t
			}
		}
		if best == "" {
			continue
		}
		if err := os.Rename(best, p); err != nil {
			fmt.Fprintf(w, "warning: %s is missing and the earlier results are in %s, which could not be put back (%v): rename it to %s\n", p, best, err, base)
			continue
		}
		syncDir(dir)
		fmt.Fprintf(w, "warning: %s was missing: a run stopped while replacing it had left the earlier results in %s; they were put back as %s\n", p, filepath.Base(best), p)
	}
}
