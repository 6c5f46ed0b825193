package ingest

import (
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestStructFieldColumns checks that a field held in a struct column
// (mag: struct<x, y, z>, with an unused gps: struct<sats, hdop> beside it)
// is read by the children's dotted names, mag.x, mag.y, mag.z, in the
// Arrow file, stream and Parquet forms, in two batches, with nothing
// leaked (checked allocator); and that a null struct entry is a missing
// value of each child: refused by default naming the dotted column, NaN
// when missing values are allowed. Before, "mag" was one column whose
// children no mapping could reach ("no column \"mag.x\""). Invented values.
func TestStructFieldColumns(t *testing.T) {
	xyz := arrow.StructOf(
		arrow.Field{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		arrow.Field{Name: "y", Type: arrow.PrimitiveTypes.Float64},
		arrow.Field{Name: "z", Type: arrow.PrimitiveTypes.Float64},
	)
	gps := arrow.StructOf(
		arrow.Field{Name: "sats", Type: arrow.PrimitiveTypes.Int32},
		arrow.Field{Name: "hdop", Type: arrow.PrimitiveTypes.Float32},
	)
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "mag", Type: xyz, Nullable: true},
		{Name: "gps", Type: gps},
	}, nil)
	fill := func(first int, nullAt int) func(*array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			sb := b.Field(1).(*array.StructBuilder)
			gb := b.Field(2).(*array.StructBuilder)
			for i := first; i < first+3; i++ {
				b.Field(0).(*array.Float64Builder).Append(float64(i) * 0.002)
				gb.Append(true)
				gb.FieldBuilder(0).(*array.Int32Builder).Append(9)
				gb.FieldBuilder(1).(*array.Float32Builder).Append(0.9)
				if i == nullAt {
					sb.AppendNull() // its children get a slot each too
					continue
				}
				sb.Append(true)
				sb.FieldBuilder(0).(*array.Float64Builder).Append(17600 + float64(i))
				sb.FieldBuilder(1).(*array.Float64Builder).Append(1200 - float64(i))
				sb.FieldBuilder(2).(*array.Float64Builder).Append(-46000 + 0.5*float64(i))
			}
		}
	}
	mapping := WithColumns("bx=mag.x", "by=mag.y", "bz=mag.z")
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		p := writeArrowBatches(t, "nested"+ext, sc, fill(0, -1), fill(3, -1))
		s, err := ReadSamples(p, mapping, WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		if len(s.Bx) != 6 {
			t.Fatalf("%s: %d rows, want 6", ext, len(s.Bx))
		}
		for i := range s.Bx {
			if s.Bx[i] != 17600+float64(i) || s.By[i] != 1200-float64(i) || s.Bz[i] != -46000+0.5*float64(i) {
				t.Errorf("%s: row %d: %g %g %g", ext, i, s.Bx[i], s.By[i], s.Bz[i])
			}
		}
		if _, err := ReadSamples(p, WithAllocator(checked(t))); err == nil || !strings.Contains(err.Error(), "mag.x") {
			t.Errorf("%s: without a mapping: %v, want the children listed", ext, err)
		}

		p = writeArrowBatches(t, "nested-null"+ext, sc, fill(0, -1), fill(3, 4))
		_, err = ReadSamples(p, mapping, WithAllocator(checked(t)))
		if err == nil || !strings.Contains(err.Error(), "column mag.x") || !strings.Contains(err.Error(), "null") {
			t.Errorf("%s: null struct entry: %v, want a null in mag.x refused", ext, err)
		}
		s, err = ReadSamples(p, mapping, WithAllowMissing(true), WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s: allowing missing values: %v", ext, err)
		}
		if !math.IsNaN(s.Bx[4]) || !math.IsNaN(s.Bz[4]) || s.Bx[3] != 17603 || s.Bx[5] != 17605 {
			t.Errorf("%s: null struct entry read as %v", ext, s.Bx)
		}
	}
}

// TestStructParentNullHidesChild checks flattenBatch on a struct whose
// entry 1 is null while its children hold values there (as a struct
// built from existing children is): each flattened child is null at 1
// and keeps its values elsewhere, also for a batch sliced from offset 1.
func TestStructParentNullHidesChild(t *testing.T) {
	mem := checked(t)
	xb := array.NewFloat64Builder(mem)
	xb.AppendValues([]float64{1, 2, 3, 4}, nil)
	x := xb.NewArray()
	xb.Release()
	defer x.Release()
	bm := memory.NewResizableBuffer(mem)
	bm.Resize(1)
	bm.Bytes()[0] = 0b1101 // entry 1 null
	st, err := array.NewStructArrayWithNulls([]arrow.Array{x}, []string{"x"}, bm, 1, 0)
	bm.Release()
	if err != nil {
		t.Fatal(err)
	}
	defer st.Release()
	sc := arrow.NewSchema([]arrow.Field{{Name: "mag", Type: st.DataType(), Nullable: true}}, nil)
	rec := array.NewRecordBatch(sc, []arrow.Array{st}, 4)
	defer rec.Release()
	flat, nested := flattenSchema(sc)
	if !nested || flat.Field(0).Name != "mag.x" {
		t.Fatalf("flattened schema %v", flat)
	}
	for _, c := range []struct {
		rec  arrow.RecordBatch
		want []string
	}{{rec, []string{"1", "(null)", "3", "4"}}, {rec.NewSlice(1, 4), []string{"(null)", "3", "4"}}} {
		out := flattenBatch(mem, c.rec, flat)
		col := out.Column(0)
		var got []string
		for i := 0; i < col.Len(); i++ {
			got = append(got, col.ValueStr(i))
		}
		if strings.Join(got, " ") != strings.Join(c.want, " ") {
			t.Errorf("flattened %v, want %v", got, c.want)
		}
		out.Release()
		if c.rec != rec {
			c.rec.Release()
		}
	}
}
