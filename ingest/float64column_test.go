package ingest

import (
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestFloat64Column: a batch's float64 column by name, nil for a column
// it lacks or one of another type.
func TestFloat64Column(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: ColTime, Type: arrow.PrimitiveTypes.Float64},
		{Name: ColBx, Type: arrow.PrimitiveTypes.Float64},
		{Name: ColGroup, Type: arrow.BinaryTypes.String},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).AppendValues([]float64{1, 2}, nil)
	b.Field(1).(*array.Float64Builder).AppendValues([]float64{17000, 17001}, nil)
	b.Field(2).(*array.StringBuilder).AppendValues([]string{"T01", "T01"}, nil)
	rec := b.NewRecordBatch()
	defer rec.Release()
	if got := Float64Column(rec, ColBx); len(got) != 2 || got[0] != 17000 || got[1] != 17001 {
		t.Errorf("bx %v, want [17000 17001]", got)
	}
	if got := Float64Column(rec, ColBy); got != nil {
		t.Errorf("by %v, want nil: the batch has no by", got)
	}
	if got := Float64Column(rec, ColGroup); got != nil {
		t.Errorf("group %v, want nil: it is a string column", got)
	}
}
