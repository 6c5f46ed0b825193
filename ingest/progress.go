package ingest

import "context"

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

// ctxReader stops the reader it wraps between batches once ctx is done
// (WithContext).
type ctxReader struct {
	Reader
	ctx  context.Context
	name string
	err  error
}

func (r *ctxReader) Next() bool {
	if r.err != nil {
		return false
	}
	if err := r.ctx.Err(); err != nil {
		r.err = &Error{File: r.name, Batch: -1, Msg: "read stopped", Err: err}
		return false
	}
	return r.Reader.Next()
}

func (r *ctxReader) Err() error {
	if r.err != nil {
		return r.err
	}
	return r.Reader.Err()
}

// plan forwards to the wrapped reader, so that planOf sees through the
// wrapper.
func (r *ctxReader) plan() *plan { return planOf(r.Reader) }
