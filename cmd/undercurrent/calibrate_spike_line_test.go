package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCalibrateSpikeNamesFileLine: in a spin log without time, a spike
// is named by its line in the file, as the reader's own errors name
// lines, counting the comment lines, the header and the rows
// --drop-missing dropped. Before, it was named "reading 98" (its index
// among the readings left) when it was on line 102. The readings are those
// of testdata/examples/kestrel-moor-spin-uT.csv without their time; the
// spike adds 5 µT to one reading's x axis.
func TestCalibrateSpikeNamesFileLine(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", "kestrel-moor-spin-uT.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var data []string // "bx,by,bz" in µT
	for _, ln := range strings.Split(strings.TrimSpace(string(raw)), "\n") {
		if strings.HasPrefix(ln, "#") || strings.HasPrefix(ln, "time") {
			continue
		}
		f := strings.Split(ln, ",")
		data = append(data, strings.Join(f[1:], ","))
	}
	const spikeAt = 120 // among the example's readings, from 0
	var bx, by, bz float64
	if _, err := fmt.Sscanf(strings.ReplaceAll(data[spikeAt], ",", " "), "%g %g %g", &bx, &by, &bz); err != nil {
		t.Fatal(err)
	}
	data[spikeAt] = fmt.Sprintf("%.5f,%.5f,%.5f", bx+5, by, bz)

	dir := t.TempDir()
	for _, c := range []struct {
		name   string
		head   []string // the lines before the data
		header []string // --header, for a file without a header line
	}{
		{"with-header.csv", []string{"# Kestrel Moor gas spur: sensor spin", "# no clock on this logger", "Bx_uT,By_uT,Bz_uT"}, nil},
		{"no-header.csv", []string{"# Kestrel Moor gas spur: sensor spin"}, []string{"--header", "bx,by,bz", "--unit", "bx=uT,by=uT,bz=uT"}},
	} {
		lines := append([]string(nil), c.head...)
		// Three rows with By missing, after the second reading.
		lines = append(lines, data[:2]...)
		lines = append(lines, "1.0,,3.0", "1.0,,3.0", "1.0,,3.0")
		lines = append(lines, data[2:]...)
		spikeLine := len(c.head) + 2 + 3 + (spikeAt - 2) + 1 // counting from 1
		if !strings.HasPrefix(lines[spikeLine-1], fmt.Sprintf("%.5f,", bx+5)) {
			t.Fatalf("%s: line %d is %q, not the spike", c.name, spikeLine, lines[spikeLine-1])
		}
		path := filepath.Join(dir, c.name)
		if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		args := append([]string{"calibrate", "--spin", path, "--drop-missing"}, c.header...)
		code, out, errOut := runCmd(args...)
		want := fmt.Sprintf("left out of the fit (at line %d)", spikeLine)
		if code != 0 || !strings.Contains(errOut, want) {
			t.Errorf("%s: exit %d, stdout %q, stderr %q; want the spike named %q", c.name, code, out, errOut, want)
		}
	}
}

// TestDataRowLines: the file lines of data rows are counted as ingest
// reads a CSV file: a spreadsheet's "sep=;" line and a line of
// delimiters alone (the empty rows a spreadsheet writes) are no data rows;
// a quoted field that may hold a newline gives no lines at all, and
// calibrate then names the data row instead.
func TestDataRowLines(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	sheet := write("sheet.csv", "sep=;\nbx;by;bz\n1;2;3\n;;\n4;5;6\n# note\n7;8;9\n")
	if got := dataRowLines(sheet, []int{0, 1, 2}, "#", true); fmt.Sprint(got) != "[3 5 7]" {
		t.Errorf("sheet.csv: lines %v, want [3 5 7]", got)
	}
	quoted := write("quoted.csv", "bx,by,bz,note\n1,2,3,\"two\nlines\"\n4,5,6,x\n")
	if got := dataRowLines(quoted, []int{1}, "#", true); got != nil {
		t.Errorf("quoted.csv: lines %v, want none", got)
	}
}
