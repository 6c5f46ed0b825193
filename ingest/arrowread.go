package ingest

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"undercurrent/ingest/ipcguard"
)

// arrowReader canonicalises batches from an Arrow IPC file or stream or a
// Parquet file. When the input already holds canonical float64 columns in
// canonical units, its arrays are passed through without copying; only the
// time order and NaN checks touch the values.
type arrowReader struct {
	name   string
	pl     *plan
	cfg    *config
	src    func() (arrow.RecordBatch, error) // nil, nil at the end; valid until the next call
	closer func()
	cur    arrow.RecordBatch
	err    error
	batch  int
	start  int64 // rows in the batches before the current one
	last   float64
	// lastText is the last time as written, at lastAt ("batch 0 row
	// 4"), lastNaive when without a UTC offset (for the message of a
	// step back from it).
	lastText, lastAt string
	lastNaive        bool
	rb               rawBatch
	zc               *zoneClock // the times read in a zone (WithTimeZone); nil without one
	done             bool
	ended            bool // Next reached the end of the input (see Release)
	// narrow holds, for each position column stored as floats narrower
	// than 64 bits, its significand bits and largest magnitude read
	// (notePositionSteps).
	narrow [nCanon]narrowColumn
	// rewind starts src again at the first batch (an Arrow IPC file or
	// Parquet: findOrigin reads ahead and starts again); nil for a
	// stream, whose batches read ahead are kept in ahead, retained, and
	// given out first, each released at the next read.
	// rows counts the readings read, repeats those whose time is that of
	// the reading before in the same group (prevT, prevG): most of them
	// repeating is times stored more coarsely than the readings come
	// (noteRepeatedTimes).
	rows, repeats int
	fraction      bool // a time with a fraction of a second was read
	prevT         float64
	prevG         string
	// flat is the schema with struct columns flattened (flattenSchema),
	// nil when it has none; flatLast the last batch flattened, valid
	// until the next read like the source's own.
	flat     *arrow.Schema
	flatLast arrow.RecordBatch
	rewind   func() error
	ahead    []arrow.RecordBatch
	held     arrow.RecordBatch
	srcDone  bool  // the stream's src ended while read ahead
	srcErr   error // with this error
}

// narrowColumn is a position column stored as 32- or 16-bit floats: bits
// is the significand's precision (24 or 11; 0 for a column that is not),
// max the largest |value| read, in the column's unit.
type narrowColumn struct {
	bits int
	max  float64
	// fixed is the step of a field column stored as integers (1) or
	// decimals (10^-scale), in the column's unit; 0 otherwise.
	fixed float64
}

func (r *arrowReader) plan() *plan                    { return r.pl }
func (r *arrowReader) Schema() *arrow.Schema          { return r.pl.schema }
func (r *arrowReader) RecordBatch() arrow.RecordBatch { return r.cur }
func (r *arrowReader) Err() error                     { return r.err }

func (r *arrowReader) Release() {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	r.releaseAhead()
	if r.flatLast != nil {
		r.flatLast.Release()
		r.flatLast = nil
	}
	if r.err == nil && !r.ended {
		r.err = releasedErr(r.name)
	}
	if r.closer != nil {
		r.closer()
		r.closer = nil
	}
	r.done = true
}

func newArrowReaderFor(name, format string, sc *arrow.Schema, cfg *config) (*arrowReader, error) {
	sc, nested := flattenSchema(sc) // struct columns read by dotted names
	header := make([]string, sc.NumFields())
	types := make([]arrow.DataType, sc.NumFields())
	for i, f := range sc.Fields() {
		header[i], types[i] = f.Name, f.Type
	}
	meta := map[string]string{}
	md := sc.Metadata()
	for i, k := range md.Keys() {
		meta[k] = md.Values()[i]
	}
	pl, err := newPlan(name, format, header, types, meta, 0, cfg)
	if err != nil {
		return nil, err
	}
	// Arrow: a timestamp without a time zone is wall-clock time in an
	// unstated zone. (A log read with WithTimeOptional may have no time.)
	if pl.src[cTime] >= 0 {
		if ts, ok := types[pl.src[cTime]].(*arrow.TimestampType); ok && ts.TimeZone == "" && !cfg.timeText.stated {
			pl.naiveTime(name, fmt.Sprintf("timestamps of type %s without a time zone", ts), true)
		}
	}
	r := &arrowReader{name: name, pl: pl, cfg: cfg, last: math.NaN(), zc: newZoneClock(cfg.timeText.zone)}
	if nested {
		r.flat = sc
	}
	return r, nil
}

func newArrowFileReader(name string, f *os.File, cfg *config) (_ Reader, err error) {
	defer recoverCorrupt(name, "Arrow IPC file", &err)
	batches, end, err := checkArrowFooter(f)
	if err != nil {
		return nil, fileErr(name, plainErr{err}, "not a readable Arrow IPC file (corrupt?)")
	}
	// A record batch body is read whole into one buffer: it is bounded by
	// the file, whose footer arrow-go checks each block against, not by
	// arrow-go's default limit (256 MiB) nor by maxBuffer, which bounds
	// the buffers sized from lengths the file does not hold (decompressed
	// columns).
	size := int64(0)
	if st, err := f.Stat(); err == nil {
		size = st.Size()
	}
	mem := ipcguard.Bounded{Allocator: cfg.mem, Max: int(max(int64(maxBuffer), size))}
	fr, err := ipc.NewFileReader(f, ipc.WithAllocator(mem), ipc.WithBodySizeLimit(max(size, 1)))
	if err != nil {
		if !endsWith(f, "ARROW1") {
			return nil, fileErr(name, nil, "not a complete Arrow IPC file: its footer is missing or cut short (the file does not end with the ARROW1 magic bytes; an interrupted copy or a writer that stopped?)")
		}
		return nil, fileErr(name, plainErr{err}, "not a readable Arrow IPC file (corrupt?)")
	}
	r, err := newArrowReaderFor(name, string(FormatArrowFile), fr.Schema(), cfg)
	if err != nil {
		fr.Close()
		return nil, err
	}
	i := 0
	r.src = func() (arrow.RecordBatch, error) {
		if i >= fr.NumRecords() {
			return nil, nil
		}
		if i < len(batches) && len(batches) == fr.NumRecords() {
			if past := blockPastEnd(batches[i], end); past != "" {
				i++
				return nil, errors.New(past)
			}
		}
		rec, err := fr.RecordBatch(i)
		i++
		return rec, err
	}
	r.rewind = func() error { i = 0; return nil }
	r.findOrigin()
	r.closer = func() { fr.Close(); f.Close() }
	return r, nil
}

// eofReader counts the bytes read from a file and notes whether a read
// met the end of the file. The Arrow IPC stream reader stops at an
// end-of-stream marker (0xFFFFFFFF 0x00000000, or the 4-byte 0x00000000
// of streams written before format version 0.15) without reading further,
// so a stream that ends cleanly having met the end of the file has none.
type eofReader struct {
	r   io.Reader
	n   int64
	eof bool
}

func (e *eofReader) Read(p []byte) (int, error) {
	n, err := e.r.Read(p)
	e.n += int64(n)
	if err == io.EOF {
		e.eof = true
	}
	return n, err
}

// rowsIn says how many rows in how many record batches ("1 row in 1
// record batch", "3000 rows in 3 record batches").
func rowsIn(rows int64, batches int) string {
	r, b := "rows", "record batches"
	if rows == 1 {
		r = "row"
	}
	if batches == 1 {
		b = "record batch"
	}
	return fmt.Sprintf("%d %s in %d %s", rows, r, batches, b)
}

// unterminatedHint tells a user how to read the rows before the cut of an
// Arrow IPC stream that stops short.
const unterminatedHint = "to read the rows before the cut, allow an unterminated stream (on the command line --allow-unterminated)"

// newArrowStreamReader reads an Arrow IPC stream from rd, which f (closed
// by Release) underlies; regular tells whether f is a regular file (not a
// pipe).
func newArrowStreamReader(name string, rd io.Reader, f *os.File, regular bool, cfg *config) (_ Reader, err error) {
	defer recoverCorrupt(name, "Arrow IPC stream", &err)
	src := &eofReader{r: rd}
	// From a regular file a message body that fits in the bytes left is
	// read into one buffer of its length; a declared length past the end
	// grows as its bytes arrive, takes no more memory than the file
	// holds, and stops as a cut-short file. A pipe's length is not known,
	// so its bodies are capped (maxPipeMessage). maxBuffer bounds only
	// what arrow-go sizes from lengths the input does not hold
	// (decompressed buffers, one column each).
	lim := ipcguard.Limits{}
	if st, err := f.Stat(); err == nil && regular {
		lim.Size = st.Size()
	}
	if !regular {
		lim = ipcguard.Limits{Body: maxPipeMessage, Why: "a stream read from a pipe may hold messages of at most that size, as its length is not known: save it to a file and read the file, or write it in smaller record batches"}
	}
	mem := ipcguard.Bounded{Allocator: cfg.mem, Max: maxBuffer}
	sr, err := ipc.NewReaderFromMessageReader(ipcguard.NewReader(src, cfg.mem, lim), ipc.WithAllocator(mem))
	if err != nil {
		if src.eof && (errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF)) {
			return nil, fileErr(name, nil, "not a complete Arrow IPC stream: the file stops at byte %d, before its schema message ends, so it holds no rows", src.n)
		}
		if errors.Is(err, ipcguard.ErrTooLong) {
			return nil, fileErr(name, plainErr{err}, "Arrow IPC stream: its schema message is over a size limit")
		}
		return nil, fileErr(name, plainErr{err}, "not a readable Arrow IPC stream (corrupt, or not Arrow?)")
	}
	r, err := newArrowReaderFor(name, string(FormatArrowStream), sr.Schema(), cfg)
	if err != nil {
		sr.Release()
		return nil, err
	}
	var rows int64
	batches := 0
	whole := src.n // where the last whole record batch (or the schema) ends
	r.src = func() (arrow.RecordBatch, error) {
		if sr.Next() {
			rec := sr.RecordBatch()
			rows += rec.NumRows()
			batches++
			whole = src.n
			return rec, nil
		}
		if err := sr.Err(); err != nil {
			if errors.Is(err, ipcguard.ErrTooLong) {
				return nil, fileErr(name, plainErr{err}, "Arrow IPC stream: the message after byte %d (after %s) is over a size limit", whole, rowsIn(rows, batches))
			}
			if !src.eof || !errors.Is(err, io.ErrUnexpectedEOF) {
				return nil, fileErr(name, plainErr{err}, "Arrow IPC stream: the message after byte %d (after %s) cannot be read (corrupt file?)", whole, rowsIn(rows, batches))
			}
			// The file ends inside a message: its length prefix,
			// metadata or body stops short.
			if batches == 0 {
				return nil, fileErr(name, nil, "Arrow IPC stream is cut short: the file stops at byte %d, inside its first record batch (the schema ends at byte %d), so it holds no whole rows", src.n, whole)
			}
			if !cfg.allowUnterminated {
				return nil, fileErr(name, nil, "Arrow IPC stream is cut short: the file stops at byte %d, inside a message; the last whole record batch ends at byte %d, after %s (an interrupted copy or a writer that stopped?); %s", src.n, whole, rowsIn(rows, batches), unterminatedHint)
			}
			r.pl.warn("%s: Arrow IPC stream is cut short: the file stops at byte %d, inside a message; kept %s, up to byte %d where the last whole record batch ends, as a possibly incomplete log", name, src.n, rowsIn(rows, batches), whole)
			return nil, nil
		}
		if regular && src.eof {
			if !cfg.allowUnterminated {
				return nil, fileErr(name, nil, "Arrow IPC stream stops at byte %d, after %s, without its end-of-stream marker (0xFFFFFFFF 0x00000000): the file was probably cut short (an interrupted copy or a writer that stopped); %s", src.n, rowsIn(rows, batches), unterminatedHint)
			}
			r.pl.warn("%s: Arrow IPC stream stops at byte %d, after %s, without its end-of-stream marker: read as a possibly incomplete log", name, src.n, rowsIn(rows, batches))
		}
		return nil, nil
	}
	r.closer = func() { sr.Release(); f.Close() }
	r.findOrigin()
	return r, nil
}

func newParquetReader(name string, f *os.File, cfg *config) (_ Reader, err error) {
	defer recoverCorrupt(name, "Parquet file", &err)
	pf, err := file.NewParquetReader(f)
	if err != nil {
		if !endsWith(f, "PAR1") {
			return nil, fileErr(name, nil, "not a complete Parquet file: its footer is missing or cut short (the file does not end with the PAR1 magic bytes; an interrupted copy or a writer that stopped?)")
		}
		return nil, fileErr(name, plainErr{err}, "not a readable Parquet file (corrupt?)")
	}
	if err := checkArrowSchemaKey(pf); err != nil {
		pf.Close()
		return nil, fileErr(name, plainErr{err}, "not a readable Parquet file (corrupt?): its %s key, the Arrow schema stored by the writer, cannot be read", arrowSchemaKey)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: int64(cfg.batchRows)}, ipcguard.Bounded{Allocator: cfg.mem, Max: maxBuffer})
	if err != nil {
		pf.Close()
		return nil, fileErr(name, plainErr{err}, "cannot read the Parquet schema")
	}
	sc, err := fr.Schema()
	if err != nil {
		pf.Close()
		return nil, fileErr(name, plainErr{err}, "cannot read the Parquet schema")
	}
	r, err := newArrowReaderFor(name, string(FormatParquet), sc, cfg)
	if err != nil {
		pf.Close()
		return nil, err
	}
	rr, err := fr.GetRecordReader(context.Background(), nil, nil)
	if err != nil {
		pf.Close()
		return nil, fileErr(name, plainErr{err}, "cannot read the Parquet file")
	}
	r.src = func() (arrow.RecordBatch, error) {
		if rr.Next() {
			return rr.RecordBatch(), nil
		}
		err := rr.Err()
		if err == io.EOF {
			err = nil
		}
		return nil, err
	}
	r.rewind = func() error {
		rr.Release()
		next, err := fr.GetRecordReader(context.Background(), nil, nil)
		if err != nil {
			return err
		}
		rr = next
		return nil
	}
	r.closer = func() { rr.Release(); pf.Close() }
	if err := r.findOrigin(); err != nil {
		r.closer = func() { pf.Close() } // rr is released
		r.Release()
		return nil, fileErr(name, plainErr{err}, "cannot read the Parquet file")
	}
	return r, nil
}

// endsWith reports whether the file ends with the magic bytes that close
// an Arrow IPC file ("ARROW1") or a Parquet file ("PAR1").
func endsWith(f *os.File, magic string) bool {
	st, err := f.Stat()
	if err != nil || st.Size() < int64(len(magic)) {
		return false
	}
	b := make([]byte, len(magic))
	if _, err := f.ReadAt(b, st.Size()-int64(len(magic))); err != nil {
		return false
	}
	return string(b) == magic
}

// recoverCorrupt turns a panic inside the Arrow or Parquet libraries on
// corrupt input into an error.
func recoverCorrupt(name, what string, err *error) {
	if p := recover(); p != nil {
		*err = fileErr(name, nil, "corrupt %s: %s", what, plainText(fmt.Sprint(p)))
	}
}

func (r *arrowReader) Next() bool {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	if r.err != nil || r.done {
		return false
	}
	for {
		rec, err := r.read()
		if e, ok := err.(*Error); ok {
			r.err = e
			r.Release()
			return false
		}
		if err != nil {
			r.err = &Error{File: r.name, Batch: r.batch, Row: 0, FileRow: r.start, Msg: "cannot read batch (truncated or corrupt file?)", Err: plainErr{err}}
			r.Release()
			return false
		}
		if rec == nil {
			r.ended = true
			r.pl.finishGroups()
			r.pl.finishNoFix()
			r.notePositionSteps()
			r.noteRepeatedTimes()
			r.Release()
			return false
		}
		start := r.start
		out, err := r.convertChecked(rec)
		r.batch++
		r.start += rec.NumRows()
		if err != nil {
			if e, ok := err.(*Error); ok {
				e.FileRow = start + int64(e.Row)
			}
			r.err = err
			r.Release()
			return false
		}
		if out.NumRows() == 0 {
			out.Release()
			continue
		}
		if !r.pl.timeChecked {
			for i, v := range out.Column(0).(*array.Float64).Float64Values() {
				if v == v {
					r.pl.checkTimeUnit(v, r.name+batchRow(r.batch-1, i, start+int64(i)))
					break
				}
			}
		}
		if gi := r.groupIndex(); gi >= 0 {
			n, first := emptyGroups(out.Column(gi))
			r.pl.noteGroups(int(out.NumRows()), n, func() string { return r.name + batchRow(r.batch-1, first, start+int64(first)) })
		}
		if r.pl.orderGroup {
			if i, prev, g := r.pl.groupBackwards(out); i >= 0 {
				t := out.Column(0).(*array.Float64).Value(i)
				out.Release()
				e := rowErr(r.name, r.batch-1, i, r.pl.header[r.pl.src[cTime]], formatSeconds(t), "%s", groupBackwardsMsg(t, prev, g, r.pl.naiveWarned))
				e.FileRow = start + int64(i)
				r.err = e
				r.Release()
				return false
			}
		}
		if !r.pl.orderAll && !r.pl.noTime {
			r.pl.noteClockChange(out.Column(0).(*array.Float64).Float64Values(), r.name)
		}
		r.countRepeats(out)
		r.cur = out
		return true
	}
}

// groupIndex is the index of the group column in an output batch, or -1.
func (r *arrowReader) groupIndex() int {
	for i, c := range r.pl.out {
		if c == cGroup {
			return i
		}
	}
	return -1
}

// findOrigin puts the origin of a latitude/longitude log read with the
// default origin (or the first pass of WithOriginMean) at its first
// reading with a finite latitude, longitude and height, as the CSV reader
// does, before the schema, which carries it, is handed out. The batches
// are read up to the one that holds that reading: usually the first. An
// Arrow IPC file or Parquet is then read again from its first batch
// (rewind), so nothing read ahead is kept; a stream's batches read ahead
// are kept, retained, for Next. A batch that cannot be read or converted
// ends the search; Next reports it in its place. When no reading has a
// position the origin is the stand-in 0 0 0, as in the CSV reader (the
// log's read says why: a missing value refused, or no position at all).
// The only error is one starting the file again.
func (r *arrowReader) findOrigin() error {
	pl := r.pl
	if !pl.geodetic || pl.origin != nil {
		return nil
	}
	defer func() {
		if pl.origin == nil {
			pl.setOrigin(Geodetic{})
		}
	}()
	var lat, lon, h []float64
	var zero *Geodetic // the first reading without a fix (noFix), as the CSV reader
	read := 0
	defer func() {
		if pl.origin == nil && zero != nil {
			pl.setOrigin(*zero)
		}
	}()
	for pl.origin == nil && !(zero != nil && read > noFixAhead/8) {
		rec, err := r.readSrc()
		if err != nil || rec == nil {
			if r.rewind == nil {
				r.srcDone, r.srcErr = true, err
			}
			break
		}
		if r.rewind == nil {
			rec.Retain()
			r.ahead = append(r.ahead, rec)
		}
		var e1, e2, e3 error
		lat, e1 = r.floats(lat[:0], rec.Column(pl.src[cLat]), cLat)
		lon, e2 = r.floats(lon[:0], rec.Column(pl.src[cLon]), cLon)
		h = h[:0]
		if pl.src[cHeight] >= 0 {
			h, e3 = r.floats(h, rec.Column(pl.src[cHeight]), cHeight)
		}
		if e1 != nil || e2 != nil || e3 != nil {
			break
		}
		for i := range lat {
			o := Geodetic{Lat: lat[i], Lon: lon[i]}
			if len(h) > 0 {
				o.H = h[i]
			}
			if finite(o.Lat) && finite(o.Lon) && finite(o.H) {
				if !noFix(o.Lat, o.Lon) {
					pl.setOrigin(o)
					break
				}
				if zero == nil {
					zero = &o
				}
			}
		}
		read += len(lat)
	}
	if r.rewind != nil {
		return r.rewind()
	}
	return nil
}

// releaseAhead releases the batches findOrigin kept.
func (r *arrowReader) releaseAhead() {
	if r.held != nil {
		r.held.Release()
		r.held = nil
	}
	for _, rec := range r.ahead {
		rec.Release()
	}
	r.ahead = nil
}

// read returns the next input batch: first those findOrigin kept, then
// src's.
func (r *arrowReader) read() (arrow.RecordBatch, error) {
	if r.held != nil {
		r.held.Release()
		r.held = nil
	}
	if len(r.ahead) > 0 {
		r.held = r.ahead[0]
		r.ahead[0] = nil
		r.ahead = r.ahead[1:]
		return r.held, nil
	}
	if r.srcDone {
		return nil, r.srcErr
	}
	return r.readSrc()
}

func (r *arrowReader) readSrc() (rec arrow.RecordBatch, err error) {
	defer func() {
		if p := recover(); p != nil {
			rec, err = nil, fmt.Errorf("%v", p)
		}
	}()
	rec, err = r.src()
	if r.flat == nil {
		return rec, err
	}
	if r.flatLast != nil {
		r.flatLast.Release()
		r.flatLast = nil
	}
	if rec != nil {
		r.flatLast = flattenBatch(r.cfg.mem, rec, r.flat)
		rec = r.flatLast
	}
	return rec, err
}

// convert canonicalises one input batch and checks it.
// convertChecked is convert with a panic inside arrow-go turned into an
// error: a corrupt record batch whose buffers are shorter than its
// lengths (or null counts) say makes arrow-go index past them, and no
// check of arrow-go's covers primitive columns.
func (r *arrowReader) convertChecked(rec arrow.RecordBatch) (out arrow.RecordBatch, err error) {
	defer func() {
		if p := recover(); p != nil {
			out = nil
			err = fileErr(r.name, nil, "corrupt record batch %d (from row %d of the file, counting from 0): its buffers do not match its lengths (%s)", r.batch, r.start, plainText(fmt.Sprint(p)))
		}
	}()
	return r.convert(rec)
}

func (r *arrowReader) convert(rec arrow.RecordBatch) (arrow.RecordBatch, error) {
	pl := r.pl
	n := int(rec.NumRows())
	if r.fastPath(rec) {
		cols := make([]arrow.Array, len(pl.out))
		for i, c := range pl.out {
			cols[i] = rec.Column(pl.src[c])
		}
		for i, c := range pl.out {
			if c == cGroup {
				continue
			}
			// An infinite value is refused in every mode, as the slow path
			// (floats) and the CSV reader do; only a NaN may pass, as a
			// missing value, when missing values are allowed.
			for row, v := range cols[i].(*array.Float64).Float64Values() {
				if v-v != 0 { // NaN or infinite
					if v != v {
						if r.cfg.allowMissing {
							continue
						}
						return nil, rowErr(r.name, r.batch, row, pl.header[pl.src[c]], "NaN", "NaN value; missing values are not allowed by default")
					}
					return nil, rowErr(r.name, r.batch, row, pl.header[pl.src[c]], strconv.FormatFloat(v, 'g', -1, 64), "value is infinite")
				}
			}
		}
		var f [nCanon][]float64
		for i, c := range pl.out {
			if c != cGroup {
				f[c] = cols[i].(*array.Float64).Float64Values()
			}
		}
		if i, col, msg := pl.checkPlausible(&f, n); i >= 0 {
			e := rowErr(r.name, r.batch, i, col, "", "%s", msg)
			e.FileRow = r.start + int64(i)
			return nil, e
		}
		if err := r.checkTime(cols[0].(*array.Float64).Float64Values(), rec.Column(pl.src[cTime])); err != nil {
			return nil, err
		}
		return array.NewRecordBatch(pl.schema, cols, int64(n)), nil
	}
	rb := &r.rb
	rb.reset(pl)
	rb.n = n
	for c := 0; c < nCanon; c++ {
		if pl.src[c] < 0 {
			continue
		}
		arr := rec.Column(pl.src[c])
		if c == cGroup {
			rb.group = appendStrings(rb.group, arr)
			continue
		}
		var err error
		rb.f[c], err = r.floats(rb.f[c][:0], arr, c)
		if err != nil {
			return nil, err
		}
	}
	if i, col, msg := pl.checkLatLon(rb); i >= 0 {
		e := rowErr(r.name, r.batch, i, col, "", "%s", msg)
		e.FileRow = r.start + int64(i)
		return nil, e
	}
	if i, col, msg := pl.checkPlausible(&rb.f, rb.n); i >= 0 {
		e := rowErr(r.name, r.batch, i, col, "", "%s", msg)
		e.FileRow = r.start + int64(i)
		return nil, e
	}
	pl.transform(rb)
	if rb.noFix > 0 {
		at := make([]string, len(rb.noFixRow))
		for j, i := range rb.noFixRow {
			at[j] = r.name + batchRow(r.batch, i, r.start+int64(i))
		}
		pl.noteNoFix(rb.noFix, at)
	}
	var raw arrow.Array
	if pl.src[cTime] >= 0 {
		raw = rec.Column(pl.src[cTime])
	}
	if err := r.checkTime(rb.f[cTime], raw); err != nil {
		return nil, err
	}
	return pl.record(r.cfg.mem, rb), nil
}

func (r *arrowReader) fastPath(rec arrow.RecordBatch) bool {
	pl := r.pl
	if r.zc != nil {
		return false // the zone clock sees every time (floats)
	}
	if pl.geodetic || pl.inFrame == FrameNED {
		return false
	}
	for _, c := range pl.out {
		if pl.src[c] < 0 {
			return false
		}
		arr := rec.Column(pl.src[c])
		if c == cGroup {
			if _, ok := arr.(*array.String); !ok {
				return false
			}
			continue
		}
		if _, ok := arr.(*array.Float64); !ok || arr.NullN() > 0 || pl.scale[c] != 1 {
			return false
		}
	}
	return true
}

// checkTime refuses a step back in time in the batch's times t (raw: its
// time column as read, for the times as written) when the log is read in
// time order.
func (r *arrowReader) checkTime(t []float64, raw arrow.Array) error {
	if !r.pl.orderAll {
		return nil
	}
	at := func(i int) string { return strings.TrimPrefix(batchRow(r.batch, i, r.start+int64(i)), ": ") }
	if i := firstBackwards(t, r.last); i >= 0 {
		prev, prevText, prevAt, prevNaive := r.last, r.lastText, r.lastAt, r.lastNaive
		if k := lastIndex(t[:i]); k >= 0 {
			prev, prevAt = t[k], at(k)
			prevText, prevNaive = r.timeText(raw, k)
		}
		text, naive := r.timeText(raw, i)
		shown := text
		if shown == "" {
			shown = formatSeconds(t[i])
		}
		return rowErr(r.name, r.batch, i, r.pl.header[r.pl.src[cTime]], shown, "%s", backwardsMsg(t[i], prev, text, prevText, prevAt, naive && prevNaive))
	}
	if k := lastIndex(t); k >= 0 {
		r.last, r.lastAt = t[k], at(k)
		r.lastText, r.lastNaive = r.timeText(raw, k)
	}
	return nil
}

// timeText returns row i of the time column raw as written (a text as
// it is, a number in the file's unit, a timestamp in RFC 3339) and
// whether it gives no UTC offset (a text or a timestamp type without one,
// in a log whose time unit does not say UTC); "" when there is none.
func (r *arrowReader) timeText(raw arrow.Array, i int) (string, bool) {
	if raw == nil || i < 0 || i >= raw.Len() {
		return "", false
	}
	if d, ok := raw.(*array.Dictionary); ok {
		raw, i = d.Dictionary(), d.GetValueIndex(i)
	}
	v, text, k := cell(raw, i)
	switch k {
	case cellText:
		text = string(bytes.Trim(trimField([]byte(text)), " \t"))
		return text, r.pl.textNaive(text)
	case cellNumber, cellDuration:
		return strconv.FormatFloat(v, 'f', -1, 64), false
	case cellTimestamp:
		tt, _ := raw.DataType().(*arrow.TimestampType)
		ns := math.Round((v - math.Floor(v)) * 1e9)
		tm := time.Unix(int64(math.Floor(v)), int64(ns)).UTC()
		if tt != nil && tt.TimeZone == "" {
			return tm.Format("2006-01-02T15:04:05.999999999"), !r.pl.timeUTC && !r.cfg.timeText.stated
		}
		return tm.Format(time.RFC3339Nano), false
	}
	return "", false
}

// convertible reports whether a column of type dt can feed canonical column c.
func convertible(dt arrow.DataType, c int) bool {
	switch dt.ID() {
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW:
		return true
	case arrow.FLOAT64, arrow.FLOAT32, arrow.FLOAT16, arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64,
		arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64,
		arrow.DECIMAL32, arrow.DECIMAL64, arrow.DECIMAL128, arrow.DECIMAL256:
		return true
	case arrow.TIMESTAMP, arrow.DATE64, arrow.DURATION:
		// date64: milliseconds since the Unix epoch (as older JavaScript
		// Arrow writes a Date); duration: time since the log's start, read
		// as relative seconds like a text log's relative times.
		return c == cTime
	case arrow.NULL:
		return c != cTime
	case arrow.DICTIONARY:
		// Dictionary-encoded text or numbers (as pandas' categoricals and
		// other writers leave them) read as their values.
		return c == cGroup || convertible(dt.(*arrow.DictionaryType).ValueType, c)
	case arrow.BOOL:
		return c == cGroup
	}
	return false
}

// cellKind says what cell returned.
type cellKind int

const (
	cellNumber    cellKind = iota // v in the column's unit
	cellTimestamp                 // v in Unix seconds, whatever the unit
	cellDuration                  // v in seconds since some start, whatever the unit
	cellText                      // text, to be parsed
	cellNull                      // a null (in the column or its dictionary)
	cellBadType                   // a type that cannot be read
)

// cell reads row i of arr. Dictionary-encoded columns read through their
// dictionary; decimals are read from their decimal text, so correctly
// rounded.
func cell(arr arrow.Array, i int) (v float64, text string, k cellKind) {
	if arr.IsNull(i) {
		return 0, "", cellNull
	}
	switch a := arr.(type) {
	case *array.Float64:
		return a.Value(i), "", cellNumber
	case *array.Float32:
		return float64(a.Value(i)), "", cellNumber
	case *array.Float16:
		return float64(a.Value(i).Float32()), "", cellNumber
	case *array.Int8:
		return float64(a.Value(i)), "", cellNumber
	case *array.Int16:
		return float64(a.Value(i)), "", cellNumber
	case *array.Int32:
		return float64(a.Value(i)), "", cellNumber
	case *array.Int64:
		return float64(a.Value(i)), "", cellNumber
	case *array.Uint8:
		return float64(a.Value(i)), "", cellNumber
	case *array.Uint16:
		return float64(a.Value(i)), "", cellNumber
	case *array.Uint32:
		return float64(a.Value(i)), "", cellNumber
	case *array.Uint64:
		return float64(a.Value(i)), "", cellNumber
	case *array.Timestamp:
		return timestampSeconds(int64(a.Value(i)), a.DataType().(*arrow.TimestampType).Unit), "", cellTimestamp
	case *array.Date64:
		return timestampSeconds(int64(a.Value(i)), arrow.Millisecond), "", cellTimestamp
	case *array.Duration:
		return timestampSeconds(int64(a.Value(i)), a.DataType().(*arrow.DurationType).Unit), "", cellDuration
	case *array.String:
		return 0, a.Value(i), cellText
	case *array.LargeString:
		return 0, a.Value(i), cellText
	case *array.StringView:
		return 0, a.Value(i), cellText
	case *array.Decimal32, *array.Decimal64, *array.Decimal128, *array.Decimal256:
		return 0, arr.ValueStr(i), cellText
	case *array.Dictionary:
		return cell(a.Dictionary(), a.GetValueIndex(i))
	}
	return 0, "", cellBadType
}

// timestampSeconds turns an Arrow timestamp into Unix seconds: whole
// seconds plus the fraction, each exact or correctly rounded, so the
// result is the one a text time with the same digits reads as (see
// unixSeconds) rather than the integer scaled by an inexact 1e-6.
func timestampSeconds(ts int64, unit arrow.TimeUnit) float64 {
	var d int64
	switch unit {
	case arrow.Second:
		return float64(ts)
	case arrow.Millisecond:
		d = 1e3
	case arrow.Microsecond:
		d = 1e6
	default:
		d = 1e9
	}
	return float64(ts/d) + float64(ts%d)/float64(d)
}

// floats converts an Arrow column into canonical float64 values.
func (r *arrowReader) floats(dst []float64, arr arrow.Array, c int) ([]float64, error) {
	pl := r.pl
	col := pl.header[pl.src[c]]
	scale := pl.scale[c]
	n := arr.Len()
	if isPositionColumn(c) || isFieldComponent(c) {
		r.noteNarrow(arr, c)
	}
	for i := 0; i < n; i++ {
		v, text, k := cell(arr, i)
		s := scale
		switch k {
		case cellNull:
			if !r.cfg.allowMissing {
				return nil, rowErr(r.name, r.batch, i, col, "null", "null value; missing values are not allowed by default")
			}
			dst = append(dst, math.NaN())
			continue
		case cellBadType:
			return nil, rowErr(r.name, r.batch, i, col, "", "type %s cannot be read as %s", arr.DataType(), canonNames[c])
		case cellTimestamp, cellDuration:
			s = 1
			if k == cellTimestamp && c == cTime {
				var err error
				if v, err = r.stampIn(v, arr, i); err != nil {
					return nil, err
				}
			}
		case cellText:
			var ok bool
			var badDate string
			b := []byte(text)
			t := trimField(b)
			v, ok = parseNumber(t)
			if !ok && c == cTime {
				rd := r.cfg.timeText.read(t)
				if rd.gap {
					return nil, rowErr(r.name, r.batch, i, col, text, "%s %s", quoteText(string(t)), rd.bad)
				}
				v, ok, badDate = rd.v, rd.ok, rd.bad
				if ok {
					s = 1
					if !(rd.own || r.cfg.timeText.stated) {
						pl.naiveTime(r.name+batchRow(r.batch, i, r.start+int64(i)), "times such as "+quoteText(string(t)), false)
					}
					if r.zc != nil {
						v = r.zc.take(v, &rd, false, r.name+batchRow(r.batch, i, r.start+int64(i))+": column "+col, string(t))
					}
				}
			} else if ok && c == cTime && r.zc != nil && s == 1 {
				v = r.zc.take(v, nil, false, r.name+batchRow(r.batch, i, r.start+int64(i))+": column "+col, string(t))
			}
			if !ok && !(isMissingText(t) && r.cfg.allowMissing) {
				if isMissingText(t) {
					return nil, rowErr(r.name, r.batch, i, col, text, "missing value %s; missing values are not allowed by default", quoteText(text))
				}
				if c == cTime {
					return nil, rowErr(r.name, r.batch, i, col, text, "%s is not a number or an RFC 3339 time%s", quoteText(text), timeHint(t, r.cfg.dateOrder, badDate))
				}
				return nil, rowErr(r.name, r.batch, i, col, text, "%s is not a number%s", quoteText(text), markerHint(t))
			}
			if !ok {
				v = math.NaN()
			}
		}
		if v != v && !r.cfg.allowMissing {
			return nil, rowErr(r.name, r.batch, i, col, "NaN", "NaN value; missing values are not allowed by default")
		}
		if math.IsInf(v, 0) {
			return nil, rowErr(r.name, r.batch, i, col, strconv.FormatFloat(v, 'g', -1, 64), "value is infinite")
		}
		if s != 1 {
			v = scaled(v, s)
			if c == cTime && r.zc != nil {
				v = r.zc.take(v, nil, false, r.name+batchRow(r.batch, i, r.start+int64(i))+": column "+col, strconv.FormatFloat(v, 'f', -1, 64))
			}
		} else if c == cTime && r.zc != nil && k == cellNumber {
			v = r.zc.take(v, nil, false, r.name+batchRow(r.batch, i, r.start+int64(i))+": column "+col, strconv.FormatFloat(v, 'f', -1, 64))
		}
		dst = append(dst, v)
	}
	if c == cTime {
		for _, n := range r.zc.flush() {
			pl.warn("%s", n)
		}
	}
	return dst, nil
}

// stampIn reads the Arrow timestamp v (Unix seconds of its value, row i
// of arr) in the zone or at the offset given (WithTimeZone,
// WithTimeOffset) when its type has no time zone: its value is then a
// wall-clock reading. One with a time zone keeps it (noted when a zone
// was given).
func (r *arrowReader) stampIn(v float64, arr arrow.Array, i int) (float64, error) {
	if d, ok := arr.(*array.Dictionary); ok {
		arr = d.Dictionary()
	}
	tt, _ := arr.DataType().(*arrow.TimestampType)
	if tt == nil || v != v {
		return v, nil
	}
	where := r.name + batchRow(r.batch, i, r.start+int64(i)) + ": column " + r.pl.header[r.pl.src[cTime]]
	wall := time.Unix(int64(math.Floor(v)), 0).UTC().Format("2006-01-02T15:04:05")
	if tt.TimeZone != "" {
		return r.zc.take(v, nil, true, where, wall+" ("+tt.String()+")"), nil
	}
	tx := r.cfg.timeText
	switch {
	case tx.zone != nil:
		at, n := zoneInstant(v, tx.zone)
		if n == 0 {
			return 0, rowErr(r.name, r.batch, i, r.pl.header[r.pl.src[cTime]], wall, "%s %s", quoteText(wall), gapText(v, tx.zone))
		}
		rd := timeRead{v: at, inZone: true, ok: true}
		return r.zc.take(at, &rd, false, where, wall), nil
	case r.cfg.timeOffsetSet:
		return v - r.cfg.timeOffset.Seconds(), nil
	}
	return v, nil
}

func appendStrings(dst []string, arr arrow.Array) []string {
	for i := 0; i < arr.Len(); i++ {
		if arr.IsNull(i) {
			dst = append(dst, "")
			continue
		}
		dst = append(dst, arr.ValueStr(i))
	}
	return dst
}

// positionStepLimit is the coarsest step, m, a position column's storage
// may have without a warning: 1 cm, under the spread of a satellite
// position and the centimetres a fit's depth is quoted to.
const positionStepLimit = 0.01

// metresPerDegree is the length of a degree of latitude, about 111.3 km
// (a degree of longitude is that times the cosine of the latitude, so
// no longer).
const metresPerDegree = 111320.0

// isPositionColumn says whether canonical column c holds a position.
func isPositionColumn(c int) bool {
	switch c {
	case cX, cY, cZ, cLat, cLon, cHeight:
		return true
	}
	return false
}

// noteNarrow records the largest |value| of position column c when arr
// holds 32- or 16-bit floats.
func (r *arrowReader) noteNarrow(arr arrow.Array, c int) {
	nc := &r.narrow[c]
	switch a := arr.(type) {
	case *array.Float32:
		nc.bits = 24
		for i, v := range a.Float32Values() {
			if a.IsValid(i) {
				nc.max = math.Max(nc.max, math.Abs(float64(v)))
			}
		}
	case *array.Float16:
		nc.bits = 11
		for i := 0; i < a.Len(); i++ {
			if a.IsValid(i) {
				nc.max = math.Max(nc.max, math.Abs(float64(a.Value(i).Float32())))
			}
		}
	}
	if !isFieldComponent(c) {
		return
	}
	switch dt := arr.DataType().(type) {
	case *arrow.Int8Type, *arrow.Int16Type, *arrow.Int32Type, *arrow.Int64Type,
		*arrow.Uint8Type, *arrow.Uint16Type, *arrow.Uint32Type, *arrow.Uint64Type:
		nc.fixed = 1
	case arrow.DecimalType:
		nc.fixed = math.Pow(10, -float64(dt.GetScale()))
	}
}

// floatStep is the spacing of binary floats with a bits-bit significand
// at magnitude m: 2^(e-bits) for m = f 2^e, f in [0.5, 1).
func floatStep(m float64, bits int) float64 {
	_, e := math.Frexp(m)
	return math.Ldexp(1, e-bits)
}

// notePositionSteps warns of each position column stored as 32- or 16-bit
// floats whose values are large enough that the floats step by more than
// positionStepLimit: a 32-bit northing near 5.8e6 m steps by 0.5 m and a
// 32-bit latitude near 52 degrees by 3.8e-6 degrees (0.42 m), which moves
// every reading of a traverse alike and biases its fit with no sign in
// the readings. The values are read as stored; the warning names the
// column, its storage and the step.
func (r *arrowReader) notePositionSteps() {
	pl := r.pl
	for c := range r.narrow {
		nc := r.narrow[c]
		if isFieldComponent(c) {
			r.noteFieldStep(c)
			continue
		}
		if nc.bits == 0 || nc.max == 0 || pl.src[c] < 0 {
			continue
		}
		step := floatStep(nc.max, nc.bits)
		kind := "32-bit"
		if nc.bits == 11 {
			kind = "16-bit"
		}
		col := quoteText(pl.header[pl.src[c]])
		if h := pl.header[pl.src[c]]; h != canonNames[c] {
			col += " (" + canonNames[c] + ")"
		}
		var what string
		switch c {
		case cLat, cLon:
			m := step * metresPerDegree
			if m <= positionStepLimit {
				continue
			}
			about := "about"
			if c == cLon {
				about = "up to"
			}
			what = fmt.Sprintf("at %.6g degrees they step by %.2g degrees (%s %.2g m)", nc.max, step, about, m)
		default:
			m := step * pl.scale[c]
			if m <= positionStepLimit {
				continue
			}
			what = fmt.Sprintf("at %.7g (its largest value) they step by %.2g m", nc.max, m)
		}
		pl.warn("%s: column %s is stored as %s floats: %s, coarser than the %g m a position needs: each reading's position is rounded by up to half a step, much alike along a traverse, which biases every traverse's fit the same way and beyond its uncertainties; store it as 64-bit floats, or subtract a site offset from projected coordinates before storing them", r.name, col, kind, what, positionStepLimit)
	}
}

// fieldStepLimit is the coarsest step, nT, a field column's storage may
// have without a warning: 1 nT, under the noise of a survey
// magnetometer's readings (a couple of nT) and the fits' residuals.
const fieldStepLimit = 1.0

// isFieldComponent says whether canonical column c is a field component
// that the fits read.
func isFieldComponent(c int) bool { return c == cBx || c == cBy || c == cBz }

// isFloat16 reports whether dt is a 16-bit float (Arrow halffloat), or
// text or numbers dictionary-encoded as them.
func isFloat16(dt arrow.DataType) bool {
	if d, ok := dt.(*arrow.DictionaryType); ok {
		dt = d.ValueType
	}
	return dt.ID() == arrow.FLOAT16
}

// float16FieldMsg refuses a field component stored as 16-bit floats. Their
// 11-bit significand steps by 32 nT between 32,768 and 65,536 nT and by
// 16 nT between 16,384 and 32,768 nT, so at any total field on Earth
// (about 20,000 to 65,000 nT) each reading is rounded by up to 8 to 16 nT,
// several times a survey magnetometer's noise, and fields over 65,504 nT
// do not fit at all. In review the demo log so stored read with no sign
// of trouble and moved a line's current by 18 of its uncertainties and
// lost a line (and its caution) that the full log finds, so this is
// refused rather than warned of: the readings cannot be recovered, and a
// warning beside a changed answer is easy to miss.
func float16FieldMsg(name string) string {
	return fmt.Sprintf("the field %s is stored as 16-bit floats (Arrow halffloat), which step by 32 nT near 46,000 nT and 16 nT near 20,000 nT (their significand has 11 bits) and hold nothing over 65,504 in the column's unit: every reading is rounded by up to 16 nT, several times a magnetometer's noise, which moves the fits' currents and depths by many of their uncertainties (a review's 16-bit copy of the demo log moved a current by 18 uncertainties and lost a line); store the field as 32- or 64-bit floats (a 32-bit float steps by 0.004 nT near 46,000 nT)", name)
}

// noteFieldStep warns of field column c when its storage steps by more
// than fieldStepLimit: 32-bit floats from 2^24 (about 16.8 million) nT up (never a
// field on Earth in nT, but a count or a unit scaled up may be), integers
// or decimals whose unit is coarser than 1 nT (counts of 2 nT, whole uT).
// Such steps round every reading by up to half a step, noise the fits'
// uncertainties do not know came from the file. (16-bit floats are
// refused: float16FieldMsg.)
func (r *arrowReader) noteFieldStep(c int) {
	pl, nc := r.pl, r.narrow[c]
	if pl.src[c] < 0 {
		return
	}
	var step float64
	var kind string
	switch {
	case nc.fixed > 0:
		step, kind = nc.fixed*pl.scale[c], "integers"
		if nc.fixed < 1 {
			kind = fmt.Sprintf("decimals with %d digits after the point", int(math.Round(-math.Log10(nc.fixed))))
		}
	case nc.bits > 0 && nc.max > 0:
		step = floatStep(nc.max, nc.bits) * pl.scale[c]
		kind = fmt.Sprintf("%d-bit floats", map[int]int{24: 32, 11: 16}[nc.bits])
	default:
		return
	}
	if step <= fieldStepLimit {
		return
	}
	col := quoteText(pl.header[pl.src[c]])
	if h := pl.header[pl.src[c]]; h != canonNames[c] {
		col += " (" + canonNames[c] + ")"
	}
	at := ""
	if nc.fixed == 0 {
		at = fmt.Sprintf(" at %.7g (its largest value, in %s)", nc.max, pl.unit[c])
	} else if pl.scale[c] != 1 {
		at = fmt.Sprintf(" (its unit: %s)", pl.unit[c])
	}
	pl.warn("%s: column %s is stored as %s, which step by %.3g nT%s, coarser than the %g nT a field reading needs: each reading is rounded by up to half a step, noise the fits take for the field's and may move their currents and depths beyond their uncertainties; store it as 64-bit floats or in a finer unit", r.name, col, kind, step, at, fieldStepLimit)
}

// countRepeats counts the readings of out whose time is that of the
// reading before them in the same group (rows in file order).
func (r *arrowReader) countRepeats(out arrow.RecordBatch) {
	if r.pl.noTime {
		return
	}
	t := out.Column(0).(*array.Float64).Float64Values()
	var g *array.String
	if gi := r.groupIndex(); gi >= 0 {
		g, _ = out.Column(gi).(*array.String)
	}
	for i, v := range t {
		gr := ""
		if g != nil {
			gr = g.Value(i)
		}
		if v != math.Trunc(v) && v == v {
			r.fraction = true
		}
		if r.rows > 0 && v == r.prevT && gr == r.prevG {
			r.repeats++
		}
		r.rows++
		r.prevT = v
		if g != nil && gr != r.prevG {
			r.prevG = strings.Clone(gr)
		}
	}
}

// noteRepeatedTimes warns when most readings have the time of the reading
// before them in their group: the times are stored more coarsely than the
// readings come (a writer that cast them to timestamp[s], as a review
// found: 154,690 of 155,031 readings of a 500 Hz log repeated a whole
// second), so the sample rate read from them is the stamps', AC
// demodulation refuses the log with a Nyquist frequency of 0.5 Hz and
// gaps are missed. The warning names the column, its type, the count and
// how many readings share a stamp.
func (r *arrowReader) noteRepeatedTimes() {
	pl := r.pl
	if pl.noTime || pl.src[cTime] < 0 || r.rows < 10 || 2*r.repeats <= r.rows {
		return
	}
	typ := ""
	if pl.schemaTypes != nil {
		typ = pl.schemaTypes[pl.src[cTime]].String()
	}
	pl.warn("%s", RepeatedTimesText(r.name, pl.header[pl.src[cTime]], typ, r.repeats, r.rows, !r.fraction))
}

// RepeatedTimesText words the warning of repeated times: repeats of rows
// readings of log name have the time of the reading before them in their
// group, in time column col of storage type typ ("" when the file states
// none); whole: every time is a whole second.
func RepeatedTimesText(name, col, typ string, repeats, rows int, whole bool) string {
	of := ""
	if typ != "" {
		of = " (" + typ + ")"
	}
	what := "the times are stored more coarsely than the readings come"
	finer := "finer"
	if whole {
		what = "every time is a whole second, stored more coarsely than the readings come"
		finer = "milliseconds or finer"
		if strings.HasPrefix(typ, "timestamp[s") {
			finer += " (timestamp[ms] or finer: timestamp[s] holds whole seconds)"
		} else if typ != "" {
			finer += " (a cast or conversion to whole seconds on the way drops the fraction)"
		}
	}
	return fmt.Sprintf("%s: column %s%s: %d of %d readings have the time of the reading before them in their group, about %.0f readings a time stamp: %s, so the sample rate read from them is the stamps' (and AC demodulation refuses the log as sampled below the signal's frequency) and gaps between readings are not seen; store the times to %s",
		name, quoteText(col), of, repeats, rows, float64(rows)/float64(rows-repeats), what, finer)
}
