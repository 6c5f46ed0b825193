package ingest

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"undercurrent/ingest/ingesttest"
)

// IETF RFC 4180 (section 2, item 3) lets a header line name the fields but
// does not ask for the names to differ, and an Arrow schema or a Parquet
// file may hold two fields of one name: the reader has to decide. A column
// that a mapping would read, with another column of the same name beside
// it, is refused (nothing but the order would choose, and no mapping by
// name can choose the other); same-named columns that are not read are a
// warning.
func TestCSVDuplicateColumns(t *testing.T) {
	cases := []struct {
		name, text string
		opts       []Option
		want       string
	}{
		{"second bx after bz", "time,x,y,z,bx,by,bz,bx\n0,0,0,0.3,100,200,-45000,7\n", nil,
			`log.csv:1: columns 5 and 8 are both named "bx"; bx would be read from column 5 and column 8 ignored`},
		{"second bx instead of bz", "time,x,y,z,bx,by,bx\n0,0,0,0.3,100,200,-45000\n", nil,
			`log.csv:1: columns 5 and 7 are both named "bx"`},
		{"case and blanks", "time,bx,by,bz, BX\n0,1,2,3,4\n", nil,
			`log.csv:1: columns 2 and 5 are both named "bx" and "BX"`},
		{"after comment lines", "# site: Harrow Fen substation\n# undercurrent.frame: enu\ntime;bx;by;bz;time\n0;1;2;3;4\n", nil,
			`log.csv:3: columns 1 and 5 are both named "time"`},
		{"mapped name", "t_s,B1,B2,B3,B1\n0,1,2,3,4\n", []Option{WithColumns("time=t_s,bx=B1,by=B2,bz=B3")},
			`log.csv:1: columns 2 and 5 are both named "B1"; bx would be read from column 2 and column 5 ignored`},
		{"mapped group", "time,bx,by,bz,line,line\n0,1,2,3,a,b\n", []Option{WithColumns("group=line")},
			`log.csv:1: columns 5 and 6 are both named "line"; group would be read`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			mem := checked(t)
			_, err := ReadSamples(writeFile(t, "log.csv", tc.text), append(tc.opts, WithAllocator(mem))...)
			wantErr(t, err, tc.want)
		})
	}

	// An exact mapping picks one of two names that differ only in case:
	// that is a choice, not a duplicate, and is read.
	p := writeFile(t, "log.csv", "time,Bx,bx,by,bz\n0,1,2,3,4\n")
	s, err := ReadSamples(p, WithColumns("bx=bx"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 2 {
		t.Errorf("bx=bx read %v, want the exact match 2", s.Bx[0])
	}

	// Unused duplicates and two names for one column: warnings, in
	// Warnings, Samples.Warnings and Inspect.
	p = writeFile(t, "log.csv", "time,bx,by,bz,note,note,Bx_uT\n0,1,2,3,a,b,9\n")
	s, err = ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 1 {
		t.Errorf("bx = %v, want 1 (the first column that could be bx)", s.Bx[0])
	}
	want := []string{
		`log.csv:1: columns 2 ("bx") and 7 ("Bx_uT") could both be bx; 2 is read (choose with a mapping such as bx=NAME)`,
		`log.csv:1: columns 5 and 6 are both named "note" (neither is read)`,
	}
	if len(s.Warnings) != len(want) {
		t.Fatalf("warnings %q, want %d", s.Warnings, len(want))
	}
	for i, w := range want {
		if !strings.HasSuffix(s.Warnings[i], w) {
			t.Errorf("warning %q, want it to end %q", s.Warnings[i], w)
		}
	}
	in, err := Inspect(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Warnings) < 2 || in.Warnings[0] != s.Warnings[0] || in.Warnings[1] != s.Warnings[1] {
		t.Errorf("inspect warnings %q, want %q first", in.Warnings, s.Warnings)
	}
	// A clean file has none.
	s, err = ReadSamples(writeFile(t, "log.csv", "time,bx,by,bz\n0,1,2,3\n"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Warnings != nil {
		t.Errorf("clean file: warnings %q", s.Warnings)
	}
}

// Arrow IPC and Parquet schemas may repeat a field name (the Arrow columnar
// format and the Parquet format put no uniqueness rule on names); the rule
// is the CSV one.
func TestArrowDuplicateFields(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		for i := 0; i < 5; i++ {
			b.Field(i).(*array.Float64Builder).AppendValues([]float64{float64(i), float64(i) + 0.5}, nil)
		}
	}
	for _, name := range []string{"dup.arrow", "dup.arrows", "dup.parquet"} {
		t.Run(name, func(t *testing.T) {
			p := writeArrowBatches(t, name, sc, fill)
			mem := checked(t)
			_, err := ReadSamples(p, WithAllocator(mem))
			wantErr(t, err, name+`: schema fields 2 and 5 are both named "bx"; bx would be read from field 2 and field 5 ignored`)
		})
	}
}

// ipcEOS is the end-of-stream marker of the Arrow IPC streaming format
// (Arrow columnar format specification, "IPC Streaming Format": a
// continuation indicator 0xFFFFFFFF followed by a zero metadata length).
var ipcEOS = []byte{0xff, 0xff, 0xff, 0xff, 0, 0, 0, 0}

// threeBatchStream writes an Arrow IPC stream of three record batches of
// 1000 rows and returns it with the byte offsets just after each batch.
func threeBatchStream(t *testing.T) ([]byte, []int) {
	t.Helper()
	s := &Samples{}
	for i := 0; i < 3000; i++ {
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, 1)
		s.By = append(s.By, 2)
		s.Bz = append(s.Bz, 3)
	}
	r, err := NewSamplesReader(s, 1000, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(r.Schema()))
	var ends []int
	for r.Next() {
		if err := w.Write(r.RecordBatch()); err != nil {
			t.Fatal(err)
		}
		ends = append(ends, buf.Len())
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes(), ends
}

func TestArrowStreamEndOfStream(t *testing.T) {
	dir := t.TempDir()
	// The package's own writer ends its streams with the marker.
	s := testSamples()
	own := filepath.Join(dir, "own.arrows")
	if err := WriteSamples(own, s); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(own)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.HasSuffix(data, ipcEOS) {
		t.Fatalf("WriteSamples stream ends % x, want the end-of-stream marker % x", data[len(data)-8:], ipcEOS)
	}
	if _, err := ReadSamples(own); err != nil {
		t.Fatalf("own stream: %v", err)
	}

	data, ends := threeBatchStream(t)
	if len(ends) != 3 || !bytes.HasSuffix(data, ipcEOS) || len(data) != ends[2]+len(ipcEOS) {
		t.Fatalf("stream of %d bytes, batch ends %v: want three batches then the marker", len(data), ends)
	}
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		name string
		data []byte
		rows int
	}{
		{"marker cut off", data[:ends[2]], 3000},
		{"cut after batch 2", data[:ends[1]], 2000},
		{"cut after batch 1", data[:ends[0]], 1000},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			p := write("cut.arrows", tc.data)
			mem := checked(t)
			_, err := ReadSamples(p, WithAllocator(mem))
			wantErr(t, err, fmt.Sprintf("cut.arrows: Arrow IPC stream stops at byte %d, after %s, without its end-of-stream marker", len(tc.data), rowsIn(int64(tc.rows), tc.rows/1000)))
			wantErr(t, err, "on the command line --allow-unterminated")
			if strings.Contains(err.Error(), "WithAllowUnterminatedStream") {
				t.Errorf("error names the Go option: %v", err)
			}
			s, err := ReadSamples(p, WithAllocator(mem), WithAllowUnterminatedStream(true))
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != tc.rows {
				t.Errorf("allowed: %d rows, want %d", s.Len(), tc.rows)
			}
			if len(s.Warnings) != 1 || !strings.Contains(s.Warnings[0], fmt.Sprintf("stops at byte %d", len(tc.data))) {
				t.Errorf("allowed: warnings %q", s.Warnings)
			}
			// Inspect reads it and warns.
			in, err := Inspect(p)
			if err != nil {
				t.Fatal(err)
			}
			// (The fixture's field of a few nT also draws inspect's
			// warning about the Earth's field band.)
			if in.Rows != tc.rows || len(in.Warnings) != 2 || in.Warnings[0] != s.Warnings[0] || !strings.HasPrefix(in.Warnings[1], "field: median |B|") {
				t.Errorf("inspect: %d rows, warnings %q", in.Rows, in.Warnings)
			}
		})
	}
	// A stream cut inside a message (its 8-byte prefix of continuation
	// indicator and metadata length, its flatbuffer metadata, or its body;
	// Arrow columnar format, "Encapsulated message format") is refused by
	// default, naming the byte offset where the last whole batch ends, and
	// read up to that batch with the option.
	inside := []struct {
		name string
		cut  int
	}{
		{"in the length prefix", ends[1] + 5},
		{"in the metadata", ends[1] + 8 + 20},
		{"in the body", ends[1] + (ends[1]-ends[0])/2},
		{"one byte short", ends[2] - 1},
	}
	for _, tc := range inside {
		t.Run("cut "+tc.name, func(t *testing.T) {
			const rows = 2000
			p := write("cut.arrows", data[:tc.cut])
			mem := checked(t)
			_, err := ReadSamples(p, WithAllocator(mem))
			wantErr(t, err, fmt.Sprintf("cut.arrows: Arrow IPC stream is cut short: the file stops at byte %d, inside a message; the last whole record batch ends at byte %d, after 2000 rows in 2 record batches", tc.cut, ends[1]))
			wantErr(t, err, "to read the rows before the cut, allow an unterminated stream (on the command line --allow-unterminated)")
			for _, bad := range []string{"arrow/ipc", "WithAllowUnterminatedStream", "batch 2 row 0"} {
				if strings.Contains(err.Error(), bad) {
					t.Errorf("error shows %q: %v", bad, err)
				}
			}
			s, err := ReadSamples(p, WithAllocator(mem), WithAllowUnterminatedStream(true))
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != rows || s.Time[rows-1] != float64(rows-1) {
				t.Errorf("allowed: %d rows, want %d", s.Len(), rows)
			}
			want := fmt.Sprintf("cut.arrows: Arrow IPC stream is cut short: the file stops at byte %d, inside a message; kept 2000 rows in 2 record batches, up to byte %d", tc.cut, ends[1])
			if len(s.Warnings) != 1 || !strings.Contains(s.Warnings[0], want) {
				t.Errorf("allowed: warnings %q, want one containing %q", s.Warnings, want)
			}
		})
	}
	// A stream cut inside its schema message holds no rows: an error
	// either way, naming where it stops.
	for _, allow := range []bool{false, true} {
		_, err := ReadSamples(write("head.arrows", data[:30]), WithAllowUnterminatedStream(allow))
		wantErr(t, err, "head.arrows: not a complete Arrow IPC stream: the file stops at byte 30, before its schema message ends")
	}
	// Cut inside the first record batch: no whole rows, an error either way.
	for _, allow := range []bool{false, true} {
		_, err := ReadSamples(write("first.arrows", data[:ends[0]-10]), WithAllowUnterminatedStream(allow))
		wantErr(t, err, fmt.Sprintf("first.arrows: Arrow IPC stream is cut short: the file stops at byte %d, inside its first record batch", ends[0]-10))
	}
	// A corrupt metadata length (2, below the 4 bytes any flatbuffer
	// needs) is not mistaken for a cut, and the library's package prefix
	// is not shown.
	bad := append([]byte(nil), data...)
	binary.LittleEndian.PutUint32(bad[ends[0]+4:], 2)
	_, err = ReadSamples(write("bad.arrows", bad), WithAllowUnterminatedStream(true))
	wantErr(t, err, fmt.Sprintf("bad.arrows: Arrow IPC stream: the message after byte %d (after 1000 rows in 1 record batch) cannot be read (corrupt file?): invalid message metadata length 2", ends[0]))
	if strings.Contains(err.Error(), "arrow/ipc") {
		t.Errorf("corrupt message: %v", err)
	}
	// The 4-byte marker of streams written before format version 0.15
	// (same specification, "Legacy" end of stream: 0x00000000) ends a
	// stream too.
	legacy := append(append([]byte(nil), data[:ends[2]]...), 0, 0, 0, 0)
	s2, err := ReadSamples(write("legacy.arrows", legacy))
	if err != nil || s2.Len() != 3000 || s2.Warnings != nil {
		t.Errorf("legacy marker: err %v, warnings %q", err, s2.Warnings)
	}
	// The marker is eight bytes: zero length after the continuation
	// indicator, read little-endian.
	if binary.LittleEndian.Uint32(ipcEOS[:4]) != 0xFFFFFFFF || binary.LittleEndian.Uint32(ipcEOS[4:]) != 0 {
		t.Fatal("marker constant")
	}
}

// realIAGA returns a real IAGA-2002 file with its line n (1-based) passed
// through edit.
func realIAGA(t *testing.T, file string, n int, edit func(string) string) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(ingesttest.IAGADir(t), file))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(data), "\n")
	old := lines[n-1]
	lines[n-1] = edit(old)
	if lines[n-1] == old {
		t.Fatalf("%s line %d unchanged: %q", file, n, old)
	}
	return writeFile(t, file, strings.Join(lines, ""))
}

// The IAGA-2002 format (INTERMAGNET technical manual) gives each data line
// the date, the time, the day of year of that date and four element values.
// Checked on a real Boulder file (USGS, public domain): its line 100 is
// 2014-11-01 01:14, day 305.
func TestIAGADayOfYearAndExtraValue(t *testing.T) {
	const file = "bou20141101vmin.min"
	p := realIAGA(t, file, 100, func(s string) string { return strings.Replace(s, " 305 ", " 306 ", 1) })
	_, err := ReadSamples(p)
	wantErr(t, err, file+`:100: column DOY: day of year "306" does not match the date 2014-11-01 (day 305)`)
	p = realIAGA(t, file, 100, func(s string) string { return strings.Replace(s, " 305 ", " 30  ", 1) })
	_, err = ReadSamples(p)
	wantErr(t, err, file+`:100: column DOY: day of year "30" does not match`)
	p = realIAGA(t, file, 130, func(s string) string { return strings.TrimRight(s, "\r\n") + "  12.5\r\n" })
	_, err = ReadSamples(p)
	wantErr(t, err, file+`:130: IAGA-2002 data line has a value after the four elements: "12.5" at character 73`)
	// 2024 is a leap year (Gregorian calendar): 29 February is day 060 and
	// 1 March day 061.
	head := " Format                 IAGA-2002                                    |\n IAGA CODE              HFN                                          |\n"
	cols := "DATE       TIME         DOY     HFNX      HFNY      HFNZ      HFNF   |\n"
	ok := head + cols + "2024-02-29 23:59:00.000 060     17500.00   -450.00  46000.00  49200.00\n" +
		"2024-03-01 00:00:00.000 061     17500.00   -450.00  46000.00  49200.00\n"
	if _, err := ReadSamples(writeFile(t, "hfn.min", ok)); err != nil {
		t.Errorf("leap day: %v", err)
	}
}

// A NUL element (INTERMAGNET technical manual: an element not reported)
// reads as missing and is shown as not reported, not as a component. The
// real adjusted Boulder file reports H E NUL NUL.
func TestIAGANulElementShown(t *testing.T) {
	in, err := Inspect(filepath.Join(ingesttest.IAGADir(t), "BOU202005adj.min"))
	if err != nil {
		t.Fatal(err)
	}
	bz := colStats(in, ColBz)
	if bz == nil || bz.Source != "BOUNUL: not reported" || bz.Min != nil || bz.Missing != in.Rows {
		t.Errorf("bz column %+v, want source %q and every value missing", bz, "BOUNUL: not reported")
	}
	if bx := colStats(in, ColBx); bx == nil || bx.Source != "BOUE (E)" {
		t.Errorf("bx column %+v", bx)
	}
	// A NUL element holding numbers rather than 99999.00 is still not read.
	head := " Format                 IAGA-2002                                    |\n IAGA CODE              HFN                                          |\n"
	cols := "DATE       TIME         DOY     HFNX      HFNY      HFNNUL    HFNF   |\n"
	row := "2024-03-01 00:00:00.000 061     17500.00   -450.00  46000.00  49200.00\n"
	s, err := ReadSamples(writeFile(t, "hfn.min", head+cols+row))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bz[0] == s.Bz[0] || s.Bx[0] != -450 || s.By[0] != 17500 {
		t.Errorf("X Y NUL: bx %v by %v bz %v, want -450 17500 NaN", s.Bx[0], s.By[0], s.Bz[0])
	}
}

// Variation data in H E Z (or H D Z) without a DECBAS stay in the
// observatory's baseline frame; the reader warns, since frame enu then
// means that frame's axes. The real Boulder 1-second file with its DECBAS
// line removed shows it.
func TestIAGANoDECBASWarns(t *testing.T) {
	const file = "BOU20200101vsec.sec"
	dir := ingesttest.IAGADir(t)
	data, err := os.ReadFile(filepath.Join(dir, file))
	if err != nil {
		t.Fatal(err)
	}
	s, err := ReadSamples(filepath.Join(dir, file))
	if err != nil {
		t.Fatal(err)
	}
	if s.Warnings != nil {
		t.Errorf("with DECBAS: warnings %q", s.Warnings)
	}
	var kept []string
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		if !strings.Contains(ln, "DECBAS") {
			kept = append(kept, ln)
		}
	}
	if len(kept) == len(strings.SplitAfter(string(data), "\n")) {
		t.Fatal("no DECBAS line in the real file")
	}
	p := writeFile(t, "hez.sec", strings.Join(kept, ""))
	s, err = ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Warnings) != 1 || !strings.Contains(s.Warnings[0], "hez.sec: IAGA-2002 variation data in H E Z without a DECBAS comment") {
		t.Errorf("without DECBAS: warnings %q", s.Warnings)
	}
	in, err := Inspect(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Warnings) == 0 || in.Warnings[0] != s.Warnings[0] {
		t.Errorf("inspect warnings %q", in.Warnings)
	}
	// Asking for the baseline frame is a choice: no warning.
	s, err = ReadSamples(p, WithIAGABaselineFrame(true))
	if err != nil || s.Warnings != nil {
		t.Errorf("baseline frame asked for: err %v, warnings %q", err, s.Warnings)
	}
}

// A log sorted by sensor, or traverses logged out of order: time goes back
// between groups but not within one.
func TestTimeOrderPerGroup(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,bx,by,bz,sensor\n")
	for _, g := range []string{"km-a", "km-b", "km-c"} {
		for i := 0; i < 40; i++ {
			fmt.Fprintf(&b, "%d,1,2,3,%s\n", i, g)
		}
	}
	sorted := b.String()
	// Line 2 + 40 = 42 is km-b's first row, time 0 after km-a's 39.
	bad := strings.Replace(sorted, "\n20,1,2,3,km-c\n", "\n2,1,2,3,km-c\n", 1) // km-c's row 20 (line 102) before its 19
	chunks := []Option{withChunkBytes(64), WithWorkers(3)}
	for _, extra := range [][]Option{nil, chunks} {
		p := writeFile(t, "sorted.csv", sorted)
		_, err := ReadSamples(p, extra...)
		wantErr(t, err, "sorted.csv:42: column time: time goes backwards: 0 after 39")
		s, err := ReadSamples(p, append(extra, WithTimeOrder(TimeOrderedPerGroup))...)
		if err != nil {
			t.Fatal(err)
		}
		if s.Len() != 120 || s.Group[119] != "km-c" {
			t.Errorf("per group: %d rows", s.Len())
		}
		q := writeFile(t, "bad.csv", bad)
		_, err = ReadSamples(q, append(extra, WithTimeOrder(TimeOrderedPerGroup))...)
		wantErr(t, err, `bad.csv:102: column time: time goes backwards within group "km-c": 2 after 19`)
		if _, err := ReadSamples(q, append(extra, WithTimeOrder(TimeAnyOrder))...); err != nil {
			t.Errorf("any order: %v", err)
		}
		// WithAllowBackwards(true) after a per-group order wins (Inspect
		// appends it).
		if _, err := ReadSamples(q, append(extra, WithTimeOrder(TimeOrderedPerGroup), WithAllowBackwards(true))...); err != nil {
			t.Errorf("allow backwards after per group: %v", err)
		}
	}
	// Interleaved sensors across many small batches: each group keeps its
	// own last time. Line 2k+2 is row k of km-a, line 2k+3 of km-b; km-b
	// steps back at its row 30 (line 63).
	var il strings.Builder
	il.WriteString("time,bx,by,bz,sensor\n")
	for i := 0; i < 40; i++ {
		tb := 100 + i
		if i == 30 {
			tb = 120
		}
		fmt.Fprintf(&il, "%d,1,2,3,km-a\n%d,1,2,3,km-b\n", i, tb)
	}
	q := writeFile(t, "il.csv", il.String())
	_, err := ReadSamples(q, withChunkBytes(64), WithTimeOrder(TimeOrderedPerGroup))
	wantErr(t, err, `il.csv:63: column time: time goes backwards within group "km-b": 120 after 129`)

	// Arrow and Parquet: batch and row.
	s, err := ReadSamples(writeFile(t, "bad.csv", bad), WithTimeOrder(TimeAnyOrder))
	if err != nil {
		t.Fatal(err)
	}
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		p := filepath.Join(t.TempDir(), "bad"+ext)
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		mem := checked(t)
		_, err := ReadSamples(p, WithAllocator(mem), WithTimeOrder(TimeOrderedPerGroup))
		wantErr(t, err, "bad"+ext+`: batch 0 row 100: column time: time goes backwards within group "km-c": 2 after 19`)
	}
	// Without a group column the per-group order is the whole log's.
	p := writeFile(t, "one.csv", "time,bx,by,bz\n1,1,2,3\n0,1,2,3\n")
	_, err = ReadSamples(p, WithTimeOrder(TimeOrderedPerGroup))
	wantErr(t, err, "one.csv:3: column time: time goes backwards: 0 after 1")
	if _, err := ParseTimeOrder("sideways"); err == nil {
		t.Error("ParseTimeOrder accepted sideways")
	}
	for s, want := range map[string]TimeOrder{"ordered": TimeOrdered, "per-group": TimeOrderedPerGroup, "any": TimeAnyOrder} {
		if got, err := ParseTimeOrder(s); err != nil || got != want {
			t.Errorf("ParseTimeOrder(%q) = %v, %v", s, got, err)
		}
	}
}

// TestCutFileFooters: an Arrow IPC file ends with the magic bytes "ARROW1"
// after its footer (Arrow columnar format, "IPC File Format") and a
// Parquet file with "PAR1" after its footer (Apache Parquet format
// specification, "File Format"); a file cut short has lost them, and the
// error says so in plain words, without the libraries' package prefixes.
func TestCutFileFooters(t *testing.T) {
	dir := t.TempDir()
	s := testSamples()
	for _, tc := range []struct{ name, magic, want string }{
		{"log.arrow", "ARROW1", "cut.log.arrow: not a complete Arrow IPC file: its footer is missing or cut short"},
		{"log.parquet", "PAR1", "cut.log.parquet: not a complete Parquet file: its footer is missing or cut short"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			full := filepath.Join(dir, tc.name)
			if err := WriteSamples(full, s); err != nil {
				t.Fatal(err)
			}
			b, err := os.ReadFile(full)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.HasSuffix(b, []byte(tc.magic)) {
				t.Fatalf("%s does not end with %q", tc.name, tc.magic)
			}
			cut := filepath.Join(dir, "cut."+tc.name)
			if err := os.WriteFile(cut, b[:len(b)*2/3], 0o644); err != nil {
				t.Fatal(err)
			}
			_, err = ReadSamples(cut)
			wantErr(t, err, tc.want)
			for _, bad := range []string{"arrow/ipc", ": parquet:", "smaller than indicated"} {
				if strings.Contains(err.Error(), bad) {
					t.Errorf("error shows %q: %v", bad, err)
				}
			}
		})
	}
}

func TestPlainText(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"arrow/ipc: could not read message body: unexpected EOF", "could not read message body: unexpected EOF"},
		{"parquet: could not read footer: parquet: bad thing", "could not read footer: bad thing"},
		// A file name ending in a format name is not a prefix.
		{"x.parquet: bad", "x.parquet: bad"},
	} {
		if got := plainText(tc.in); got != tc.want {
			t.Errorf("plainText(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
