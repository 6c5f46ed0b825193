package ingest

import (
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/decimal128"
	"github.com/apache/arrow-go/v18/arrow/decimal256"
	"github.com/apache/arrow-go/v18/arrow/float16"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Input files as other tools and field loggers write them: timestamps with
// and without zones, Arrow types chosen by other writers, spreadsheet
// exports.

// Unix times of the instants used below, from the POSIX definition of
// seconds since the Epoch (IEEE Std 1003.1, Base Definitions 4.16:
// tm_sec + tm_min*60 + tm_hour*3600 + tm_yday*86400 + (tm_year-70)*31536000
// + ((tm_year-69)/4)*86400 - ...): 2026-04-21T08:40:00Z is 1776760800 and
// 2026-03-01T10:00:00Z is 1772359200.
const (
	unix20260421T0840Z = 1776760800
	unix20260301T1000Z = 1772359200
)

// warningsWith returns the warnings that contain sub.
func warningsWith(ws []string, sub string) []string {
	var out []string
	for _, w := range ws {
		if strings.Contains(w, sub) {
			out = append(out, w)
		}
	}
	return out
}

// TestZonelessTimesWarned: an RFC 3339 time must carry its offset ("Z" or
// +hh:mm, RFC 3339 section 5.6); ISO 8601 calls a time without one local
// time, of a zone it does not state. A logger or spreadsheet that writes
// local wall-clock times without an offset would have them read as UTC,
// off by the zone's offset, and a base-station correction would pair each
// reading with the wrong base value, with no word. Such times are read as
// UTC, as before, with one warning per file naming the line and the text;
// times with an offset, a column labelled UTC ("Time (UTC)", the unit UTC)
// or a column named "utc" get none.
func TestZonelessTimesWarned(t *testing.T) {
	rows := func(times ...string) string {
		var b strings.Builder
		for i, tm := range times {
			b.WriteString(tm + "," + strconv.Itoa(i) + ",17600,-46900\n")
		}
		return b.String()
	}
	// The same two instants, 08:40:00.5Z and 08:40:01Z, written four ways.
	local := rows("2026-04-21T08:40:00.5", "2026-04-21 08:40:01")
	zulu := rows("2026-04-21T08:40:00.5Z", "2026-04-21T08:40:01Z")
	offset := rows("2026-04-21T09:40:00.5+01:00", "2026-04-21 09:40:01+01:00")
	utcWord := rows("2026-04-21 08:40:00.5 UTC", "2026-04-21 08:40:01 UTC")
	want := []float64{unix20260421T0840Z + 0.5, unix20260421T0840Z + 1}
	const naive = "give no UTC offset and are read as UTC"
	cases := []struct {
		name, text string
		opts       []Option
		warn       string // "" for none
	}{
		{"no offset", "# Harrow Fen substation, logger clock\ntime,bx,by,bz\n" + local, nil,
			`log.csv:3: column time: times such as "2026-04-21T08:40:00.5" ` + naive},
		{"Z", "time,bx,by,bz\n" + zulu, nil, ""},
		{"+01:00", "time,bx,by,bz\n" + offset, nil, ""},
		{"UTC suffix", "time,bx,by,bz\n" + utcWord, nil, ""},
		{"header says UTC", "Time (UTC),bx,by,bz\n" + local, nil, ""},
		{"header time_utc", "time_utc,bx,by,bz\n" + local, nil, ""},
		{"column named utc", "UTC,bx,by,bz\n" + local, nil, ""},
		{"unit UTC given", "time,bx,by,bz\n" + local, []Option{WithUnits("time=UTC")}, ""},
		{"mapped column", "stamp,bx,by,bz\n" + local, []Option{WithColumns("time=stamp")},
			`log.csv:2: column stamp: times such as "2026-04-21T08:40:00.5" ` + naive},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s, err := ReadSamples(writeFile(t, "log.csv", tc.text), append(tc.opts, WithAllocator(checked(t)))...)
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(s.Time, want) {
				t.Errorf("times %v, want %v", s.Time, want)
			}
			got := warningsWith(s.Warnings, naive)
			switch {
			case tc.warn == "" && len(got) > 0:
				t.Errorf("warnings %q, want none about the zone", got)
			case tc.warn != "" && (len(got) != 1 || !strings.Contains(got[0], tc.warn) || !strings.Contains(got[0], "--unit time=UTC")):
				t.Errorf("warnings %q, want one containing %q and the way to say UTC", s.Warnings, tc.warn)
			}
		})
	}

	// One warning for a long file parsed in many chunks by several
	// workers, naming the first such time.
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i := 0; i < 5000; i++ {
		b.WriteString("2026-04-21T08:" + strconv.Itoa(40+i/3000) + ":" + strconv.Itoa(i%3000/100+10) + "." + strconv.Itoa(i%100/10) + ",1,2,3\n")
	}
	s, err := ReadSamples(writeFile(t, "long.csv", b.String()), withChunkBytes(4096), WithWorkers(4), WithTimeOrder(TimeAnyOrder))
	if err != nil {
		t.Fatal(err)
	}
	if got := warningsWith(s.Warnings, naive); len(got) != 1 || !strings.Contains(got[0], `long.csv:2: column time: times such as "2026-04-21T08:40:10.0"`) {
		t.Errorf("warnings %q, want one naming line 2", s.Warnings)
	}

	// Arrow: a timestamp type without a time zone is wall-clock time in an
	// unstated zone (Arrow columnar format, Schema.fbs, Timestamp); with a
	// zone its values count from the Unix epoch in UTC whatever the zone,
	// which only says how to show them.
	for _, tc := range []struct {
		tz   string
		warn bool
	}{{"", true}, {"UTC", false}, {"Europe/London", false}, {"+01:00", false}} {
		for _, ext := range []string{".arrows", ".parquet"} {
			sc := arrow.NewSchema([]arrow.Field{
				{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: tc.tz}},
				{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
				{Name: "by", Type: arrow.PrimitiveTypes.Float64},
				{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
			}, nil)
			p := writeArrowBatches(t, "ts"+ext, sc, func(b *array.RecordBuilder) {
				b.Field(0).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{unix20260421T0840Z*1000 + 500, unix20260421T0840Z*1000 + 1000}, nil)
				for k := 1; k < 4; k++ {
					b.Field(k).(*array.Float64Builder).AppendValues([]float64{1, 2}, nil)
				}
			})
			s, err := ReadSamples(p, WithAllocator(checked(t)))
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(s.Time, want) {
				t.Errorf("zone %q %s: times %v, want %v", tc.tz, ext, s.Time, want)
			}
			got := warningsWith(s.Warnings, naive)
			if tc.warn != (len(got) == 1) || len(got) > 1 {
				t.Errorf("zone %q %s: warnings %q, want a zone warning: %v", tc.tz, ext, s.Warnings, tc.warn)
			}
			if tc.warn && len(got) == 1 && !strings.Contains(got[0], "ts"+ext+": column time: timestamps of type timestamp[ms] without a time zone "+naive) {
				t.Errorf("zone %q %s: warning %q", tc.tz, ext, got[0])
			}
		}
	}

	// Arrow text times: the batch and row of the first one without an
	// offset.
	p := writeTextTimeArrow(t, "text.arrows", []string{"2026-04-21T08:40:00.5Z", "2026-04-21T08:40:01"})
	s, err = ReadSamples(p, WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if got := warningsWith(s.Warnings, naive); len(got) != 1 || !strings.Contains(got[0], `text.arrows: batch 0 row 1: column time: times such as "2026-04-21T08:40:01" `) {
		t.Errorf("warnings %q, want one naming batch 0 row 1", s.Warnings)
	}
	if !sameFloats(s.Time, want) {
		t.Errorf("times %v, want %v", s.Time, want)
	}
}

// writeArrowBatches writes one record batch, filled by fill, to name in a
// fresh directory: an Arrow IPC stream (.arrows), file (.arrow) or a
// Parquet file (.parquet).
func writeArrowBatches(t *testing.T, name string, sc *arrow.Schema, fill ...func(*array.RecordBuilder)) string {
	t.Helper()
	var recs []arrow.RecordBatch
	for _, f := range fill {
		b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
		f(b)
		recs = append(recs, b.NewRecordBatch())
		b.Release()
	}
	defer func() {
		for _, r := range recs {
			r.Release()
		}
	}()
	p := filepath.Join(t.TempDir(), name)
	err := WriteFileAtomic(p, func(w io.Writer) error {
		var bw interface {
			Write(arrow.RecordBatch) error
			Close() error
		}
		var err error
		switch filepath.Ext(name) {
		case ".parquet":
			bw, err = pqarrow.NewFileWriter(sc, w, nil, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema()))
		case ".arrow":
			bw, err = ipc.NewFileWriter(w, ipc.WithSchema(sc))
		default:
			bw = ipc.NewWriter(w, ipc.WithSchema(sc))
		}
		if err != nil {
			return err
		}
		for _, r := range recs {
			if err := bw.Write(r); err != nil {
				return err
			}
		}
		return bw.Close()
	})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestArrowTimestampUnitsExact: one instant, 2026-03-01T10:00:00.4Z, as an
// Arrow timestamp in seconds (10:00:00), milliseconds, microseconds and
// nanoseconds reads as the float64 nearest to 1772359200.4 (IEEE 754
// round to nearest, as strconv.ParseFloat gives it), the value the same
// time written as RFC 3339 text reads as, so one log converted between
// formats keeps its times. Scaling the integer by an inexact 1e-6 gave
// 1772359200.3999999 for microseconds.
func TestArrowTimestampUnitsExact(t *testing.T) {
	want, err := strconv.ParseFloat(strconv.Itoa(unix20260301T1000Z)+".4", 64)
	if err != nil {
		t.Fatal(err)
	}
	text, ok := parseTimestamp([]byte("2026-03-01T10:00:00.4Z"))
	if !ok || text != want {
		t.Fatalf("RFC 3339 text reads %v, want %v", text, want)
	}
	for _, c := range []struct {
		unit arrow.TimeUnit
		v    int64
		want float64
	}{
		{arrow.Second, unix20260301T1000Z, unix20260301T1000Z},
		{arrow.Millisecond, unix20260301T1000Z*1e3 + 400, want},
		{arrow.Microsecond, unix20260301T1000Z*1e6 + 400_000, want},
		{arrow.Nanosecond, unix20260301T1000Z*1e9 + 400_000_000, want},
		{arrow.Microsecond, -1_500_000, -1.5}, // before the epoch: 1969-12-31T23:59:58.5Z
	} {
		sc := arrow.NewSchema([]arrow.Field{
			{Name: "time", Type: &arrow.TimestampType{Unit: c.unit, TimeZone: "UTC"}},
			{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
			{Name: "by", Type: arrow.PrimitiveTypes.Float64},
			{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		p := writeArrowBatches(t, "ts.arrow", sc, func(b *array.RecordBuilder) {
			b.Field(0).(*array.TimestampBuilder).Append(arrow.Timestamp(c.v))
			for k := 1; k < 4; k++ {
				b.Field(k).(*array.Float64Builder).Append(1)
			}
		})
		s, err := ReadSamples(p, WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if s.Time[0] != c.want {
			t.Errorf("%s %d: time %.17g, want %.17g", c.unit, c.v, s.Time[0], c.want)
		}
	}
}

// TestArrowTypesOfOtherWriters: types other writers choose, as the Arrow
// columnar format defines them: text in the view layout (Utf8View, which
// DataFrame libraries write by default), dictionary-encoded numbers,
// decimals (databases and Parquet's DECIMAL logical type) and half floats
// (IEEE 754 binary16, where 100.5 is exact: 1.5703125 x 2^6). Each reads as
// the value it holds; a decimal is read from its decimal digits, so
// correctly rounded.
func TestArrowTypesOfOtherWriters(t *testing.T) {
	dictF := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int8, ValueType: arrow.PrimitiveTypes.Float64}
	dictS := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}
	tm, _ := strconv.ParseFloat(strconv.Itoa(unix20260301T1000Z)+".4", 64)
	appendDec128 := func(b array.Builder, s string) {
		v, err := decimal128.FromString(s, 12, 3)
		if err != nil {
			t.Fatal(err)
		}
		b.(*array.Decimal128Builder).Append(v)
	}
	appendDec256 := func(b array.Builder, s string) {
		v, err := decimal256.FromString(s, 40, 2)
		if err != nil {
			t.Fatal(err)
		}
		b.(*array.Decimal256Builder).Append(v)
	}
	cases := []struct {
		name  string
		col   string // the canonical column under test
		typ   arrow.DataType
		fill  func(b array.Builder)
		want  []float64 // read from col
		group string    // the group column, joined by "|", when col is group
	}{
		{"Utf8View time", "time", arrow.BinaryTypes.StringView, func(b array.Builder) {
			b.(*array.StringViewBuilder).AppendValues([]string{"0.5", "2026-03-01T10:00:00.4Z"}, nil)
		}, []float64{0.5, tm}, ""},
		{"Utf8View numbers", "bx", arrow.BinaryTypes.StringView, func(b array.Builder) {
			b.(*array.StringViewBuilder).AppendValues([]string{"-420.125", " 17600.5 "}, nil)
		}, []float64{-420.125, 17600.5}, ""},
		{"decimal128", "bx", &arrow.Decimal128Type{Precision: 12, Scale: 3}, func(b array.Builder) {
			appendDec128(b, "-420.125")
			appendDec128(b, "17600.001")
		}, []float64{-420.125, 17600.001}, ""},
		{"decimal256", "bx", &arrow.Decimal256Type{Precision: 40, Scale: 2}, func(b array.Builder) {
			appendDec256(b, "17600.25")
			appendDec256(b, "-46900.75")
		}, []float64{17600.25, -46900.75}, ""},
		{"dictionary of float64", "bx", dictF, func(b array.Builder) {
			for _, v := range []float64{-46900.5, -46900.5} {
				if err := b.(*array.Float64DictionaryBuilder).Append(v); err != nil {
					t.Fatal(err)
				}
			}
		}, []float64{-46900.5, -46900.5}, ""},
		{"dictionary of text", "bx", dictS, func(b array.Builder) {
			for _, s := range []string{"1.25", "-3"} {
				if err := b.(*array.BinaryDictionaryBuilder).AppendString(s); err != nil {
					t.Fatal(err)
				}
			}
		}, []float64{1.25, -3}, ""},
		// A 16-bit float field is refused (field_storage_step_test.go); a
		// 16-bit float time is read.
		{"float16", "time", arrow.FixedWidthTypes.Float16, func(b array.Builder) {
			b.(*array.Float16Builder).AppendValues([]float16.Num{float16.New(100.5), float16.New(102)}, nil)
		}, []float64{100.5, 102}, ""},
		{"Utf8View group", "group", arrow.BinaryTypes.StringView, func(b array.Builder) {
			b.(*array.StringViewBuilder).AppendValues([]string{"Kestrel Moor traverse T01", "T02"}, nil)
		}, nil, "Kestrel Moor traverse T01|T02"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var fields []arrow.Field
			for _, n := range []string{"time", "bx", "by", "bz", "group"} {
				switch {
				case n == c.col:
					fields = append(fields, arrow.Field{Name: n, Type: c.typ})
				case n != "group":
					fields = append(fields, arrow.Field{Name: n, Type: arrow.PrimitiveTypes.Float64})
				}
			}
			sc := arrow.NewSchema(fields, nil)
			fill := func(b *array.RecordBuilder) {
				for i, f := range sc.Fields() {
					if f.Name == c.col {
						c.fill(b.Field(i))
						continue
					}
					b.Field(i).(*array.Float64Builder).AppendValues([]float64{1, 2}, nil)
				}
			}
			for _, name := range []string{"other.arrows", "other.arrow"} {
				s, err := ReadSamples(writeArrowBatches(t, name, sc, fill), WithAllocator(checked(t)))
				if err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				if c.col == "group" {
					if strings.Join(s.Group, "|") != c.group {
						t.Errorf("%s: group %q, want %q", name, s.Group, c.group)
					}
					continue
				}
				got := s.Bx
				if c.col == "time" {
					got = s.Time
				}
				if !sameFloats(got, c.want) {
					t.Errorf("%s: %s %v, want %v", name, c.col, got, c.want)
				}
			}
		})
	}

	// A null in a view or dictionary column is a missing value like any
	// other: refused by default, NaN when allowed.
	p := writeArrowBatches(t, "nulls.arrows", arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.BinaryTypes.StringView, Nullable: true},
		{Name: "by", Type: dictF, Nullable: true},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil), func(b *array.RecordBuilder) {
		b.Field(0).(*array.Float64Builder).AppendValues([]float64{0, 1}, nil)
		b.Field(1).(*array.StringViewBuilder).AppendValues([]string{"1", ""}, []bool{true, false})
		db := b.Field(2).(*array.Float64DictionaryBuilder)
		db.AppendNull()
		if err := db.Append(2); err != nil {
			t.Fatal(err)
		}
		b.Field(3).(*array.Float64Builder).AppendValues([]float64{3, 3}, nil)
	})
	_, err := ReadSamples(p, WithAllocator(checked(t)))
	wantErr(t, err, "nulls.arrows: batch 0 row 1: column bx: null value")
	s, err := ReadSamples(p, WithAllocator(checked(t)), WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 1 || !math.IsNaN(s.Bx[1]) || !math.IsNaN(s.By[0]) || s.By[1] != 2 {
		t.Errorf("bx %v by %v, want [1 NaN] [NaN 2]", s.Bx, s.By)
	}

	// Types that hold no number are still refused before any row is read
	// (a date32 holds whole days; date64 is read: time_date64_duration_test.go).
	p = writeArrowBatches(t, "date.arrows", arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.FixedWidthTypes.Date32},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil), func(b *array.RecordBuilder) {
		b.Field(0).(*array.Date32Builder).Append(0)
		for k := 1; k < 4; k++ {
			b.Field(k).(*array.Float64Builder).Append(1)
		}
	})
	_, err = Open(p)
	wantErr(t, err, "date.arrows: column time: type date32 cannot be read as time")
}

// TestArrowErrorRowInFile: a row named by its record batch is also named
// by its row counted through the file, since a Parquet reader's batches
// are not the file's row groups and other tools (Arrow's and Parquet's
// own readers, DataFrame libraries) count rows through the file. The
// batches here hold 3, 0 and 2 rows, so row 1 of batch 2 is row 4.
func TestArrowErrorRowInFile(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.BinaryTypes.String},
	}, nil)
	batch := func(t0 float64, bz ...string) func(*array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			for i := range bz {
				for k := 0; k < 3; k++ {
					b.Field(k).(*array.Float64Builder).Append(t0 + float64(i))
				}
			}
			b.Field(3).(*array.StringBuilder).AppendValues(bz, nil)
		}
	}
	for _, name := range []string{"log.arrows", "log.arrow"} {
		p := writeArrowBatches(t, name, sc, batch(0, "1", "2", "3"), batch(3), batch(3, "4", "bad"))
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		wantErr(t, err, name+`: batch 2 row 1 (row 4 of the file, counting from 0): column bz: "bad" is not a number`)
	}
	// The first batch's rows need no second number.
	p := writeArrowBatches(t, "first.arrows", sc, batch(0, "1", "bad"))
	_, err := ReadSamples(p, WithAllocator(checked(t)))
	wantErr(t, err, `first.arrows: batch 0 row 1: column bz: "bad" is not a number`)
	// Parquet: the reader's batches (here of 2 rows) are not the file's
	// row group of 5.
	p = writeArrowBatches(t, "log.parquet", sc, batch(0, "1", "2", "3", "4", "bad"))
	_, err = ReadSamples(p, WithAllocator(checked(t)), WithBatchSize(2))
	wantErr(t, err, `log.parquet: batch 2 row 0 (row 4 of the file, counting from 0): column bz: "bad" is not a number`)
	// Time going backwards within a group is named the same way.
	p = writeArrowBatches(t, "group.arrows", arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "group", Type: arrow.BinaryTypes.String},
	}, nil), func(b *array.RecordBuilder) {
		for k := 0; k < 4; k++ {
			b.Field(k).(*array.Float64Builder).AppendValues([]float64{5, 6}, nil)
		}
		b.Field(4).(*array.StringBuilder).AppendValues([]string{"T01", "T01"}, nil)
	}, func(b *array.RecordBuilder) {
		for k := 0; k < 4; k++ {
			b.Field(k).(*array.Float64Builder).AppendValues([]float64{1, 2}, nil)
		}
		b.Field(4).(*array.StringBuilder).AppendValues([]string{"T02", "T01"}, nil)
	})
	_, err = ReadSamples(p, WithAllocator(checked(t)), WithTimeOrder(TimeOrderedPerGroup))
	wantErr(t, err, `group.arrows: batch 1 row 1 (row 3 of the file, counting from 0): column time: time goes backwards within group "T01": 2 after 6`)
}

// TestCSVSpreadsheetExports: what spreadsheets write when they export a
// sheet as text.
func TestCSVSpreadsheetExports(t *testing.T) {
	want := []float64{458.25, 459.5}

	// Microsoft Excel reads and writes a first line "sep=;" naming the
	// delimiter, after any UTF-8 byte order mark (EF BB BF, Unicode
	// Standard section 23.8); the header follows. Lines keep their
	// physical numbers.
	t.Run("sep line", func(t *testing.T) {
		text := "\xef\xbb\xbfsep=;\r\ntime;bx;by;bz\r\n0,5;458,25;17600;-46900\r\n1,5;459,5;17600;x\r\n"
		_, err := ReadSamples(writeFile(t, "excel.csv", text))
		wantErr(t, err, `excel.csv:4: column bz: "x" is not a number`)
		s, err := ReadSamples(writeFile(t, "excel.csv", strings.Replace(text, ";x", ";-46900", 1)), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Time, []float64{0.5, 1.5}) || !sameFloats(s.Bx, want) {
			t.Errorf("time %v bx %v", s.Time, s.Bx)
		}
		// "sep=," with commas inside quoted fields still reads; a
		// delimiter given as an option wins over the line.
		s, err = ReadSamples(writeFile(t, "comma.csv", "sep=,\ntime,bx,by,bz,note\n0,458.25,1,2,\"a, b\"\n1,459.5,1,2,c\n"))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Bx, want) {
			t.Errorf("sep=, : bx %v", s.Bx)
		}
		s, err = ReadSamples(writeFile(t, "given.csv", "sep=,\ntime|bx|by|bz\n0|458.25|1|2\n1|459.5|1|2\n"), WithDelimiter('|'))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Bx, want) {
			t.Errorf("sep=, with | given: bx %v", s.Bx)
		}
	})

	// UTF-16 text (a spreadsheet's "Unicode text"), with its byte order
	// mark FF FE or FE FF (Unicode Standard section 23.8, IETF RFC 2781
	// section 3.2) or without: refused by name, not read as garbled column
	// names.
	t.Run("UTF-16", func(t *testing.T) {
		utf16le := func(s string) string {
			var b strings.Builder
			for _, r := range s {
				b.WriteByte(byte(r))
				b.WriteByte(0)
			}
			return b.String()
		}
		_, err := Open(writeFile(t, "unicode.txt", "\xff\xfe"+utf16le("time\tbx\tby\tbz\r\n0\t1\t2\t3\r\n")))
		wantErr(t, err, "unicode.txt: the file is UTF-16 text (it starts with the byte order mark FFFE), not UTF-8")
		_, err = Open(writeFile(t, "unicode.txt", utf16le("time\tbx\tby\tbz\r\n0\t1\t2\t3\r\n")))
		wantErr(t, err, "unicode.txt:1: the line holds NUL bytes: the file is not text, or is UTF-16 text without a byte order mark")
	})

	// A header saved in Latin-1 (ISO/IEC 8859-1, where 0xB5 is MICRO SIGN
	// and 0xB0 DEGREE SIGN): "Bx (µT)" is read as microtesla (1 uT =
	// 1000 nT, SI) and can be named in a mapping in UTF-8.
	t.Run("Latin-1 header", func(t *testing.T) {
		latin1 := "time,Bx (\xb5T),By (\xb5T),Bz (\xb5T),Sonde (\xb0C)\n0,0.45825,17.6,-46.9,12.5\n1,0.4595,17.6,-46.9,12.5\n"
		s, err := ReadSamples(writeFile(t, "latin1.csv", latin1), WithColumns("temp=Sonde (°C)"), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Bx, want) || !sameFloats(s.By, []float64{17600, 17600}) || !sameFloats(s.Temp, []float64{12.5, 12.5}) {
			t.Errorf("latin-1 header: bx %v by %v temp %v", s.Bx, s.By, s.Temp)
		}
	})

	// Spreadsheets write the empty rows below (or between) the table's
	// rows as delimiters alone (";;;"): rows without a value, skipped like
	// blank lines rather than refused as missing values. A row with one
	// value in it is still a row.
	t.Run("empty rows", func(t *testing.T) {
		s, err := ReadSamples(writeFile(t, "empty.csv", "time;bx;by;bz\r\n0;458,25;1;2\r\n;;;\r\n1;459,5;1;2\r\n;;;\r\n ; ;;\r\n"), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Time, []float64{0, 1}) || !sameFloats(s.Bx, want) {
			t.Errorf("time %v bx %v, want the two rows with values", s.Time, s.Bx)
		}
		_, err = ReadSamples(writeFile(t, "empty.csv", "time,bx,by,bz\n0,458.25,1,2\n,,,\n,,7,\n"))
		wantErr(t, err, "empty.csv:4: column time: missing value (empty cell)")
	})

	// Lines ended by a bare CR (classic Mac OS text, a spreadsheet's
	// "Macintosh" CSV; the ASCII control CR, 0x0D, without LF) are lines,
	// numbered as such.
	t.Run("CR line ends", func(t *testing.T) {
		text := "# Fenwick Lane cable\rtime,bx,by,bz\r0,458.25,1,2\r1,459.5,1,2\r"
		s, err := ReadSamples(writeFile(t, "mac.csv", text), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Time, []float64{0, 1}) || !sameFloats(s.Bx, want) {
			t.Errorf("time %v bx %v", s.Time, s.Bx)
		}
		_, err = ReadSamples(writeFile(t, "mac.csv", strings.Replace(text, "459.5", "4S9.5", 1)))
		wantErr(t, err, `mac.csv:4: column bx: "4S9.5" is not a number`)
	})

	// Times a logger or spreadsheet writes that are no instant: a time of
	// day beside a separate date column, a date in a local day/month order
	// (RFC 3339 section 5.6 has neither). Refused at their line, with a
	// hint saying what they look like; other text gets no hint.
	t.Run("time hints", func(t *testing.T) {
		const clock = "(a time of day without its date?"
		const local = "(a date in a local order"
		for _, c := range []struct{ text, hint string }{
			{"08:40:00.1", clock}, {"8:40", clock}, {"08:40:00,5", clock},
			{"21/04/2026 08:40:00", local}, {"4/21/2026 9:40", local}, {"21.04.2026", local},
			{"1.2.3", ""}, {"12:3a", ""}, {"T+5", ""},
		} {
			_, err := ReadSamples(writeFile(t, "log.csv", "Date;Time;bx;by;bz\n2026-04-21;"+c.text+";1;2;3\n"))
			wantErr(t, err, `log.csv:2: column Time: "`+c.text+`" is not a number or an RFC 3339 time`)
			if got := strings.Contains(err.Error(), "(a time of day") || strings.Contains(err.Error(), "(a date in"); c.hint == "" && got {
				t.Errorf("%q: %v, want no hint", c.text, err)
			}
			if c.hint != "" && !strings.Contains(err.Error(), c.hint) {
				t.Errorf("%q: %v, want the hint %q", c.text, err, c.hint)
			}
		}
		// In Arrow text too.
		sc := arrow.NewSchema([]arrow.Field{
			{Name: "time", Type: arrow.BinaryTypes.String},
			{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
			{Name: "by", Type: arrow.PrimitiveTypes.Float64},
			{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		p := writeArrowBatches(t, "log.arrows", sc, func(b *array.RecordBuilder) {
			b.Field(0).(*array.StringBuilder).Append("08:40:00.1")
			for k := 1; k < 4; k++ {
				b.Field(k).(*array.Float64Builder).Append(1)
			}
		})
		_, err := ReadSamples(p)
		wantErr(t, err, `log.arrows: batch 0 row 0: column time: "08:40:00.1" is not a number or an RFC 3339 time `+clock)
	})

	// A logger that preallocates its file leaves the unwritten end as NUL
	// bytes (0x00, ASCII NUL), with or without line ends, however long;
	// a damaged card can hold such a stretch in the middle. Lines of
	// nothing but NUL bytes are skipped with a warning naming the first;
	// NUL bytes among a line's data are still refused at that line.
	t.Run("NUL padding", func(t *testing.T) {
		head := "time,bx,by,bz\n0,458.25,1,2\n1,459.5,1,2\n"
		for _, c := range []struct {
			name, text string
			chunk      int
		}{
			{"tail without line end", head + strings.Repeat("\x00", 5000), 1 << 20},
			{"tail longer than a line may be", head + strings.Repeat("\x00", maxLineBytes+1000), 1 << 20},
			{"tail across small chunks", head + strings.Repeat("\x00", 5000), 256},
			{"tail with line ends", head + strings.Repeat("\x00", 700) + "\n" + strings.Repeat("\x00", 300) + "\n", 1 << 20},
			{"in the middle", "time,bx,by,bz\n0,458.25,1,2\n" + strings.Repeat("\x00", 300) + "\n1,459.5,1,2\n", 1 << 20},
		} {
			s, err := ReadSamples(writeFile(t, "log.csv", c.text), withChunkBytes(c.chunk), WithAllocator(checked(t)))
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			if !sameFloats(s.Bx, want) {
				t.Errorf("%s: bx %v", c.name, s.Bx)
			}
			if got := warningsWith(s.Warnings, "NUL"); len(got) != 1 || !strings.Contains(got[0], "log.csv:4: lines of nothing but NUL bytes skipped, the first here") &&
				!(c.name == "in the middle" && strings.Contains(got[0], "log.csv:3: lines of nothing but NUL bytes skipped")) {
				t.Errorf("%s: warnings %q", c.name, s.Warnings)
			}
		}
		_, err := ReadSamples(writeFile(t, "log.csv", "time,bx,by,bz\n0,458.25,1,2\n1,45\x00\x00\x009.5,1,2\n"))
		wantErr(t, err, `log.csv:3: column bx: "45\x00\x00\x009.5" holds NUL bytes (from byte 5 of the line)`)
	})

	// SUB (0x1A, ASCII), the end-of-file mark of CP/M and MS-DOS text,
	// alone on the last line as old tools append it, ends the text; SUB
	// anywhere else is refused as before.
	t.Run("SUB at the end", func(t *testing.T) {
		s, err := ReadSamples(writeFile(t, "log.csv", "time,bx,by,bz\r\n0,458.25,1,2\r\n1,459.5,1,2\r\n\x1a"), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(s.Bx, want) {
			t.Errorf("bx %v", s.Bx)
		}
		_, err = ReadSamples(writeFile(t, "log.csv", "time,bx,by,bz\n0,458.25,1,2\n1,459.5,1,\x1a\n"))
		wantErr(t, err, `log.csv:3: column bz: "\x1a" is not a number`)
	})

	// A row of units under the header is refused at its line, with a hint.
	t.Run("units row", func(t *testing.T) {
		_, err := ReadSamples(writeFile(t, "units.csv", "time;bx;by;bz\ns;nT;nT;nT\n0;1;2;3\n"))
		wantErr(t, err, `units.csv:2: column time: "s" is not a number or an RFC 3339 time (a row of units under the header?`)
		_, err = ReadSamples(writeFile(t, "units.csv", "time,bx,by,bz\n,,uT,uT\n0,1,2,3\n"), WithAllowMissing(true))
		wantErr(t, err, `units.csv:2: column by: "uT" is not a number (a row of units under the header?`)
	})
}

// TestTimeUnitGuess: Unix times of 2026 (1.77e9 s, POSIX seconds since
// the Epoch) written in milliseconds, microseconds or nanoseconds and read
// as seconds would be after the year 5000 (1e11 s is in 5138): the readers
// warn, naming the first such time and the unit the values look like, in
// CSV and Arrow (an int64 column of milliseconds is a common way to store
// times), and so does Inspect. A unit given for time is trusted.
func TestTimeUnitGuess(t *testing.T) {
	for _, c := range []struct {
		scale      int64
		name, unit string
	}{{1e3, "milliseconds", "ms"}, {1e6, "microseconds", "us"}, {1e9, "nanoseconds", "ns"}} {
		var b strings.Builder
		b.WriteString("time,bx,by,bz\n")
		for i := int64(0); i < 10; i++ {
			b.WriteString(strconv.FormatInt((unix20260301T1000Z+i)*c.scale, 10) + ",-420,17600,-46900\n")
		}
		want := "log.csv:2: column time: times near " + strconv.FormatFloat(float64(unix20260301T1000Z*c.scale), 'g', 4, 64) +
			" read as seconds would be Unix times after the year 5000; they look like Unix " + c.name + ": give the unit time=" + c.unit
		s, err := ReadSamples(writeFile(t, "log.csv", b.String()))
		if err != nil {
			t.Fatal(err)
		}
		if got := warningsWith(s.Warnings, "after the year 5000"); len(got) != 1 || !strings.Contains(got[0], want) {
			t.Errorf("x%d: warnings %q, want one with %q", c.scale, s.Warnings, want)
		}
		in, err := Inspect(writeFile(t, "log.csv", b.String()))
		if err != nil {
			t.Fatal(err)
		}
		if got := warningsWith(in.Warnings, "after the year 5000"); len(got) != 1 || !strings.Contains(got[0], want) {
			t.Errorf("x%d: inspect warnings %q, want one with %q", c.scale, in.Warnings, want)
		}
		// Given the unit (or insisting on seconds), no guess.
		for _, u := range []string{c.unit, "s"} {
			s, err = ReadSamples(writeFile(t, "log.csv", b.String()), WithUnits("time="+u))
			if err != nil {
				t.Fatal(err)
			}
			if got := warningsWith(s.Warnings, "after the year 5000"); len(got) != 0 {
				t.Errorf("x%d with time=%s: warnings %q", c.scale, u, got)
			}
		}
		if s.Time[0] != float64(unix20260301T1000Z*c.scale) {
			t.Errorf("x%d with time=s: %v", c.scale, s.Time[0])
		}
	}
	// Arrow: an int64 column of milliseconds, the first row after an
	// empty batch and a batch of NaN times (allowed as missing).
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "t", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(ts []int64, valid []bool) func(*array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			b.Field(0).(*array.Int64Builder).AppendValues(ts, valid)
			for k := 1; k < 4; k++ {
				b.Field(k).(*array.Float64Builder).AppendValues(make([]float64, len(ts)), nil)
			}
		}
	}
	p := writeArrowBatches(t, "log.arrows", sc, fill(nil, nil), fill([]int64{0}, []bool{false}), fill([]int64{unix20260301T1000Z * 1000, unix20260301T1000Z*1000 + 100}, nil))
	s, err := ReadSamples(p, WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	want := "log.arrows: batch 2 row 0 (row 1 of the file, counting from 0): column t: times near 1.772e+12 read as seconds would be Unix times after the year 5000; they look like Unix milliseconds"
	if got := warningsWith(s.Warnings, "after the year 5000"); len(got) != 1 || !strings.Contains(got[0], want) {
		t.Errorf("arrow: warnings %q, want one with %q", s.Warnings, want)
	}
}

// TestRowsWithoutGroup: a group column (traverse, sensor) whose cell is
// empty in some rows (a logger that marks the traverse only while on it)
// or null (in Arrow a null slot holds no value, by its validity bitmap:
// Arrow columnar format, "Validity bitmaps"). Such rows have no group:
// read as the group "" in every format (a null was read as the text
// "(null)" when the batch was passed through), counted as missing by
// Inspect, and warned about at the end of the input, since a fit by group
// takes them as one group of their own. A group column empty throughout
// groups nothing and is not warned about.
func TestRowsWithoutGroup(t *testing.T) {
	const warn = "rows without a group (an empty cell or a null): 2 of 5, the first here"
	text := "time,bx,by,bz,traverse\n0,1,2,3,T01\n1,1,2,3,\n2,1,2,3,T01\n3,1,2,3,\n4,1,2,3,T02\n"
	s, err := ReadSamples(writeFile(t, "log.csv", text), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(s.Group, "|") != "T01||T01||T02" {
		t.Errorf("groups %q", s.Group)
	}
	if got := warningsWith(s.Warnings, "without a group"); len(got) != 1 || !strings.Contains(got[0], "log.csv:3: column traverse: "+warn) {
		t.Errorf("warnings %q, want one naming line 3", s.Warnings)
	}
	in, err := Inspect(writeFile(t, "log.csv", text))
	if err != nil {
		t.Fatal(err)
	}
	if g := colStats(in, ColGroup); g == nil || g.Missing != 2 {
		t.Errorf("inspect: group stats %+v, want 2 missing", g)
	}
	s, err = ReadSamples(writeFile(t, "none.csv", "time,bx,by,bz,traverse\n0,1,2,3,\n1,1,2,3,\n"))
	if err != nil {
		t.Fatal(err)
	}
	if got := warningsWith(s.Warnings, "without a group"); len(got) != 0 {
		t.Errorf("group column empty throughout: warnings %q, want none", got)
	}

	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "group", Type: arrow.BinaryTypes.String, Nullable: true},
	}, nil)
	batch := func(t0 float64, groups []string, valid []bool) func(*array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			for i := range groups {
				for k := 0; k < 4; k++ {
					b.Field(k).(*array.Float64Builder).Append(t0 + float64(i))
				}
			}
			b.Field(4).(*array.StringBuilder).AppendValues(groups, valid)
		}
	}
	for _, name := range []string{"log.arrows", "log.arrow", "log.parquet"} {
		p := writeArrowBatches(t, name, sc, batch(0, []string{"T01", "T01"}, nil), batch(2, []string{"", "T01", "x"}, []bool{true, true, false}))
		s, err := ReadSamples(p, WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		if strings.Join(s.Group, "|") != "T01|T01||T01|" {
			t.Errorf("%s: groups %q, want the null read as no group", name, s.Group)
		}
		want := name + ": batch 1 row 0 (row 2 of the file, counting from 0): column group: " + warn
		if name == "log.parquet" { // one row group, read as one batch
			want = name + ": batch 0 row 2: column group: " + warn
		}
		if got := warningsWith(s.Warnings, "without a group"); len(got) != 1 || !strings.Contains(got[0], want) {
			t.Errorf("%s: warnings %q, want %q", name, s.Warnings, want)
		}
		in, err := Inspect(p)
		if err != nil {
			t.Fatal(err)
		}
		if g := colStats(in, ColGroup); g == nil || g.Missing != 2 {
			t.Errorf("%s: inspect: group stats %+v, want 2 missing", name, g)
		}
	}
}

// TestSmallUnitsExact: a value in a unit that is a negative power of ten
// of the canonical one (SI prefixes milli, micro, nano, centi, pico: BIPM,
// The International System of Units, 9th edition, table 7) reads as the
// float64 nearest the exact quotient (IEEE 754 round to nearest, as
// strconv.ParseFloat gives the same decimal), in CSV text and in Arrow
// integer columns: 1772359200100 ms is 1772359200.1 s, where multiplying by
// the inexact 1e-3 gave 1772359200.1000001; 48213520 pT is 48213.52 nT, not
// 48213.520000000004; 305 cm is 3.05 m, not 3.0500000000000003.
func TestSmallUnitsExact(t *testing.T) {
	parse := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	cases := []struct {
		unit, text string
		want       float64
	}{
		{"time=ms", "1772359200100", parse("1772359200.1")},
		{"time=ns", "1772359200100000000", parse("1772359200.1")},
		// by and bz too, or the axes would be in different units (refused).
		{"bx=pT,by=pT,bz=pT", "48213520", parse("48213.52")},
		{"x=cm", "305", parse("3.05")},
	}
	for _, c := range cases {
		col, _, _ := strings.Cut(c.unit, "=")
		row := map[string]string{"time": "0", "x": "0", "bx": "0"}
		row[col] = c.text
		text := "time,x,y,z,bx,by,bz\n" + row["time"] + "," + row["x"] + ",0,0," + row["bx"] + ",17600,-46900\n"
		for _, opts := range [][]Option{nil, {withSlowPathOnly()}} {
			s, err := ReadSamples(writeFile(t, "log.csv", text), append(opts, WithUnits(c.unit))...)
			if err != nil {
				t.Fatal(err)
			}
			got := map[string]float64{"time": s.Time[0], "x": s.X[0], "bx": s.Bx[0]}[col]
			if got != c.want {
				t.Errorf("CSV %s %s (%d options): %.17g, want %.17g", c.unit, c.text, len(opts), got, c.want)
			}
		}
		// The same count as an Arrow int64 column.
		v, _ := strconv.ParseInt(c.text, 10, 64)
		var fields []arrow.Field
		for _, n := range []string{"time", "x", "bx", "by", "bz"} {
			typ := arrow.DataType(arrow.PrimitiveTypes.Float64)
			if n == col {
				typ = arrow.PrimitiveTypes.Int64
			}
			fields = append(fields, arrow.Field{Name: n, Type: typ})
		}
		sc := arrow.NewSchema(fields, nil)
		p := writeArrowBatches(t, "log.arrows", sc, func(b *array.RecordBuilder) {
			for i, f := range sc.Fields() {
				if f.Name == col {
					b.Field(i).(*array.Int64Builder).Append(v)
				} else {
					b.Field(i).(*array.Float64Builder).Append(1)
				}
			}
		})
		s, err := ReadSamples(p, WithUnits(c.unit))
		if err != nil {
			t.Fatal(err)
		}
		got := map[string]float64{"time": s.Time[0], "x": s.X[0], "bx": s.Bx[0]}[col]
		if got != c.want {
			t.Errorf("Arrow %s %s: %.17g, want %.17g", c.unit, c.text, got, c.want)
		}
	}
}

// writeTextTimeArrow writes an Arrow stream named name of one batch: a text
// time column holding times and bx, by, bz of i+1 nT at row i.
func writeTextTimeArrow(t *testing.T, name string, times []string) string {
	t.Helper()
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.BinaryTypes.String},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
		for i, tm := range times {
			b.Field(0).(*array.StringBuilder).Append(tm)
			for k := 1; k < 4; k++ {
				b.Field(k).(*array.Float64Builder).Append(float64(i + 1))
			}
		}
	})
}
