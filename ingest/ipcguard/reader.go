package ipcguard

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"

	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// ErrTooLong is the cause of a message refused because it declares more
// metadata or body bytes than the reader allows.
var ErrTooLong = errors.New("Arrow IPC message longer than allowed")

// Limits bounds the messages a Reader accepts. Zero means no bound of
// that kind beyond MaxMetadata for the metadata.
type Limits struct {
	Metadata int64 // largest metadata; 0: MaxMetadata
	Body     int64 // largest body; 0: none (memory still grows only with bytes read)
	// Why ends the refusal of a body over the Body limit, to tell the
	// user what to do (e.g. "save the stream to a file first").
	Why string
	// Size is the input's length when known (a regular file read from
	// its start), else 0. A body that fits in the bytes left is read
	// into one buffer of its length; one declared past the end grows as
	// its bytes arrive, and stops where the input does.
	Size int64
}

// chunk is the first step of a message part's buffer: parts grow by
// doubling as their bytes arrive, so a declared length never takes
// memory the input does not hold.
const chunk = 64 << 10

// Reader is an ipc.MessageReader that checks each message before arrow-go
// decodes it: the length prefix against the limits, the metadata with
// CheckMessage, and the body length against the limits. It reads a part
// in growing steps, so that memory follows the bytes actually read, not
// the lengths declared. Pass it to ipc.NewReaderFromMessageReader.
type Reader struct {
	r    io.Reader
	mem  memory.Allocator
	lim  Limits
	msg  *ipc.Message
	refs int64
	// N counts the bytes read so far (where the next message starts).
	N int64
}

// NewReader returns a checking message reader over r.
func NewReader(r io.Reader, mem memory.Allocator, lim Limits) *Reader {
	if lim.Metadata <= 0 || lim.Metadata > MaxMetadata {
		lim.Metadata = MaxMetadata
	}
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	return &Reader{r: r, mem: mem, lim: lim, refs: 1}
}

// Retain and Release follow arrow-go's reference counting.
func (r *Reader) Retain() { r.refs++ }

// Release drops a reference; the last one frees the current message.
func (r *Reader) Release() {
	r.refs--
	if r.refs == 0 && r.msg != nil {
		r.msg.Release()
		r.msg = nil
	}
}

func (r *Reader) read(p []byte) error {
	n, err := io.ReadFull(r.r, p)
	r.N += int64(n)
	if errors.Is(err, io.EOF) {
		return io.ErrUnexpectedEOF
	}
	return err
}

// grow reads n bytes into a buffer that grows as they arrive.
func (r *Reader) grow(n int64) (*memory.Buffer, error) {
	buf := memory.NewResizableBuffer(r.mem)
	have := int64(0)
	for have < n {
		next := min(n, max(chunk, 2*have))
		buf.Resize(int(next))
		if err := r.read(buf.Bytes()[have:next]); err != nil {
			buf.Release()
			return nil, err
		}
		have = next
	}
	if n == 0 {
		buf.Resize(0)
	}
	return buf, nil
}

func (r *Reader) tooLong(at int64, what string, n, limit int64, hint string) error {
	why := ""
	if hint != "" {
		why = "; " + hint
	}
	return fmt.Errorf("%w: the message at byte %d declares %s of %d bytes, over the limit of %d%s", ErrTooLong, at, what, n, limit, why)
}

// Message reads, checks and returns the next message; io.EOF at an
// end-of-stream marker, an error wrapping io.ErrUnexpectedEOF if the
// input stops inside a message.
func (r *Reader) Message() (*ipc.Message, error) {
	if r.msg != nil {
		r.msg.Release()
		r.msg = nil
	}
	start := r.N
	var head [4]byte
	n, err := io.ReadFull(r.r, head[:])
	r.N += int64(n)
	if err != nil { // io.EOF: the input ends between messages
		return nil, fmt.Errorf("arrow/ipc: could not read continuation indicator: %w", err)
	}
	ln := binary.LittleEndian.Uint32(head[:])
	switch ln {
	case 0:
		return nil, io.EOF
	case 0xFFFFFFFF:
		if err := r.read(head[:]); err != nil {
			return nil, fmt.Errorf("arrow/ipc: could not read message length: %w", err)
		}
		ln = binary.LittleEndian.Uint32(head[:])
		if ln == 0 {
			return nil, io.EOF
		}
	}
	metaLen := int64(int32(ln))
	if metaLen < 4 {
		return nil, fmt.Errorf("arrow/ipc: invalid message metadata length %d at byte %d", metaLen, start)
	}
	if metaLen > r.lim.Metadata {
		return nil, r.tooLong(start, "metadata", metaLen, r.lim.Metadata, "")
	}
	meta, err := r.grow(metaLen)
	if err != nil {
		return nil, fmt.Errorf("arrow/ipc: could not read message metadata: %w", err)
	}
	defer meta.Release()
	bodyLen, err := CheckMessage(meta.Bytes())
	if err != nil {
		return nil, fmt.Errorf("the message at byte %d: %w", start, err)
	}
	if r.lim.Body > 0 && bodyLen > r.lim.Body {
		return nil, r.tooLong(start, "a body", bodyLen, r.lim.Body, r.lim.Why)
	}
	var body *memory.Buffer
	if r.lim.Size > 0 && bodyLen <= r.lim.Size-r.N {
		body = memory.NewResizableBuffer(r.mem)
		body.Resize(int(bodyLen))
		if err = r.read(body.Bytes()); err != nil {
			body.Release()
			body = nil
		}
	} else {
		body, err = r.grow(bodyLen)
	}
	if err != nil {
		return nil, fmt.Errorf("arrow/ipc: could not read message body: %w", err)
	}
	defer body.Release()
	r.msg = ipc.NewMessage(meta, body)
	return r.msg, nil
}

// Bounded is an allocator that refuses, by a panic that arrow-go's and
// the ingest readers' recovers turn into an error, any one buffer over
// Max bytes. arrow-go sizes a compressed IPC buffer's memory from the 8
// bytes before it (the uncompressed length) unchecked; without a bound a
// corrupt one asks the Go runtime for terabytes, a fatal error.
type Bounded struct {
	memory.Allocator
	Max int
}

func (b Bounded) check(n int) {
	if n > b.Max {
		panic(fmt.Sprintf("a buffer of %d bytes asked for, over the limit of %d bytes for one buffer (a corrupt length?)", n, b.Max))
	}
}

// Allocate allocates n bytes, or panics over Max.
func (b Bounded) Allocate(n int) []byte { b.check(n); return b.Allocator.Allocate(n) }

// Reallocate resizes buf to n bytes, or panics over Max.
func (b Bounded) Reallocate(n int, buf []byte) []byte {
	b.check(n)
	return b.Allocator.Reallocate(n, buf)
}
