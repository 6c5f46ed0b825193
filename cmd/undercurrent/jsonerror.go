package main

import (
	"encoding/json"
	"errors"
	"io"
	"io/fs"
	"path/filepath"
	"strconv"
	"strings"

	"undercurrent/ingest"

	"github.com/spf13/pflag"
)

// A command run with --json (locate, inspect, calibrate) that fails says
// so on stdout too, as one JSON object, so that a script need not parse
// the text on stderr to learn what failed and where:
//
//	{"error": {"command": "locate", "kind": "input", "message": "...",
//	  "file": "survey.csv", "line": 3, "column": "bx"}}
//
// kind is "usage" (exit status 2), "input" (input that cannot be read or
// used), "output" (a write that fails), "internal" (a fault of the
// program) or "interrupted" (exit status 130 or 143). file, line, column,
// batch and row are given when the error carries them (ingest's errors
// do), left out otherwise. The human message stays on stderr.

// jsonError is the object written; jsonErrorBody its "error" member.
type jsonError struct {
	Error jsonErrorBody `json:"error"`
}

type jsonErrorBody struct {
	Command string `json:"command"`
	Kind    string `json:"kind"`
	Message string `json:"message"`
	File    string `json:"file,omitempty"`
	Line    int    `json:"line,omitempty"`
	Column  string `json:"column,omitempty"`
	// Batch and Row place a bad value in an Arrow or Parquet log (0-based
	// record batch and row within it), as the message does.
	Batch *int `json:"batch,omitempty"`
	Row   *int `json:"row,omitempty"`
}

// writeJSONError writes the error object of command name to w. err, when
// not nil, gives the place (file, line, column) if it carries one; file,
// when not "", is the file instead (an output written under a temporary
// name).
func writeJSONError(w io.Writer, name, kind, msg, file string, err error) {
	body := jsonErrorBody{Command: name, Kind: kind, Message: msg}
	var ie *ingest.Error
	var we *pathWriteError
	var pe *fs.PathError
	switch {
	case errors.As(err, &ie):
		body.File, body.Column = ie.File, ie.Column
		if ie.Line > 0 {
			body.Line = ie.Line
		}
		if ie.Batch >= 0 {
			batch, row := ie.Batch, ie.Row
			body.Batch, body.Row = &batch, &row
		}
	case errors.As(err, &we):
		body.File = we.path
	case errors.As(err, &pe):
		body.File = pe.Path
	}
	if file != "" {
		body.File = file
	}
	b, mErr := json.Marshal(jsonError{Error: body})
	if mErr != nil {
		return // only strings and ints: cannot happen
	}
	w.Write(append(b, '\n'))
}

// wantsJSON reports whether the command was asked for JSON output: its
// --json flag is set or, when flag parsing stopped early at a usage error,
// args (the command's arguments) hold --json before any "--".
func wantsJSON(flags *pflag.FlagSet, args []string) bool {
	f := flags.Lookup("json")
	if f == nil || f.Name != "json" {
		return false
	}
	if f.Value.String() == "true" {
		return true
	}
	for _, a := range args {
		if a == "--" {
			break
		}
		if a == "--json" {
			return true
		}
		if v, ok := strings.CutPrefix(a, "--json="); ok {
			b, err := strconv.ParseBool(v)
			return err == nil && b
		}
	}
	return false
}

// errorKind sorts a command's failure for the JSON error object: a usage
// error, a write of one of outputs (the files and directories the command
// was asked to write) that failed, an internal error, else input that
// cannot be read or used (exit status 1 as the help words it). file is
// the output's own name when the failed write was under a temporary one
// (.NAME.tmp..., or a file in one for -o DIR), else "".
func errorKind(err error, usage bool, outputs []string) (kind, file string) {
	if usage {
		return "usage", ""
	}
	var we *pathWriteError
	if errors.As(err, &we) {
		return "output", ""
	}
	var pe *fs.PathError
	if errors.As(err, &pe) {
		// The output itself, a file in it (-o DIR) or a temporary name
		// beside it (.NAME.tmp..., .NAME.old-...) or in one.
		for _, out := range outputs {
			rel, err := filepath.Rel(filepath.Dir(out), pe.Path)
			if err != nil {
				continue
			}
			first, rest, _ := strings.Cut(filepath.ToSlash(rel), "/")
			if first == filepath.Base(out) {
				return "output", ""
			}
			if strings.HasPrefix(first, "."+filepath.Base(out)+".") {
				return "output", filepath.Join(out, filepath.FromSlash(rest))
			}
		}
	}
	if strings.Contains(err.Error(), "internal error: ") {
		return "internal", ""
	}
	return "input", ""
}

// countWriter passes writes to w and counts the bytes written.
type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}
