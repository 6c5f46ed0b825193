package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
)

// WriteJSON writes d as indented JSON followed by a newline, after
// checking it with Validate. Field names are stable: see Document.
func WriteJSON(w io.Writer, d *Document) error {
	if err := d.Validate(); err != nil {
		return err
	}
	b, err := json.MarshalIndent(d.normalized(), "", "  ")
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	b = append(b, '\n')
	if _, err := w.Write(b); err != nil {
		return fmt.Errorf("report: writing JSON: %w", err)
	}
	return nil
}

// ReadJSON reads a document written by WriteJSON. name is used in error
// messages (a file name); errors give the line and column of bad JSON.
// Fields this version does not know are ignored, so documents from later
// versions with added fields still read; a later schema_version is an
// error.
func ReadJSON(r io.Reader, name string) (*Document, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("report: %s: %w", name, err)
	}
	var d Document
	if err := json.Unmarshal(data, &d); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := lineCol(data, se.Offset)
			return nil, fmt.Errorf("report: %s:%d:%d: %w", name, line, col, err)
		case errors.As(err, &te):
			line, col := lineCol(data, te.Offset)
			return nil, fmt.Errorf("report: %s:%d:%d: field %s: %s is not a %s", name, line, col, te.Field, te.Value, te.Type)
		}
		return nil, fmt.Errorf("report: %s: %w", name, err)
	}
	if err := d.Validate(); err != nil {
		return nil, fmt.Errorf("%w (in %s)", err, name)
	}
	return &d, nil
}

// lineCol turns the offset the JSON decoder reports (the number of bytes
// read, so just past the offending byte) into the 1-based line and column of
// the last byte read.
func lineCol(data []byte, off int64) (line, col int) {
	if off > 0 {
		off--
	}
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	before := data[:off]
	line = 1 + bytes.Count(before, []byte{'\n'})
	col = int(off) - bytes.LastIndexByte(before, '\n')
	return line, col
}

// normalized returns a shallow copy of d whose required arrays are empty
// rather than nil, so that they are written as [] rather than null.
func (d *Document) normalized() *Document {
	c := *d
	if c.Inputs == nil {
		c.Inputs = []Input{}
	}
	if c.Findings == nil {
		c.Findings = []Finding{}
	}
	c.Groups = make([]Group, len(d.Groups))
	copy(c.Groups, d.Groups)
	for i := range c.Groups {
		if c.Groups[i].Sources == nil {
			c.Groups[i].Sources = []Source{}
		}
	}
	return &c
}
