package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestMappingOneSourceTwice checks that a mapping naming one column for
// two canonical columns (bx=Bx,by=Bx: a typo for by=By) is refused at the
// header line with both mappings named. Before, the CSV reader wrote
// zeros into bx in every row its fast path read, in silence, and rc was 0.
// Invented values.
func TestMappingOneSourceTwice(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "log.csv")
	if err := os.WriteFile(p, []byte("# a comment\ntime,Bx,By,Bz\n0,1.5,2,3\n1,2.5,2,3\n2,3.5,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, m := range [][]string{
		{"bx=Bx", "by=Bx", "bz=Bz"},
		{"time=time", "x=time"},
		{"bx=Bx", "by=bx"}, // the same column by another case
	} {
		_, err := ReadSamples(p, WithColumns(m...), WithAllocator(checked(t)))
		if err == nil {
			t.Fatalf("%v: read without a word", m)
		}
		msg := err.Error()
		for _, w := range []string{"log.csv:2:", m[0], m[1], "a typo?"} {
			if !strings.Contains(msg, w) {
				t.Errorf("%v: message lacks %q: %s", m, w, msg)
			}
		}
	}
	// Each column mapped once still reads.
	s, err := ReadSamples(p, WithColumns("bx=By", "by=Bx"), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 2 || s.By[0] != 1.5 {
		t.Errorf("swapped mapping read bx %g by %g, want 2 and 1.5", s.Bx[0], s.By[0])
	}

	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		for i := 0; i < 4; i++ {
			b.Field(i).(*array.Float64Builder).AppendValues([]float64{float64(i), float64(i) + 0.5}, nil)
		}
	}
	for _, name := range []string{"log.arrow", "log.parquet"} {
		ap := writeArrowBatches(t, name, sc, fill)
		_, err := ReadSamples(ap, WithColumns("bx=bx", "by=bx"), WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), `both name the schema field "bx"`) {
			t.Errorf("%s: bx=bx,by=bx: %v", name, err)
		}
	}
}
