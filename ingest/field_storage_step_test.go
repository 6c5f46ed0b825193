package ingest

import (
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/float16"
)

// writeFieldLog writes an Arrow or Parquet log (by name's extension) of
// four readings whose bx, by and bz columns have type typ and values bx
// (all three alike: a field of about -46,000 nT on each axis). Invented.
func writeFieldLog(t *testing.T, name string, typ arrow.DataType, bx []float64) string {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: typ},
		{Name: "by", Type: typ},
		{Name: "bz", Type: typ},
	}, nil)
	return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
		b.Field(0).(*array.Float64Builder).AppendValues([]float64{0, 0.002, 0.004, 0.006}, nil)
		for k := 1; k <= 3; k++ {
			for _, v := range bx {
				switch fb := b.Field(k).(type) {
				case *array.Float16Builder:
					fb.Append(float16.New(float32(v)))
				case *array.Float32Builder:
					fb.Append(float32(v))
				case *array.Int16Builder:
					fb.Append(int16(v))
				case *array.Int32Builder:
					fb.Append(int32(v))
				}
			}
		}
	})
}

// TestFloat16FieldRefused checks that a field component stored as 16-bit
// floats is refused before any reading, naming the column and its step:
// IEEE 754 binary16 has an 11-bit significand, so between 2^15 and 2^16
// (46,000 nT) it steps by 2^(16-11) = 32 nT (computed here from the
// float16 package's own rounding), far above a magnetometer's noise; in
// review such a log moved a fit's current by 18 uncertainties with no
// warning. Before, it was read silently.
func TestFloat16FieldRefused(t *testing.T) {
	// The step is what the storage gives: two neighbouring float16 values.
	a, b := float16.New(46000).Float32(), float16.New(46020).Float32()
	if d := float64(b - a); d != 32 {
		t.Fatalf("float16 step near 46,000 is %g, want 32 (binary16)", d)
	}
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		p := writeFieldLog(t, "fenwick-f16"+ext, arrow.FixedWidthTypes.Float16, []float64{-46000, -46010, -46020, -46030})
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil {
			t.Fatalf("%s: a float16 field column was read", ext)
		}
		for _, w := range []string{"column bx", "16-bit floats", "32 nT near 46,000 nT", "store the field as 32- or 64-bit floats"} {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error lacks %q: %v", ext, w, err)
			}
		}
		if _, err := Inspect(p); err == nil {
			t.Errorf("%s: inspect read a float16 field column", ext)
		}
	}
}

// TestFieldStorageStepWarned checks the warning for a field column whose
// storage steps by more than 1 nT: int16 counts of 2 nT (step 2 nT) and
// whole microtesla in int32 (1000 nT) are warned of, naming the column and
// the step; 32-bit floats near 46,000 nT (step 2^(16-24) = 0.0039 nT,
// math.Nextafter32 below) and whole nT in integers (1 nT) are not. Before,
// no field column was ever warned of.
func TestFieldStorageStepWarned(t *testing.T) {
	f := float32(-46000)
	if d := float64(f - math.Nextafter32(f, float32(math.Inf(-1)))); d > 0.004 || d < 0.0039 {
		t.Fatalf("float32 step near 46,000 is %g, want 2^-8", d)
	}
	cases := []struct {
		name  string
		typ   arrow.DataType
		bx    []float64
		opts  []Option
		warn  string // "" for none
		field float64
	}{
		{"float32", arrow.PrimitiveTypes.Float32, []float64{-46000.25, -46001.5, -46002, -46003}, nil, "", -46000.25},
		{"int32 nT", arrow.PrimitiveTypes.Int32, []float64{-46000, -46001, -46002, -46003}, nil, "", -46000},
		{"int16 2nT", arrow.PrimitiveTypes.Int16, []float64{-23000, -23001, -23001, -23002}, []Option{WithUnits("bx=2nT", "by=2nT", "bz=2nT")}, "step by 2 nT", -46000},
		{"int32 uT", arrow.PrimitiveTypes.Int32, []float64{-46, -46, -46, -46}, []Option{WithUnits("bx=uT", "by=uT", "bz=uT")}, "step by 1e+03 nT", -46000},
	}
	for _, c := range cases {
		for _, ext := range []string{".arrow", ".parquet"} {
			p := writeFieldLog(t, "fenwick"+ext, c.typ, c.bx)
			s, err := ReadSamples(p, append(c.opts, WithAllocator(checked(t)))...)
			if err != nil {
				t.Fatalf("%s%s: %v", c.name, ext, err)
			}
			if s.Bx[0] != c.field {
				t.Errorf("%s%s: bx[0] %g, want %g", c.name, ext, s.Bx[0], c.field)
			}
			var got string
			for _, w := range s.Warnings {
				if strings.Contains(w, `column "bx" is stored as`) {
					got = w
				}
			}
			switch {
			case c.warn == "" && got != "":
				t.Errorf("%s%s: warned: %s", c.name, ext, got)
			case c.warn != "" && !strings.Contains(got, c.warn):
				t.Errorf("%s%s: warning %q lacks %q (warnings %q)", c.name, ext, got, c.warn, s.Warnings)
			}
		}
	}
}
