package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"

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
		return fmt.Errorf("no extension: name the file %s", logExtHelp)
	}
	return fmt.Errorf("cannot write %q files: use %s", ext, logExtHelp)
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
// extension names in any case, replacing an existing file only when
// replace is set (see placeFile). ingest picks the format from a
// lower-case extension, so the log is written under a temporary
// lower-case name beside path and renamed.
func writeLog(path string, r ingest.Reader, replace bool) error {
	tmp, err := stageLog(path, r)
	if err != nil {
		return err
	}
	return placeFile(tmp, path, replace)
}

// stageLog writes the rest of r in the format path's extension names to a
// temporary file beside path (.NAME.tmpDIGITS.EXT, see tempfiles.go) and
// returns its name; placeFile then puts it in place. On an error nothing
// is left.
func stageLog(path string, r ingest.Reader) (string, error) {
	canon, ok := logExts[strings.ToLower(filepath.Ext(path))]
	if !ok {
		return "", checkLogExt(path)
	}
	format, err := ingest.FormatFromExt(canon)
	if err != nil {
		return "", err
	}
	return stageFile(path, canon, func(w io.Writer) error { return ingest.WriteReaderTo(w, path, format, r) })
}

// stageFile makes a temporary file beside path, named to end in ext,
// fills it with write, forces it to the disk and returns its name. On an
// error nothing is left.
//
// The file is written once, under this one name: before, a log was
// written by ingest's atomic writer into a second temporary file named
// after the first (..NAME.tmpDIGITS.EXT.tmpDIGITS), which a run killed
// outright left behind where removeStaleTemps did not look for it. The
// data are synced (fsync) before the file is declared written, so that
// the rename that follows (placeFile) cannot put a name on a file a power
// cut would leave empty or short.
//
// An error that names the temporary file (a full disk, a directory made
// read-only meanwhile) is reported as "PATH: cannot write: REASON", with
// the output's own name: the temporary name is not one the user gave.
func stageFile(path, ext string, write func(w io.Writer) error) (string, error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*"+ext)
	if err != nil {
		return "", writeError(path, "", err)
	}
	tmp := f.Name()
	if err := fillFile(f, write); err != nil {
		f.Close()
		os.Remove(tmp)
		return "", writeError(path, tmp, err)
	}
	return tmp, nil
}

// fillFile writes f through a buffer with write, gives it mode 0644 (as
// ingest.WriteFileAtomic does: os.CreateTemp makes files only the owner
// can read), syncs it to the disk and closes it.
func fillFile(f *os.File, write func(w io.Writer) error) error {
	bw := bufio.NewWriterSize(f, 1<<20)
	if err := write(bw); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return err
	}
	if err := f.Chmod(0o644); err != nil {
		return err
	}
	if err := syncFile(f); err != nil {
		return err
	}
	return f.Close()
}

// writeError words a failed write of the output path (staged under the
// temporary name tmp, "" when it could not be made) as "PATH: cannot
// write: REASON" when the failure is the file system's (an
// *os.PathError); other errors (a log that cannot be read, an
// interruption) are returned as they are, with tmp replaced by path in
// their text. Interruptions stay recognisable (errors.Is).
func writeError(path, tmp string, err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) && (tmp == "" || pe.Path == tmp || strings.HasPrefix(filepath.Base(pe.Path), "."+filepath.Base(path)+".tmp")) {
		return &pathWriteError{path: path, err: pe.Err}
	}
	if tmp != "" && strings.Contains(err.Error(), tmp) {
		return &renamedError{msg: strings.ReplaceAll(err.Error(), tmp, path), err: err}
	}
	return err
}

// pathWriteError is a failed write of an output file, named as the user
// gave it.
type pathWriteError struct {
	path string
	err  error
}

func (e *pathWriteError) Error() string { return e.path + ": cannot write: " + e.err.Error() }
func (e *pathWriteError) Unwrap() error { return e.err }

// renamedError is err with its text reworded (msg), still unwrapping to
// err.
type renamedError struct {
	msg string
	err error
}

func (e *renamedError) Error() string { return e.msg }
func (e *renamedError) Unwrap() error { return e.err }

// placeFile renames the temporary file tmp to path. Unless replace is
// set it never replaces a file: tmp is linked to path, which fails when
// path exists, even one made while the output was being written after
// checkNewFile had found none (on a file system without hard links, path
// is looked up just before the rename); an empty file is replaced, as
// checkNewFile allows. tmp is gone afterwards either way.
func placeFile(tmp, path string, replace bool) error {
	err := linkOrRename(tmp, path, replace)
	if err == nil {
		// The new name survives a power cut only once the directory
		// is synced (the file's data were, by stageFile).
		syncDir(filepath.Dir(path))
	}
	return err
}

// syncFile and syncDir are how outputs are synced to the disk (tests
// watch them).
var (
	syncFile = (*os.File).Sync
	syncDir  = ingest.SyncDir
)

// linkOrRename is placeFile's move of tmp to path, without the sync.
func linkOrRename(tmp, path string, replace bool) error {
	defer os.Remove(tmp)
	if replace {
		return os.Rename(tmp, path)
	}
	err := os.Link(tmp, path)
	if err == nil {
		return nil
	}
	fi, lerr := os.Lstat(path)
	if lerr == nil && fi.Mode().IsRegular() && fi.Size() == 0 {
		return os.Rename(tmp, path) // an empty file is taken as new (checkNewFile)
	}
	if errors.Is(err, os.ErrExist) || lerr == nil {
		return fmt.Errorf("%s: a file of that name was made while this output was being written; it is left as it is, and this output was not written (give --force to replace it)", path)
	}
	return os.Rename(tmp, path)
}

// staged holds the temporary files of outputs written together (simulate
// -o, --base-log and --truth), to be put in place together by place or
// removed by discard.
type staged struct {
	tmp, path []string
	placed    int
	made      []string // outputs placed that did not exist before
}

// add stages one output at path with write, which returns the temporary
// file's name (stageLog, stageFile).
func (st *staged) add(path string, write func() (string, error)) error {
	tmp, err := write()
	if err != nil {
		return err
	}
	st.tmp, st.path = append(st.tmp, tmp), append(st.path, path)
	return nil
}

// place puts every staged file in place (placeFile). When one cannot be,
// the others are not, and the ones already placed that were new files
// are removed, so that the outputs appear together or not at all (a file
// replaced with replace set is gone either way).
func (st *staged) place(replace bool) error {
	for i, tmp := range st.tmp {
		_, err := os.Lstat(st.path[i])
		isNew := notThere(err)
		st.placed = i + 1
		if err := placeFile(tmp, st.path[i], replace); err != nil {
			for _, p := range st.made {
				os.Remove(p)
			}
			st.made = nil
			return err
		}
		if isNew {
			st.made = append(st.made, st.path[i])
		}
	}
	return nil
}

// discard removes the staged files not placed.
func (st *staged) discard() {
	for _, tmp := range st.tmp[st.placed:] {
		os.Remove(tmp)
	}
}

// writeSamplesLog writes s to path like writeLog.
func writeSamplesLog(path string, s *ingest.Samples, replace bool) error {
	r, err := ingest.NewSamplesReader(s, 0, nil)
	if err != nil {
		return err
	}
	defer r.Release()
	return writeLog(path, r, replace)
}

// stageSamplesLog writes s to a temporary file beside path like stageLog.
func stageSamplesLog(path string, s *ingest.Samples) (string, error) {
	r, err := ingest.NewSamplesReader(s, 0, nil)
	if err != nil {
		return "", err
	}
	defer r.Release()
	return stageLog(path, r)
}

// checkNewFile checks, before any work, an output file of a command that
// writes logs (simulate -o, --base-log and --truth; convert's OUT): a
// directory is refused, and so is a file that exists and is not empty,
// unless force is set. Logs are the most valuable files a crew has, and
// these commands write under any name: without the check a mistyped -o,
// or convert's IN and OUT swapped (convert survey.parquet survey.csv for
// the other way), replaced a field log without a word. Like calibrate -o
// (checkCalibrationOut) and locate -o DIR (checkOutDir), which replace
// only what they wrote, it is a usage error. name is the flag or argument
// that gave path.
func checkNewFile(name, path string, force bool) error {
	fi, err := existingOut(name, path, "the output file's name")
	if err != nil || fi == nil || fi.Size() == 0 || force {
		return err
	}
	return usageErrorf("%s %s: the file exists (%s): it is not replaced unless --force is given, so that a mistyped name cannot replace a log; choose another name, or give --force to replace it", name, path, plural(int(fi.Size()), "byte"))
}

// existingOut returns what os.Stat says of an output file path given by
// name (a flag or argument), nil when it does not exist, and a usage
// error when it is a directory (what: what to give instead) or a
// symbolic link to nothing. Outputs are placed by name, not written
// through links: a link whose target is missing (a share not mounted, a
// moved data directory) was taken for no file, and after the whole run
// the output was refused as "made while this output was being written"
// (or, with --force, the link was replaced and its target never
// written).
func existingOut(name, path, what string) (os.FileInfo, error) {
	if li, lerr := os.Lstat(path); lerr == nil && li.Mode()&os.ModeSymlink != 0 {
		if _, err := os.Stat(path); err != nil {
			target, _ := os.Readlink(path)
			return nil, usageErrorf("%s %s is a symbolic link to %s, which does not exist: an output is not written through a link (the link would be replaced, and its target not written); give the target's own name, or remove the link", name, path, target)
		}
	}
	fi, err := os.Stat(path)
	if err != nil {
		return nil, nil // a new file (checkOutFile has checked its directory)
	}
	if fi.IsDir() {
		return nil, usageErrorf("%s %s is a directory: give %s", name, path, what)
	}
	return fi, nil
}

// sameFile reports whether paths a and b name the same file: for two
// existing files os.SameFile, which sees through links and different
// spellings of one path; otherwise the same absolute, cleaned path.
func sameFile(a, b string) bool {
	if a == "" || b == "" {
		return false
	}
	fa, errA := os.Stat(a)
	fb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(fa, fb)
	}
	if errA == nil || errB == nil {
		return false // one exists and the other does not
	}
	pa, errA := filepath.Abs(a)
	pb, errB := filepath.Abs(b)
	return errA == nil && errB == nil && pa == pb
}

// checkOutputs refuses, before any work, an output file that is one of the
// inputs or another output: outs and ins are pairs of a flag (or argument)
// name and a path, an empty path meaning none. Writing an output over an
// input destroyed it (calibrate -o over its own spin log, which no run can
// make again), and outputs written to one path kept only the last.
func checkOutputs(outs, ins [][2]string) error {
	for i, o := range outs {
		if o[1] == "" {
			continue
		}
		for _, in := range ins {
			if sameFile(o[1], in[1]) {
				return usageErrorf("%s %s is the input %s %s itself: writing there would destroy it; choose another name", o[0], o[1], in[0], in[1])
			}
		}
		for _, p := range outs[:i] {
			if sameFile(o[1], p[1]) {
				return usageErrorf("%s %s and %s %s are the same file: each output needs its own name", p[0], p[1], o[0], o[1])
			}
		}
	}
	return nil
}

// checkCalibrationOut checks calibrate's -o before any work: not a
// directory, not one of the input logs (ins: flag and path pairs, as for
// checkOutputs), and, when the file exists, an earlier calibration file
// (a JSON object with "version" and "method"), or empty: calibrate
// replaces nothing else, so that a mistyped -o cannot replace a survey log
// with a calibration.
func checkCalibrationOut(out string, ins ...[2]string) error {
	if out == "" {
		return nil
	}
	if err := checkOutputs([][2]string{{"-o", out}}, ins); err != nil {
		return err
	}
	fi, err := existingOut("-o", out, "the calibration file's name")
	if err != nil || fi == nil || fi.Size() == 0 {
		return err
	}
	why := "not a calibration file"
	if fi.Size() <= 1<<20 {
		var probe map[string]json.RawMessage
		data, err := os.ReadFile(out)
		if err != nil {
			return usageErrorf("-o %s: %v", out, err)
		}
		if json.Unmarshal(data, &probe) == nil && probe["version"] != nil && probe["method"] != nil {
			return nil
		}
	} else {
		why = fmt.Sprintf("%d bytes, far more than a calibration file", fi.Size())
	}
	return usageErrorf("-o %s: the file exists and is %s: calibrate replaces only an earlier calibration file; choose another name, or remove the file first", out, why)
}

// notThere reports whether err says a path does not exist: it, or one of
// its parents, is missing, or a parent is a file (ENOTDIR).
func notThere(err error) bool {
	return errors.Is(err, os.ErrNotExist) || errors.Is(err, syscall.ENOTDIR)
}

// checkDirParents checks, before any work, the parents of an output
// directory dir that does not exist yet: the nearest one that exists must
// be a directory that can be written in (the missing ones are made by
// makeParents when the results are written). Like checkParentDir, a
// problem is a usage error.
func checkDirParents(dir string) error {
	for p := filepath.Dir(filepath.Clean(dir)); ; p = filepath.Dir(p) {
		fi, err := os.Stat(p)
		switch {
		case notThere(err):
			if filepath.Dir(p) == p {
				return usageErrorf("output directory %s: its root does not exist", p)
			}
			continue
		case err != nil:
			return usageErrorf("output directory %s: %v", p, err)
		case !fi.IsDir():
			return usageErrorf("output directory %s is not a directory", p)
		}
		return checkWritableDir(p)
	}
}

// checkWritableDir checks, before any work, that a directory can be
// written in, by making an empty directory in it and removing it again:
// permissions, an immutable directory, a read-only file system and ACLs
// are all seen as the write of the results would see them. Before, a
// locate -o under a directory that could not be written in ran the whole
// fit and then failed with "mkdir ...: operation not permitted".
func checkWritableDir(p string) error {
	probe, err := os.MkdirTemp(p, ".undercurrent-probe-")
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		if notThere(err) {
			// The directory is there (checked): a file system that
			// makes no new entries (/proc) answers "no such file or
			// directory", which would mislead.
			return usageErrorf("output directory %s cannot be written in (its file system takes no new files there)", p)
		}
		return usageErrorf("output directory %s cannot be written in (%v)", p, err)
	}
	os.Remove(probe)
	return nil
}

// makeParents makes the missing parent directories of dir, outermost
// first, and returns a function that removes the ones it made, innermost
// first, each only while it is empty: a run that fails after making them
// leaves nothing behind (stageDir calls it on failure).
func makeParents(dir string) (undo func(), err error) {
	var missing []string
	for p := filepath.Dir(filepath.Clean(dir)); ; p = filepath.Dir(p) {
		if _, err := os.Lstat(p); !notThere(err) || filepath.Dir(p) == p {
			break
		}
		missing = append(missing, p)
	}
	var made []string
	undo = func() {
		for i := len(made) - 1; i >= 0; i-- {
			os.Remove(made[i]) // fails, and keeps it, when not empty
		}
	}
	for i := len(missing) - 1; i >= 0; i-- {
		if err := os.Mkdir(missing[i], 0o755); err != nil {
			if errors.Is(err, os.ErrExist) {
				continue // made meanwhile by another run: not ours to remove
			}
			undo()
			return func() {}, err
		}
		syncDir(filepath.Dir(missing[i])) // a power cut keeps it
		made = append(made, missing[i])
	}
	return undo, nil
}
