package ingest

import (
	"os"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// TestIAGAJoinedDays: IAGA-2002 files hold one day each (INTERMAGNET
// technical manual: daily files of minute and second data), so a base
// station for a survey that runs past midnight UTC is two files, and the
// way to give both as one --base log is to join them end to end (cat). The
// second file's header, in the middle of the data, is read as such when it
// describes the same series, and the rows are exactly those of the two
// files read alone, in order (real Boulder data of 1 and 2 November 2014,
// INTERMAGNET via the USGS, 1440 rows a day; 2014-11-01T00:00Z is Unix
// 1414800000 and 2014-11-02T23:59Z 1414972740 by the POSIX definition).
// Headers that describe another series, and days joined out of order, are
// refused at their lines.
func TestIAGAJoinedDays(t *testing.T) {
	day1, err := os.ReadFile(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	day2, err := os.ReadFile(ingesttest.IAGAFile(t, "bou20141102vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	a, err := ReadSamples(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	b, err := ReadSamples(ingesttest.IAGAFile(t, "bou20141102vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	p := writeFile(t, "bou-2days.min", string(day1)+string(day2))
	s, err := ReadSamples(p, WithAllocator(checked(t)), WithBatchSize(1000))
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 2880 || s.Time[0] != 1414800000 || s.Time[s.Len()-1] != 1414972740 {
		t.Fatalf("%d rows from %v to %v, want 2880 from 1414800000 to 1414972740", s.Len(), s.Time[0], s.Time[s.Len()-1])
	}
	for _, c := range []struct {
		name        string
		got, d1, d2 []float64
	}{{"time", s.Time, a.Time, b.Time}, {"bx", s.Bx, a.Bx, b.Bx}, {"by", s.By, a.By, b.By}, {"bz", s.Bz, a.Bz, b.Bz}, {"f", s.F, a.F, b.F}} {
		if !sameFloats(c.got, append(append([]float64(nil), c.d1...), c.d2...)) {
			t.Errorf("%s differs from the two days read alone", c.name)
		}
	}
	if s.Meta["horizontal_frame"] != IAGAGeographic || s.Meta["decbas"] != "5527" {
		t.Errorf("meta %v, want the first header's (turned by DECBAS 5527)", s.Meta)
	}

	// Lines of the first file: 1465 (25 header lines and 1440 rows), so
	// the second header starts on line 1466 and its column line is 1490.
	const second = 1466
	cases := []struct {
		name, text, want string
	}{
		{"days out of order", string(day2) + string(day1),
			// The times as the file writes them (the first row of 1 November
			// after the last of 2 November, the first file's last data line
			// 1465), not as Unix seconds.
			`bou.min:1491: column DATE TIME: time goes backwards: "2014-11-01 00:00:00.000" after "2014-11-02 23:59:00.000" (line 1465), 47 h 59 min back`},
		{"another observatory", string(day1) + strings.Replace(string(day2), " IAGA CODE              BOU ", " IAGA CODE              FRD ", 1),
			`bou.min:1466: column IAGA CODE: this IAGA-2002 header (of a file joined on here?) gives IAGA CODE "FRD" where the first header gives "BOU"`},
		{"another data type", string(day1) + strings.Replace(string(day2), "Data Type              variation ", "Data Type              definitive", 1),
			`bou.min:1466: column Data Type: this IAGA-2002 header (of a file joined on here?) gives Data Type "definitive" where the first header gives "variation"`},
		{"another baseline", string(day1) + strings.Replace(string(day2), "# DECBAS               5527", "# DECBAS               5530", 1),
			`bou.min:1466: column # DECBAS: this IAGA-2002 header (of a file joined on here?) gives # DECBAS "5530" where the first header gives "5527"`},
		{"other elements", string(day1) + strings.Replace(string(day2), "BOUD", "BOUE", 1),
			`bou.min:1490: the IAGA-2002 header from line 1466 (a file joined on here?) has the columns "DATE TIME DOY BOUH BOUE BOUZ BOUF", the first header (line 25) "DATE TIME DOY BOUH BOUD BOUZ BOUF"`},
		{"header cut short", string(day1) + strings.Join(strings.SplitAfter(string(day2), "\n")[:5], ""),
			"bou.min:1466: IAGA-2002 header (of a file joined on here?) without a DATE TIME DOY column line"},
	}
	// SUB (0x1A), the CP/M and MS-DOS end-of-file mark, after a day's
	// file as old tools append it: the end of that file's text.
	s, err = ReadSamples(writeFile(t, "bou-sub.min", string(day1)+"\x1a"+string(day2)+"\x1a"), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 2880 || !sameFloats(s.Bx, append(append([]float64(nil), a.Bx...), b.Bx...)) {
		t.Errorf("with SUB after each day: %d rows, or other values", s.Len())
	}

	if !strings.HasPrefix(strings.Split(string(day2), "\n")[0], " Format") || strings.Count(string(day1), "\n") != second-1 {
		t.Fatalf("the real files are not laid out as this test expects")
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadSamples(writeFile(t, "bou.min", tc.text), WithAllocator(checked(t)))
			wantErr(t, err, tc.want)
		})
	}
}
