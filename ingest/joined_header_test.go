package ingest

import (
	"strings"
	"testing"
)

// TestCSVMessagesNameTheCause: three ways a CSV log goes wrong that the
// reader refused or took naming a line but not the cause (review of broken
// input, invented logs):
//   - two logs joined with cat: the second header was "not a number" at
//     its line; now "the header repeats here", as the IAGA-2002 reader
//     says "a file joined on here?" (and a first log without a last line
//     end, its header run on to its last row);
//   - a log without a header line: its first row taken for the names gave
//     "no column for time, bx, by, bz" listing numbers; now the advice is
//     a header option;
//   - every row at one time (a spreadsheet's six significant figures):
//     Inspect warned of nothing; it now says so. A time column whose
//     times differ gets no such warning.
func TestCSVMessagesNameTheCause(t *testing.T) {
	const head = "# undercurrent.frame: enu\ntime,x,y,z,bx,by,bz\n"
	rows := "1.5,0,0,0,1,2,3\n2.5,0,0,0,1,2,3\n"
	_, err := ReadSamples(writeFile(t, "cat.csv", head+rows+head+rows))
	wantErr(t, err, "cat.csv:6: the header repeats here (it is line 2): two logs joined?")
	_, err = ReadSamples(writeFile(t, "nonl.csv", head+rows+"3.5,0,0,0,1,2,3"+strings.TrimPrefix(head, "# undercurrent.frame: enu\n")+rows))
	wantErr(t, err, "nonl.csv:5: the line ends with the header (line 2) run on: two logs joined")

	_, err = ReadSamples(writeFile(t, "nohead.csv", rows+rows))
	wantErr(t, err, "nohead.csv:1: no column for time, bx, by, bz: the header line holds numbers")
	wantErr(t, err, "on the command line --header")
	// A group column of text beside the numbers still reads as no header.
	_, err = ReadSamples(writeFile(t, "nohead-g.csv", "1.5,0,0,0,1,2,3,T01\n2.5,0,0,0,1,2,3,T01\n"))
	wantErr(t, err, "the header line holds numbers")
	// A header of words that map to nothing gets the mapping advice.
	_, err = ReadSamples(writeFile(t, "words.csv", "a,b,c,d\n1,2,3,4\n"))
	if err == nil || strings.Contains(err.Error(), "holds numbers") {
		t.Errorf("a header of words: %v, want the column mapping advice", err)
	}

	same := head + "1.77841E+09,0,0,0,1,2,3\n1.77841E+09,0,1,0,1,2,3\n1.77841E+09,0,2,0,1,2,3\n"
	in, err := Inspect(writeFile(t, "same.csv", same))
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(in.Warnings, "\n"); !strings.Contains(w, "every one of the 3 rows has the same time (1.77841e+09 s, 2026-05-10T") || !strings.Contains(w, "rounded") {
		t.Errorf("one time in every row: warnings %q, want one naming it", in.Warnings)
	}
	in, err = Inspect(writeFile(t, "differ.csv", head+rows+"3.5,0,0,0,1,2,3\n"))
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(in.Warnings, "\n"); strings.Contains(w, "same time") {
		t.Errorf("times that differ: %q", w)
	}
	if w := OneTime([]float64{5, 5}); w != "" {
		t.Errorf("two rows at one time: %q, want none (too few to tell)", w)
	}
}
