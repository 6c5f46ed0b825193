package ingest

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
)

// Reader streams canonical record batches: time float64 seconds; x, y, z
// float64 metres ENU; bx, by, bz float64 nT ENU (or sensor axes when the
// schema metadata says frame=sensor); group utf8; the others float64.
type Reader interface {
	// Schema is the canonical schema, with the frame, the ENU origin and
	// header fields in its metadata.
	Schema() *arrow.Schema
	// Next advances to the next batch; it returns false at the end of the
	// input or on an error (see Err).
	Next() bool
	// RecordBatch is the current batch, valid until the next call to Next
	// or Release; Retain it to keep it longer.
	RecordBatch() arrow.RecordBatch
	// Err is the error that stopped Next, or nil at a clean end. After
	// Release before Next returned false at the end of the input it is an
	// *Error whose cause is ErrReleased: the rows read may not be the whole
	// log.
	Err() error
	// Release stops any background work and frees the reader's memory;
	// Next returns false after it.
	//
	// A Reader is for one goroutine: Release must not be called while
	// Next runs in another. To cancel a read, stop calling Next (test a
	// context between batches), then Release.
	Release()
}

// Format is an input or output file format.
type Format string

// Formats recognised by Open and WriteSamples.
const (
	FormatCSV         Format = "csv"
	FormatArrowFile   Format = "arrow"
	FormatArrowStream Format = "arrows"
	FormatParquet     Format = "parquet"
	FormatIAGA        Format = "iaga2002"
)

// DetectFormat guesses a format from the first bytes of a file. A text
// file's UTF-8 byte order mark (as Windows Notepad saves one) is skipped.
func DetectFormat(head []byte) Format {
	switch {
	case bytes.HasPrefix(head, []byte("ARROW1")):
		return FormatArrowFile
	case bytes.HasPrefix(head, []byte("PAR1")):
		return FormatParquet
	case len(head) >= 8 && bytes.Equal(head[:4], []byte{0xff, 0xff, 0xff, 0xff}):
		return FormatArrowStream
	case looksIAGA(bytes.TrimPrefix(head, utf8BOM)):
		return FormatIAGA
	}
	return FormatCSV
}

// utf8BOM is the UTF-8 byte order mark.
var utf8BOM = []byte{0xef, 0xbb, 0xbf}

// looksIAGA reports whether text starts like an IAGA-2002 header: a line
// " Format" naming IAGA-2002, or header lines with the "|" terminator at
// column 70 followed by a DATE TIME DOY column header.
func looksIAGA(head []byte) bool {
	first, _, _ := bytes.Cut(head, []byte("\n"))
	if bytes.HasPrefix(bytes.TrimSpace(first), []byte("Format")) && bytes.Contains(bytes.ToUpper(first), []byte("IAGA-2002")) {
		return true
	}
	return bytes.Contains(head, []byte("\nDATE       TIME")) && bytes.HasPrefix(first, []byte(" ")) && bytes.HasSuffix(bytes.TrimRight(first, "\r"), []byte("|"))
}

// FormatFromExt returns the output format chosen by a file name's
// extension (.csv, .arrow, .arrows, .parquet).
func FormatFromExt(path string) (Format, error) {
	switch filepath.Ext(path) {
	case ".csv", ".txt":
		return FormatCSV, nil
	case ".arrow", ".feather", ".ipc":
		return FormatArrowFile, nil
	case ".arrows":
		return FormatArrowStream, nil
	case ".parquet", ".pq":
		return FormatParquet, nil
	}
	return "", errors.New("ingest: " + path + ": unknown output extension (want .csv, .arrow, .arrows or .parquet)")
}

// Open opens a log for streaming. The format is detected from the content.
// The caller must Release the reader.
func Open(path string, opts ...Option) (Reader, error) {
	cfg := newConfig(opts)
	if cfg.err != nil {
		return nil, cfg.err
	}
	if cfg.originMode == originMean {
		if st, err := os.Stat(path); err == nil && !st.Mode().IsRegular() {
			return nil, fileErr(path, nil, "the mean position as origin takes two passes over the log, so it must be a regular file, not a pipe: save it to a file first, or give the origin")
		}
		o, err := meanOrigin(path, cfg)
		if err != nil {
			return nil, err
		}
		if o != nil {
			cfg.origin, cfg.originMode, cfg.originOfMean = *o, originFixed, true
		}
	}
	return open(path, cfg)
}

func open(path string, cfg *config) (r Reader, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fileErr(path, unwrapPath(err), "cannot open")
	}
	// A read from a pipe waits for its writer: one alive but idle (a
	// logger's FIFO, ssh ... tail -f |) would hold a read, and a command
	// told to stop, until data or the end came. Once ctx is done, the
	// file's read deadline is set to now, so that a read waiting (and
	// every later one) returns at once and the reader stops with the
	// context's error (ctxReader). A regular file's reads do not wait.
	stop := func() bool { return false }
	if cfg.ctx != nil {
		stop = context.AfterFunc(cfg.ctx, func() { f.SetReadDeadline(time.Now()) })
		defer func() {
			if err != nil {
				stop()
				if cerr := cfg.ctx.Err(); cerr != nil {
					err = &Error{File: path, Batch: -1, Msg: "read stopped", Err: cerr}
				}
			}
		}()
	}
	// The format is told from the first bytes, peeked through a buffer,
	// not read and sought back, so that a pipe (a named pipe, /dev/stdin)
	// is read as well as a file: CSV, IAGA-2002 and Arrow IPC streams are
	// read in one pass. Arrow IPC files and Parquet are read from their
	// footer, at the end, so they must be regular files.
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, fileErr(path, unwrapPath(err), "cannot read")
	}
	regular := st.Mode().IsRegular()
	br := bufio.NewReaderSize(f, 64<<10)
	head, err := br.Peek(4096)
	if err != nil && err != io.EOF && err != bufio.ErrBufferFull {
		f.Close()
		return nil, fileErr(path, unwrapPath(err), "cannot read")
	}
	if len(head) == 0 {
		f.Close()
		return nil, fileErr(path, nil, "empty file")
	}
	format := DetectFormat(head)
	var rd io.Reader = bufFile{br, f}
	if regular {
		// Read from the start of the file, unbuffered here: the readers
		// buffer as they need, and the Arrow file and Parquet readers
		// seek.
		if _, err := f.Seek(0, io.SeekStart); err != nil {
			f.Close()
			return nil, fileErr(path, err, "cannot seek")
		}
		rd = f
	} else if format == FormatArrowFile || format == FormatParquet {
		f.Close()
		what := "an Arrow IPC file"
		if format == FormatParquet {
			what = "a Parquet file"
		}
		return nil, fileErr(path, nil, "%s is read from its footer, at its end, so it must be a regular file, not a pipe; save it to a file first, or pipe it as an Arrow IPC stream (.arrows) or CSV (undercurrent convert writes both)", what)
	}
	switch format {
	case FormatArrowFile:
		r, err = newArrowFileReader(path, f, cfg)
	case FormatArrowStream:
		r, err = newArrowStreamReader(path, rd, f, regular, cfg)
	case FormatParquet:
		r, err = newParquetReader(path, f, cfg)
	case FormatIAGA:
		r, err = newIAGAReader(path, rd, cfg)
	default:
		r, err = newCSVReader(path, rd, cfg)
	}
	if err != nil {
		f.Close()
		return nil, err
	}
	if cfg.progress != nil {
		r = &progressReader{Reader: r, fn: cfg.progress}
	}
	if cfg.ctx != nil {
		r = &ctxReader{Reader: r, ctx: cfg.ctx, name: path, stop: stop}
	}
	return r, nil
}

// bufFile reads a file that is not a regular one (a pipe) through the
// buffer its first bytes were peeked into; Close closes the file.
type bufFile struct {
	*bufio.Reader
	f *os.File
}

func (b bufFile) Close() error { return b.f.Close() }

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// meanOrigin reads the log once with the first reading as origin and
// returns the geodetic position of the mean ENU position of the readings
// with one (nil when the log has no WGS84 positions, or none finite).
func meanOrigin(path string, cfg *config) (*Geodetic, error) {
	c := *cfg
	c.originMode = originFirst
	c.progress = nil // the second pass reports progress
	r, err := open(path, &c)
	if err != nil {
		return nil, err
	}
	defer r.Release()
	pl := planOf(r)
	if pl == nil || !pl.geodetic {
		for r.Next() {
		}
		return nil, r.Err()
	}
	// Readings without a position (missing values, allowed) are left out
	// of the mean, which they would make NaN.
	var sum [3]float64
	var n float64
	for r.Next() {
		rec := r.RecordBatch()
		var xyz [3][]float64
		for k, name := range []string{ColX, ColY, ColZ} {
			xyz[k] = rec.Column(rec.Schema().FieldIndices(name)[0]).(interface{ Float64Values() []float64 }).Float64Values()
		}
		for i := range xyz[0] {
			if finite(xyz[0][i]) && finite(xyz[1][i]) && finite(xyz[2][i]) {
				sum[0] += xyz[0][i]
				sum[1] += xyz[1][i]
				sum[2] += xyz[2][i]
				n++
			}
		}
	}
	if err := r.Err(); err != nil {
		return nil, err
	}
	if n == 0 || pl.origin == nil {
		return nil, nil
	}
	o := pl.origin.FromLocal([3]float64{sum[0] / n, sum[1] / n, sum[2] / n})
	return &o, nil
}

// planned is implemented by every reader of this package.
type planned interface{ plan() *plan }

func planOf(r Reader) *plan {
	if p, ok := r.(planned); ok {
		return p.plan()
	}
	return nil
}
