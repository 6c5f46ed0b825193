//go:build !noasm && !gccgo && !safe

#include "textflag.h"

// The kernels below compute four readings at a time, one to each lane of a ymm
// register, with the operations of the Go loops they replace (lineColumn and
// dLineLevel in varpro.go) in the same order and no fused multiply-add, so that every
// lane holds bit for bit the value the Go loop gives for its reading. Where both
// operands of an operation vary from reading to reading they are also in the order
// the Go 1.26 compiler gives them in those loops, as that decides which of two NaNs
// an operation passes on (it matters only for readings that are NaN; the
// loop-invariant operands are never NaN for a line in the fit).
//
// The readings are [3]float64 in memory, x y z one after another. Six 16-byte loads
// of four readings give
//
//	a = [x0 y0 | x2 y2], b = [z0 x1 | z2 x3], c = [y1 z1 | y3 z3]
//
// and three shuffles the vectors of x, y and z (LOADXYZ). The outputs are three per
// reading, interleaved the same way; STORE3 puts them back in that order.

// LOADXYZ loads the four readings at 0(base)(idx*1) into X, Y and Z, with A, B and
// C as scratch (each given as its Y and X name).
#define LOADXYZ(base, idx, A, Ax, B, Bx, C, Cx, X, Y, Z) \
	VMOVUPD     0(base)(idx*1), Ax; \
	VINSERTF128 $1, 48(base)(idx*1), A, A; \
	VMOVUPD     16(base)(idx*1), Bx; \
	VINSERTF128 $1, 64(base)(idx*1), B, B; \
	VMOVUPD     32(base)(idx*1), Cx; \
	VINSERTF128 $1, 80(base)(idx*1), C, C; \
	VSHUFPD     $0x0a, B, A, X; \
	VSHUFPD     $0x05, C, A, Y; \
	VSHUFPD     $0x0a, C, B, Z

// STORE3 writes the east, north and up values of four readings, in A, B and C, to
// the 12 float64 at 0(base)(idx*1), reading by reading; P, Q and R are scratch. A, B
// and C are overwritten.
//
//	P = [A0 B0 | A2 B2], Q = [C0 A1 | C2 A3], R = [B1 C1 | B3 C3]
//	memory: [P.lo Q.lo] [R.lo P.hi] [Q.hi R.hi]
#define STORE3(base, idx, A, B, C, P, Q, R) \
	VUNPCKLPD  B, A, P; \
	VSHUFPD    $0x0a, A, C, Q; \
	VUNPCKHPD  C, B, R; \
	VPERM2F128 $0x20, Q, P, A; \
	VBLENDPD   $0x0c, P, R, B; \
	VPERM2F128 $0x31, R, Q, C; \
	VMOVUPD    A, 0(base)(idx*1); \
	VMOVUPD    B, 32(base)(idx*1); \
	VMOVUPD    C, 64(base)(idx*1)

// func lineColumnAVX2(col, pts *float64, n int, u0, u1, u2, p00, p01, p02, k float64) (finite bool)
//
// The loop of lineColumn for n readings, n a positive multiple of 4: col[3i:3i+3]
// receives the basis of the line through p0 along u at pts[i], k = nT * k2pi (the
// constant the compiler folds in the Go loop). finite reports that every value
// written is finite: Y8 gathers by OR the bits of v - v for every value v, which is
// +0 for a finite v and a NaN otherwise.
TEXT ·lineColumnAVX2(SB), NOSPLIT, $0-81
	MOVQ col+0(FP), DI
	MOVQ pts+8(FP), SI
	MOVQ n+16(FP), CX
	LEAQ (CX)(CX*2), CX
	SHLQ $3, CX                // 24 bytes a reading
	XORQ BX, BX
	VBROADCASTSD u0+24(FP), Y9
	VBROADCASTSD u1+32(FP), Y10
	VBROADCASTSD u2+40(FP), Y11
	VBROADCASTSD p00+48(FP), Y12
	VBROADCASTSD p01+56(FP), Y13
	VBROADCASTSD p02+64(FP), Y14
	VBROADCASTSD k+72(FP), Y15
	VXORPD       Y8, Y8, Y8

colLoop:
	LOADXYZ(SI, BX, Y0, X0, Y1, X1, Y2, X2, Y3, Y4, Y5)

	// d = r - p0
	VSUBPD Y12, Y3, Y0
	VSUBPD Y13, Y4, Y1
	VSUBPD Y14, Y5, Y2

	// du = d0*u0 + d1*u1 + d2*u2
	VMULPD Y9, Y0, Y3
	VMULPD Y10, Y1, Y4
	VADDPD Y3, Y4, Y3
	VMULPD Y11, Y2, Y4
	VADDPD Y3, Y4, Y3

	// rho = d - du*u
	VMULPD Y3, Y9, Y4
	VSUBPD Y4, Y0, Y4
	VMULPD Y3, Y10, Y5
	VSUBPD Y5, Y1, Y5
	VMULPD Y11, Y3, Y6
	VSUBPD Y6, Y2, Y6

	// k / |rho|^2
	VMULPD Y4, Y4, Y4
	VMULPD Y5, Y5, Y5
	VADDPD Y5, Y4, Y4
	VMULPD Y6, Y6, Y6
	VADDPD Y4, Y6, Y6
	VDIVPD Y6, Y15, Y6

	// (u x d) times it
	VMULPD Y10, Y2, Y3
	VMULPD Y11, Y1, Y4
	VSUBPD Y4, Y3, Y3
	VMULPD Y6, Y3, Y3
	VMULPD Y11, Y0, Y4
	VMULPD Y9, Y2, Y5
	VSUBPD Y5, Y4, Y4
	VMULPD Y6, Y4, Y4
	VMULPD Y9, Y1, Y5
	VMULPD Y10, Y0, Y7
	VSUBPD Y7, Y5, Y5
	VMULPD Y6, Y5, Y5

	// Finiteness: OR of v - v over the three outputs.
	VSUBPD Y3, Y3, Y6
	VSUBPD Y4, Y4, Y7
	VORPD  Y6, Y8, Y8
	VORPD  Y7, Y8, Y8
	VSUBPD Y5, Y5, Y6
	VORPD  Y6, Y8, Y8

	STORE3(DI, BX, Y3, Y4, Y5, Y0, Y1, Y2)

	ADDQ $96, BX
	CMPQ BX, CX
	JLT  colLoop
	VPTEST Y8, Y8
	SETEQ  finite+80(FP)
	VZEROUPPER
	RET

// Four ones, and four sign bits (for the negation in dLineLevel, as an exclusive or).
DATA lineOnes<>+0(SB)/8, $1.0
DATA lineOnes<>+8(SB)/8, $1.0
DATA lineOnes<>+16(SB)/8, $1.0
DATA lineOnes<>+24(SB)/8, $1.0
GLOBL lineOnes<>(SB), RODATA|NOPTR, $32

DATA lineSigns<>+0(SB)/8, $0x8000000000000000
DATA lineSigns<>+8(SB)/8, $0x8000000000000000
DATA lineSigns<>+16(SB)/8, $0x8000000000000000
DATA lineSigns<>+24(SB)/8, $0x8000000000000000
GLOBL lineSigns<>(SB), RODATA|NOPTR, $32

// Offsets in dLineLevelAVX2's table of broadcast constants (32 bytes each).
#define kU0 0(R8)
#define kU1 32(R8)
#define kU2 64(R8)
#define kP00 96(R8)
#define kP01 128(R8)
#define kP02 160(R8)
#define kN00 192(R8)
#define kN01 224(R8)
#define kCS0 256(R8)
#define kCS1 288(R8)
#define kCS2 320(R8)
#define kCZ0 352(R8)
#define kCZ1 384(R8)
#define kCZ2 416(R8)
#define kVA0 448(R8)
#define kVA1 480(R8)
#define kVD0 512(R8)
#define kVD1 544(R8)
#define kVD2 576(R8)
#define kKC 608(R8)

// BCAST broadcasts the float64 argument arg to the table entry dst.
#define BCAST(arg, dst) \
	VBROADCASTSD arg, Y0; \
	VMOVUPD      Y0, dst

// func dLineLevelAVX2(cs, cz, ca, cd, pts *float64, n, nd int, u0, u1, u2, p00, p01, p02, n00, n01, cs0, cs1, cs2, cz0, cz1, cz2, va0, va1, vd0, vd1, vd2, kc float64)
//
// The loop of dLineLevel for n readings, n a positive multiple of 4, and nd columns
// (2: offset and height into cs and cz; 3: and azimuth into ca; 4: and dip into cd).
// The loop-invariant scalars are broadcast once to a table in the frame (640 bytes,
// aligned to 32 by hand) and used from there as memory operands.
TEXT ·dLineLevelAVX2(SB), $672-216
	LEAQ 31(SP), R8
	ANDQ $-32, R8
	BCAST(u0+56(FP), kU0)
	BCAST(u1+64(FP), kU1)
	BCAST(u2+72(FP), kU2)
	BCAST(p00+80(FP), kP00)
	BCAST(p01+88(FP), kP01)
	BCAST(p02+96(FP), kP02)
	BCAST(n00+104(FP), kN00)
	BCAST(n01+112(FP), kN01)
	BCAST(cs0+120(FP), kCS0)
	BCAST(cs1+128(FP), kCS1)
	BCAST(cs2+136(FP), kCS2)
	BCAST(cz0+144(FP), kCZ0)
	BCAST(cz1+152(FP), kCZ1)
	BCAST(cz2+160(FP), kCZ2)
	BCAST(va0+168(FP), kVA0)
	BCAST(va1+176(FP), kVA1)
	BCAST(vd0+184(FP), kVD0)
	BCAST(vd1+192(FP), kVD1)
	BCAST(vd2+200(FP), kVD2)
	BCAST(kc+208(FP), kKC)

	MOVQ cs+0(FP), DI
	MOVQ cz+8(FP), R9
	MOVQ ca+16(FP), R10
	MOVQ cd+24(FP), R11
	MOVQ pts+32(FP), SI
	MOVQ n+40(FP), CX
	LEAQ (CX)(CX*2), CX
	SHLQ $3, CX                // 24 bytes a reading
	MOVQ nd+48(FP), DX
	XORQ BX, BX

	// Registers in the loop: Y0-Y2 d, Y3 d.u, Y4-Y6 rho, Y7 kq, Y8 kq2 (later kq2*du),
	// Y9-Y11 u x d, Y12-Y15 scratch.
levelLoop:
	LOADXYZ(SI, BX, Y12, X12, Y13, X13, Y14, X14, Y0, Y1, Y2)

	// d = r - p0
	VSUBPD kP00, Y0, Y0
	VSUBPD kP01, Y1, Y1
	VSUBPD kP02, Y2, Y2

	// du = d0*u0 + d1*u1 + d2*u2
	VMULPD kU0, Y0, Y12
	VMULPD kU1, Y1, Y13
	VADDPD Y12, Y13, Y12
	VMULPD kU2, Y2, Y13
	VADDPD Y12, Y13, Y3

	// rho = d - du*u
	VMULPD kU0, Y3, Y4
	VSUBPD Y4, Y0, Y4
	VMULPD kU1, Y3, Y5
	VSUBPD Y5, Y1, Y5
	VMULPD kU2, Y3, Y6
	VSUBPD Y6, Y2, Y6

	// iq = 1/|rho|^2, kq = kc*iq, kq2 = 2*kq*iq
	VMULPD  Y4, Y4, Y12
	VMULPD  Y5, Y5, Y13
	VADDPD  Y13, Y12, Y12
	VMULPD  Y6, Y6, Y13
	VADDPD  Y13, Y12, Y12
	VMOVUPD lineOnes<>(SB), Y13
	VDIVPD  Y12, Y13, Y12
	VMULPD  kKC, Y12, Y7
	VADDPD  Y7, Y7, Y8
	VMULPD  Y8, Y12, Y8

	// x = u x d
	VMULPD kU1, Y2, Y9
	VMULPD kU2, Y1, Y12
	VSUBPD Y12, Y9, Y9
	VMULPD kU2, Y0, Y10
	VMULPD kU0, Y2, Y12
	VSUBPD Y12, Y10, Y10
	VMULPD kU0, Y1, Y11
	VMULPD kU1, Y0, Y12
	VSUBPD Y12, Y11, Y11

	// Offset: t = kq2*(r0*n00 + r1*n01); t*x - kq*(u x n0).
	VMULPD kN00, Y4, Y12
	VMULPD kN01, Y5, Y13
	VADDPD Y12, Y13, Y12
	VMULPD Y8, Y12, Y12
	VMULPD Y9, Y12, Y13
	VMULPD kCS0, Y7, Y14
	VSUBPD Y14, Y13, Y13
	VMULPD Y10, Y12, Y14
	VMULPD kCS1, Y7, Y15
	VSUBPD Y15, Y14, Y14
	VMULPD Y11, Y12, Y12
	VMULPD kCS2, Y7, Y15
	VSUBPD Y15, Y12, Y15
	STORE3(DI, BX, Y13, Y14, Y15, Y4, Y5, Y12)

	// Height: t = kq2*r2; t*x - kq*(u x up).
	VMULPD Y8, Y6, Y12
	VMULPD Y9, Y12, Y13
	VMULPD kCZ0, Y7, Y14
	VSUBPD Y14, Y13, Y13
	VMULPD Y10, Y12, Y14
	VMULPD kCZ1, Y7, Y15
	VSUBPD Y15, Y14, Y14
	VMULPD Y11, Y12, Y12
	VMULPD kCZ2, Y7, Y15
	VSUBPD Y15, Y12, Y15
	STORE3(R9, BX, Y13, Y14, Y15, Y4, Y5, Y6)

	CMPQ DX, $2
	JLE  levelNext
	VMULPD Y3, Y8, Y8

	// Azimuth: t = kq2*du*(d0*va0 + d1*va1);
	// kq*(va1*d2) + t*x0, kq*(-(va0*d2)) + t*x1, kq*(va0*d1 - va1*d0) + t*x2.
	VMULPD kVA0, Y0, Y12
	VMULPD kVA1, Y1, Y13
	VADDPD Y12, Y13, Y12
	VMULPD Y8, Y12, Y12
	VMULPD kVA1, Y2, Y13
	VMULPD Y7, Y13, Y13
	VMULPD Y9, Y12, Y14
	VADDPD Y13, Y14, Y13
	VMULPD kVA0, Y2, Y14
	VXORPD lineSigns<>(SB), Y14, Y14
	VMULPD Y7, Y14, Y14
	VMULPD Y10, Y12, Y15
	VADDPD Y14, Y15, Y14
	VMULPD kVA0, Y1, Y15
	VMULPD kVA1, Y0, Y3
	VSUBPD Y3, Y15, Y15
	VMULPD Y7, Y15, Y15
	VMULPD Y11, Y12, Y12
	VADDPD Y15, Y12, Y15
	STORE3(R10, BX, Y13, Y14, Y15, Y3, Y4, Y5)

	CMPQ DX, $3
	JLE  levelNext

	// Dip: t = kq2*du*(d0*vd0 + d1*vd1 + d2*vd2); kq*(vd x d) + t*x.
	VMULPD kVD0, Y0, Y12
	VMULPD kVD1, Y1, Y13
	VADDPD Y12, Y13, Y12
	VMULPD kVD2, Y2, Y13
	VADDPD Y12, Y13, Y12
	VMULPD Y8, Y12, Y12
	VMULPD kVD1, Y2, Y13
	VMULPD kVD2, Y1, Y14
	VSUBPD Y14, Y13, Y13
	VMULPD Y7, Y13, Y13
	VMULPD Y12, Y9, Y9
	VADDPD Y13, Y9, Y13
	VMULPD kVD2, Y0, Y14
	VMULPD kVD0, Y2, Y15
	VSUBPD Y15, Y14, Y14
	VMULPD Y7, Y14, Y14
	VMULPD Y12, Y10, Y10
	VADDPD Y14, Y10, Y14
	VMULPD kVD0, Y1, Y15
	VMULPD kVD1, Y0, Y3
	VSUBPD Y3, Y15, Y15
	VMULPD Y7, Y15, Y15
	VMULPD Y12, Y11, Y11
	VADDPD Y15, Y11, Y15
	STORE3(R11, BX, Y13, Y14, Y15, Y3, Y4, Y5)

levelNext:
	ADDQ $96, BX
	CMPQ BX, CX
	JLT  levelLoop
	VZEROUPPER
	RET
