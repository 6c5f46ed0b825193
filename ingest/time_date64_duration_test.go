package ingest

import (
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestDate64AndDurationTimes checks that a time column of Arrow type date64
// (milliseconds since the Unix epoch, as older JavaScript Arrow writes a
// Date; Arrow columnar format, "Date64") reads as Unix seconds, and one of
// type duration (a logger's time since its start) as relative seconds in
// its own unit whatever the time unit option says, in the Arrow file and
// stream forms (Parquet has neither type: arrow-go writes a date64 as
// date32 days and cannot write a duration). Before, both were refused ("type date64 cannot
// be read as time"). Times invented: 2026-03-14T10:05:00.002Z is Unix
// 1773482700.002 (date -d @1773482700 -u).
func TestDate64AndDurationTimes(t *testing.T) {
	write := func(name string, typ arrow.DataType, vals []int64) string {
		sc := arrow.NewSchema([]arrow.Field{
			{Name: "time", Type: typ},
			{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
			{Name: "by", Type: arrow.PrimitiveTypes.Float64},
			{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
			for _, v := range vals {
				switch tb := b.Field(0).(type) {
				case *array.Date64Builder:
					tb.Append(arrow.Date64(v))
				case *array.DurationBuilder:
					tb.Append(arrow.Duration(v))
				}
			}
			for k := 1; k <= 3; k++ {
				b.Field(k).(*array.Float64Builder).AppendValues([]float64{1, 2, 3}, nil)
			}
		})
	}
	cases := []struct {
		name string
		typ  arrow.DataType
		vals []int64
		opts []Option
		want []float64
	}{
		{"date64", arrow.FixedWidthTypes.Date64, []int64{1773482700000, 1773482700002, 1773482700004}, nil, []float64{1773482700, 1773482700.002, 1773482700.004}},
		{"duration ms", arrow.FixedWidthTypes.Duration_ms, []int64{0, 2, 4}, nil, []float64{0, 0.002, 0.004}},
		{"duration us, unit option", arrow.FixedWidthTypes.Duration_us, []int64{1000, 3000, 5000}, []Option{WithUnits("time=ms")}, []float64{0.001, 0.003, 0.005}},
	}
	for _, c := range cases {
		for _, ext := range []string{".arrow", ".arrows"} {
			p := write(strings.ReplaceAll(c.name, " ", "_")+ext, c.typ, c.vals)
			s, err := ReadSamples(p, append(c.opts, WithAllocator(checked(t)))...)
			if err != nil {
				t.Errorf("%s%s: %v", c.name, ext, err)
				continue
			}
			if !sameFloats(s.Time, c.want) {
				t.Errorf("%s%s: times %v, want %v", c.name, ext, s.Time, c.want)
			}
		}
	}
}
