package ingest

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Quoted fields holding newlines: IETF RFC 4180 section 2, rule 6 allows a
// line break inside a field enclosed in double quotes; rule 7 doubles a
// quote inside such a field; rule 5 lets any field be enclosed.

// quotedNotes are free-text cells as a logger or a spreadsheet exports
// them; NL stands for the file's line break.
var quotedNotes = []string{
	`plain`,
	`"crew note,NLsecond line"`,
	`"a ""quoted"" wordNLand more"`,
	`""`,
	`"NL"`,
	`"# not a commentNL# nor thisNL"`,
	`"blankNLNLinside"`,
	`"trailing, comma,NL1,2,3,4"`,
	`5" pipe`, // a quote inside an unquoted field is an ordinary character
	`"` + strings.Repeat("Fenwick Lane joint bay ", 7) + `NL"`,
	`"""NL"""`,
}

// quotedLog writes a Harrow Fen substation traverse, with a free-text notes
// column when notes is true, with nl as the line break.
func quotedLog(nl string, notes bool) string {
	var b strings.Builder
	b.WriteString("# Harrow Fen substation, traverse 2" + nl)
	b.WriteString("time,x,bx,by,bz")
	if notes {
		b.WriteString(",notes")
	}
	b.WriteString(nl)
	for i := 0; i < 300; i++ {
		if i%41 == 7 {
			// Comment lines are whole lines, whatever quotes they hold.
			b.WriteString(`# pause at "the stile` + nl + nl)
		}
		fmt.Fprintf(&b, "%g,%g,%g,%g,%g", float64(i)/10, 0.0125*float64(i), 1.0/float64(i+3), -2.5e4+float64(i), 4.1e4-0.5*float64(i))
		if notes {
			b.WriteString("," + strings.ReplaceAll(quotedNotes[i%len(quotedNotes)], "NL", nl))
		}
		b.WriteString(nl)
	}
	return b.String()
}

// A spreadsheet export from Harrow Fen substation: the wrapped header
// cell and the crew's notes hold line breaks inside quotes (RFC 4180); the
// notes column is not a reading and is passed over, and line numbers count
// physical lines.
func ExampleReadSamples_quotedNotes() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "harrow-fen.csv")
	os.WriteFile(p, []byte("time,\"Bx\n(uT)\",By_uT,Bz_uT,notes\n"+
		"0,1.5,19.9,-45.2,\"gate 4, east side\nsecond visit\"\n"+
		"1,1.6,19.8,-45.1,\"\"\"wet\"\" ground\"\n"+
		"2,1.7,19.8,-45.0,\"meter\nreset\n"), 0o644)

	_, err := ReadSamples(p)
	fmt.Println(filepath.Base(err.Error()))
	os.WriteFile(p, []byte("time,\"Bx\n(uT)\",By_uT,Bz_uT,notes\n"+
		"0,1.5,19.9,-45.2,\"gate 4, east side\nsecond visit\"\n"+
		"1,1.6,19.8,-45.1,\"\"\"wet\"\" ground\"\n"), 0o644)
	s, err := ReadSamples(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Len(), "rows, bx (nT):", s.Bx)
	// Output:
	// harrow-fen.csv:6: column notes: unterminated quote: the quoted field starting "\"meter\nreset\n" is not closed before the end of the file
	// 2 rows, bx (nT): [1500 1600]
}

// TestCSVQuotedNewlines reads a log whose notes column holds quoted line
// breaks with chunk sizes that put chunk boundaries inside the quoted
// fields, and expects the values of the same log without the notes.
func TestCSVQuotedNewlines(t *testing.T) {
	for _, nl := range []string{"\n", "\r\n"} {
		t.Run(fmt.Sprintf("%q", nl), func(t *testing.T) {
			ref, err := ReadSamples(writeFile(t, "plain.csv", quotedLog(nl, false)))
			if err != nil {
				t.Fatal(err)
			}
			if ref.Len() != 300 {
				t.Fatalf("reference rows = %d, want 300", ref.Len())
			}
			p := writeFile(t, "notes.csv", quotedLog(nl, true))
			for _, chunk := range []int{1, 2, 5, 13, 64, 1000, 1 << 20} {
				for _, workers := range []int{1, 3} {
					for _, slow := range []bool{false, true} {
						mem := checked(t)
						opts := []Option{withChunkBytes(chunk), WithWorkers(workers), WithAllocator(mem)}
						if slow {
							opts = append(opts, withSlowPathOnly())
						}
						s, err := ReadSamples(p, opts...)
						if err != nil {
							t.Fatalf("chunk %d workers %d: %v", chunk, workers, err)
						}
						if s.Len() != ref.Len() {
							t.Fatalf("chunk %d workers %d: rows = %d, want %d", chunk, workers, s.Len(), ref.Len())
						}
						for i := range ref.Time {
							if s.Time[i] != ref.Time[i] || s.X[i] != ref.X[i] || s.Bx[i] != ref.Bx[i] || s.By[i] != ref.By[i] || s.Bz[i] != ref.Bz[i] {
								t.Fatalf("chunk %d workers %d slow %v: row %d differs", chunk, workers, slow, i)
							}
						}
					}
				}
			}
		})
	}
}

// TestCSVQuotedLineNumbers: after records that span several physical
// lines, errors still name the physical line, whatever the chunking.
func TestCSVQuotedLineNumbers(t *testing.T) {
	for _, nl := range []string{"\n", "\r\n"} {
		good := quotedLog(nl, true)
		bad := good + "30,0,1,2,3,\"last" + nl + "note\"" + nl + "31,0,1,2,1oo,x" + nl
		wantLine := strings.Count(good, "\n") + 3
		back := good + "29.85,0,1,2,3,x" + nl
		backLine := strings.Count(good, "\n") + 1
		p := writeFile(t, "bad.csv", bad)
		q := writeFile(t, "back.csv", back)
		for _, chunk := range []int{3, 100, 1 << 20} {
			mem := checked(t)
			_, err := ReadSamples(p, withChunkBytes(chunk), WithAllocator(mem))
			wantErr(t, err, fmt.Sprintf(`bad.csv:%d: column bz: "1oo" is not a number`, wantLine))
			_, err = ReadSamples(q, withChunkBytes(chunk), WithAllocator(mem))
			wantErr(t, err, fmt.Sprintf(`back.csv:%d: column time: time goes backwards: 29.85 after 29.9`, backLine))
		}
	}
}

// TestCSVRFC4180 reads the examples of IETF RFC 4180 section 2 (rules 5, 6
// and 7, with the last record lacking its line break, rule 2) as text
// columns beside the readings, the middle one read as the group column so
// that its exact text can be checked.
func TestCSVRFC4180(t *testing.T) {
	text := "time,bx,by,bz,a,b,c\r\n" +
		"0,1,2,3,\"aaa\",\"bbb\",\"ccc\"\r\n" + // rule 5
		"1,\"4\",2,3,aaa,bbb,ccc\r\n" + // rule 5: a quoted number
		"2,1,2,3,\"aaa\",\"b\r\nbb\",\"ccc\"\r\n" + // rule 6
		"3,1,2,3,\"aaa\",\"b\"\"bb\",\"ccc\"\r\n" + // rule 7
		"4,1,2,3,zzz,yyy,zzz" // rule 2
	want := []string{"bbb", "bbb", "b\r\nbb", `b"bb`, "yyy"}
	p := writeFile(t, "rfc4180.csv", text)
	for _, chunk := range []int{1, 4, 9, 1 << 20} {
		mem := checked(t)
		s, err := ReadSamples(p, WithColumns("group=b"), withChunkBytes(chunk), WithAllocator(mem))
		if err != nil {
			t.Fatalf("chunk %d: %v", chunk, err)
		}
		if fmt.Sprintf("%q", s.Group) != fmt.Sprintf("%q", want) {
			t.Errorf("chunk %d: b = %q, want %q", chunk, s.Group, want)
		}
		if s.Len() != 5 || s.Bx[1] != 4 || s.Time[4] != 4 || s.Bz[3] != 3 {
			t.Errorf("chunk %d: time %v bx %v bz %v", chunk, s.Time, s.Bx, s.Bz)
		}
	}
}

// TestCSVQuotedHeader: header names may hold line breaks (a spreadsheet's
// wrapped "Bx (uT)" cell); they read as one space, the unit suffix still
// applies, and line numbers count every physical line of the header.
func TestCSVQuotedHeader(t *testing.T) {
	for _, nl := range []string{"\n", "\r\n"} {
		text := "# Kestrel Moor gas spur" + nl +
			"time,\"Bx" + nl + "(uT)\",By_uT,Bz_uT,\"notes," + nl + "free text\"" + nl +
			"0,1.5,-2,0.25,\"first" + nl + "fix\"" + nl +
			"1,1.5,-2,0.25,x" + nl
		for _, chunk := range []int{1, 6, 1 << 20} {
			mem := checked(t)
			s, err := ReadSamples(writeFile(t, "hdr.csv", text), withChunkBytes(chunk), WithAllocator(mem))
			if err != nil {
				t.Fatalf("chunk %d: %v", chunk, err)
			}
			// Unit conversion 1 uT = 1000 nT (SI).
			if s.Len() != 2 || s.Bx[0] != 1500 || s.By[1] != -2000 || s.Bz[1] != 250 {
				t.Errorf("chunk %d: rows %d, bx %v by %v bz %v", chunk, s.Len(), s.Bx, s.By, s.Bz)
			}
			bad := strings.Replace(text, "1,1.5,", "1,1.5x,", 1)
			_, err = ReadSamples(writeFile(t, "hdr.csv", bad), withChunkBytes(chunk), WithAllocator(mem))
			wantErr(t, err, `hdr.csv:7: column Bx (uT): "1.5x" is not a number`)
		}
	}
	// A header error names the line where the header starts.
	_, err := ReadSamples(writeFile(t, "hdr.csv", "# c\n\"time\nstamp\",bx,by\n0,1,2\n"))
	wantErr(t, err, "hdr.csv:2: no column for")
}

// TestCSVQuotedOptions: delimiter sniffing, a given header, and the first
// reading as geodetic origin when the first record spans lines.
func TestCSVQuotedOptions(t *testing.T) {
	t.Run("sniffed semicolon", func(t *testing.T) {
		text := "time;bx;by;bz;\"notes\n(free, text, here)\"\n0;1;2;3;\"a,b,c\nd,e,f,g\"\n1;4;5;6;x\n"
		s, err := ReadSamples(writeFile(t, "semi.csv", text), withChunkBytes(3))
		if err != nil {
			t.Fatal(err)
		}
		if s.Len() != 2 || s.Bx[1] != 4 || s.Bz[0] != 3 {
			t.Errorf("rows %d bx %v bz %v", s.Len(), s.Bx, s.Bz)
		}
	})
	t.Run("given header", func(t *testing.T) {
		text := "0,1,2,3,\"a\nb\"\n1,1,2,3,c\n2,1,2,x3,d\n"
		p := writeFile(t, "nohdr.csv", text)
		_, err := ReadSamples(p, WithHeader("time", "bx", "by", "bz", "notes"), withChunkBytes(2))
		wantErr(t, err, `nohdr.csv:4: column bz: "x3" is not a number`)
		s, err := ReadSamples(writeFile(t, "nohdr.csv", text[:strings.Index(text, "2,1,2,x3")]), WithHeader("time", "bx", "by", "bz", "notes"))
		if err != nil {
			t.Fatal(err)
		}
		if s.Len() != 2 || s.Time[1] != 1 {
			t.Errorf("rows %d time %v", s.Len(), s.Time)
		}
	})
	t.Run("geodetic origin", func(t *testing.T) {
		// DOMAIN.md check point: 0.001 deg north of (40.137 N, -105.236 E,
		// 1682 m) is 111.066633 m north.
		text := "time,lat,lon,height,bx,by,bz,notes\n0,40.137,-105.236,1682,1,2,3,\"first\r\nfix\"\n1,40.138,-105.236,1682,1,2,3,x\n"
		s, err := ReadSamples(writeFile(t, "gps.csv", text))
		if err != nil {
			t.Fatal(err)
		}
		if s.Origin == nil || *s.Origin != (Geodetic{40.137, -105.236, 1682}) || math.Abs(s.Y[1]-111.066633) > 1e-5 {
			t.Errorf("origin %v, y %v", s.Origin, s.Y)
		}
	})
}

func TestCSVQuotedErrors(t *testing.T) {
	cases := []struct {
		name string
		text string
		want string
	}{
		{"unterminated in data", "time,bx,by,bz,notes\n0,1,2,3,\"ok\"\n1,1,2,3,\"never closed\n2,1,2,3,x\n",
			`log.csv:3: column notes: unterminated quote: the quoted field starting "\"never closed\n2,1,2,3,x\n" is not closed before the end of the file`},
		{"unterminated in header", "time,bx,by,\"bz\n0,1,2,3\n",
			`log.csv:1: unterminated quote: the quoted field (field 4) starting "\"bz\n0,1,2,3\n" is not closed before the end of the file`},
		{"unterminated on a later line", "time,notes,bx,by,bz,more\n0,\"a\nb\",1,2,3,\"open\nstill",
			`log.csv:3: column more: unterminated quote`},
		{"unterminated after doubled quotes", "time,bx,by,bz,notes\n0,1,2,3,\"say \"\"hi\"\"\n",
			`log.csv:2: column notes: unterminated quote`},
		{"unterminated in the first row, header given", "0,1,2,3,\"open\n", `log.csv:1: column notes: unterminated quote`},
		{"delimiters inside a quoted text field", "time,note,bx,note2,by,bz\n0,\"a,1,x\",2,3\n", `log.csv:2: short row: 4 fields where the header has 6`},
		{"newline in a quoted number", "time,bx,by,bz\n0,1,\"2\n\",3\n", `log.csv:2: column by: "2\n" is not a number`},
		{"bad value on a later line", "time,notes,bx,by,bz\n0,\"crew\r\nnote\",1,2,1oo\r\n", `log.csv:3: column bz: "1oo" is not a number`},
		{"short row over two lines", "time,bx,by,bz,notes\n0,1,2,\"x\ny\"\n", `log.csv:2: short row: 4 fields where the header has 5: "0,1,2,\"x\ny\""`},
		{"backwards after a long record", "time,bx,by,bz,notes\n1,1,2,3,\"a\nb\nc\"\n0,1,2,3,d\n", `log.csv:5: column time: time goes backwards: 0 after 1`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			for _, chunk := range []int{1, 3, 1 << 20} {
				for _, slow := range []bool{false, true} {
					mem := checked(t)
					opts := []Option{withChunkBytes(chunk), WithAllocator(mem)}
					if slow {
						opts = append(opts, withSlowPathOnly())
					}
					if !strings.HasPrefix(tc.text, "time") {
						opts = append(opts, WithHeader("time", "bx", "by", "bz", "notes"))
					}
					_, err := ReadSamples(writeFile(t, "log.csv", tc.text), opts...)
					wantErr(t, err, tc.want)
				}
			}
		})
	}
}

// endlessQuote is a reader that opens a quoted field and never closes it.
type endlessQuote struct {
	head []byte
	line []byte
	n    int // bytes of line already given out
}

func (e *endlessQuote) Read(p []byte) (int, error) {
	if len(e.head) > 0 {
		k := copy(p, e.head)
		e.head = e.head[k:]
		return k, nil
	}
	k := 0
	for k < len(p) {
		c := copy(p[k:], e.line[e.n%len(e.line):])
		k += c
		e.n += c
	}
	return k, nil
}

// TestCSVQuoteNeverClosed: a quote that never closes in an endless stream
// ends in an error naming its line once the record outgrows the size limit,
// rather than reading forever.
func TestCSVQuoteNeverClosed(t *testing.T) {
	if testing.Short() {
		t.Skip("reads some 32 MiB")
	}
	line := []byte(strings.Repeat("crew note ", 10) + "\n")
	for _, tc := range []struct {
		name, head, want string
	}{
		{"data", "time,bx,by,bz,notes\n0,1,2,3,a\n1,1,2,3,\"", `stream.csv:3: column notes: unterminated quote: the quoted field starting "\"crew note`},
		{"header", "# Kestrel Moor gas spur\ntime,bx,by,bz,\"notes", `stream.csv:2: unterminated quote: the quoted field (field 5)`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			mem := checked(t)
			cfg := newConfig([]Option{WithAllocator(mem)})
			r, err := newCSVReader("stream.csv", &endlessQuote{head: []byte(tc.head), line: line}, cfg)
			if err == nil {
				for r.Next() {
				}
				err = r.Err()
				r.Release()
			}
			wantErr(t, err, tc.want)
			wantErr(t, err, fmt.Sprintf("is not closed within %d bytes", maxLineBytes))
		})
	}
}

// TestRecordEnd checks the record scanner on its own against hand-worked
// RFC 4180 cases.
func TestRecordEnd(t *testing.T) {
	cases := []struct {
		in        string
		end, open int
	}{
		{"a,b\nc", 3, -1},
		{"\"a\nb\",c\nd", 7, -1},
		{"\"a\"\"\nb\"\n", 7, -1},
		{"a\"b,c\nd", 5, -1}, // quote inside an unquoted field
		{"x,\"open\n", -1, 2},
		{"x,\"closed\"", -1, -1},
		{"x,\"closed\"tail\n", 14, -1},
		{"# \"note\nx", 7, -1},
		{" # \"note\nx", 8, -1},
		{"\"\"\"\n\"\"\"\n", 7, -1},
		{"", -1, -1},
	}
	for _, tc := range cases {
		end, open := recordEnd([]byte(tc.in), ',', []byte("#"))
		if end != tc.end || open != tc.open {
			t.Errorf("recordEnd(%q) = %d, %d, want %d, %d", tc.in, end, open, tc.end, tc.open)
		}
	}
}

// BenchmarkReadCSVQuotedNotes reads a log whose every row carries a quoted
// note, one row in four with a line break in it: the cost of the quote
// tracking path, to set beside BenchmarkReadCSV.
func BenchmarkReadCSVQuotedNotes(b *testing.B) {
	const rows = 200_000
	p := filepath.Join(b.TempDir(), "notes.csv")
	var buf bytes.Buffer
	buf.WriteString("time,x,y,z,bx,by,bz,notes\n")
	for i := 0; i < rows; i++ {
		note := `"joint bay, Fenwick Lane"`
		if i%4 == 0 {
			note = "\"crew note,\nsecond line\""
		}
		fmt.Fprintf(&buf, "%.2f,%.4f,12.5,0.3,%.3f,%.3f,%.3f,%s\n", float64(i)*0.01, float64(i%4000)*0.0125, 1234.5+float64(i%977)*0.37, 19876.25-float64(i%613)*0.11, -45210.5+float64(i%331)*0.29, note)
	}
	if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(buf.Len()))
	b.ResetTimer()
	var n int64
	for i := 0; i < b.N; i++ {
		r, err := Open(p)
		if err != nil {
			b.Fatal(err)
		}
		for r.Next() {
			n += r.RecordBatch().NumRows()
		}
		if err := r.Err(); err != nil {
			b.Fatal(err)
		}
		r.Release()
	}
	b.StopTimer()
	if n != int64(rows)*int64(b.N) {
		b.Fatalf("read %d rows, want %d", n, rows*b.N)
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "rows/s")
}

// FuzzCSVChunking reads arbitrary bytes with tiny chunks and with one
// chunk: where the splitter cuts (inside quoted fields or not) must change
// neither the values nor the error.
// Run with: go test -run '^$' -fuzz FuzzCSVChunking -fuzztime 30s ./ingest
func FuzzCSVChunking(f *testing.F) {
	f.Add([]byte("time,bx,by,bz,notes\n0,1,2,3,\"a,\nb\"\n1,1,2,3,\"\"\"\r\n\"\"\"\n"), uint8(1))
	f.Add([]byte("# \"c\ntime;bx;by;bz\n0;1;\"2\";3\n1;1;2;\"3\n"), uint8(2))
	f.Add([]byte("\"time\n\",bx,by,bz\n0,1,2,3\n"), uint8(5))
	f.Fuzz(func(t *testing.T, data []byte, chunk uint8) {
		small, smallErr := readColumns(t, data, withChunkBytes(int(chunk%16)+1), WithWorkers(2))
		big, bigErr := readColumns(t, data, withChunkBytes(1<<20), WithWorkers(1))
		if smallErr != bigErr {
			t.Fatalf("small chunks: error %q, one chunk: error %q", smallErr, bigErr)
		}
		if smallErr != "" {
			// Batches handed out before the error depend on the chunking;
			// they must agree where both have rows.
			for c := 0; c < len(small) && c < len(big); c++ {
				for i := 0; i < len(small[c]) && i < len(big[c]); i++ {
					if math.Float64bits(small[c][i]) != math.Float64bits(big[c][i]) {
						t.Fatalf("column %d row %d: small chunks %v, one chunk %v", c, i, small[c][i], big[c][i])
					}
				}
			}
			return
		}
		if len(small) != len(big) {
			t.Fatalf("small chunks: %d columns, one chunk: %d", len(small), len(big))
		}
		for c := range small {
			if len(small[c]) != len(big[c]) {
				t.Fatalf("column %d: small chunks %d values, one chunk %d", c, len(small[c]), len(big[c]))
			}
			for i := range small[c] {
				if math.Float64bits(small[c][i]) != math.Float64bits(big[c][i]) {
					t.Fatalf("column %d row %d: small chunks %v, one chunk %v", c, i, small[c][i], big[c][i])
				}
			}
		}
	})
}

// readColumns reads data as CSV and returns each float column over all
// batches, and the error text.
func readColumns(t *testing.T, data []byte, opts ...Option) ([][]float64, string) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	r, err := newCSVReader("fuzz.csv", bytes.NewReader(data), newConfig(append(opts, WithAllocator(mem))))
	if err != nil {
		return nil, err.Error()
	}
	defer r.Release()
	var cols [][]float64
	for r.Next() {
		rec := r.RecordBatch()
		if cols == nil {
			cols = make([][]float64, rec.NumCols())
		}
		for i := range cols {
			if a, ok := rec.Column(i).(*array.Float64); ok {
				cols[i] = append(cols[i], a.Float64Values()...)
			}
		}
	}
	if err := r.Err(); err != nil {
		return cols, err.Error()
	}
	return cols, ""
}

// BenchmarkCSVParseChunk times the parse of one 1 MiB chunk of the
// benchmark log on one goroutine: the per-line cost of the general reader
// without the pipeline's scheduling noise.
func BenchmarkCSVParseChunk(b *testing.B) {
	var buf bytes.Buffer
	if err := writeBenchCSV(&buf, 20000); err != nil {
		b.Fatal(err)
	}
	text := buf.Bytes()
	nl := bytes.IndexByte(text, '\n')
	r, err := newCSVReader("bench.csv", bytes.NewReader(text[:nl+1]), newConfig(nil))
	if err != nil {
		b.Fatal(err)
	}
	defer r.Release()
	data := text[nl+1:]
	if len(data) > 1<<20 {
		data = data[:bytes.LastIndexByte(data[:1<<20], '\n')+1]
	}
	rows := bytes.Count(data, []byte{'\n'})
	var rb rawBatch
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		rb.reset(r.pl)
		if err := r.parseChunk(data, 2, &rb, false); err != nil {
			b.Fatal(err)
		}
		if rb.n != rows {
			b.Fatalf("rows = %d, want %d", rb.n, rows)
		}
	}
	b.ReportMetric(float64(rows*b.N)/b.Elapsed().Seconds(), "rows/s")
}

// TestCSVQuotedGroupRoundTrip: a group label holding a line break is
// written back quoted by the CSV writer and reads back the same.
func TestCSVQuotedGroupRoundTrip(t *testing.T) {
	text := "time,bx,by,bz,traverse\n0,1,2,3,\"Fenwick Lane\nnorth verge\"\n1,1,2,3,\"said \"\"B\"\"\r\nagain\"\n2,1,2,3,C\n"
	want := []string{"Fenwick Lane\nnorth verge", "said \"B\"\r\nagain", "C"}
	p := writeFile(t, "groups.csv", text)
	r, err := Open(p, withChunkBytes(7))
	if err != nil {
		t.Fatal(err)
	}
	q := filepath.Join(t.TempDir(), "again.csv")
	err = WriteReader(q, r)
	r.Release()
	if err != nil {
		t.Fatal(err)
	}
	for _, path := range []string{p, q} {
		s, err := ReadSamples(path, withChunkBytes(5))
		if err != nil {
			t.Fatal(err)
		}
		if fmt.Sprintf("%q", s.Group) != fmt.Sprintf("%q", want) || s.Len() != 3 || s.Time[2] != 2 {
			t.Errorf("%s: groups %q, want %q", filepath.Base(path), s.Group, want)
		}
	}
}

// TestCSVFirstErrorInFileOrder: when a log holds a step back in time and,
// later, a bad row, the step back is reported whether or not both fall in
// one chunk (found by FuzzCSVChunking).
func TestCSVFirstErrorInFileOrder(t *testing.T) {
	for _, text := range []string{
		"time,bx,by,bz,notes\n2,0,0,0,\"a\nb\"\n0,0,0,0,c\n0000\n",
		"time,bx,by,bz\n1,0,0,0\n2,0,0,0\n0,0,0,0\n3,0,0,x\n",
	} {
		want := "column time: time goes backwards: 0 after 2"
		p := writeFile(t, "order.csv", text)
		for _, chunk := range []int{1, 9, 1 << 20} {
			mem := checked(t)
			_, err := ReadSamples(p, withChunkBytes(chunk), WithAllocator(mem))
			wantErr(t, err, want)
			if !strings.Contains(err.Error(), "order.csv:4:") {
				t.Errorf("chunk %d: error %q does not name line 4", chunk, err)
			}
		}
	}
}
