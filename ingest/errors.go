package ingest

import (
	"fmt"
	"strings"
)

// Error is a problem with the input, located as precisely as the format
// allows. Its message reads
//
//	ingest: FILE:LINE: column COL: MESSAGE
//	ingest: FILE: batch B row R: column COL: MESSAGE
//
// with the parts that do not apply left out.
type Error struct {
	File   string
	Line   int    // 1-based line, 0 when not applicable
	Batch  int    // 0-based record batch, -1 when not applicable
	Row    int    // 0-based row within Batch
	Column string // "" when the problem is not in one column
	Text   string // the offending text, if any
	Msg    string
	Err    error // underlying cause, if any
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("ingest: ")
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	if e.Batch >= 0 {
		fmt.Fprintf(&b, ": batch %d row %d", e.Batch, e.Row)
	}
	if e.Column != "" {
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
