package ingest

import (
	"errors"
	"fmt"
	"strings"
)

// Error is a problem with the input, located as precisely as the format
// allows. Its message reads
//
//	ingest: FILE:LINE: column COL: MESSAGE
//	ingest: FILE: batch B row R: column COL: MESSAGE
//	ingest: FILE: batch B row R (row N of the file, counting from 0): column COL: MESSAGE
//
// with the parts that do not apply left out.
type Error struct {
	File  string
	Line  int // 1-based line, 0 when not applicable
	Batch int // 0-based record batch, -1 when not applicable
	Row   int // 0-based row within Batch
	// FileRow is the 0-based row counted from the start of the file
	// (Arrow, Parquet): shown beside Batch and Row when earlier batches
	// hold rows, since a Parquet reader's batches are not the file's row
	// groups and other tools count rows through the whole file.
	FileRow int64
	Column  string // "" when the problem is not in one column
	Text    string // the offending text, if any
	Msg     string
	Err     error // underlying cause, if any
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("ingest: ")
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	if e.Batch >= 0 {
		b.WriteString(batchRow(e.Batch, e.Row, e.FileRow))
	}
	// A mapping's error names its column already ("mapping time=zz: no
	// column ...").
	if e.Column != "" && !strings.HasPrefix(e.Msg, "mapping "+e.Column+"=") {
		b.WriteString(": column ")
		b.WriteString(e.Column)
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	if e.Err != nil {
		b.WriteString(": ")
		b.WriteString(e.Err.Error())
	}
	return b.String()
}

func (e *Error) Unwrap() error { return e.Err }

// batchRow words the place of row row of record batch batch, fileRow
// being that row counted from the start of the file: ": batch 2 row 4
// (row 9 of the file, counting from 0)", without the part in parentheses
// when no earlier batch holds rows.
func batchRow(batch, row int, fileRow int64) string {
	s := fmt.Sprintf(": batch %d row %d", batch, row)
	if fileRow > int64(row) {
		s += fmt.Sprintf(" (row %d of the file, counting from 0)", fileRow)
	}
	return s
}

// ErrReleased is the cause (Error.Err) of a Reader's Err after Release
// was called before Next had returned false at the end of the input: the
// rows read may not be the whole log. Before, Err was nil then, the sign of
// a clean end, and a read cancelled by Release passed for the whole file.
// A file's reader released after its last batch but before Next said so
// (a log of one batch released after the first Next) cannot tell whether
// more rows followed without reading on, and gives it too (the reader of
// NewSamplesReader can, and gives nil): call Next until it returns false
// to know that every row was read.
var ErrReleased = errors.New("reader released before Next reported the end of the input: the rows read may not be the whole log (call Next until it returns false to read it all)")

// releasedErr is the error of a reader of file released before its end.
func releasedErr(file string) *Error {
	return &Error{File: file, Batch: -1, Msg: "read stopped", Err: ErrReleased}
}

func fileErr(file string, err error, format string, a ...any) *Error {
	return &Error{File: file, Batch: -1, Msg: fmt.Sprintf(format, a...), Err: err}
}

func lineErr(file string, line int, col, text, format string, a ...any) *Error {
	return &Error{File: file, Line: line, Batch: -1, Column: col, Text: text, Msg: fmt.Sprintf(format, a...)}
}

func rowErr(file string, batch, row int, col, text, format string, a ...any) *Error {
	return &Error{File: file, Batch: batch, Row: row, Column: col, Text: text, Msg: fmt.Sprintf(format, a...)}
}

// quoteText shows offending text, shortened when it is long.
func quoteText(s string) string {
	const max = 40
	if len(s) > max {
		return fmt.Sprintf("%q...", s[:max])
	}
	return fmt.Sprintf("%q", s)
}

// libPrefixes are the package prefixes the Arrow and Parquet libraries put
// on their messages; a user reading about their file has no use for them.
var libPrefixes = map[string]bool{"arrow/ipc": true, "arrow/array": true, "arrow": true, "parquet": true, "pqarrow": true, "thrift": true}

// plainText drops library package prefixes from a message, wherever in a
// chain of wrapped messages ("arrow/ipc: could not read message body:
// unexpected EOF") they appear.
func plainText(s string) string {
	parts := strings.Split(s, ": ")
	kept := parts[:0]
	for _, p := range parts {
		if !libPrefixes[p] {
			kept = append(kept, p)
		}
	}
	return strings.Join(kept, ": ")
}

// plainErr shows a library error without its package prefixes while
// keeping it for errors.Is and errors.As.
type plainErr struct{ err error }

func (e plainErr) Error() string { return plainText(e.err.Error()) }
func (e plainErr) Unwrap() error { return e.err }
