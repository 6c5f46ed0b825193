package ingest

import (
	"math"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestArrowInfiniteRefusedWhenMissingAllowed: an infinite field value in a
// log whose columns already have canonical names and float64 type, with
// positions (read without conversion) is refused with its file, row and column whether or
// not missing values are allowed, as the CSV reader and the converting
// path refuse it. An infinity is not a missing value: allowing missing
// values (inspect, convert, --drop-missing) let it through to inspect's
// statistics, to a converted file and to the fits. The values are
// invented; IEEE 754 gives the infinities.
func TestArrowInfiniteRefusedWhenMissingAllowed(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		{Name: "y", Type: arrow.PrimitiveTypes.Float64},
		{Name: "z", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	for _, inf := range []float64{math.Inf(1), math.Inf(-1)} {
		for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
			p := writeArrowBatches(t, "harrow-fen-inf"+ext, sc, func(b *array.RecordBuilder) {
				b.Field(0).(*array.Float64Builder).AppendValues([]float64{100, 101, 102, 103}, nil)
				b.Field(1).(*array.Float64Builder).AppendValues([]float64{0, 0.5, 1, 1.5}, nil)
				b.Field(2).(*array.Float64Builder).AppendValues([]float64{2, 2, 2, 2}, nil)
				b.Field(3).(*array.Float64Builder).AppendValues([]float64{0.3, 0.3, 0.3, 0.3}, nil)
				b.Field(4).(*array.Float64Builder).AppendValues([]float64{120.5, 121, inf, 122}, nil)
				b.Field(5).(*array.Float64Builder).AppendValues([]float64{18000, 18001, 18002, 18003}, nil)
				b.Field(6).(*array.Float64Builder).AppendValues([]float64{-46000, -46001, -46002, -46003}, nil)
			})
			want := "row 2: column bx: value is infinite"
			for _, allow := range []bool{false, true} {
				_, err := ReadSamples(p, WithAllocator(checked(t)), WithAllowMissing(allow))
				wantErr(t, err, want)
				wantErr(t, err, "harrow-fen-inf"+ext)
			}
			_, err := Inspect(p, WithAllocator(checked(t)))
			wantErr(t, err, want)

			// A NaN in the same cell is still a missing value when they
			// are allowed.
			q := writeArrowBatches(t, "harrow-fen-nan"+ext, sc, func(b *array.RecordBuilder) {
				b.Field(0).(*array.Float64Builder).AppendValues([]float64{100, 101, 102, 103}, nil)
				b.Field(1).(*array.Float64Builder).AppendValues([]float64{0, 0.5, 1, 1.5}, nil)
				b.Field(2).(*array.Float64Builder).AppendValues([]float64{2, 2, 2, 2}, nil)
				b.Field(3).(*array.Float64Builder).AppendValues([]float64{0.3, 0.3, 0.3, 0.3}, nil)
				b.Field(4).(*array.Float64Builder).AppendValues([]float64{120.5, 121, math.NaN(), 122}, nil)
				b.Field(5).(*array.Float64Builder).AppendValues([]float64{18000, 18001, 18002, 18003}, nil)
				b.Field(6).(*array.Float64Builder).AppendValues([]float64{-46000, -46001, -46002, -46003}, nil)
			})
			s, err := ReadSamples(q, WithAllocator(checked(t)), WithAllowMissing(true))
			if err != nil {
				t.Fatalf("%s NaN with missing values allowed: %v", ext, err)
			}
			if len(s.Bx) != 4 || !math.IsNaN(s.Bx[2]) || s.Bx[3] != 122 {
				t.Errorf("%s NaN with missing values allowed: bx %v, want NaN at row 2", ext, s.Bx)
			}
		}
	}
}
