package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestImplausibleValues checks that a finite value no survey gives (a
// field of 1e308 nT, a time of 1e300 s, a position of 1e15 m) is refused
// at its own line and column with the bound. Before, the field and the
// position were read (a fit failed, a route moved to 1.7e12 m east) and
// the time was blamed on the next line, "time goes backwards" by a
// 300-digit count of days. Invented values.
func TestImplausibleValues(t *testing.T) {
	dir := t.TempDir()
	head := "time,x,y,z,bx,by,bz\n0,0,0,0.3,100,20000,-45000\n1,0.1,0,0.3,100,20000,-45000\n"
	for _, c := range []struct{ row, want string }{
		{"2,0.2,0,0.3,1e308,20000,-45000", "log.csv:4: column bx: field magnitude |B| = 1e+308 nT"},
		{"2,0.2,0,0.3,100,20000,-1.2e17", "log.csv:4: column bz: field magnitude"},
		{"1e300,0.2,0,0.3,100,20000,-45000", "log.csv:4: column time: 1e+300 s is a time beyond any clock"},
		{"2,1e15,0,0.3,100,20000,-45000", "log.csv:4: column x: 1e+15 m is a position beyond any grid (a corrupt value or a GNSS glitch?): want within +-1e+08 m"},
	} {
		p := filepath.Join(dir, "log.csv")
		if err := os.WriteFile(p, []byte(head+c.row+"\n3,0.3,0,0.3,100,20000,-45000\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want %s", c.row, err, c.want)
		}
	}
	// A log in nT read as T (5e13 nT) is read, for the unit warnings.
	p := filepath.Join(dir, "t.csv")
	if err := os.WriteFile(p, []byte("time,bx_T,by_T,bz_T\n0,1,20000,-45000\n1,1,20000,-45000\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadSamples(p, WithAllocator(checked(t))); err != nil {
		t.Errorf("a log in nT read as T: %v", err)
	}

	// Arrow and Parquet: the fast path (float64 columns read as they are)
	// and the general one (a unit to scale).
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		b.Field(0).(*array.Float64Builder).AppendValues([]float64{0, 1, 2}, nil)
		b.Field(1).(*array.Float64Builder).AppendValues([]float64{1, 1e308, 1}, nil)
		b.Field(2).(*array.Float64Builder).AppendValues([]float64{2, 2, 2}, nil)
		b.Field(3).(*array.Float64Builder).AppendValues([]float64{3, 3, 3}, nil)
	}
	for _, name := range []string{"log.arrow", "log.parquet"} {
		ap := writeArrowBatches(t, name, sc, fill)
		for _, opts := range [][]Option{nil, {WithUnits("time=ms")}} {
			_, err := ReadSamples(ap, append(opts, WithAllocator(checked(t)))...)
			if err == nil || !strings.Contains(err.Error(), "batch 0 row 1: column bx") || !strings.Contains(err.Error(), "field magnitude |B| = 1e+308 nT") {
				t.Errorf("%s %d options: %v", name, len(opts), err)
			}
		}
	}
}
