package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestOriginNotFinite checks that an origin line or origin metadata with
// a NaN or infinite value, or a height past 100 km, is refused when the
// file is read, at the origin's line in a CSV log. Before, it was taken:
// inspect printed "origin lat NaN", convert wrote it on, and locate ran
// every fit and then failed with "internal error: the result document is
// not valid: frame.origin.lat_deg is NaN". Invented values.
func TestOriginNotFinite(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ origin, want string }{
		{"nan nan nan", "latitude NaN is not a number"},
		{"52.1 0.1 inf", "height +Inf is not a number"},
		{"52.1 -Inf 10", "longitude -Inf is not a number"},
		{"52.1 0.1 1e300", "height 1e+300 m is beyond"},
	} {
		p := filepath.Join(dir, "log.csv")
		text := "# undercurrent.origin: " + c.origin + "\ntime,x,y,z,bx,by,bz\n0,0,0,0.3,1,2,3\n1,1,0,0.3,1,2,3\n"
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), "log.csv:1: ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("origin %q: %v, want log.csv:1: ... %s", c.origin, err, c.want)
		}
	}
	md := arrow.NewMetadata([]string{MetaOrigin}, []string{"nan nan nan"})
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, &md)
	fill := func(b *array.RecordBuilder) {
		for i := 0; i < 5; i++ {
			b.Field(i).(*array.Float64Builder).AppendValues([]float64{float64(i), float64(i) + 0.5}, nil)
		}
	}
	for _, name := range []string{"log.arrow", "log.parquet"} {
		p := writeArrowBatches(t, name, sc, fill)
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), "latitude NaN is not a number") {
			t.Errorf("%s with origin nan nan nan: %v", name, err)
		}
	}
}
