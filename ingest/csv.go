package ingest

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// maxLineBytes bounds one CSV line; longer lines are an error rather than
// unbounded memory.
const maxLineBytes = 16 << 20

// csvReader parses CSV in parallel: a splitter goroutine cuts the input
// into chunks of whole records, parser goroutines turn chunks into record
// batches, and Next hands them out in input order. At most 2 x workers + 2
// chunks are in flight, so memory does not depend on the file's size.
//
// A quoted field may hold newlines (IETF RFC 4180 section 2, rule 6), in
// the header and in data rows; such a record spans several physical lines
// and is at most maxLineBytes long. Chunks holding no quote character are
// cut and parsed line by line as before; only chunks with quotes pay for
// tracking which newlines lie inside quoted fields. Blank-separated files
// keep one record per line. Line numbers in errors count physical lines:
// a bad value is reported on the line where its field starts, a short or
// long row on the line where its record starts, and an unterminated quote
// on the line of the opening quote.
type csvReader struct {
	name   string
	closer io.Closer
	br     *bufio.Reader
	pl     *plan
	cfg    *config
	delim  byte
	ws     bool
	ncols  int
	// headerText is the header line, trimmed (nil with WithHeader), on
	// line headerAt: a data line that repeats it is two logs joined.
	headerText []byte
	headerAt   int
	used       []usedCol
	ops        []int // per source column: canonical index, opSkip or opGroup
	opScale    []float64
	fast       bool // lines may take fastLine
	decComma   bool // numbers write their decimals with a comma (WithDecimalComma)
	// qComma, in a comma-delimited file, marks the columns (by source
	// index) whose quoted numbers write their decimals with a comma
	// ("0,25"), as spreadsheets in decimal-comma locales save CSV: their
	// quoted fields are read with decimal commas (quotedCommaColumns).
	qComma  []bool
	quotes  bool // quoted fields may hold newlines (not in blank-separated files)
	comment []byte
	pending chan chan csvResult
	jobs    chan csvJob
	done    chan struct{}
	wg      sync.WaitGroup
	stopped bool
	ended   bool // Next reached the end of the input (see Release)
	// nulAt is the line of a run of NUL bytes without a line end that
	// split dropped (0: none); written by split, read after it ends.
	nulAt   int
	nulLine int // first line of NUL bytes alone skipped by the parsers
	// cutWarn says that split left out a last line cut short (see
	// cutLastLine); written by split, read after it ends.
	cutWarn string
	cur     arrow.RecordBatch
	err     error
	// zc resolves the times read in a zone (WithTimeZone), in file
	// order: the one worker's (the config asks for one), nil without a
	// zone.
	zc   *zoneClock
	last float64
	// lastText is the last time as written, on line lastLine (for the
	// message of a step back from it).
	lastText string
	lastLine int
	// cpLine is the first line found with a byte that is not UTF-8 (0:
	// none yet), read as Windows-1252 (see charset.go), warned of once.
	cpLine int
}

const (
	opSkip  = -1
	opGroup = -2
)

type usedCol struct {
	c     int
	src   int
	scale float64
}

type csvJob struct {
	data  []byte
	line  int  // line number of the first line in data
	lines int  // newlines in data
	plain bool // data holds no quote character
	out   chan csvResult
}

type csvResult struct {
	rec       arrow.RecordBatch
	err       error
	firstTime float64 // first non-NaN time, NaN if none
	firstLine int
	firstText string // the first time as written
	lastTime  float64
	lastLine  int    // line of the last non-NaN time
	lastText  string // the last time as written
	lines     []int  // line of each row, for TimeOrderedPerGroup
	naiveLine int    // line of the first timestamp without a UTC offset, 0 if none
	naiveText string
	rows      int // rows in rec
	noGroup   int // rows with an empty group cell
	noGroupAt int // line of the first of them
	// noFix counts the readings left out at latitude 0, longitude 0,
	// noFixAt the places (file:line) of the first few.
	noFix   int
	noFixAt []string
	nulLine int // first line of NUL bytes alone, skipped; 0 if none
	badText int // first line of a text value that is not UTF-8; 0 if none
	// zoneNotes are the zone clock's warnings (zoneClock) taken while
	// the chunk was parsed.
	zoneNotes []string
}

func (r *csvReader) plan() *plan                    { return r.pl }
func (r *csvReader) Schema() *arrow.Schema          { return r.pl.schema }
func (r *csvReader) RecordBatch() arrow.RecordBatch { return r.cur }
func (r *csvReader) Err() error                     { return r.err }

// newCSVReader reads the header synchronously and starts the pipeline.
// name is used in messages; closer (may be nil) is closed by Release.
func newCSVReader(name string, rd io.Reader, cfg *config) (*csvReader, error) {
	closer, _ := rd.(io.Closer)
	br := bufio.NewReaderSize(rd, 64<<10)
	if head, _ := br.Peek(4096); bytes.IndexByte(head, '\r') >= 0 && bytes.IndexByte(head, '\n') < 0 {
		// Lines end in a bare CR, as classic Mac OS text and the
		// "Macintosh" CSV of some spreadsheets do: read each CR as a
		// line end.
		br = bufio.NewReaderSize(crLines{br}, 64<<10)
	}
	r := &csvReader{name: name, closer: closer, cfg: cfg, br: br, last: math.NaN()}
	meta := map[string]string{}
	lineNo := 0
	var raw []byte   // the physical line that starts the header record
	var rerr error   // read error that came with raw
	var carry []byte // raw bytes already read that belong to the data
	var headerStart int
	for {
		raw, rerr = readLine(r.br)
		if len(raw) == 0 && rerr != nil {
			if rerr == io.EOF {
				if lineNo == 0 {
					return nil, fileErr(name, nil, "empty file")
				}
				return nil, fileErr(name, nil, "no header line (only blank or comment lines)")
			}
			return nil, fileErr(name, rerr, "read error")
		}
		if len(raw) > maxLineBytes {
			return nil, lineErr(name, lineNo+1, "", "", "line longer than %d bytes", maxLineBytes)
		}
		lineNo++
		if lineNo == 1 {
			if bytes.HasPrefix(raw, []byte("\xff\xfe")) || bytes.HasPrefix(raw, []byte("\xfe\xff")) {
				return nil, fileErr(name, nil, "the file is UTF-16 text (it starts with the byte order mark %X), not UTF-8: save or export it again as UTF-8 text (in a spreadsheet, \"CSV UTF-8\")", raw[:2])
			}
			raw = bytes.TrimPrefix(raw, []byte("\xef\xbb\xbf")) // UTF-8 byte order mark
			if d, ok := sepLine(raw); ok {
				// A spreadsheet's "sep=;" line names the delimiter.
				if cfg.delim == 0 {
					cfg.delim, cfg.whitespace = d, d == ' '
				}
				continue
			}
		}
		ln := bytes.TrimRight(raw, "\r\n")
		if bytes.IndexByte(ln, 0) >= 0 {
			return nil, lineErr(name, lineNo, "", "", "the line holds NUL bytes: the file is not text, or is UTF-16 text without a byte order mark (save or export it again as UTF-8 text)")
		}
		if len(bytes.TrimSpace(ln)) == 0 {
			continue
		}
		if cfg.comment != "" && bytes.HasPrefix(bytes.TrimSpace(ln), []byte(cfg.comment)) {
			text := strings.TrimSpace(strings.TrimPrefix(strings.TrimSpace(r.headText(ln, lineNo)), cfg.comment))
			if k, v, ok := strings.Cut(text, ":"); ok && strings.HasPrefix(k, "undercurrent.") && !strings.ContainsAny(k, " \t") {
				meta[k] = strings.TrimSpace(v)
				if err := originLineErr(name, lineNo, k, meta[k]); err != nil {
					return nil, err
				}
			}
			continue
		}
		headerStart = lineNo
		break
	}
	r.delim, r.ws = cfg.delim, cfg.whitespace
	if r.delim == 0 {
		// Sniffed from the first physical line of the header record.
		r.delim, r.ws = guessDelimiter(bytes.TrimRight(raw, "\r\n"))
	}
	r.comment = []byte(cfg.comment)
	r.quotes = !r.ws && r.delim != '"'
	// A quoted header name may hold a newline: read on to the line that
	// closes it.
	raw, open, rerr := r.finishRecord(raw, rerr)
	lineNo = headerStart + bytes.Count(bytes.TrimRight(raw, "\n"), []byte{'\n'})
	if open >= 0 {
		if rerr != nil && rerr != io.EOF {
			return nil, fileErr(name, rerr, "read error near line %d", lineNo)
		}
		return nil, r.openQuoteErr(raw, open, headerStart, rerr == io.EOF)
	}
	headerLine := bytes.TrimRight(raw, "\r\n")
	if cfg.header == nil {
		r.headerText, r.headerAt = bytes.TrimSpace(append([]byte(nil), headerLine...)), headerStart
	}
	if cfg.header != nil {
		carry = append([]byte(nil), raw...)
		lineNo = headerStart - 1 // the record is data, parsed again below
	}
	var header []string
	if cfg.header != nil {
		header = cfg.header
	} else {
		if r.cpLine == 0 {
			if i := firstNonUTF8(raw, true); i >= 0 {
				r.cpLine = lineOf(raw, i, headerStart)
			}
		}
		for _, f := range splitFields(headerLine, r.delim, r.ws, nil) {
			header = append(header, headerName(f))
		}
	}
	r.ncols = len(header)
	hl := headerStart
	if cfg.header != nil {
		hl = 0 // the names come from WithHeader
	}
	pl, err := newPlan(name, string(FormatCSV), header, nil, meta, hl, cfg)
	if err != nil {
		if e, ok := err.(*Error); ok && cfg.header == nil {
			e.Line = headerStart
		}
		return nil, err
	}
	r.pl = pl
	if r.cpLine > 0 {
		pl.warn("%s", cp1252Warning(name, r.cpLine))
	}
	for c := 0; c < nCanon; c++ {
		if pl.src[c] >= 0 {
			r.used = append(r.used, usedCol{c: c, src: pl.src[c], scale: pl.scale[c]})
		}
	}
	r.ops = make([]int, r.ncols)
	r.opScale = make([]float64, r.ncols)
	for i := range r.ops {
		r.ops[i] = opSkip
	}
	for _, u := range r.used {
		if u.c == cGroup {
			r.ops[u.src] = opGroup
		} else {
			r.ops[u.src], r.opScale[u.src] = u.c, u.scale
		}
	}
	r.decComma = cfg.decimalComma > 0 || (cfg.decimalComma == 0 && r.delim != ',' && r.firstRecordDecimalComma())
	if r.decComma && r.delim == ',' && !r.ws {
		return nil, fileErr(name, nil, "decimal commas need a delimiter other than the comma (in a comma-delimited file they are not read, quoted or not): save the file again with ';' as the delimiter, or with decimal points")
	}
	if !r.decComma && cfg.decimalComma == 0 && r.delim == ',' && !r.ws {
		r.qComma = r.quotedCommaColumns()
	}
	if err := r.checkDigitGrouping(lineNo + 1 + bytes.Count(carry, []byte{'\n'})); err != nil {
		return nil, err
	}
	if r.decComma {
		pl.meta["decimal_separator"] = ","
		pl.buildSchema()
	}
	r.fast = !r.ws && r.delim != '"' && !cfg.slowOnly && !r.decComma && r.qComma == nil && pl.timeJoin < 0 && cfg.timeText.zone == nil
	startLine := lineNo + 1
	if pl.geodetic && pl.origin == nil {
		// The origin is the first reading: parse ahead to it. A reading at
		// latitude 0, longitude 0 is a receiver with no fix yet (noFix):
		// the origin is the first after it, unless none comes within
		// noFixAhead bytes, when it is the first such reading.
		var rb rawBatch
		var zero *Geodetic
		for {
			raw, err := readLine(r.br)
			raw, open, err := r.finishRecord(raw, err)
			carry = append(carry, raw...)
			if open >= 0 {
				break // the parse below reports the open quote
			}
			if len(raw) > 0 {
				rb.reset(pl)
				if e := r.parseChunk(raw, 1, &rb, false); e == nil && rb.n > 0 {
					o := Geodetic{Lat: rb.f[cLat][0], Lon: rb.f[cLon][0]}
					if rb.f[cHeight] != nil {
						o.H = rb.f[cHeight][0]
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
			}
			if err != nil || zero != nil && len(carry) > noFixAhead {
				break
			}
		}
		if pl.origin == nil && zero != nil {
			pl.setOrigin(*zero)
		}
		if pl.origin == nil { // no usable first reading; the parse below reports why
			pl.setOrigin(Geodetic{})
		}
	}
	// Set after the origin's parse ahead, which parses the same lines
	// again below.
	r.zc = newZoneClock(cfg.timeText.zone)
	r.start(carry, startLine)
	return r, nil
}

// crLines turns every CR into LF, for text whose lines end in a bare CR.
type crLines struct{ r io.Reader }

func (c crLines) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	for i, b := range p[:n] {
		if b == '\r' {
			p[i] = '\n'
		}
	}
	return n, err
}

// emptyRecord reports whether a line holds only delimiters and blanks, as
// a spreadsheet writes the empty rows below a table (";;;;"): a record
// without a single value, read as a blank line.
func emptyRecord(ln []byte, delim byte) bool {
	for _, b := range ln {
		if b != delim && b != ' ' && b != '\t' {
			return false
		}
	}
	return true
}

// sepLine reports whether the first line of a file is a spreadsheet's
// delimiter line, "sep=" and one character ("sep=;"), and returns that
// character.
func sepLine(raw []byte) (byte, bool) {
	ln := bytes.TrimRight(raw, "\r\n")
	if len(ln) != 5 || !bytes.EqualFold(ln[:4], []byte("sep=")) {
		return 0, false
	}
	d := ln[4]
	if d == '"' || d >= 128 {
		return 0, false
	}
	return d, true
}

// readLine reads one line including its newline, however long.
func readLine(br *bufio.Reader) ([]byte, error) {
	line, err := br.ReadSlice('\n')
	if err != bufio.ErrBufferFull {
		return append([]byte(nil), line...), err
	}
	buf := append([]byte(nil), line...)
	for err == bufio.ErrBufferFull && len(buf) <= maxLineBytes {
		line, err = br.ReadSlice('\n')
		buf = append(buf, line...)
	}
	return buf, err
}

// finishRecord completes the record that starts with the physical line
// raw (err came with it): while a quoted field is left open at the end of
// the line, it reads the lines that follow. open is the offset in rec of a
// quote still open when the input ends, fails or the record outgrows
// maxLineBytes; -1 when the record is complete. err is the last read
// error.
func (r *csvReader) finishRecord(raw []byte, err error) (rec []byte, open int, _ error) {
	if !r.quotes || bytes.IndexByte(raw, '"') < 0 {
		return raw, -1, err
	}
	rec = raw
	_, open = recordEnd(rec, r.delim, r.comment)
	for open >= 0 && err == nil && len(rec) <= maxLineBytes {
		var more []byte
		more, err = readLine(r.br)
		from := len(rec)
		rec = append(rec, more...)
		_, open = scanRecord(rec, from, open, r.delim) // linear: resumes where the scan stopped
	}
	return rec, open, err
}

// recordEnd finds the end of the CSV record that starts at data[0]. It
// returns the index of the newline that ends the record, or -1 when data
// ends first; open is then the index of the quote that opened a field
// still unclosed at the end of data, or -1. It follows RFC 4180 section 2
// rules 5 to 7 as splitFields reads them: a quote opens a quoted field
// only as the field's first byte, a doubled quote inside stays in the
// field, and the field may hold the delimiter, CR and LF; a quote anywhere
// else is an ordinary character. A blank or comment line is one record
// whatever quotes it holds, as in parseChunk.
func recordEnd(data []byte, delim byte, comment []byte) (end, open int) {
	if len(data) > 0 && (data[0] == ' ' || data[0] == '\t' || (len(comment) > 0 && data[0] == comment[0])) {
		e := bytes.IndexByte(data, '\n')
		ln := data
		if e >= 0 {
			ln = data[:e]
		}
		if t := bytes.TrimSpace(ln); len(t) == 0 || (len(comment) > 0 && bytes.HasPrefix(t, comment)) {
			return e, -1
		}
	}
	return scanRecord(data, 0, -1, delim)
}

// scanRecord is recordEnd without the comment test, resumable: data
// starts at a record's start, and the scan starts at data[i], a field's
// start when q < 0 and inside the quoted field opened at q otherwise. When
// it reports an open quote, all of data from i on is inside that field,
// so a caller that appends more input can resume at the old length with
// q = open. A quote that is the last byte of data closes its field (at the
// end of the input it does; in the middle, the caller sees no record end
// and reads on). Outside quotes it jumps from quote to quote: a quote
// opens a field only at the record's start or just after a delimiter.
func scanRecord(data []byte, i, q int, delim byte) (end, open int) {
	n := len(data)
	for {
		if q >= 0 {
			for {
				k := bytes.IndexByte(data[i:], '"')
				if k < 0 {
					return -1, q
				}
				i += k + 1
				if i < n && data[i] == '"' {
					i++ // doubled quote
					continue
				}
				break
			}
			q = -1
		}
		// Unquoted text up to the next quote: the record ends at a
		// newline before it.
		k := bytes.IndexByte(data[i:], '"')
		lim := n
		if k >= 0 {
			lim = i + k
		}
		if e := bytes.IndexByte(data[i:lim], '\n'); e >= 0 {
			return i + e, -1
		}
		if k < 0 {
			return -1, -1
		}
		if lim == 0 || data[lim-1] == delim {
			q = lim // opens a quoted field
		}
		i = lim + 1
	}
}

// lastRecordEnd returns the index of the last newline in data that ends a
// record (-1 when none does); data starts at a record's start. open is as
// for recordEnd, for the record left unfinished at the end of data. Data
// without a quote takes the plain path, and plain reports it: every
// newline ends a record.
func (r *csvReader) lastRecordEnd(data []byte) (cut, open int, plain bool) {
	if !r.quotes {
		return bytes.LastIndexByte(data, '\n'), -1, true
	}
	cut, start := -1, 0
	for {
		q := bytes.IndexByte(data[start:], '"')
		if q < 0 {
			if k := bytes.LastIndexByte(data[start:], '\n'); k >= 0 {
				return start + k, -1, start == 0
			}
			return cut, -1, start == 0
		}
		// Lines before the one holding the quote end records.
		if k := bytes.LastIndexByte(data[start:start+q], '\n'); k >= 0 {
			cut = start + k
			start = cut + 1
		}
		e, o := recordEnd(data[start:], r.delim, r.comment)
		if e < 0 {
			if o >= 0 {
				o += start
			}
			return cut, o, false
		}
		cut = start + e
		start = cut + 1
	}
}

// openQuoteErr reports a quoted field that is never closed. rec is the
// record starting on line, open the offset of the field's opening quote;
// the error names the line of that quote. atEOF tells whether the input
// ended (rather than the record outgrowing maxLineBytes).
func (r *csvReader) openQuoteErr(rec []byte, open, line int, atEOF bool) *Error {
	line += bytes.Count(rec[:open], []byte{'\n'})
	field := len(splitFields(rec[:open], r.delim, false, nil)) - 1
	header := r.cfg.header // given names, or nil while the header is read
	if r.pl != nil {
		header = r.pl.header
	}
	col, where := "", ""
	if field < len(header) {
		col = header[field]
	} else {
		where = fmt.Sprintf(" (field %d)", field+1)
	}
	text := string(rec[open:])
	why := "before the end of the file"
	if !atEOF {
		why = fmt.Sprintf("within %d bytes", maxLineBytes)
	}
	return lineErr(r.name, line, col, text, "unterminated quote: the quoted field%s starting %s is not closed %s", where, quoteText(text), why)
}

// headText returns a comment line of the head (line lineNo) as UTF-8
// text (textValue), noting the line when it is the first not UTF-8.
func (r *csvReader) headText(ln []byte, lineNo int) string {
	s, bad := textValue(ln)
	if bad && r.cpLine == 0 {
		r.cpLine = lineNo
	}
	return s
}

// headerName turns a header field into a column name: blanks trimmed,
// quotes removed, and a line break inside a quoted name (a spreadsheet's
// wrapped "Bx\n(nT)") read as one space. A name that is not valid UTF-8
// has its bytes that are not read as Windows-1252 (textValue, see
// charset.go), as older spreadsheets save "Bx (µT)" or "Profil–Name", so
// that its unit is recognised and a mapping can name it.
func headerName(f []byte) string {
	f = unquote(f)
	s, _ := textValue(f)
	s = strings.TrimSpace(s)
	if strings.ContainsAny(s, "\r\n") {
		s = strings.Join(strings.Fields(strings.NewReplacer("\r", " ", "\n", " ").Replace(s)), " ")
	}
	return s
}

// parseDecimalComma parses a number written with a decimal comma: the comma
// becomes a point in buf (returned for reuse) and a point is refused.
func parseDecimalComma(t, buf []byte) (float64, bool, []byte) {
	if bytes.IndexByte(t, '.') >= 0 {
		return 0, false, buf
	}
	buf = append(buf[:0], t...)
	if i := bytes.IndexByte(buf, ','); i >= 0 {
		buf[i] = '.'
	}
	v, ok := parseNumber(buf)
	return v, ok, buf
}

// firstRecordDecimalComma peeks at the data records (without consuming
// them, as far as the reader's buffer holds) and reports whether a mapped
// numeric field is written with a decimal comma: digits, one comma,
// digits. The first record that decides is taken: one with such a field
// says decimal commas, one with a decimal point in a mapped number (not a
// time, whose seconds may have one) says decimal points. Rows of
// delimiters alone, comment lines and records whose numbers are whole or
// missing decide nothing, so an empty row under the header or a first row
// of whole numbers no longer hides the commas of the rows after it.
func (r *csvReader) firstRecordDecimalComma() bool {
	peek, _ := r.br.Peek(64 << 10)
	var fields [][]byte
	for len(peek) > 0 {
		var ln []byte
		ln, peek = cutLine(peek)
		ln = bytes.TrimRight(ln, "\r")
		t := bytes.TrimSpace(ln)
		if len(t) == 0 || (len(r.comment) > 0 && bytes.HasPrefix(t, r.comment)) {
			continue
		}
		fields = splitFields(ln, r.delim, r.ws, fields[:0])
		point := false
		for _, u := range r.used {
			if u.c == cGroup || u.src >= len(fields) {
				continue
			}
			f := trimField(fields[u.src])
			if decimalCommaText(f) {
				return true
			}
			point = point || (u.c != cTime && decimalPointText(f))
		}
		if point {
			return false
		}
	}
	return false
}

// quotedCommaColumns peeks at the data records of a comma-delimited file
// (as firstRecordDecimalComma does) and returns, by source column, the
// mapped number columns to read with decimal commas inside quotes: those
// with a quoted number written with a decimal comma ("0,25") and none,
// quoted or not, written with a decimal point (whole numbers decide
// nothing). Such a comma cannot be a delimiter, and a spreadsheet in a
// decimal-comma locale saving CSV with commas writes every decimal so.
// A column whose commas all stand before exactly three digits ("1,500")
// is not taken: its commas may group thousands, as spreadsheets in other
// locales quote them. nil when there is none.
func (r *csvReader) quotedCommaColumns() []bool {
	peek, _ := r.br.Peek(64 << 10)
	comma := make([]bool, r.ncols)
	point := make([]bool, r.ncols)
	var fields [][]byte
	for len(peek) > 0 {
		var ln []byte
		ln, peek = cutLine(peek)
		ln = bytes.TrimRight(ln, "\r")
		t := bytes.TrimSpace(ln)
		if len(t) == 0 || (len(r.comment) > 0 && bytes.HasPrefix(t, r.comment)) || bytes.IndexByte(ln, '"') < 0 && !bytes.Contains(ln, []byte{'.'}) {
			continue
		}
		fields = splitFields(ln, r.delim, r.ws, fields[:0])
		for _, u := range r.used {
			if u.c == cGroup || u.src >= len(fields) {
				continue
			}
			f := bytes.Trim(trimField(fields[u.src]), " \t")
			switch {
			case decimalPointText(f):
				point[u.src] = true
			case quotedField(fields[u.src]) && decimalCommaText(f):
				comma[u.src] = comma[u.src] || !groupedLike(f)
			}
		}
	}
	var cols []bool
	for c := range comma {
		if comma[c] && !point[c] {
			if cols == nil {
				cols = make([]bool, r.ncols)
			}
			cols[c] = true
		}
	}
	return cols
}

// groupedLike reports whether t is [sign] d{1,3} "," ddd: a number its
// comma may group by thousands as well as mark decimals.
func groupedLike(t []byte) bool {
	t = bytes.TrimLeft(t, "+-")
	i := bytes.IndexByte(t, ',')
	return i >= 1 && i <= 3 && len(t)-i-1 == 3 && allDigits(t[:i]) && allDigits(t[i+1:])
}

// decimalPointText reports whether t is [sign] digits "." digits, possibly
// with an exponent: a number written with a decimal point.
func decimalPointText(t []byte) bool {
	if bytes.IndexByte(t, '.') < 0 || bytes.IndexByte(t, ',') >= 0 {
		return false
	}
	_, ok := parseNumber(t)
	return ok
}

// decimalCommaOption names the option that reads decimal commas, for
// messages (the command line's flag replaces it).
const decimalCommaOption = "the option WithDecimalComma(true), on the command line --decimal-comma"

// decimalCommaText reports whether t is [sign] digits "," digits,
// possibly with an exponent ("1,529340E-06", as spreadsheets in
// decimal-comma locales write scientific notation): a number written with
// a decimal comma.
func decimalCommaText(t []byte) bool {
	if len(t) > 0 && (t[0] == '-' || t[0] == '+') {
		t = t[1:]
	}
	if e := bytes.IndexAny(t, "eE"); e >= 0 {
		x := t[e+1:]
		if len(x) > 0 && (x[0] == '-' || x[0] == '+') {
			x = x[1:]
		}
		if len(x) == 0 || !allDigits(x) {
			return false
		}
		t = t[:e]
	}
	i := bytes.IndexByte(t, ',')
	if i <= 0 || i == len(t)-1 {
		return false
	}
	return allDigits(t[:i]) && allDigits(t[i+1:])
}

// allDigits reports whether t holds ASCII digits only.
func allDigits(t []byte) bool {
	for _, c := range t {
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}

// guessDelimiter picks the most frequent of , ; tab | in the header line,
// or runs of blanks when none occurs.
func guessDelimiter(line []byte) (byte, bool) {
	best, n := byte(','), 0
	for _, d := range []byte{',', ';', '\t', '|'} {
		if k := bytes.Count(line, []byte{d}); k > n {
			best, n = d, k
		}
	}
	if n == 0 && bytes.ContainsAny(bytes.TrimSpace(line), " \t") {
		return ' ', true
	}
	return best, false
}

// splitFields appends the fields of one record to dst. Quoted fields may
// hold the delimiter and line breaks; a quote inside one is doubled.
func splitFields(ln []byte, delim byte, ws bool, dst [][]byte) [][]byte {
	if ws {
		i := 0
		for i < len(ln) {
			for i < len(ln) && (ln[i] == ' ' || ln[i] == '\t') {
				i++
			}
			if i == len(ln) {
				break
			}
			j := i
			for j < len(ln) && ln[j] != ' ' && ln[j] != '\t' {
				j++
			}
			dst = append(dst, ln[i:j])
			i = j
		}
		return dst
	}
	for {
		if len(ln) > 0 && ln[0] == '"' {
			j := 1
			for j < len(ln) {
				if ln[j] == '"' {
					if j+1 < len(ln) && ln[j+1] == '"' {
						j += 2
						continue
					}
					break
				}
				j++
			}
			end := j + 1
			if end > len(ln) {
				end = len(ln)
			}
			k := bytes.IndexByte(ln[end:], delim)
			if k < 0 {
				return append(dst, ln)
			}
			dst = append(dst, ln[:end+k])
			ln = ln[end+k+1:]
			continue
		}
		i := bytes.IndexByte(ln, delim)
		if i < 0 {
			return append(dst, ln)
		}
		dst = append(dst, ln[:i])
		ln = ln[i+1:]
	}
}

// unquote trims blanks and removes surrounding quotes (undoubling inner ones).
func unquote(f []byte) []byte {
	f = bytes.TrimSpace(f)
	if len(f) >= 2 && f[0] == '"' && f[len(f)-1] == '"' {
		f = f[1 : len(f)-1]
		if bytes.Contains(f, []byte(`""`)) {
			f = bytes.ReplaceAll(f, []byte(`""`), []byte(`"`))
		}
	}
	return f
}

// quotedField reports whether the raw field f is written in quotes
// (blanks around them aside).
func quotedField(f []byte) bool {
	f = bytes.TrimLeft(f, " \t")
	return len(f) >= 2 && f[0] == '"'
}

func trimField(f []byte) []byte {
	for len(f) > 0 && (f[0] == ' ' || f[0] == '\t') {
		f = f[1:]
	}
	for len(f) > 0 && (f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
		f = f[:len(f)-1]
	}
	if len(f) >= 2 && f[0] == '"' {
		return unquote(f)
	}
	return f
}

// parseChunk parses whole records into rb; line is the number of the
// first physical line. A record starts at a line and runs on over newlines
// inside quoted fields (see recordEnd); rb.line holds the line where each
// row's record starts. plain tells that data holds no quote character
// (when false, parseChunk looks).
func (r *csvReader) parseChunk(data []byte, line int, rb *rawBatch, plain bool) error {
	pl, cfg := r.pl, r.cfg
	comment := []byte(cfg.comment)
	var fields [][]byte
	var num []byte    // a decimal-comma number rewritten with a point
	var joined []byte // a date and a time of day joined (time=DATE+TIME)
	need := rb.n + bytes.Count(data, []byte{'\n'}) + 1
	for _, u := range r.used {
		if u.c != cGroup {
			rb.f[u.c] = growTo(rb.f[u.c], need)
		}
	}
	if cap(rb.line) < need {
		rb.line = append(rb.line[:cap(rb.line)], make([]int, need-cap(rb.line))...)
	}
	rb.line = rb.line[:need]
	defer func() {
		for _, u := range r.used {
			if u.c != cGroup {
				rb.f[u.c] = rb.f[u.c][:rb.n]
			}
		}
		rb.line = rb.line[:rb.n]
	}()
	nextQ := -1 // index in data of the next quote; -1 when none is left
	if r.quotes && !plain {
		nextQ = bytes.IndexByte(data, '"')
	}
	next := line // line number of the next physical line
	for len(data) > 0 {
		line = next
		i := bytes.IndexByte(data, '\n')
		quoted := nextQ >= 0 && (nextQ < i || i < 0)
		if quoted {
			// The record may run on over quoted newlines.
			e, open := recordEnd(data, r.delim, comment)
			if open >= 0 {
				return r.openQuoteErr(data, open, line, true)
			}
			i = e
		}
		var ln []byte
		used := len(data)
		if i >= 0 {
			ln, data, used = data[:i], data[i+1:], i+1
		} else {
			ln, data = data, nil
		}
		next++
		if quoted {
			next += bytes.Count(ln, []byte{'\n'})
		}
		if nextQ >= 0 {
			if nextQ -= used; nextQ < 0 {
				nextQ = bytes.IndexByte(data, '"')
			}
		}
		// Every CR before the LF: "\r\r\n" is what a CSV writer that
		// ends rows in CRLF writes through a text-mode file on Windows,
		// and a CR kept ended the last field (group "T01\r").
		ln = bytes.TrimRight(ln, "\r")
		if len(ln) == 0 {
			continue
		}
		if len(ln) == 1 && ln[0] == 0x1a {
			// SUB, the end-of-file mark of CP/M and MS-DOS text, as
			// old tools still append it.
			continue
		}
		if ln[0] == 0 && len(bytes.Trim(ln, "\x00")) == 0 {
			// NUL bytes alone: the unwritten end of a logger's
			// preallocated file, or a damaged stretch. Skipped, and
			// warned about (see Next).
			if rb.nulLine == 0 {
				rb.nulLine = line
			}
			continue
		}
		if ln[0] == ' ' || ln[0] == '\t' || (len(comment) > 0 && ln[0] == comment[0]) {
			t := bytes.TrimSpace(ln)
			if len(t) == 0 || (len(comment) > 0 && bytes.HasPrefix(t, comment)) {
				continue
			}
		}
		if !r.ws && (ln[0] == r.delim || ln[0] == ' ' || ln[0] == '\t') && emptyRecord(ln, r.delim) {
			continue
		}
		if r.fast && r.fastLine(ln, rb) {
			rb.line[rb.n] = line
			rb.n++
			continue
		}
		if i := bytes.IndexByte(ln, 0); i >= 0 {
			// NUL bytes amid a line's text: a damaged stretch, as a
			// logger that lost power mid-write leaves. Before, it was
			// reported as the short row or bad number it made.
			fields = splitFields(ln, r.delim, r.ws, fields[:0])
			col, text := "", string(ln)
			if k := len(splitFields(ln[:i], r.delim, r.ws, nil)) - 1; k >= 0 && k < len(fields) && k < len(pl.header) {
				col, text = pl.header[k], string(trimField(fields[k]))
			}
			return lineErr(r.name, line, col, text, "%s holds NUL bytes (from byte %d of the line): binary bytes amid the text, a damaged stretch of the file (a logger that lost power mid-write?): delete or repair the damaged lines", quoteText(text), i+1)
		}
		fields = splitFields(ln, r.delim, r.ws, fields[:0])
		if len(fields) != r.ncols {
			if err := r.repeatedHeader(ln, line); err != nil {
				return err
			}
			if !(len(fields) == r.ncols+1 && len(bytes.TrimSpace(fields[r.ncols])) == 0) {
				what := "short row"
				if len(fields) > r.ncols {
					what = "long row"
				}
				return lineErr(r.name, line, "", string(ln), "%s: %d fields where the header has %d: %s", what, len(fields), r.ncols, quoteText(string(ln)))
			}
		}
		for _, u := range r.used {
			t := trimField(fields[u.src])
			if u.c == cGroup {
				s, bad := textValue(t)
				if bad && rb.badText == 0 {
					rb.badText = line
				}
				rb.group = append(rb.group, s)
				continue
			}
			// Blanks inside quotes around a number are blanks as outside
			// them (and as the Arrow text path trims them): " 150 " is 150.
			t = bytes.Trim(t, " \t")
			if u.c == cTime && pl.timeJoin >= 0 && pl.timeJoin < len(fields) {
				if clock := bytes.Trim(trimField(fields[pl.timeJoin]), " \t"); len(t) > 0 && len(clock) > 0 {
					joined = append(append(append(joined[:0], t...), ' '), clock...)
					t = joined
				} else {
					t = nil // half a time is a missing one
				}
			}
			var v float64
			var ok bool
			var badDate string
			qComma := r.qComma != nil && r.qComma[u.src] && quotedField(fields[u.src])
			if r.decComma || qComma {
				v, ok, num = parseDecimalComma(t, num)
			} else {
				v, ok = parseNumber(t)
			}
			scale := u.scale
			var tr *timeRead
			if !ok && u.c == cTime {
				rd := cfg.timeText.read(t)
				if rd.gap {
					return lineErr(r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src], string(t), "%s %s", quoteText(string(t)), rd.bad)
				}
				v, ok, badDate, tr = rd.v, rd.ok, rd.bad, &rd
				if ok {
					scale = 1
					if !(rd.own || cfg.timeText.stated) && rb.naiveLine == 0 {
						rb.naiveLine, rb.naiveText = fieldLine(ln, fields[u.src], line), string(t)
					}
				}
			}
			if !ok || !finite(v) {
				if isMissingText(t) || v != v {
					if !cfg.allowMissing {
						what := "missing value (empty cell)"
						if len(t) > 0 {
							what = fmt.Sprintf("missing value %s", quoteText(string(t)))
						}
						return lineErr(r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src], string(t), "%s; missing values are not allowed by default", what)
					}
					v = math.NaN()
				} else if !ok {
					if err := r.repeatedHeader(ln, line); err != nil {
						return err
					}
					what, hint := "is not a number", ""
					if u.c == cTime {
						hint = timeHint(t, cfg.dateOrder, badDate)
						what = "is not a number or an RFC 3339 time" + hint
					}
					switch {
					case hint != "":
						// A time of day or a local date: its comma or
						// points are not a number's.
					case groupingHint(t, r.decComma) != "":
						what += groupingHint(t, r.decComma)
					case qComma && bytes.IndexByte(t, '.') >= 0:
						what += " (the column's quoted numbers are read with decimal commas, as its first quoted numbers write them, so a point is not a decimal point)"
					case r.decComma && bytes.IndexByte(t, '.') >= 0:
						// Only a point the setting rejects: "+0200" or a
						// word held none, and the hint sent the user
						// after one.
						what += " (the file is read with decimal commas, so a point is not a decimal point)"
					case r.decComma:
					case r.delim != ',' && bytes.IndexByte(t, ',') >= 0:
						what += " (a decimal comma? read the file with decimal commas: " + decimalCommaOption + ")"
					case r.delim == ',' && quotedField(fields[u.src]) && decimalCommaText(t):
						// "0,25" quoted in a comma-delimited file, as some
						// locales' spreadsheets save CSV: no hint was given.
						what += " (a decimal comma inside quotes, as spreadsheets in some locales save CSV? in a comma-delimited file they are read only in a column that writes no decimal point, and not when every comma stands before three digits, as 1,500 grouping thousands does: save the file again with ';' as the delimiter, or with decimal points)"
					}
					if _, err := unitScale(kindOf(u.c), string(t)); err == nil && len(t) > 0 {
						what += " (a row of units under the header? make it a comment line, starting with the comment prefix, or delete it)"
					} else if u.c != cTime {
						what += markerHint(t)
					}
					return lineErr(r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src], string(t), "%s %s", quoteText(string(t)), what)
				} else {
					return lineErr(r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src], string(t), "%s is out of range", quoteText(string(t)))
				}
			}
			if scale != 1 {
				v = scaled(v, scale)
			}
			if v < 0 && isSigma(u.c) {
				return lineErr(r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src], string(t), "%s is negative: a position's uncertainty (%s) is a size, 0 or more", quoteText(string(t)), canonNames[u.c])
			}
			if u.c == cTime && r.zc != nil && v == v {
				v = r.zc.take(v, tr, false, fmt.Sprintf("%s:%d: column %s", r.name, fieldLine(ln, fields[u.src], line), pl.header[u.src]), string(t))
			}
			rb.f[u.c][rb.n] = v
		}
		rb.line[rb.n] = line
		rb.n++
	}
	return nil
}

// repeatedHeader returns the error for a line ln (on line) that repeats
// the header line, or ends with it (a log without a last line end joined
// on), as two logs joined end to end give; nil for other lines.
func (r *csvReader) repeatedHeader(ln []byte, line int) error {
	h := r.headerText
	if len(h) == 0 {
		return nil
	}
	t := bytes.TrimSpace(ln)
	switch {
	case bytes.Equal(t, h):
		return lineErr(r.name, line, "", string(ln), "the header repeats here (it is line %d): two logs joined? Give each log as a file of its own, or delete the repeated header line", r.headerAt)
	case bytes.HasSuffix(t, h):
		return lineErr(r.name, line, "", string(ln), "the line ends with the header (line %d) run on: two logs joined, the first without a line end after its last row? Give each log as a file of its own, or split the line", r.headerAt)
	}
	return nil
}

// fieldLine is the physical line on which field f of the record rec
// starts, rec starting on line.
func fieldLine(rec, f []byte, line int) int {
	if off := cap(rec) - cap(f); off > 0 && off <= len(rec) {
		line += bytes.Count(rec[:off], []byte{'\n'})
	}
	return line
}

// fastLine parses a plain record (no blanks around numbers, plain
// decimals, quotes only in ignored text columns) in one pass, the number
// parser finding the end of each field. A quoted text field is skipped as
// splitFields reads it, delimiters and line breaks inside included. It
// appends nothing and returns false when the record needs the general path
// (which also produces the error messages).
func (r *csvReader) fastLine(ln []byte, rb *rawBatch) bool {
	p, n, d, row := 0, len(ln), r.delim, rb.n
	var group []byte
	hasGroup := false
	for k, op := range r.ops {
		if p > n {
			return false // short row
		}
		if op < 0 {
			q := p
			if op == opSkip && p < n && ln[p] == '"' {
				for q++; ; q++ { // to the closing quote, over doubled ones
					j := bytes.IndexByte(ln[q:], '"')
					if j < 0 {
						return false
					}
					if q += j + 1; q == n || ln[q] != '"' {
						break
					}
				}
			}
			j := bytes.IndexByte(ln[q:], d)
			end := n
			if j >= 0 {
				end = q + j
			}
			if op == opGroup {
				f := ln[p:end]
				if len(f) > 0 && (f[0] == '"' || f[0] == ' ' || f[0] == '\t' || f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
					return false
				}
				if hasHigh(f) && !utf8.Valid(f) {
					return false // the general path notes its line
				}
				group, hasGroup = f, true
			}
			p = end + 1
			continue
		}
		v, end, ok := parseFastAt(ln, p)
		if !ok || (end < n && ln[end] != d) || (v < 0 && isSigma(op)) {
			return false
		}
		rb.f[op][row] = scaled(v, r.opScale[k])
		p = end + 1
	}
	if p < n {
		return false // long row, or a trailing delimiter the general path judges
	}
	if hasGroup {
		s, _ := textValue(group)
		rb.group = append(rb.group, s)
	}
	return true
}

// growTo returns s with length n, reusing its array when it is big enough.
func growTo(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n, n+n/4)
	}
	return s[:n]
}

func (r *csvReader) start(carry []byte, line int) {
	w := r.cfg.workers
	r.pending = make(chan chan csvResult, 2*w+2)
	r.jobs = make(chan csvJob, w)
	r.done = make(chan struct{})
	r.wg.Add(1 + w)
	go r.split(carry, line)
	for i := 0; i < w; i++ {
		go r.work()
	}
}

var chunkPool sync.Pool

func getChunk(n int) []byte {
	if b, ok := chunkPool.Get().(*[]byte); ok && cap(*b) >= n {
		return (*b)[:n]
	}
	return make([]byte, n)
}

func putChunk(b []byte) { chunkPool.Put(&b) }

// split cuts the input into chunks that end at a newline outside quoted
// fields, so that every chunk holds whole records.
func (r *csvReader) split(carry []byte, line int) {
	defer r.wg.Done()
	defer close(r.pending)
	defer close(r.jobs)
	size := r.cfg.chunkBytes
	if size < 1 {
		size = 1
	}
	send := func(j csvJob) bool {
		j.out = make(chan csvResult, 1)
		select {
		case r.pending <- j.out:
		case <-r.done:
			return false
		}
		if j.data == nil {
			return true
		}
		select {
		case r.jobs <- j:
			return true
		case <-r.done:
			return false
		}
	}
	fail := func(err error) {
		out := make(chan csvResult, 1)
		out <- csvResult{err: err}
		select {
		case r.pending <- out:
		case <-r.done:
		}
	}
	var tail []byte // the end of the last chunk sent, for cutLastLine
	for {
		n := size
		if len(carry) >= n {
			n = 2 * len(carry)
		}
		buf := getChunk(n)
		k := copy(buf, carry)
		m, err := io.ReadFull(r.br, buf[k:])
		data := buf[:k+m]
		eof := err == io.EOF || err == io.ErrUnexpectedEOF
		if err != nil && !eof {
			fail(fileErr(r.name, err, "read error near line %d", line))
			return
		}
		if eof {
			keep, warn := r.cutLastLine(data, line, tail)
			if keep > 0 {
				if !send(csvJob{data: data[:keep], line: line, lines: bytes.Count(data[:keep], []byte{'\n'})}) {
					return
				}
			}
			r.cutWarn = warn
			return
		}
		cut, open, plain := r.lastRecordEnd(data)
		if cut < 0 && len(data) > maxLineBytes && data[0] == 0 && len(bytes.Trim(data, "\x00")) == 0 {
			// A run of NUL bytes longer than a line may be (a logger's
			// preallocated file): dropped as it comes but for its last
			// byte, so that the line is judged as any other when it
			// ends (skipped if NULs alone, refused if data follow).
			if r.nulAt == 0 {
				r.nulAt = line
			}
			carry = append(carry[:0], 0)
			putChunk(buf)
			continue
		}
		if cut < 0 {
			if len(data) > maxLineBytes {
				if open >= 0 {
					fail(r.openQuoteErr(data, open, line, false))
				} else {
					fail(lineErr(r.name, line, "", "", "line longer than %d bytes", maxLineBytes))
				}
				return
			}
			carry = append(carry[:0], data...)
			putChunk(buf)
			continue
		}
		carry = append(carry[:0], data[cut+1:]...)
		tail = append(tail[:0], data[max(0, cut+1-cutTailBytes):cut+1]...)
		lines := bytes.Count(data[:cut+1], []byte{'\n'})
		if !send(csvJob{data: data[:cut+1], line: line, lines: lines, plain: plain}) {
			return
		}
		line += lines
	}
}

func (r *csvReader) work() {
	defer r.wg.Done()
	var rb rawBatch
	for {
		var j csvJob
		var ok bool
		select {
		case j, ok = <-r.jobs:
			if !ok {
				return
			}
		case <-r.done:
			return
		}
		j.out <- r.parseJob(j, &rb)
		putChunk(j.data[:cap(j.data)])
	}
}

func (r *csvReader) parseJob(j csvJob, rb *rawBatch) csvResult {
	pl := r.pl
	rb.reset(pl)
	err := r.parseChunk(j.data, j.line, rb, j.plain)
	res := r.parseResult(j, rb, err)
	res.zoneNotes = r.zc.flush()
	return res
}

// parseResult is the result of the chunk j parsed into rb (err: the
// parse's error).
func (r *csvReader) parseResult(j csvJob, rb *rawBatch, err error) csvResult {
	pl := r.pl
	if err != nil || rb.n == 0 {
		res := csvResult{err: err, firstTime: math.NaN(), lastTime: math.NaN(), nulLine: rb.nulLine, badText: rb.badText}
		if err != nil && r.pl.orderAll {
			// A step back in time on a row before the bad one comes
			// first in the file, whatever the chunking: report that.
			t := rb.f[cTime]
			if i := firstBackwards(t, math.NaN()); i > 0 {
				res.err = r.chunkBackwards(j, rb, i)
			}
			res.firstTime, res.firstLine = firstTime(t, rb.line)
			res.firstText = r.timeTextAt(j, res.firstLine)
		}
		return res
	}
	if i, col, msg := pl.checkLatLon(rb); i >= 0 {
		line := 0
		if i < len(rb.line) {
			line = rb.line[i]
		}
		return csvResult{err: lineErr(r.name, line, col, "", "%s", msg), firstTime: math.NaN(), lastTime: math.NaN()}
	}
	if i, col, msg := pl.checkPlausible(&rb.f, rb.n); i >= 0 {
		line := 0
		if i < len(rb.line) {
			line = rb.line[i]
		}
		return csvResult{err: lineErr(r.name, line, col, "", "%s", msg), firstTime: math.NaN(), lastTime: math.NaN()}
	}
	pl.transform(rb)
	var noFixAt []string
	for _, ln := range rb.noFixLine {
		noFixAt = append(noFixAt, fmt.Sprintf("%s:%d", r.name, ln))
	}
	if rb.n == 0 { // every reading without a fix
		return csvResult{firstTime: math.NaN(), lastTime: math.NaN(), nulLine: rb.nulLine, badText: rb.badText, noFix: rb.noFix, noFixAt: noFixAt}
	}
	t := rb.f[cTime]
	if r.pl.orderAll {
		if i := firstBackwards(t, math.NaN()); i > 0 {
			return csvResult{err: r.chunkBackwards(j, rb, i)}
		}
	}
	res := csvResult{rec: pl.record(r.cfg.mem, rb), lastTime: lastTime(t, math.NaN()), naiveLine: rb.naiveLine, naiveText: rb.naiveText, nulLine: rb.nulLine, badText: rb.badText, noFix: rb.noFix, noFixAt: noFixAt}
	if pl.orderGroup {
		res.lines = append([]int(nil), rb.line[:rb.n]...)
	}
	res.rows = rb.n
	if pl.src[cGroup] >= 0 {
		for i, g := range rb.group {
			if g == "" {
				if res.noGroup == 0 {
					res.noGroupAt = rb.line[i]
				}
				res.noGroup++
			}
		}
	}
	res.firstTime, res.firstLine = firstTime(t, rb.line)
	if pl.orderAll {
		// The chunk's first and last times as written, for a step back
		// from one chunk to the next.
		res.firstText = r.timeTextAt(j, res.firstLine)
		if k := lastIndex(t); k >= 0 {
			res.lastLine = rb.line[k]
			res.lastText = r.timeTextAt(j, res.lastLine)
		}
	}
	return res
}

// lastIndex is the index of the last time that is not NaN, -1 if none.
func lastIndex(t []float64) int {
	for i := len(t) - 1; i >= 0; i-- {
		if t[i] == t[i] {
			return i
		}
	}
	return -1
}

// chunkBackwards is the error of a step back in time at row i of the
// chunk j (parsed into rb), from the last time before it in the chunk.
func (r *csvReader) chunkBackwards(j csvJob, rb *rawBatch, i int) *Error {
	t := rb.f[cTime]
	k := lastIndex(t[:i])
	return r.backwardsErr(rb.line[i], t[i], r.timeTextAt(j, rb.line[i]), t[k], r.timeTextAt(j, rb.line[k]), rb.line[k])
}

// timeTextAt returns the time field as written on line line of the chunk
// j, "" when it cannot be found there (a record run on over quoted line
// breaks).
func (r *csvReader) timeTextAt(j csvJob, line int) string {
	data, k := j.data, line-j.line
	if k < 0 || k > j.lines {
		return ""
	}
	if k > j.lines/2 {
		// From the end: line k starts after the k-th of the chunk's
		// j.lines line ends.
		end := len(data)
		for n := j.lines; n >= k && end > 0; n-- {
			e := bytes.LastIndexByte(data[:end], '\n')
			if e < 0 {
				return ""
			}
			if n == k {
				data = data[e+1:]
				break
			}
			end = e
		}
	} else {
		for ; k > 0; k-- {
			e := bytes.IndexByte(data, '\n')
			if e < 0 {
				return ""
			}
			data = data[e+1:]
		}
	}
	if e := bytes.IndexByte(data, '\n'); e >= 0 {
		data = data[:e]
	}
	data = bytes.TrimRight(data, "\r")
	c := r.pl.src[cTime]
	if c < 0 {
		return ""
	}
	fields := splitFields(data, r.delim, r.ws, nil)
	if c >= len(fields) {
		return ""
	}
	return string(bytes.Trim(trimField(fields[c]), " \t"))
}

// firstTime returns the first time that is not NaN and its line; NaN when
// there is none.
func firstTime(t []float64, lines []int) (float64, int) {
	for i, v := range t {
		if v == v {
			return v, lines[i]
		}
	}
	return math.NaN(), 0
}

// backwardsErr is the error of a step back in time on line line, to t
// (written text) from prev (written prevText, on line prevLine).
func (r *csvReader) backwardsErr(line int, t float64, text string, prev float64, prevText string, prevLine int) *Error {
	at := ""
	if prevLine > 0 {
		at = fmt.Sprintf("line %d", prevLine)
	}
	naive := text != "" && prevText != "" && r.pl.textNaive(text) && r.pl.textNaive(prevText)
	shown := text
	if shown == "" {
		shown = formatSeconds(t)
	}
	return lineErr(r.name, line, r.pl.header[r.pl.src[cTime]], shown, "%s", backwardsMsg(t, prev, text, prevText, at, naive))
}

func (r *csvReader) Next() bool {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	if r.err != nil || r.stopped {
		return false
	}
	for {
		ch, ok := <-r.pending
		if !ok {
			r.ended = true
			r.pl.finishGroups()
			r.pl.finishNoFix()
			// split has ended (it closed pending): r.nulAt is settled.
			at := r.nulLine
			if r.nulAt > 0 && (at == 0 || r.nulAt < at) {
				at = r.nulAt
			}
			if r.cutWarn != "" {
				r.pl.warn("%s", r.cutWarn)
			}
			if at > 0 {
				r.pl.warn("%s:%d: lines of nothing but NUL bytes skipped, the first here: the unwritten end of a logger's preallocated file, or a damaged stretch of the file (rows may be missing there)", r.name, at)
			}
			return false
		}
		res := <-ch
		if res.badText > 0 && r.cpLine == 0 {
			// A file whose head is UTF-8 with a text value further on
			// that is not: that value is read as Windows-1252.
			r.cpLine = res.badText
			r.pl.warn("%s", cp1252Warning(r.name, r.cpLine))
		}
		if res.nulLine > 0 && r.nulLine == 0 {
			r.nulLine = res.nulLine
		}
		if res.noFix > 0 {
			r.pl.noteNoFix(res.noFix, res.noFixAt)
		}
		for _, n := range res.zoneNotes {
			r.pl.warn("%s", n)
		}
		if res.err != nil {
			r.err = res.err
			if r.pl.orderAll && res.firstLine > 0 && res.firstTime < r.last {
				// Rows before the bad one step back from the last chunk.
				r.err = r.backwardsErr(res.firstLine, res.firstTime, res.firstText, r.last, r.lastText, r.lastLine)
			}
			r.stop()
			return false
		}
		if res.rec == nil {
			continue
		}
		if r.pl.orderAll && res.firstTime < r.last {
			res.rec.Release()
			r.err = r.backwardsErr(res.firstLine, res.firstTime, res.firstText, r.last, r.lastText, r.lastLine)
			r.stop()
			return false
		}
		if r.pl.orderGroup {
			if i, prev, g := r.pl.groupBackwards(res.rec); i >= 0 {
				t := res.rec.Column(0).(*array.Float64).Value(i)
				res.rec.Release()
				r.err = lineErr(r.name, res.lines[i], r.pl.header[r.pl.src[cTime]], formatSeconds(t), "%s", groupBackwardsMsg(t, prev, g, !r.pl.timeUTC && (res.naiveLine > 0 || r.pl.naiveWarned)))
				r.stop()
				return false
			}
		}
		if r.pl.src[cGroup] >= 0 {
			r.pl.noteGroups(res.rows, res.noGroup, func() string { return fmt.Sprintf("%s:%d", r.name, res.noGroupAt) })
		}
		if !r.pl.timeChecked && res.firstTime == res.firstTime {
			r.pl.checkTimeUnit(res.firstTime, fmt.Sprintf("%s:%d", r.name, res.firstLine))
		}
		if res.naiveLine > 0 {
			r.pl.naiveTime(fmt.Sprintf("%s:%d", r.name, res.naiveLine), "times such as "+quoteText(res.naiveText), false)
		}
		if !r.pl.orderAll && !r.pl.noTime {
			r.pl.noteClockChange(res.rec.Column(0).(*array.Float64).Float64Values(), r.name)
		}
		if res.lastTime == res.lastTime {
			r.last = res.lastTime
			r.lastText, r.lastLine = res.lastText, res.lastLine
		}
		r.cur = res.rec
		return true
	}
}

// stop ends the goroutines and frees batches parsed ahead.
func (r *csvReader) stop() {
	if r.stopped {
		return
	}
	r.stopped = true
	close(r.done)
	r.wg.Wait()
	for ch := range r.pending {
		select {
		case res := <-ch:
			if res.rec != nil {
				res.rec.Release()
			}
		default:
		}
	}
	if r.closer != nil {
		r.closer.Close()
	}
}

func (r *csvReader) Release() {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	if r.err == nil && !r.ended {
		r.err = releasedErr(r.name)
	}
	r.stop()
}
