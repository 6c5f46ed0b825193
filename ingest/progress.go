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
// (WithContext); a read waiting on a pipe is cut short by the file's read
// deadline (open), and the error that gives is reported as the stop.
type ctxReader struct {
	Reader
	ctx  context.Context
	name string
	err  error
	stop func() bool // ends open's watch of ctx
}

func (r *ctxReader) Next() bool {
	if r.err != nil {
		return false
	}
	if r.stopped() {
		return false
	}
	if r.Reader.Next() {
		return true
	}
	r.stopped() // a read cut short when ctx ended
	return false
}

// stopped records, once ctx is done, the error Next and Err report.
func (r *ctxReader) stopped() bool {
	if err := r.ctx.Err(); err != nil {
		r.err = &Error{File: r.name, Batch: -1, Msg: "read stopped", Err: err}
		return true
	}
	return false
}

func (r *ctxReader) Err() error {
	if r.err != nil {
		return r.err
	}
	return r.Reader.Err()
}

// Release ends the watch of ctx and releases the wrapped reader.
func (r *ctxReader) Release() {
	if r.stop != nil {
		r.stop()
	}
	r.Reader.Release()
}

// plan forwards to the wrapped reader, so that planOf sees through the
// wrapper.
func (r *ctxReader) plan() *plan { return planOf(r.Reader) }
