package ingest

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// WriteFileAtomic writes via a temporary file in the same directory and
// renames it into place; on any error nothing is left at path (an existing
// file there is kept unchanged). The file gets mode 0644. The file's data
// are forced to the disk (fsync) before the rename, and the directory's
// entry after it (SyncDir), so that after a power cut or an operating
// system crash path holds the old file or the whole new one: without the
// first, a file system that allocates blocks late (ext4, XFS) can show
// the new name with no data or part of it.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	if write == nil {
		return fmt.Errorf("ingest: %s: WriteFileAtomic needs a write function, got nil", path)
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp*")
	if err != nil {
		return fmt.Errorf("ingest: %s: %w", path, unwrapPath(err))
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriterSize(tmp, 1<<20)
	if err = write(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("ingest: %s: %w", path, err)
	}
	if err = tmp.Chmod(0o644); err != nil {
		return fmt.Errorf("ingest: %s: %w", path, err)
	}
	if err = syncFile(tmp); err != nil {
		return fmt.Errorf("ingest: %s: %w", path, unwrapPath(err))
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("ingest: %s: %w", path, err)
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("ingest: %s: %w", path, unwrapPath(err))
	}
	syncDir(dir)
	return nil
}

// syncFile and syncDir are how WriteFileAtomic syncs (tests watch them).
var (
	syncFile = (*os.File).Sync
	syncDir  = SyncDir
)

// SyncDir forces a directory's entries (a file renamed or linked into it,
// a directory made or renamed in it) to the disk, so that they survive a
// power cut. It is best effort: the error of a file system that cannot
// sync a directory (some network and FUSE file systems refuse) is
// returned for callers that want it, and what was renamed is in place
// either way.
func SyncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	return err
}

// WriteSamples writes s to path in the format given by the extension
// (.csv, .arrow, .arrows, .parquet), atomically. Values round-trip exactly
// through every format (CSV uses the shortest decimal that reads back to
// the same float64). A nil s is an error, and nothing is written.
func WriteSamples(path string, s *Samples) error {
	if s == nil {
		return fmt.Errorf("ingest: %s: WriteSamples needs samples, got nil", path)
	}
	r, err := NewSamplesReader(s, 0, nil)
	if err != nil {
		return err
	}
	defer r.Release()
	return WriteReader(path, r)
}

// WriteReader streams the rest of r to path in the format given by the
// extension (.csv, .arrow, .arrows, .parquet), atomically: if r fails
// part-way nothing is left at path. It does not release r. A nil r is
// an error, and nothing is written.
func WriteReader(path string, r Reader) error {
	if r == nil {
		return fmt.Errorf("ingest: %s: WriteReader needs a reader, got nil", path)
	}
	format, err := FormatFromExt(path)
	if err != nil {
		return err
	}
	return WriteFileAtomic(path, func(w io.Writer) error { return WriteReaderTo(w, path, format, r) })
}

// WriteReaderTo streams the rest of r to w in format (FormatCSV,
// FormatArrowFile, FormatArrowStream or FormatParquet), for a caller that
// makes and places the file itself; name names it in errors. It does not
// release r. A nil w or r is an error.
func WriteReaderTo(w io.Writer, name string, format Format, r Reader) error {
	if w == nil || r == nil {
		return fmt.Errorf("ingest: %s: WriteReaderTo needs a writer and a reader, got a nil one", name)
	}
	var err error
	switch format {
	case FormatCSV:
		err = writeCSV(w, r)
	case FormatArrowFile:
		err = writeIPC(w, r, true)
	case FormatArrowStream:
		err = writeIPC(w, r, false)
	case FormatParquet:
		err = writeParquet(w, r)
	default:
		return fmt.Errorf("ingest: %s: cannot write the %s format", name, format)
	}
	if err != nil {
		if _, ok := err.(*Error); ok || strings.HasPrefix(err.Error(), "ingest:") {
			return err
		}
		return fmt.Errorf("ingest: %s: %w", name, err)
	}
	return nil
}

func writeIPC(w io.Writer, r Reader, file bool) error {
	var wr interface {
		Write(arrow.RecordBatch) error
		Close() error
	}
	if file {
		fw, err := ipc.NewFileWriter(w, ipc.WithSchema(r.Schema()))
		if err != nil {
			return err
		}
		wr = fw
	} else {
		wr = ipc.NewWriter(w, ipc.WithSchema(r.Schema()))
	}
	for r.Next() {
		rec, fixed := validText(r.RecordBatch())
		err := wr.Write(rec)
		if fixed {
			rec.Release()
		}
		if err != nil {
			wr.Close()
			return err
		}
	}
	if err := r.Err(); err != nil {
		wr.Close()
		return err
	}
	return wr.Close()
}

// parquetGroupRows is the target number of rows per Parquet row group.
const parquetGroupRows = 256 * 1024

func writeParquet(w io.Writer, r Reader) error {
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy), parquet.WithDictionaryDefault(false))
	fw, err := pqarrow.NewFileWriter(r.Schema(), w, props, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema()))
	if err != nil {
		return err
	}
	// Row groups of about parquetGroupRows rows: large enough to compress
	// well, small enough that memory does not grow with the file.
	rows := int64(0)
	for r.Next() {
		rec, fixed := validText(r.RecordBatch())
		if rows > 0 && rows+rec.NumRows() > parquetGroupRows {
			if err := fw.NewBufferedRowGroupChecked(); err != nil {
				if fixed {
					rec.Release()
				}
				fw.Close()
				return err
			}
			rows = 0
		}
		err := fw.WriteBuffered(rec)
		if fixed {
			rec.Release()
		}
		if err != nil {
			fw.Close()
			return err
		}
		rows += rec.NumRows()
	}
	if err := r.Err(); err != nil {
		fw.Close()
		return err
	}
	return fw.Close()
}

// writeCSV writes a header, the schema metadata as "# key: value" comment
// lines (read back by the CSV reader) and the rows. Floats use the shortest
// form that parses back to the same value; NaN is written as NaN.
func writeCSV(w io.Writer, r Reader) error {
	sc := r.Schema()
	md := sc.Metadata()
	var buf []byte
	for i, k := range md.Keys() {
		v := strings.ReplaceAll(strings.ReplaceAll(strings.ToValidUTF8(md.Values()[i], "\uFFFD"), "\n", " "), "\r", " ")
		buf = append(buf, "# "...)
		buf = append(buf, k...)
		buf = append(buf, ": "...)
		buf = append(buf, v...)
		buf = append(buf, '\n')
	}
	for i, f := range sc.Fields() {
		if i > 0 {
			buf = append(buf, ',')
		}
		buf = append(buf, f.Name...)
	}
	buf = append(buf, '\n')
	if _, err := w.Write(buf); err != nil {
		return err
	}
	for r.Next() {
		rec := r.RecordBatch()
		nc := int(rec.NumCols())
		floats := make([][]float64, nc)
		strs := make([]*array.String, nc)
		for j := 0; j < nc; j++ {
			switch a := rec.Column(j).(type) {
			case *array.Float64:
				floats[j] = a.Float64Values()
			case *array.String:
				strs[j] = a
			default:
				return fmt.Errorf("column %s: cannot write type %s", sc.Field(j).Name, a.DataType())
			}
		}
		n := int(rec.NumRows())
		for i := 0; i < n; i++ {
			buf = buf[:0]
			for j := 0; j < nc; j++ {
				if j > 0 {
					buf = append(buf, ',')
				}
				if floats[j] != nil {
					v := floats[j][i]
					if math.IsNaN(v) {
						buf = append(buf, "NaN"...)
					} else {
						buf = strconv.AppendFloat(buf, v, 'g', -1, 64)
					}
					continue
				}
				buf = appendCSVString(buf, strs[j].Value(i))
			}
			buf = append(buf, '\n')
			if _, err := w.Write(buf); err != nil {
				return err
			}
		}
	}
	return r.Err()
}

func appendCSVString(buf []byte, s string) []byte {
	s = strings.ToValidUTF8(s, "\uFFFD")
	if !strings.ContainsAny(s, ",\"\n\r#") && strings.TrimSpace(s) == s {
		return append(buf, s...)
	}
	buf = append(buf, '"')
	buf = append(buf, strings.ReplaceAll(s, `"`, `""`)...)
	return append(buf, '"')
}

// validText returns rec with every text value that is not valid UTF-8
// written with U+FFFD for each bad byte run, so that the Arrow and
// Parquet string columns written hold UTF-8 as their type says, whatever
// the input held (an Arrow file's group column is not checked on
// reading). fixed says a new record was built, which the caller releases;
// otherwise rec itself is returned.
func validText(rec arrow.RecordBatch) (out arrow.RecordBatch, fixed bool) {
	var cols []arrow.Array
	for j, c := range rec.Columns() {
		a, ok := c.(*array.String)
		if !ok || !hasHigh(a.ValueBytes()) {
			continue // no column of text, or ASCII text alone
		}
		bad := false
		for i := 0; i < a.Len() && !bad; i++ {
			bad = a.IsValid(i) && !utf8.ValidString(a.Value(i))
		}
		if !bad {
			continue
		}
		if cols == nil {
			cols = slices.Clone(rec.Columns())
		}
		b := array.NewStringBuilder(memory.DefaultAllocator)
		b.Reserve(a.Len())
		for i := 0; i < a.Len(); i++ {
			if a.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(strings.ToValidUTF8(a.Value(i), "\uFFFD"))
			}
		}
		cols[j] = b.NewArray()
		b.Release()
		defer cols[j].Release()
	}
	if cols == nil {
		return rec, false
	}
	return array.NewRecordBatch(rec.Schema(), cols, rec.NumRows()), true
}
