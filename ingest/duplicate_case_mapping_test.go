package ingest

import (
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestDuplicateByCaseOffersMapping checks that two fields whose names
// differ only in case (bx and BX) are refused with the way out that works
// without rewriting the file: a mapping by the exact name, each of which
// then reads its own field. Before, the message said only "rename one of
// them", and that no mapping by name could choose. Invented values.
func TestDuplicateByCaseOffersMapping(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "BX", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		for i := 0; i < 5; i++ {
			b.Field(i).(*array.Float64Builder).AppendValues([]float64{float64(i), float64(i) + 0.5}, nil)
		}
	}
	for _, name := range []string{"dup.arrow", "dup.parquet"} {
		p := writeArrowBatches(t, name, sc, fill)
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil {
			t.Fatalf("%s: bx and BX read without a mapping", name)
		}
		msg := err.Error()
		for _, w := range []string{`both named "bx" and "BX"`, "--column bx=bx", "--column bx=BX"} {
			if !strings.Contains(msg, w) {
				t.Errorf("%s: message lacks %q: %s", name, w, msg)
			}
		}
		if strings.Contains(msg, "no mapping by name can choose") {
			t.Errorf("%s: message says no mapping can choose: %s", name, msg)
		}
		for _, c := range []struct {
			mapping string
			want    float64
		}{{"bx=bx", 1}, {"bx=BX", 4}} {
			s, err := ReadSamples(p, WithColumns(c.mapping), WithAllocator(checked(t)))
			if err != nil {
				t.Fatalf("%s %s: %v", name, c.mapping, err)
			}
			if s.Bx[0] != c.want {
				t.Errorf("%s %s: bx %g, want %g", name, c.mapping, s.Bx[0], c.want)
			}
		}
	}
}
