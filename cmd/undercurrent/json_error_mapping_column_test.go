package main

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestJSONErrorMappingColumn: a --column mapping that names no column of
// the log fails, for inspect as for locate, with the JSON error's column
// field set to the column mapped (time for --column time=zz), as a bad
// value's error names its column. Before, the message named it and the
// column field was left out (found in review).
func TestJSONErrorMappingColumn(t *testing.T) {
	log := simulatedLog(t, t.TempDir(), "line.csv")
	for _, c := range []struct{ cmd, mapping, column string }{
		{"inspect", "time=zz", "time"},
		{"locate", "time=zz", "time"},
		{"inspect", "bx=zz", "bx"},
		{"locate", "bx=zz", "bx"},
	} {
		code, stdout, _ := cli(t, c.cmd, "--json", "--column", c.mapping, log)
		var e struct {
			Error struct {
				Kind    string `json:"kind"`
				Message string `json:"message"`
				File    string `json:"file"`
				Column  string `json:"column"`
			} `json:"error"`
		}
		if err := json.Unmarshal([]byte(stdout), &e); err != nil {
			t.Fatalf("%s --column %s: %v in %q", c.cmd, c.mapping, err, stdout)
		}
		if code != 1 || e.Error.Kind != "input" || e.Error.Column != c.column || e.Error.File != log ||
			!strings.Contains(e.Error.Message, ":6: mapping "+c.mapping+": no column") {
			t.Errorf("%s --column %s: exit %d, %+v; want kind input, file %s, column %q", c.cmd, c.mapping, code, e.Error, log, c.column)
		}
	}
}
