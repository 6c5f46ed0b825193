//go:build !noasm && !gccgo && !safe

#include "textflag.h"

// AVX2 kernels of the Householder code (house.go), used when the processor has AVX2
// (haveAVX2). Each gives bit for bit the result of the gonum call it replaces:
//
// The inner products are summed as gonum's DotUnitary sums on amd64: four partial sums
// s0..s3 over the elements i mod 4 (here the four lanes of one register, there two
// lanes each of two), each running through its elements in order; the last len mod 4
// products added to s0 one by one, in order; then (s1 + s3) + (s0 + s2). A 256-bit
// register holds the same four sums a pair of 128-bit ones does, so the additions are
// the same ones in the same order. Products are x*y, sums partial+product, as there.
//
// The updates c[i] = alpha*v[i] + c[i] are rounded twice, product then sum, as gonum's
// AxpyUnitaryTo does them (no fused multiply-add), and the scaling x[i] = x[i]*alpha
// as ScalUnitary does it. These are element by element, so the grouping of elements
// into registers does not touch the results.
//
// VZEROUPPER before each return spares the SSE code that follows the penalty of dirty
// upper register halves.

// func dotAVX2(x, y []float64) (sum float64)
//
// floats.Dot(x, y[:len(x)]).
TEXT ·dotAVX2(SB), NOSPLIT, $0-56
	MOVQ   x_base+0(FP), R8
	MOVQ   x_len+8(FP), DI
	MOVQ   y_base+24(FP), R9
	VXORPD Y7, Y7, Y7
	XORQ   SI, SI
	SUBQ   $8, DI
	JL     dfour

dloop:
	// Two blocks of four a turn, both into the one accumulator: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  0(R9)(SI*8), Y0, Y0
	VMULPD  32(R9)(SI*8), Y1, Y1
	VADDPD  Y0, Y7, Y7
	VADDPD  Y1, Y7, Y7
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     dloop

dfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      dtail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  0(R9)(SI*8), Y0, Y0
	VADDPD  Y0, Y7, Y7
	ADDQ    $4, SI
	SUBQ    $4, DI

dtail:
	// s2, s3 to X8; the tail goes into s0 (the low lane of X7, s1 kept above it).
	VEXTRACTF128 $1, Y7, X8
	TESTQ        DI, DI
	JZ           dend

done:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD 0(R9)(SI*8), X0, X0
	VADDSD X0, X7, X7
	INCQ   SI
	DECQ   DI
	JNZ    done

dend:
	VADDPD     X8, X7, X7
	VUNPCKHPD  X7, X7, X0
	VADDSD     X7, X0, X0
	VMOVSD     X0, sum+48(FP)
	VZEROUPPER
	RET

// func dotPairAVX2(x, y, z []float64) (xy, xz float64)
//
// floats.Dot(x, y[:len(x)]) and floats.Dot(x, z[:len(x)]) in one pass.
TEXT ·dotPairAVX2(SB), NOSPLIT, $0-88
	MOVQ   x_base+0(FP), R8
	MOVQ   x_len+8(FP), DI
	MOVQ   y_base+24(FP), R9
	MOVQ   z_base+48(FP), R10
	VXORPD Y7, Y7, Y7
	VXORPD Y8, Y8, Y8
	XORQ   SI, SI
	SUBQ   $8, DI
	JL     pfour

ploop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  0(R9)(SI*8), Y0, Y2
	VMULPD  0(R10)(SI*8), Y0, Y3
	VMULPD  32(R9)(SI*8), Y1, Y4
	VMULPD  32(R10)(SI*8), Y1, Y5
	VADDPD  Y2, Y7, Y7
	VADDPD  Y3, Y8, Y8
	VADDPD  Y4, Y7, Y7
	VADDPD  Y5, Y8, Y8
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     ploop

pfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      ptail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  0(R9)(SI*8), Y0, Y2
	VMULPD  0(R10)(SI*8), Y0, Y3
	VADDPD  Y2, Y7, Y7
	VADDPD  Y3, Y8, Y8
	ADDQ    $4, SI
	SUBQ    $4, DI

ptail:
	VEXTRACTF128 $1, Y7, X9
	VEXTRACTF128 $1, Y8, X10
	TESTQ        DI, DI
	JZ           pend

pone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD 0(R9)(SI*8), X0, X2
	VMULSD 0(R10)(SI*8), X0, X3
	VADDSD X2, X7, X7
	VADDSD X3, X8, X8
	INCQ   SI
	DECQ   DI
	JNZ    pone

pend:
	VADDPD     X9, X7, X7
	VUNPCKHPD  X7, X7, X0
	VADDSD     X7, X0, X0
	VMOVSD     X0, xy+72(FP)
	VADDPD     X10, X8, X8
	VUNPCKHPD  X8, X8, X1
	VADDSD     X8, X1, X1
	VMOVSD     X1, xz+80(FP)
	VZEROUPPER
	RET

// func dotQuadAVX2(x, y0, y1, y2, y3 []float64) (s0, s1, s2, s3 float64)
//
// floats.Dot(x, yk[:len(x)]) for the four yk in one pass.
TEXT ·dotQuadAVX2(SB), NOSPLIT, $0-152
	MOVQ   x_base+0(FP), R8
	MOVQ   x_len+8(FP), DI
	MOVQ   y0_base+24(FP), R9
	MOVQ   y1_base+48(FP), R10
	MOVQ   y2_base+72(FP), R11
	MOVQ   y3_base+96(FP), R12
	VXORPD Y8, Y8, Y8
	VXORPD Y9, Y9, Y9
	VXORPD Y10, Y10, Y10
	VXORPD Y11, Y11, Y11
	XORQ   SI, SI
	SUBQ   $8, DI
	JL     qfour

qloop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  0(R9)(SI*8), Y0, Y2
	VMULPD  0(R10)(SI*8), Y0, Y3
	VMULPD  0(R11)(SI*8), Y0, Y4
	VMULPD  0(R12)(SI*8), Y0, Y5
	VADDPD  Y2, Y8, Y8
	VADDPD  Y3, Y9, Y9
	VADDPD  Y4, Y10, Y10
	VADDPD  Y5, Y11, Y11
	VMULPD  32(R9)(SI*8), Y1, Y2
	VMULPD  32(R10)(SI*8), Y1, Y3
	VMULPD  32(R11)(SI*8), Y1, Y4
	VMULPD  32(R12)(SI*8), Y1, Y5
	VADDPD  Y2, Y8, Y8
	VADDPD  Y3, Y9, Y9
	VADDPD  Y4, Y10, Y10
	VADDPD  Y5, Y11, Y11
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     qloop

qfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      qtail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  0(R9)(SI*8), Y0, Y2
	VMULPD  0(R10)(SI*8), Y0, Y3
	VMULPD  0(R11)(SI*8), Y0, Y4
	VMULPD  0(R12)(SI*8), Y0, Y5
	VADDPD  Y2, Y8, Y8
	VADDPD  Y3, Y9, Y9
	VADDPD  Y4, Y10, Y10
	VADDPD  Y5, Y11, Y11
	ADDQ    $4, SI
	SUBQ    $4, DI

qtail:
	VEXTRACTF128 $1, Y8, X12
	VEXTRACTF128 $1, Y9, X13
	VEXTRACTF128 $1, Y10, X14
	VEXTRACTF128 $1, Y11, X15
	TESTQ        DI, DI
	JZ           qend

qone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD 0(R9)(SI*8), X0, X2
	VMULSD 0(R10)(SI*8), X0, X3
	VMULSD 0(R11)(SI*8), X0, X4
	VMULSD 0(R12)(SI*8), X0, X5
	VADDSD X2, X8, X8
	VADDSD X3, X9, X9
	VADDSD X4, X10, X10
	VADDSD X5, X11, X11
	INCQ   SI
	DECQ   DI
	JNZ    qone

qend:
	VADDPD     X12, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, s0+120(FP)
	VADDPD     X13, X9, X9
	VUNPCKHPD  X9, X9, X1
	VADDSD     X9, X1, X1
	VMOVSD     X1, s1+128(FP)
	VADDPD     X14, X10, X10
	VUNPCKHPD  X10, X10, X2
	VADDSD     X10, X2, X2
	VMOVSD     X2, s2+136(FP)
	VADDPD     X15, X11, X11
	VUNPCKHPD  X11, X11, X3
	VADDSD     X11, X3, X3
	VMOVSD     X3, s3+144(FP)
	VZEROUPPER
	RET

// func addScaledAVX2(dst []float64, alpha float64, s []float64)
//
// floats.AddScaled(dst[:len(s)], alpha, s): dst[i] = alpha*s[i] + dst[i].
TEXT ·addScaledAVX2(SB), NOSPLIT, $0-56
	MOVQ         dst_base+0(FP), DX
	VBROADCASTSD alpha+24(FP), Y15
	MOVQ         s_base+32(FP), R8
	MOVQ         s_len+40(FP), DI
	XORQ         SI, SI
	SUBQ         $8, DI
	JL           afour

aloop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  Y15, Y0, Y0
	VMULPD  Y15, Y1, Y1
	VADDPD  0(DX)(SI*8), Y0, Y0
	VADDPD  32(DX)(SI*8), Y1, Y1
	VMOVUPD Y0, 0(DX)(SI*8)
	VMOVUPD Y1, 32(DX)(SI*8)
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     aloop

afour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      atail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y15, Y0, Y0
	VADDPD  0(DX)(SI*8), Y0, Y0
	VMOVUPD Y0, 0(DX)(SI*8)
	ADDQ    $4, SI
	SUBQ    $4, DI

atail:
	TESTQ DI, DI
	JZ    aend

aone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD X15, X0, X0
	VADDSD 0(DX)(SI*8), X0, X0
	VMOVSD X0, 0(DX)(SI*8)
	INCQ   SI
	DECQ   DI
	JNZ    aone

aend:
	VZEROUPPER
	RET

// func addScaled2AVX2(v []float64, a0, a1 float64, c0, c1 []float64)
//
// floats.AddScaled(ck[:len(v)], ak, v) for the two columns in one pass over v.
TEXT ·addScaled2AVX2(SB), NOSPLIT, $0-88
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	VBROADCASTSD a0+24(FP), Y14
	VBROADCASTSD a1+32(FP), Y15
	MOVQ         c0_base+40(FP), R9
	MOVQ         c1_base+64(FP), R10
	XORQ         SI, SI
	SUBQ         $8, DI
	JL           bfour

bloop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  Y14, Y0, Y2
	VMULPD  Y15, Y0, Y3
	VMULPD  Y14, Y1, Y4
	VMULPD  Y15, Y1, Y5
	VADDPD  0(R9)(SI*8), Y2, Y2
	VADDPD  0(R10)(SI*8), Y3, Y3
	VADDPD  32(R9)(SI*8), Y4, Y4
	VADDPD  32(R10)(SI*8), Y5, Y5
	VMOVUPD Y2, 0(R9)(SI*8)
	VMOVUPD Y3, 0(R10)(SI*8)
	VMOVUPD Y4, 32(R9)(SI*8)
	VMOVUPD Y5, 32(R10)(SI*8)
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     bloop

bfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      btail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y14, Y0, Y2
	VMULPD  Y15, Y0, Y3
	VADDPD  0(R9)(SI*8), Y2, Y2
	VADDPD  0(R10)(SI*8), Y3, Y3
	VMOVUPD Y2, 0(R9)(SI*8)
	VMOVUPD Y3, 0(R10)(SI*8)
	ADDQ    $4, SI
	SUBQ    $4, DI

btail:
	TESTQ DI, DI
	JZ    bend

bone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD X14, X0, X2
	VMULSD X15, X0, X3
	VADDSD 0(R9)(SI*8), X2, X2
	VADDSD 0(R10)(SI*8), X3, X3
	VMOVSD X2, 0(R9)(SI*8)
	VMOVSD X3, 0(R10)(SI*8)
	INCQ   SI
	DECQ   DI
	JNZ    bone

bend:
	VZEROUPPER
	RET

// func addScaled4AVX2(v []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64)
//
// floats.AddScaled(ck[:len(v)], ak, v) for the four columns in one pass over v.
TEXT ·addScaled4AVX2(SB), NOSPLIT, $0-152
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	VBROADCASTSD a0+24(FP), Y12
	VBROADCASTSD a1+32(FP), Y13
	VBROADCASTSD a2+40(FP), Y14
	VBROADCASTSD a3+48(FP), Y15
	MOVQ         c0_base+56(FP), R9
	MOVQ         c1_base+80(FP), R10
	MOVQ         c2_base+104(FP), R11
	MOVQ         c3_base+128(FP), R12
	XORQ         SI, SI
	SUBQ         $4, DI
	JL           etail

eloop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y12, Y0, Y2
	VMULPD  Y13, Y0, Y3
	VMULPD  Y14, Y0, Y4
	VMULPD  Y15, Y0, Y5
	VADDPD  0(R9)(SI*8), Y2, Y2
	VADDPD  0(R10)(SI*8), Y3, Y3
	VADDPD  0(R11)(SI*8), Y4, Y4
	VADDPD  0(R12)(SI*8), Y5, Y5
	VMOVUPD Y2, 0(R9)(SI*8)
	VMOVUPD Y3, 0(R10)(SI*8)
	VMOVUPD Y4, 0(R11)(SI*8)
	VMOVUPD Y5, 0(R12)(SI*8)
	ADDQ    $4, SI
	SUBQ    $4, DI
	JGE     eloop

etail:
	ADDQ $4, DI
	JZ   eend

eone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD X12, X0, X2
	VMULSD X13, X0, X3
	VMULSD X14, X0, X4
	VMULSD X15, X0, X5
	VADDSD 0(R9)(SI*8), X2, X2
	VADDSD 0(R10)(SI*8), X3, X3
	VADDSD 0(R11)(SI*8), X4, X4
	VADDSD 0(R12)(SI*8), X5, X5
	VMOVSD X2, 0(R9)(SI*8)
	VMOVSD X3, 0(R10)(SI*8)
	VMOVSD X4, 0(R11)(SI*8)
	VMOVSD X5, 0(R12)(SI*8)
	INCQ   SI
	DECQ   DI
	JNZ    eone

eend:
	VZEROUPPER
	RET

// func scaleAVX2(alpha float64, x []float64)
//
// floats.Scale(alpha, x): x[i] = x[i]*alpha.
TEXT ·scaleAVX2(SB), NOSPLIT, $0-32
	VBROADCASTSD alpha+0(FP), Y15
	MOVQ         x_base+8(FP), R8
	MOVQ         x_len+16(FP), DI
	XORQ         SI, SI
	SUBQ         $8, DI
	JL           sfour

sloop:
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 32(R8)(SI*8), Y1
	VMULPD  Y15, Y0, Y0
	VMULPD  Y15, Y1, Y1
	VMOVUPD Y0, 0(R8)(SI*8)
	VMOVUPD Y1, 32(R8)(SI*8)
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     sloop

sfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      stail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y15, Y0, Y0
	VMOVUPD Y0, 0(R8)(SI*8)
	ADDQ    $4, SI
	SUBQ    $4, DI

stail:
	TESTQ DI, DI
	JZ    send

sone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD X15, X0, X0
	VMOVSD X0, 0(R8)(SI*8)
	INCQ   SI
	DECQ   DI
	JNZ    sone

send:
	VZEROUPPER
	RET


// The fused kernels below apply one reflector to columns and, in the same pass, form
// the columns' inner products with the next reflector (or a column's own squared
// norm), which the Householder code would otherwise read the columns again for. The
// region starts one row below the reflector's diagonal: element 0 is updated only, and
// the inner products run over elements 1 on, their four partial sums being those of
// floats.Dot on the slice from element 1 (the products of each block of four are
// therefore taken from the updated values just stored, and added in lane order).
// len(v) is the length of the region; each column must be at least that long and w at
// least one shorter.

// func axpySelfDotAVX2(v []float64, a0 float64, c0 []float64) (d0 float64)
//
// c0[i] = a0*v[i] + c0[i] as floats.AddScaled, then d0 = floats.Dot(c0[1:n], c0[1:n]),
// n = len(v).
TEXT ·axpySelfDotAVX2(SB), NOSPLIT, $0-64
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	VBROADCASTSD a0+24(FP), Y12
	MOVQ         c0_base+32(FP), R9
	VXORPD       Y8, Y8, Y8
	VXORPD       X4, X4, X4
	TESTQ        DI, DI
	JZ           zend

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	ADDQ   $8, R8
	ADDQ   $8, R9
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     zfour

zloop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y2, Y3
	VADDPD  Y3, Y8, Y8
	VMOVUPD 32(R8)(SI*8), Y0
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y2, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     zloop

zfour:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      ztail
	VMOVUPD 0(R8)(SI*8), Y0
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y2, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $4, SI
	SUBQ    $4, DI

ztail:
	VEXTRACTF128 $1, Y8, X4
	TESTQ        DI, DI
	JZ           zend

zone:
	VMOVSD 0(R8)(SI*8), X0
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X2, X3
	VADDSD X3, X8, X8
	INCQ   SI
	DECQ   DI
	JNZ    zone

zend:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+56(FP)
	VZEROUPPER
	RET

// func axpyDot1AVX2(v, w []float64, a0 float64, c0 []float64) (d0 float64)
//
// c0[i] = a0*v[i] + c0[i] as floats.AddScaled, then d0 = floats.Dot(w[:n-1], c0[1:n]),
// n = len(v).
TEXT ·axpyDot1AVX2(SB), NOSPLIT, $0-88
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+48(FP), Y12
	MOVQ         c0_base+56(FP), R9
	VXORPD       Y8, Y8, Y8
	VXORPD       X4, X4, X4
	TESTQ        DI, DI
	JZ           f1end

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	ADDQ   $8, R8
	ADDQ   $8, R9
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     f1four

f1loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     f1loop

f1four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      f1tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $4, SI
	SUBQ    $4, DI

f1tail:
	VEXTRACTF128 $1, Y8, X4
	TESTQ        DI, DI
	JZ           f1end

f1one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	INCQ   SI
	DECQ   DI
	JNZ    f1one

f1end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+80(FP)
	VZEROUPPER
	RET

// func axpyDot2AVX2(v, w []float64, a0, a1 float64, c0, c1 []float64) (d0, d1 float64)
//
// axpyDot1AVX2 on two columns, reading v and w once.
TEXT ·axpyDot2AVX2(SB), NOSPLIT, $0-128
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+48(FP), Y12
	VBROADCASTSD a1+56(FP), Y13
	MOVQ         c0_base+64(FP), R9
	MOVQ         c1_base+88(FP), R10
	VXORPD       Y8, Y8, Y8
	VXORPD       Y9, Y9, Y9
	VXORPD       X4, X4, X4
	VXORPD       X5, X5, X5
	TESTQ        DI, DI
	JZ           f2end

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	VMULSD X13, X0, X2
	VADDSD (R10), X2, X2
	VMOVSD X2, (R10)
	ADDQ   $8, R8
	ADDQ   $8, R9
	ADDQ   $8, R10
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     f2four

f2loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  32(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     f2loop

f2four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      f2tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	ADDQ    $4, SI
	SUBQ    $4, DI

f2tail:
	VEXTRACTF128 $1, Y8, X4
	VEXTRACTF128 $1, Y9, X5
	TESTQ        DI, DI
	JZ           f2end

f2one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	VMULSD X13, X0, X2
	VADDSD 0(R10)(SI*8), X2, X2
	VMOVSD X2, 0(R10)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X9, X9
	INCQ   SI
	DECQ   DI
	JNZ    f2one

f2end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+112(FP)
	VADDPD     X5, X9, X9
	VUNPCKHPD  X9, X9, X0
	VADDSD     X9, X0, X0
	VMOVSD     X0, d1+120(FP)
	VZEROUPPER
	RET

// func axpyDot4AVX2(v, w []float64, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64)
//
// axpyDot1AVX2 on four columns, reading v and w once.
TEXT ·axpyDot4AVX2(SB), NOSPLIT, $0-208
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+48(FP), Y12
	VBROADCASTSD a1+56(FP), Y13
	VBROADCASTSD a2+64(FP), Y14
	VBROADCASTSD a3+72(FP), Y15
	MOVQ         c0_base+80(FP), R9
	MOVQ         c1_base+104(FP), R10
	MOVQ         c2_base+128(FP), R11
	MOVQ         c3_base+152(FP), R12
	VXORPD       Y8, Y8, Y8
	VXORPD       Y9, Y9, Y9
	VXORPD       Y10, Y10, Y10
	VXORPD       Y11, Y11, Y11
	VXORPD       X4, X4, X4
	VXORPD       X5, X5, X5
	VXORPD       X6, X6, X6
	VXORPD       X7, X7, X7
	TESTQ        DI, DI
	JZ           f4end

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	VMULSD X13, X0, X2
	VADDSD (R10), X2, X2
	VMOVSD X2, (R10)
	VMULSD X14, X0, X2
	VADDSD (R11), X2, X2
	VMOVSD X2, (R11)
	VMULSD X15, X0, X2
	VADDSD (R12), X2, X2
	VMOVSD X2, (R12)
	ADDQ   $8, R8
	ADDQ   $8, R9
	ADDQ   $8, R10
	ADDQ   $8, R11
	ADDQ   $8, R12
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     f4four

f4loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  0(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  0(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  32(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  32(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  32(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     f4loop

f4four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      f4tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  0(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  0(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	ADDQ    $4, SI
	SUBQ    $4, DI

f4tail:
	VEXTRACTF128 $1, Y8, X4
	VEXTRACTF128 $1, Y9, X5
	VEXTRACTF128 $1, Y10, X6
	VEXTRACTF128 $1, Y11, X7
	TESTQ        DI, DI
	JZ           f4end

f4one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	VMULSD X13, X0, X2
	VADDSD 0(R10)(SI*8), X2, X2
	VMOVSD X2, 0(R10)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X9, X9
	VMULSD X14, X0, X2
	VADDSD 0(R11)(SI*8), X2, X2
	VMOVSD X2, 0(R11)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X10, X10
	VMULSD X15, X0, X2
	VADDSD 0(R12)(SI*8), X2, X2
	VMOVSD X2, 0(R12)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X11, X11
	INCQ   SI
	DECQ   DI
	JNZ    f4one

f4end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+176(FP)
	VADDPD     X5, X9, X9
	VUNPCKHPD  X9, X9, X0
	VADDSD     X9, X0, X0
	VMOVSD     X0, d1+184(FP)
	VADDPD     X6, X10, X10
	VUNPCKHPD  X10, X10, X0
	VADDSD     X10, X0, X0
	VMOVSD     X0, d2+192(FP)
	VADDPD     X7, X11, X11
	VUNPCKHPD  X11, X11, X0
	VADDSD     X11, X0, X0
	VMOVSD     X0, d3+200(FP)
	VZEROUPPER
	RET

// The kernels below are those above with the next reflector's scaling folded in: w is
// first scaled in place, w[i] = w[i]*ws as floats.Scale(ws, w) does it, and the scaled
// values are the ones the inner products take (houseGen's last pass, done here by the
// first pass that reads the new reflector).

// func axpyDotScaled1AVX2(v, w []float64, ws, a0 float64, c0 []float64) (d0 float64)
//
// floats.Scale(ws, w[:len(v)-1]), then axpyDot1AVX2 with the scaled w, in one pass.
TEXT ·axpyDotScaled1AVX2(SB), NOSPLIT, $0-96
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+56(FP), Y12
	MOVQ         c0_base+64(FP), R9
	VXORPD       Y8, Y8, Y8
	VXORPD       X4, X4, X4
	TESTQ        DI, DI
	JZ           g1end
	VBROADCASTSD ws+48(FP), Y7

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	ADDQ   $8, R8
	ADDQ   $8, R9
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     g1four

g1loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 32(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     g1loop

g1four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      g1tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	ADDQ    $4, SI
	SUBQ    $4, DI

g1tail:
	VEXTRACTF128 $1, Y8, X4
	TESTQ        DI, DI
	JZ           g1end

g1one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD ws+48(FP), X1, X1
	VMOVSD X1, 0(R13)(SI*8)
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	INCQ   SI
	DECQ   DI
	JNZ    g1one

g1end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+88(FP)
	VZEROUPPER
	RET

// func axpyDotScaled2AVX2(v, w []float64, ws, a0, a1 float64, c0, c1 []float64) (d0, d1 float64)
//
// floats.Scale(ws, w[:len(v)-1]), then axpyDot2AVX2 with the scaled w, in one pass.
TEXT ·axpyDotScaled2AVX2(SB), NOSPLIT, $0-136
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+56(FP), Y12
	VBROADCASTSD a1+64(FP), Y13
	MOVQ         c0_base+72(FP), R9
	MOVQ         c1_base+96(FP), R10
	VXORPD       Y8, Y8, Y8
	VXORPD       Y9, Y9, Y9
	VXORPD       X4, X4, X4
	VXORPD       X5, X5, X5
	TESTQ        DI, DI
	JZ           g2end
	VBROADCASTSD ws+48(FP), Y7

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	VMULSD X13, X0, X2
	VADDSD (R10), X2, X2
	VMOVSD X2, (R10)
	ADDQ   $8, R8
	ADDQ   $8, R9
	ADDQ   $8, R10
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     g2four

g2loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 32(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  32(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     g2loop

g2four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      g2tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	ADDQ    $4, SI
	SUBQ    $4, DI

g2tail:
	VEXTRACTF128 $1, Y8, X4
	VEXTRACTF128 $1, Y9, X5
	TESTQ        DI, DI
	JZ           g2end

g2one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD ws+48(FP), X1, X1
	VMOVSD X1, 0(R13)(SI*8)
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	VMULSD X13, X0, X2
	VADDSD 0(R10)(SI*8), X2, X2
	VMOVSD X2, 0(R10)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X9, X9
	INCQ   SI
	DECQ   DI
	JNZ    g2one

g2end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+120(FP)
	VADDPD     X5, X9, X9
	VUNPCKHPD  X9, X9, X0
	VADDSD     X9, X0, X0
	VMOVSD     X0, d1+128(FP)
	VZEROUPPER
	RET

// func axpyDotScaled4AVX2(v, w []float64, ws, a0, a1, a2, a3 float64, c0, c1, c2, c3 []float64) (d0, d1, d2, d3 float64)
//
// floats.Scale(ws, w[:len(v)-1]), then axpyDot4AVX2 with the scaled w, in one pass.
TEXT ·axpyDotScaled4AVX2(SB), NOSPLIT, $0-216
	MOVQ         v_base+0(FP), R8
	MOVQ         v_len+8(FP), DI
	MOVQ         w_base+24(FP), R13
	VBROADCASTSD a0+56(FP), Y12
	VBROADCASTSD a1+64(FP), Y13
	VBROADCASTSD a2+72(FP), Y14
	VBROADCASTSD a3+80(FP), Y15
	MOVQ         c0_base+88(FP), R9
	MOVQ         c1_base+112(FP), R10
	MOVQ         c2_base+136(FP), R11
	MOVQ         c3_base+160(FP), R12
	VXORPD       Y8, Y8, Y8
	VXORPD       Y9, Y9, Y9
	VXORPD       Y10, Y10, Y10
	VXORPD       Y11, Y11, Y11
	VXORPD       X4, X4, X4
	VXORPD       X5, X5, X5
	VXORPD       X6, X6, X6
	VXORPD       X7, X7, X7
	TESTQ        DI, DI
	JZ           g4end
	VBROADCASTSD ws+48(FP), Y7

	// Element 0: the update alone.
	VMOVSD (R8), X0
	VMULSD X12, X0, X2
	VADDSD (R9), X2, X2
	VMOVSD X2, (R9)
	VMULSD X13, X0, X2
	VADDSD (R10), X2, X2
	VMOVSD X2, (R10)
	VMULSD X14, X0, X2
	VADDSD (R11), X2, X2
	VMOVSD X2, (R11)
	VMULSD X15, X0, X2
	VADDSD (R12), X2, X2
	VMOVSD X2, (R12)
	ADDQ   $8, R8
	ADDQ   $8, R9
	ADDQ   $8, R10
	ADDQ   $8, R11
	ADDQ   $8, R12
	XORQ   SI, SI
	SUBQ   $9, DI
	JL     g4four

g4loop:
	// Two blocks of four a turn, both into the same sums: element i, then i+4.
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  0(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  0(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	VMOVUPD 32(R8)(SI*8), Y0
	VMOVUPD 32(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 32(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  32(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  32(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  32(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  32(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 32(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	ADDQ    $8, SI
	SUBQ    $8, DI
	JGE     g4loop

g4four:
	ADDQ    $8, DI
	CMPQ    DI, $4
	JL      g4tail
	VMOVUPD 0(R8)(SI*8), Y0
	VMOVUPD 0(R13)(SI*8), Y1
	VMULPD  Y7, Y1, Y1
	VMOVUPD Y1, 0(R13)(SI*8)
	VMULPD  Y12, Y0, Y2
	VADDPD  0(R9)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R9)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y8, Y8
	VMULPD  Y13, Y0, Y2
	VADDPD  0(R10)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R10)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y9, Y9
	VMULPD  Y14, Y0, Y2
	VADDPD  0(R11)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R11)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y10, Y10
	VMULPD  Y15, Y0, Y2
	VADDPD  0(R12)(SI*8), Y2, Y2
	VMOVUPD Y2, 0(R12)(SI*8)
	VMULPD  Y2, Y1, Y3
	VADDPD  Y3, Y11, Y11
	ADDQ    $4, SI
	SUBQ    $4, DI

g4tail:
	VEXTRACTF128 $1, Y8, X4
	VEXTRACTF128 $1, Y9, X5
	VEXTRACTF128 $1, Y10, X6
	VEXTRACTF128 $1, Y11, X7
	TESTQ        DI, DI
	JZ           g4end

g4one:
	VMOVSD 0(R8)(SI*8), X0
	VMOVSD 0(R13)(SI*8), X1
	VMULSD ws+48(FP), X1, X1
	VMOVSD X1, 0(R13)(SI*8)
	VMULSD X12, X0, X2
	VADDSD 0(R9)(SI*8), X2, X2
	VMOVSD X2, 0(R9)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X8, X8
	VMULSD X13, X0, X2
	VADDSD 0(R10)(SI*8), X2, X2
	VMOVSD X2, 0(R10)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X9, X9
	VMULSD X14, X0, X2
	VADDSD 0(R11)(SI*8), X2, X2
	VMOVSD X2, 0(R11)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X10, X10
	VMULSD X15, X0, X2
	VADDSD 0(R12)(SI*8), X2, X2
	VMOVSD X2, 0(R12)(SI*8)
	VMULSD X2, X1, X3
	VADDSD X3, X11, X11
	INCQ   SI
	DECQ   DI
	JNZ    g4one

g4end:
	VADDPD     X4, X8, X8
	VUNPCKHPD  X8, X8, X0
	VADDSD     X8, X0, X0
	VMOVSD     X0, d0+184(FP)
	VADDPD     X5, X9, X9
	VUNPCKHPD  X9, X9, X0
	VADDSD     X9, X0, X0
	VMOVSD     X0, d1+192(FP)
	VADDPD     X6, X10, X10
	VUNPCKHPD  X10, X10, X0
	VADDSD     X10, X0, X0
	VMOVSD     X0, d2+200(FP)
	VADDPD     X7, X11, X11
	VUNPCKHPD  X11, X11, X0
	VADDSD     X11, X0, X0
	VMOVSD     X0, d3+208(FP)
	VZEROUPPER
	RET

// func sub3AVX2(v []float64, s0, s1, s2 float64)
// v[3i] -= s0, v[3i+1] -= s1, v[3i+2] -= s2 for len(v) a multiple of 12: four readings
// (three registers) a step, each element's subtraction as the portable loop does it.
TEXT ·sub3AVX2(SB), NOSPLIT, $0-48
	VMOVSD      s0+24(FP), X3
	VMOVSD      s1+32(FP), X4
	VMOVSD      s2+40(FP), X5
	VUNPCKLPD   X4, X3, X6         // s0 s1
	VUNPCKLPD   X3, X5, X7         // s2 s0
	VUNPCKLPD   X5, X4, X8         // s1 s2
	VINSERTF128 $1, X7, Y6, Y0     // s0 s1 s2 s0
	VINSERTF128 $1, X6, Y8, Y1     // s1 s2 s0 s1
	VINSERTF128 $1, X8, Y7, Y2     // s2 s0 s1 s2
	MOVQ        v_base+0(FP), R8
	MOVQ        v_len+8(FP), DI
	XORQ        SI, SI
	SUBQ        $12, DI
	JL          s3end

s3loop:
	VMOVUPD 0(R8)(SI*8), Y3
	VMOVUPD 32(R8)(SI*8), Y4
	VMOVUPD 64(R8)(SI*8), Y5
	VSUBPD  Y0, Y3, Y3
	VSUBPD  Y1, Y4, Y4
	VSUBPD  Y2, Y5, Y5
	VMOVUPD Y3, 0(R8)(SI*8)
	VMOVUPD Y4, 32(R8)(SI*8)
	VMOVUPD Y5, 64(R8)(SI*8)
	ADDQ    $12, SI
	SUBQ    $12, DI
	JGE     s3loop

s3end:
	VZEROUPPER
	RET
