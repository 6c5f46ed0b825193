package ingest

import (
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestLoneTimestampColumnIsTime checks that a log with no column named as
// the time whose schema holds a single timestamp column (gps_time here)
// reads it as the time, with a warning naming it, its type and the
// mapping that overrides it; with two such columns neither is guessed and
// the log is refused as before. Before, the lone one was not read: "no
// column for time". Times invented: Unix 1773482700 is
// 2026-03-14T10:05:00Z.
func TestLoneTimestampColumnIsTime(t *testing.T) {
	tsType := &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}
	write := func(name string, tsCols ...string) string {
		var fields []arrow.Field
		for _, c := range tsCols {
			fields = append(fields, arrow.Field{Name: c, Type: tsType})
		}
		for _, c := range []string{"bx", "by", "bz"} {
			fields = append(fields, arrow.Field{Name: c, Type: arrow.PrimitiveTypes.Float64})
		}
		sc := arrow.NewSchema(fields, nil)
		return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
			for k := range tsCols {
				for i := 0; i < 3; i++ {
					b.Field(k).(*array.TimestampBuilder).Append(arrow.Timestamp(1773482700000 + int64(2*i) + int64(k)))
				}
			}
			for k := len(tsCols); k < len(fields); k++ {
				b.Field(k).(*array.Float64Builder).AppendValues([]float64{1, 2, 3}, nil)
			}
		})
	}
	for _, ext := range []string{".arrow", ".parquet"} {
		p := write("gps"+ext, "gps_time")
		s, err := ReadSamples(p, WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		if want := []float64{1773482700, 1773482700.002, 1773482700.004}; !sameFloats(s.Time, want) {
			t.Errorf("%s: times %v, want %v", ext, s.Time, want)
		}
		var got string
		for _, w := range s.Warnings {
			if strings.Contains(w, "only timestamp column") {
				got = w
			}
		}
		for _, w := range []string{`column "gps_time"`, "timestamp[ms, tz=UTC]", "--column time=NAME"} {
			if !strings.Contains(got, w) {
				t.Errorf("%s: warning lacks %q: %q", ext, w, got)
			}
		}
		_, err = ReadSamples(write("two"+ext, "gps_time", "utc_time"), WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), "no column for time") {
			t.Errorf("%s: two timestamp columns: %v, want no column for time", ext, err)
		}
	}
}
