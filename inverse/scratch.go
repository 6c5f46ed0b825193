package inverse

import (
	"sync"
	"unsafe"
)

// scratch lends the work buffers of one FitLines call (the separables' factors, derivative
// blocks and basis copies, the noise estimate's differences, the covariance's
// workspace) and takes them all back when the call ends, so that the next call finds
// them warm in cache instead of asking the allocator, and the garbage collector for
// them later, again. A fit allocates a few hundred kilobytes of such buffers; fresh
// memory costs more than its allocation (it is cold), so reuse, not fewer collections,
// is the saving.
//
// Buffers are lent, never shared: a buffer handed out is not handed out again until
// release, which the owner of the scratch calls once nothing it lent is used any more.
// Nothing reachable from a Result may come from a scratch. A nil *scratch allocates
// (tests and callers outside FitLines build separables without one).
type scratch struct {
	free, used [][]float64
	lm         []float64 // the LM engine's workspace (lmProblem.work), one fit at a time
	// seps are separables lent by separable; the first nsep are in use. A fit builds one
	// per start it ranks or iterates, each several hundred bytes.
	seps []*separable
	nsep int
}

// separable lends a zeroed separable (a new one when s is nil), but for two things it
// keeps from its last loan: its LM wrapper (lmp) and the memory of its column layout
// (pos, length zero), which newSeparableIn reuses.
func (s *scratch) separable() *separable {
	if s == nil {
		return new(separable)
	}
	if s.nsep == len(s.seps) {
		s.seps = append(s.seps, new(separable))
	}
	sp := s.seps[s.nsep]
	s.nsep++
	*sp = separable{lmp: sp.lmp, pos: sp.pos[:0]}
	return sp
}

// scratchPool recycles scratches between calls of FitLines.
var scratchPool = sync.Pool{New: func() any { return new(scratch) }}

// grow returns buf[:n] when its capacity allows, and otherwise a lent buffer of length
// n (the smallest free one that fits, or a new one). The contents are not cleared.
func (s *scratch) grow(buf []float64, n int) []float64 {
	if cap(buf) >= n {
		return buf[:n]
	}
	return s.take(n)
}

// take lends a buffer of length n whose contents are arbitrary.
func (s *scratch) take(n int) []float64 {
	if s == nil {
		return make([]float64, n)
	}
	// The smallest free buffer that fits, the first of them on a tie. One of exactly n
	// is the first such (none smaller fits), so the search stops there: a fit asks
	// for the same sizes again and again.
	best, bc := -1, 0
	for i, b := range s.free {
		if c := cap(b); c >= n && (best < 0 || c < bc) {
			best, bc = i, c
			if c == n {
				break
			}
		}
	}
	var b []float64
	if best >= 0 {
		b = s.free[best][:n]
		last := len(s.free) - 1
		s.free[best] = s.free[last]
		s.free[last] = nil
		s.free = s.free[:last]
	} else {
		b = make([]float64, n)
	}
	s.used = append(s.used, b)
	return b
}

// take3 lends n triples whose contents are arbitrary: the memory of take(3n), seen as
// [3]float64 values (the same layout).
func (s *scratch) take3(n int) [][3]float64 {
	if n == 0 {
		return nil
	}
	b := s.take(3 * n)
	return unsafe.Slice((*[3]float64)(unsafe.Pointer(&b[0])), n)
}

// zeros lends a buffer of length n filled with zeros.
func (s *scratch) zeros(n int) []float64 {
	b := s.take(n)
	clear(b)
	return b
}

// release takes back every buffer lent since the last release.
func (s *scratch) release() {
	for _, sp := range s.seps[:s.nsep] {
		// Drop its references to the readings and buffers (the LM wrapper keeps
		// nothing else once cleared).
		if p := sp.lmp; p != nil {
			p.lower, p.upper, p.work = nil, nil, nil
		}
		*sp = separable{lmp: sp.lmp, pos: sp.pos[:0]}
	}
	s.nsep = 0
	s.free = append(s.free, s.used...)
	clear(s.used)
	s.used = s.used[:0]
}
