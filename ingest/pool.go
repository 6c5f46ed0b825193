package ingest

import (
	"math/bits"
	"sync"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// poolAllocator is an Arrow allocator that recycles buffers by power-of-two
// size class. Readers allocate the same few sizes batch after batch, so
// reuse spares the garbage collector most of the work of a long read.
// Memory is zeroed on allocation, as with memory.GoAllocator.
type poolAllocator struct {
	classes [48]sync.Pool
}

// minPooled is the smallest size worth pooling.
const minPooled = 4 << 10

var defaultAllocator memory.Allocator = &poolAllocator{}

func sizeClass(n int) int { return bits.Len(uint(n - 1)) }

func (a *poolAllocator) Allocate(size int) []byte {
	if size < minPooled {
		return make([]byte, size)
	}
	c := sizeClass(size)
	if c >= len(a.classes) {
		return make([]byte, size)
	}
	if p, ok := a.classes[c].Get().(*[]byte); ok {
		b := (*p)[:size]
		clear(b)
		return b
	}
	return make([]byte, size, 1<<c)
}

func (a *poolAllocator) Reallocate(size int, b []byte) []byte {
	if size <= cap(b) {
		old := len(b)
		b = b[:size]
		if size > old {
			clear(b[old:])
		}
		return b
	}
	nb := a.Allocate(size)
	copy(nb, b)
	a.Free(b)
	return nb
}

func (a *poolAllocator) Free(b []byte) {
	c := cap(b)
	if c < minPooled || c&(c-1) != 0 {
		return
	}
	k := sizeClass(c)
	if k < len(a.classes) {
		b = b[:c]
		a.classes[k].Put(&b)
	}
}
