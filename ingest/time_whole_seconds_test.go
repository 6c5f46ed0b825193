package ingest

import (
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// writeStampLog writes 2000 readings 2 ms apart (500 Hz) from Unix second
// 1773482700 whose time is stored as a timestamp of unit unit, cut to
// whole seconds when whole (as a writer casting to timestamp[s] leaves
// them), with groups cycling through groups readings (one when 1). The
// readings are invented.
func writeStampLog(t *testing.T, name string, unit arrow.TimeUnit, whole bool, groups int) string {
	fields := []arrow.Field{
		{Name: "time", Type: &arrow.TimestampType{Unit: unit, TimeZone: "UTC"}},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "group", Type: arrow.BinaryTypes.String},
	}
	sc := arrow.NewSchema(fields, nil)
	per := map[arrow.TimeUnit]int64{arrow.Second: 1, arrow.Millisecond: 1000}[unit]
	return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
		for i := 0; i < 2000; i++ {
			ms := int64(1773482700000) + int64(i/groups)*2
			if whole {
				ms -= ms % 1000
			}
			b.Field(0).(*array.TimestampBuilder).Append(arrow.Timestamp(ms * per / 1000))
			b.Field(1).(*array.Float64Builder).Append(17600 + float64(i%7))
			b.Field(2).(*array.Float64Builder).Append(1200)
			b.Field(3).(*array.Float64Builder).Append(-46000)
			b.Field(4).(*array.StringBuilder).Append([]string{"T01", "T02", "T03", "T04"}[i%groups])
		}
	})
}

// TestWholeSecondStampsWarned checks that a 500 Hz log whose times were
// stored as whole seconds (timestamp[s]; in Parquet, which has no unit of
// seconds, as whole-second milliseconds) is warned of in inspect and
// when read, naming the column's type, how many readings repeat a stamp
// (1996 of 2000 here: 2000 readings 2 ms apart span 4 s from a whole
// second, so four distinct stamps, 500 readings each) and what to store; the same
// log with its milliseconds, or four sensors interleaved on shared stamps
// (each group's times advancing), is not. Before, nothing was said, and
// inspect showed a median step of 1 s.
func TestWholeSecondStampsWarned(t *testing.T) {
	find := func(ws []string) string {
		for _, w := range ws {
			if strings.Contains(w, "have the time of the reading before them") {
				return w
			}
		}
		return ""
	}
	for _, c := range []struct {
		name   string
		unit   arrow.TimeUnit
		whole  bool
		groups int
		want   []string // nil: no warning
	}{
		{"s.arrow", arrow.Second, true, 1, []string{`column "time" (timestamp[s, tz=UTC])`, "1996 of 2000 readings", "about 500 readings a time stamp", "timestamp[ms] or finer"}},
		{"s.parquet", arrow.Second, true, 1, []string{"1996 of 2000 readings", "every time is a whole second", "milliseconds or finer"}},
		{"ms.arrow", arrow.Millisecond, false, 1, nil},
		{"interleaved.arrow", arrow.Millisecond, false, 4, nil},
	} {
		p := writeStampLog(t, c.name, c.unit, c.whole, c.groups)
		in, err := Inspect(p)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		s, err := ReadSamples(p, WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for what, ws := range map[string][]string{"inspect": in.Warnings, "read": s.Warnings} {
			got := find(ws)
			if c.want == nil {
				if got != "" {
					t.Errorf("%s %s: warned: %s", c.name, what, got)
				}
				continue
			}
			for _, w := range c.want {
				if !strings.Contains(got, w) {
					t.Errorf("%s %s: warning lacks %q: %q", c.name, what, w, got)
				}
			}
		}
	}
}
