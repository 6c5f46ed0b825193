package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"undercurrent/ingest"
)

// logExts maps the extensions of log outputs, in lower case (any case is
// accepted), to the extension ingest writes that format under.
var logExts = map[string]string{
	".csv": ".csv", ".txt": ".csv",
	".arrow": ".arrow", ".feather": ".arrow", ".ipc": ".arrow",
	".arrows":  ".arrows",
	".parquet": ".parquet", ".pq": ".parquet",
}

// logExtHelp lists the log output extensions, for messages and help.
const logExtHelp = ".csv, .arrow (Arrow IPC file), .arrows (Arrow IPC stream) or .parquet, in any case (.txt is CSV, .feather and .ipc Arrow files, .pq Parquet)"

// checkLogExt checks that a log file name has an extension a log can be
// written under.
func checkLogExt(path string) error {
	ext := filepath.Ext(path)
	if _, ok := logExts[strings.ToLower(ext)]; ok {
		return nil
	}
	if ext == "" {
		return fmt.Errorf("no extension: name the file .csv, .arrow, .arrows or .parquet")
	}
	return fmt.Errorf("cannot write %q files: use .csv, .arrow, .arrows or .parquet", ext)
}

// checkOutFile checks an output file name before any work is done: its
// directory must exist (a mistyped directory is not created) and, for a
// log, its extension must say the format.
func checkOutFile(flag, path string, log bool) error {
	if log {
		if err := checkLogExt(path); err != nil {
			return usageErrorf("%s %s: %v", flag, path, err)
		}
	}
	if err := checkParentDir(path); err != nil {
		return fmt.Errorf("%s %s: %w", flag, path, err)
	}
	return nil
}

// writeLog writes the rest of r to path, atomically, in the format its
// extension names in any case. ingest picks the format from a lower-case
// extension, so a name such as "out.PARQUET" is written under a temporary
// lower-case name beside it and renamed.
func writeLog(path string, r ingest.Reader) error {
	ext := filepath.Ext(path)
	canon, ok := logExts[strings.ToLower(ext)]
	if !ok {
		return checkLogExt(path)
	}
	if _, err := ingest.FormatFromExt(path); err == nil {
		return ingest.WriteReader(path, r)
	}
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*"+canon)
	if err != nil {
		return err
	}
	tmp := f.Name()
	f.Close()
	if err := ingest.WriteReader(tmp, r); err != nil {
		os.Remove(tmp)
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return err
	}
	return nil
}

// writeSamplesLog writes s to path like writeLog.
func writeSamplesLog(path string, s *ingest.Samples) error {
	r, err := ingest.NewSamplesReader(s, 0, nil)
	if err != nil {
		return err
	}
	defer r.Release()
	return writeLog(path, r)
}
