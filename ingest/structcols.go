package ingest

import (
	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Struct columns (a field held as mag: struct<x, y, z>, as a writer of
// nested records leaves it) are read by their children's dotted names,
// mag.x, mag.y, mag.z, as other Arrow and Parquet tools name them: the
// schema and every batch are flattened before the plan sees them. Before,
// the column was listed as "mag" and no mapping could reach its children.

// flattenSchema returns sc with each struct field replaced by its
// children named parent.child (recursively), and whether it held any.
func flattenSchema(sc *arrow.Schema) (*arrow.Schema, bool) {
	var fields []arrow.Field
	any := false
	var add func(prefix string, f arrow.Field)
	add = func(prefix string, f arrow.Field) {
		if st, ok := f.Type.(*arrow.StructType); ok {
			any = true
			for _, c := range st.Fields() {
				add(prefix+f.Name+".", c)
			}
			return
		}
		f.Name = prefix + f.Name
		fields = append(fields, f)
	}
	for _, f := range sc.Fields() {
		add("", f)
	}
	if !any {
		return sc, false
	}
	md := sc.Metadata()
	return arrow.NewSchema(fields, &md), true
}

// flattenBatch returns rec's columns flattened as flattenSchema flattens
// its schema (into flat, that schema). A child of a struct with null
// entries is null there too.
func flattenBatch(mem memory.Allocator, rec arrow.RecordBatch, flat *arrow.Schema) arrow.RecordBatch {
	var cols []arrow.Array
	var made []arrow.Array // arrays made here, released once in the batch
	var add func(a arrow.Array)
	add = func(a arrow.Array) {
		st, ok := a.(*array.Struct)
		if !ok {
			cols = append(cols, a)
			return
		}
		for i := 0; i < st.NumField(); i++ {
			child := st.Field(i)
			if st.NullN() > 0 {
				child = withParentNulls(mem, st, child)
				made = append(made, child)
			}
			add(child)
		}
	}
	for _, c := range rec.Columns() {
		add(c)
	}
	out := array.NewRecordBatch(flat, cols, rec.NumRows())
	for _, a := range made {
		a.Release()
	}
	return out
}

// withParentNulls returns child (of struct parent, of the same length)
// null wherever the parent or the child is.
func withParentNulls(mem memory.Allocator, parent *array.Struct, child arrow.Array) arrow.Array {
	d := child.Data()
	off, n := d.Offset(), d.Len()
	buf := memory.NewResizableBuffer(mem)
	buf.Resize(int(bitutil.BytesForBits(int64(off + n))))
	bits := buf.Bytes()
	for i := range bits {
		bits[i] = 0
	}
	for i := 0; i < n; i++ {
		if parent.IsValid(i) && child.IsValid(i) {
			bitutil.SetBit(bits, off+i)
		}
	}
	bufs := append([]*memory.Buffer{buf}, d.Buffers()[1:]...)
	nd := array.NewData(d.DataType(), n, bufs, d.Children(), array.UnknownNullCount, off)
	buf.Release()
	defer nd.Release()
	return array.MakeFromData(nd)
}
