package report

import (
	"encoding/csv"
	"slices"
	"strings"
	"unicode/utf8"
)

// CSVOptions say how results.csv and findings.csv are written
// (WriteCSVWith, WriteFindingsCSVWith, WriteFilesWith). The zero value
// writes them as WriteCSV and WriteFindingsCSV do: a comma between fields
// and a point for the decimals.
type CSVOptions struct {
	// DecimalComma writes a semicolon between fields and a comma for the
	// decimals of every number ("60,015;-0,400"), for a spreadsheet set to
	// a language that writes decimals with a comma (German, French, ...).
	// Such a spreadsheet takes a comma-separated file's "60.015" for
	// 60015, three decimals read as a group of thousands, and "0.40045"
	// for text (found in review). Text cells are written as they are,
	// quoted when they hold a semicolon, a double quote or a line break
	// (RFC 4180 with ";" for ","); only the numeric columns change.
	DecimalComma bool
}

// csvRowWriter writes the rows of a CSV file in the style opt asks for: with
// DecimalComma, the separator is ";" and the decimal point of every cell
// in a column that text does not mark is a comma.
type csvRowWriter struct {
	w     *csv.Writer
	comma bool
	text  []bool // columns of text, never changed
}

// newCSVRowWriter returns a csvRowWriter writing to w for the columns of header, of
// which those named in text hold text rather than numbers.
func newCSVRowWriter(w *csv.Writer, opt CSVOptions, header []string, text ...string) *csvRowWriter {
	r := &csvRowWriter{w: w, comma: opt.DecimalComma, text: make([]bool, len(header))}
	if r.comma {
		w.Comma = ';'
	}
	for i, h := range header {
		for _, t := range text {
			if h == t {
				r.text[i] = true
			}
		}
	}
	return r
}

// Write writes one row; with a decimal comma it changes the numeric cells
// of a copy of row, not row itself.
//
// Text that is not valid UTF-8 (a name from an input that was not) is
// written with U+FFFD for each bad byte run, so that the file is UTF-8
// whatever its text (TestWritersValidUTF8).
func (r *csvRowWriter) Write(row []string) error {
	for i, c := range row {
		if !utf8.ValidString(c) {
			row = slices.Clone(row)
			for j := i; j < len(row); j++ {
				row[j] = strings.ToValidUTF8(row[j], "\uFFFD")
			}
			break
		}
	}
	if r.comma {
		out := make([]string, len(row))
		for i, c := range row {
			if i < len(r.text) && !r.text[i] {
				c = strings.Replace(c, ".", ",", 1)
			}
			out[i] = c
		}
		row = out
	}
	return r.w.Write(row)
}

// csvTextColumns are the columns of results.csv that hold text; every
// other column holds a number or is empty (TestCSVDecimalCommaNumbers).
var csvTextColumns = []string{
	"group", "kind", "signal", "depth_reference", "ok", "problem", "used", "left_out",
	"uncertainty_note", "fit", "log",
}

// findingsTextColumns are the columns of findings.csv that hold text.
var findingsTextColumns = []string{"severity", "kind", "groups", "values", "message", "value_name", "value_unit", "id", "value_key", "value_keys"}
