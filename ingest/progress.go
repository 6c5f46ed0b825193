package ingest

// progressReader reports the rows handed out by the reader it wraps to a
// WithProgress callback.
type progressReader struct {
	Reader
	fn   func(rows int64)
	rows int64
}

func (r *progressReader) Next() bool {
	if !r.Reader.Next() {
		return false
	}
	r.rows += r.Reader.RecordBatch().NumRows()
	r.fn(r.rows)
	return true
}

// plan forwards to the wrapped reader, so that planOf sees through the
// wrapper.
func (r *progressReader) plan() *plan { return planOf(r.Reader) }
