//go:build !noasm && !gccgo && !safe

#include "textflag.h"

// The SSE2 loops of dotPair and dotQuad (dotpair_amd64.go), for processors without
// AVX2 (with it, housekern_amd64.s has the same sums in 256-bit registers).

// func dotPairSSE2(x, y, z []float64) (xy, xz float64)
//
// Two inner products sharing x, each summed exactly as gonum's DotUnitary on amd64
// sums one (four partial sums over the elements i mod 4, held in the lanes of two
// registers; the last len(x) mod 4 products added to the first; then the lanes
// combined as (s0 + s2) + (s1 + s3)), so that the results are bit for bit those of
// floats.Dot(x, y) and floats.Dot(x, z). Loading x once for both and running four
// addition chains instead of two, it takes about the time of one. len(y) and len(z)
// must be at least len(x).
TEXT ·dotPairSSE2(SB), NOSPLIT, $0-88
	MOVQ x_base+0(FP), R8
	MOVQ x_len+8(FP), DI
	MOVQ y_base+24(FP), R9
	MOVQ z_base+48(FP), R10
	XORPS X7, X7
	XORPS X8, X8
	XORPS X9, X9
	XORPS X10, X10
	MOVQ $0, SI
	SUBQ $4, DI
	JL   tail

loop:
	MOVUPD 0(R8)(SI*8), X0
	MOVUPD 16(R8)(SI*8), X2
	MOVUPD 0(R9)(SI*8), X1
	MOVUPD 16(R9)(SI*8), X3
	MOVUPD 0(R10)(SI*8), X4
	MOVUPD 16(R10)(SI*8), X5
	MULPD  X0, X1
	MULPD  X2, X3
	MULPD  X0, X4
	MULPD  X2, X5
	ADDPD  X1, X7
	ADDPD  X3, X8
	ADDPD  X4, X9
	ADDPD  X5, X10
	ADDQ   $4, SI
	SUBQ   $4, DI
	JGE    loop

tail:
	ADDQ $4, DI
	JLE  end

onemore:
	MOVSD 0(R8)(SI*8), X0
	MOVSD 0(R9)(SI*8), X1
	MOVSD 0(R10)(SI*8), X4
	MULSD X0, X1
	MULSD X0, X4
	ADDSD X1, X7
	ADDSD X4, X9
	ADDQ  $1, SI
	SUBQ  $1, DI
	JNZ   onemore

end:
	ADDPD    X8, X7
	MOVSD    X7, X0
	UNPCKHPD X7, X7
	ADDSD    X0, X7
	MOVSD    X7, xy+72(FP)
	ADDPD    X10, X9
	MOVSD    X9, X0
	UNPCKHPD X9, X9
	ADDSD    X0, X9
	MOVSD    X9, xz+80(FP)
	RET

// func dotQuadSSE2(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64)
//
// Four inner products sharing x, each summed exactly as DotUnitary sums one (see
// dotPairSSE2): eight addition chains, x loaded once.
TEXT ·dotQuadSSE2(SB), NOSPLIT, $0-152
	MOVQ  x_base+0(FP), R8
	MOVQ  x_len+8(FP), DI
	MOVQ  y0_base+24(FP), R9
	MOVQ  y1_base+48(FP), R10
	MOVQ  y2_base+72(FP), R11
	MOVQ  y3_base+96(FP), R12
	XORPS X8, X8
	XORPS X9, X9
	XORPS X10, X10
	XORPS X11, X11
	XORPS X12, X12
	XORPS X13, X13
	XORPS X14, X14
	XORPS X15, X15
	MOVQ  $0, SI
	SUBQ  $4, DI
	JL    qtail

qloop:
	MOVUPD 0(R8)(SI*8), X0
	MOVUPD 16(R8)(SI*8), X1
	MOVUPD 0(R9)(SI*8), X2
	MOVUPD 16(R9)(SI*8), X3
	MOVUPD 0(R10)(SI*8), X4
	MOVUPD 16(R10)(SI*8), X5
	MULPD  X0, X2
	MULPD  X1, X3
	MULPD  X0, X4
	MULPD  X1, X5
	ADDPD  X2, X8
	ADDPD  X3, X9
	ADDPD  X4, X10
	ADDPD  X5, X11
	MOVUPD 0(R11)(SI*8), X2
	MOVUPD 16(R11)(SI*8), X3
	MOVUPD 0(R12)(SI*8), X4
	MOVUPD 16(R12)(SI*8), X5
	MULPD  X0, X2
	MULPD  X1, X3
	MULPD  X0, X4
	MULPD  X1, X5
	ADDPD  X2, X12
	ADDPD  X3, X13
	ADDPD  X4, X14
	ADDPD  X5, X15
	ADDQ   $4, SI
	SUBQ   $4, DI
	JGE    qloop

qtail:
	ADDQ $4, DI
	JLE  qend

qone:
	MOVSD 0(R8)(SI*8), X0
	MOVSD 0(R9)(SI*8), X2
	MOVSD 0(R10)(SI*8), X4
	MULSD X0, X2
	MULSD X0, X4
	ADDSD X2, X8
	ADDSD X4, X10
	MOVSD 0(R11)(SI*8), X2
	MOVSD 0(R12)(SI*8), X4
	MULSD X0, X2
	MULSD X0, X4
	ADDSD X2, X12
	ADDSD X4, X14
	ADDQ  $1, SI
	SUBQ  $1, DI
	JNZ   qone

qend:
	ADDPD    X9, X8
	MOVSD    X8, X0
	UNPCKHPD X8, X8
	ADDSD    X0, X8
	MOVSD    X8, s0+120(FP)
	ADDPD    X11, X10
	MOVSD    X10, X0
	UNPCKHPD X10, X10
	ADDSD    X0, X10
	MOVSD    X10, s1+128(FP)
	ADDPD    X13, X12
	MOVSD    X12, X0
	UNPCKHPD X12, X12
	ADDSD    X0, X12
	MOVSD    X12, s2+136(FP)
	ADDPD    X15, X14
	MOVSD    X14, X0
	UNPCKHPD X14, X14
	ADDSD    X0, X14
	MOVSD    X14, s3+144(FP)
	RET
