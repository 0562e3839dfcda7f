//go:build !purego

#include "textflag.h"

// Every product is rounded (VMULPD/VMULSD) and the products are added in
// the order of sum8Go and sum4Go (VADDPD/VADDSD, no fused multiply-add),
// four values per instruction, then one at a time for the last n mod 4.

// func sum8AVX(dst *float64, n int, src *float64, m8, gs8 int, w *[8]float64, acc bool)
TEXT ·sum8AVX(SB), NOSPLIT, $0-49
	MOVQ w+40(FP), AX
	VBROADCASTSD 0(AX), Y0
	VBROADCASTSD 8(AX), Y1
	VBROADCASTSD 16(AX), Y2
	VBROADCASTSD 24(AX), Y3
	VBROADCASTSD 32(AX), Y4
	VBROADCASTSD 40(AX), Y5
	VBROADCASTSD 48(AX), Y6
	VBROADCASTSD 56(AX), Y7
	MOVQ src+16(FP), SI // the rows: SI, R8, R9, R10 then R11, R12, R13, AX
	MOVQ m8+24(FP), DX
	LEAQ (SI)(DX*1), R8
	LEAQ (R8)(DX*1), R9
	LEAQ (R9)(DX*1), R10
	MOVQ gs8+32(FP), R11
	ADDQ SI, R11
	LEAQ (R11)(DX*1), R12
	LEAQ (R12)(DX*1), R13
	LEAQ (R13)(DX*1), AX
	MOVQ dst+0(FP), DI
	MOVQ n+8(FP), CX
	SHLQ $3, CX         // CX: bytes of dst
	MOVQ CX, DX
	ANDQ $-32, DX       // DX: bytes of the 4-wide part
	XORQ BX, BX
	CMPB acc+48(FP), $0
	JNE  accvec

setvec:
	CMPQ   BX, DX
	JGE    settail
	VMULPD (SI)(BX*1), Y0, Y8
	VMULPD (R8)(BX*1), Y1, Y9
	VADDPD Y9, Y8, Y8
	VMULPD (R9)(BX*1), Y2, Y10
	VMULPD (R10)(BX*1), Y3, Y11
	VADDPD Y11, Y10, Y10
	VADDPD Y10, Y8, Y8
	VMULPD (R11)(BX*1), Y4, Y9
	VMULPD (R12)(BX*1), Y5, Y10
	VADDPD Y10, Y9, Y9
	VMULPD (R13)(BX*1), Y6, Y10
	VMULPD (AX)(BX*1), Y7, Y11
	VADDPD Y11, Y10, Y10
	VADDPD Y10, Y9, Y9
	VADDPD Y9, Y8, Y8
	VMOVUPD Y8, (DI)(BX*1)
	ADDQ   $32, BX
	JMP    setvec

settail:
	CMPQ   BX, CX
	JGE    done
	VMULSD (SI)(BX*1), X0, X8
	VMULSD (R8)(BX*1), X1, X9
	VADDSD X9, X8, X8
	VMULSD (R9)(BX*1), X2, X10
	VMULSD (R10)(BX*1), X3, X11
	VADDSD X11, X10, X10
	VADDSD X10, X8, X8
	VMULSD (R11)(BX*1), X4, X9
	VMULSD (R12)(BX*1), X5, X10
	VADDSD X10, X9, X9
	VMULSD (R13)(BX*1), X6, X10
	VMULSD (AX)(BX*1), X7, X11
	VADDSD X11, X10, X10
	VADDSD X10, X9, X9
	VADDSD X9, X8, X8
	VMOVSD X8, (DI)(BX*1)
	ADDQ   $8, BX
	JMP    settail

accvec:
	CMPQ   BX, DX
	JGE    acctail
	VMULPD (SI)(BX*1), Y0, Y8
	VMULPD (R8)(BX*1), Y1, Y9
	VADDPD Y9, Y8, Y8
	VMULPD (R9)(BX*1), Y2, Y10
	VMULPD (R10)(BX*1), Y3, Y11
	VADDPD Y11, Y10, Y10
	VADDPD Y10, Y8, Y8
	VMULPD (R11)(BX*1), Y4, Y9
	VMULPD (R12)(BX*1), Y5, Y10
	VADDPD Y10, Y9, Y9
	VMULPD (R13)(BX*1), Y6, Y10
	VMULPD (AX)(BX*1), Y7, Y11
	VADDPD Y11, Y10, Y10
	VADDPD Y10, Y9, Y9
	VADDPD Y9, Y8, Y8
	VADDPD (DI)(BX*1), Y8, Y8
	VMOVUPD Y8, (DI)(BX*1)
	ADDQ   $32, BX
	JMP    accvec

acctail:
	CMPQ   BX, CX
	JGE    done
	VMULSD (SI)(BX*1), X0, X8
	VMULSD (R8)(BX*1), X1, X9
	VADDSD X9, X8, X8
	VMULSD (R9)(BX*1), X2, X10
	VMULSD (R10)(BX*1), X3, X11
	VADDSD X11, X10, X10
	VADDSD X10, X8, X8
	VMULSD (R11)(BX*1), X4, X9
	VMULSD (R12)(BX*1), X5, X10
	VADDSD X10, X9, X9
	VMULSD (R13)(BX*1), X6, X10
	VMULSD (AX)(BX*1), X7, X11
	VADDSD X11, X10, X10
	VADDSD X10, X9, X9
	VADDSD X9, X8, X8
	VADDSD (DI)(BX*1), X8, X8
	VMOVSD X8, (DI)(BX*1)
	ADDQ   $8, BX
	JMP    acctail

done:
	VZEROUPPER
	RET

// func sum4AVX(dst *float64, n int, src *float64, gs8 int, w *[4]float64)
TEXT ·sum4AVX(SB), NOSPLIT, $0-40
	MOVQ w+32(FP), AX
	VBROADCASTSD 0(AX), Y0
	VBROADCASTSD 8(AX), Y1
	VBROADCASTSD 16(AX), Y2
	VBROADCASTSD 24(AX), Y3
	MOVQ src+16(FP), SI // the rows: SI, R8, R9, R10
	MOVQ gs8+24(FP), DX
	LEAQ (SI)(DX*1), R8
	LEAQ (R8)(DX*1), R9
	LEAQ (R9)(DX*1), R10
	MOVQ dst+0(FP), DI
	MOVQ n+8(FP), CX
	SHLQ $3, CX
	MOVQ CX, DX
	ANDQ $-32, DX
	XORQ BX, BX

vec4:
	CMPQ   BX, DX
	JGE    tail4
	VMULPD (SI)(BX*1), Y0, Y8
	VMULPD (R8)(BX*1), Y1, Y9
	VADDPD Y9, Y8, Y8
	VMULPD (R9)(BX*1), Y2, Y10
	VMULPD (R10)(BX*1), Y3, Y11
	VADDPD Y11, Y10, Y10
	VADDPD Y10, Y8, Y8
	VMOVUPD Y8, (DI)(BX*1)
	ADDQ   $32, BX
	JMP    vec4

tail4:
	CMPQ   BX, CX
	JGE    done4
	VMULSD (SI)(BX*1), X0, X8
	VMULSD (R8)(BX*1), X1, X9
	VADDSD X9, X8, X8
	VMULSD (R9)(BX*1), X2, X10
	VMULSD (R10)(BX*1), X3, X11
	VADDSD X11, X10, X10
	VADDSD X10, X8, X8
	VMOVSD X8, (DI)(BX*1)
	ADDQ   $8, BX
	JMP    tail4

done4:
	VZEROUPPER
	RET

// func cubicsAVX(dst *float64, r *float64, n int, shift float64)
//
// Four stencils per iteration: the vectors r0..r3 are r[j..j+3] loaded at
// offsets 0, 1, 2, 3; the four coefficient vectors are transposed into
// the four cubics (VUNPCKLPD/VUNPCKHPD, then VPERM2F128) and stored
// contiguously. The last n mod 4 cubics go one at a time, with the same
// operations on the low lane.
TEXT ·cubicsAVX(SB), NOSPLIT, $0-32
	MOVQ dst+0(FP), DI
	MOVQ r+8(FP), SI
	MOVQ n+16(FP), CX
	VBROADCASTSD shift+24(FP), Y15
	MOVQ $0x3fe0000000000000, AX // 0.5
	MOVQ AX, X14
	VBROADCASTSD X14, Y14
	MOVQ $0x3fc5555555555555, AX // 1.0/6 as Go rounds it
	MOVQ AX, X13
	VBROADCASTSD X13, Y13
	MOVQ CX, DX
	ANDQ $-4, DX // stencils in the 4-wide part
	XORQ BX, BX  // stencil index

cvec:
	CMPQ    BX, DX
	JGE     ctail
	VMOVUPD (SI)(BX*8), Y0   // r0
	VMOVUPD 8(SI)(BX*8), Y1  // r1
	VMOVUPD 16(SI)(BX*8), Y2 // r2
	VMOVUPD 24(SI)(BX*8), Y3 // r3
	VADDPD  Y2, Y0, Y4       // r0 + r2
	VMULPD  Y14, Y4, Y4      // 0.5*(r0 + r2)
	VSUBPD  Y1, Y4, Y4       // c2 = 0.5*(r0+r2) - r1
	VSUBPD  Y0, Y3, Y5       // r3 - r0
	VMULPD  Y13, Y5, Y5      // (r3 - r0)*(1/6)
	VSUBPD  Y2, Y1, Y6       // r1 - r2
	VMULPD  Y14, Y6, Y6      // 0.5*(r1 - r2)
	VADDPD  Y6, Y5, Y5       // c3
	VSUBPD  Y1, Y2, Y6       // r2 - r1
	VSUBPD  Y4, Y6, Y6       // (r2 - r1) - c2
	VSUBPD  Y5, Y6, Y6       // c1 = ((r2 - r1) - c2) - c3
	VADDPD  Y15, Y1, Y7      // p(0) = r1 + shift
	// Transpose (Y7, Y6, Y4, Y5) = (p0, c1, c2, c3) into 4 cubics.
	VUNPCKLPD  Y6, Y7, Y8    // p0[0] c1[0] p0[2] c1[2]
	VUNPCKHPD  Y6, Y7, Y9    // p0[1] c1[1] p0[3] c1[3]
	VUNPCKLPD  Y5, Y4, Y10   // c2[0] c3[0] c2[2] c3[2]
	VUNPCKHPD  Y5, Y4, Y11   // c2[1] c3[1] c2[3] c3[3]
	VPERM2F128 $0x20, Y10, Y8, Y0
	VPERM2F128 $0x20, Y11, Y9, Y1
	VPERM2F128 $0x31, Y10, Y8, Y2
	VPERM2F128 $0x31, Y11, Y9, Y3
	MOVQ    BX, AX
	SHLQ    $5, AX           // 32 bytes per cubic
	VMOVUPD Y0, (DI)(AX*1)
	VMOVUPD Y1, 32(DI)(AX*1)
	VMOVUPD Y2, 64(DI)(AX*1)
	VMOVUPD Y3, 96(DI)(AX*1)
	ADDQ    $4, BX
	JMP     cvec

ctail:
	CMPQ   BX, CX
	JGE    cdone
	VMOVSD (SI)(BX*8), X0
	VMOVSD 8(SI)(BX*8), X1
	VMOVSD 16(SI)(BX*8), X2
	VMOVSD 24(SI)(BX*8), X3
	VADDSD X2, X0, X4
	VMULSD X14, X4, X4
	VSUBSD X1, X4, X4
	VSUBSD X0, X3, X5
	VMULSD X13, X5, X5
	VSUBSD X2, X1, X6
	VMULSD X14, X6, X6
	VADDSD X6, X5, X5
	VSUBSD X1, X2, X6
	VSUBSD X4, X6, X6
	VSUBSD X5, X6, X6
	VADDSD X15, X1, X7
	MOVQ   BX, AX
	SHLQ   $5, AX
	VMOVSD X7, (DI)(AX*1)
	VMOVSD X6, 8(DI)(AX*1)
	VMOVSD X4, 16(DI)(AX*1)
	VMOVSD X5, 24(DI)(AX*1)
	INCQ   BX
	JMP    ctail

cdone:
	VZEROUPPER
	RET

// LOOKUP4 evaluates, for x in Y0 and the stencils s (4 x int32) in X1,
// the cubics of the table at R9 (Slots cubics of 32 bytes) at u = x - s:
// float64(s), u, the slots s & 255 (AX, R10, R11, R12), the four cubics
// loaded and transposed into their coefficient vectors (VUNPCKLPD and
// VUNPCKHPD, then VPERM2F128), and Estrin's (q0 + u q1) + (u u)(q2 + u q3),
// left in Y4. It uses Y1-Y9.
#define LOOKUP4 \
	VCVTDQ2PD   X1, Y2; \
	VSUBPD      Y2, Y0, Y3; \
	VMOVQ       X1, AX; \
	VPEXTRQ     $1, X1, R10; \
	MOVQ        AX, R11; \
	SHRQ        $32, R11; \
	MOVQ        R10, R12; \
	SHRQ        $32, R12; \
	ANDQ        $255, AX; \
	ANDQ        $255, R11; \
	ANDQ        $255, R10; \
	ANDQ        $255, R12; \
	SHLQ        $5, AX; \
	SHLQ        $5, R11; \
	SHLQ        $5, R10; \
	SHLQ        $5, R12; \
	VMOVUPD     (R9)(AX*1), Y4; \
	VMOVUPD     (R9)(R11*1), Y5; \
	VMOVUPD     (R9)(R10*1), Y6; \
	VMOVUPD     (R9)(R12*1), Y7; \
	VUNPCKLPD   Y5, Y4, Y1; \
	VUNPCKHPD   Y5, Y4, Y2; \
	VUNPCKLPD   Y7, Y6, Y8; \
	VUNPCKHPD   Y7, Y6, Y9; \
	VPERM2F128  $0x20, Y8, Y1, Y4; \
	VPERM2F128  $0x20, Y9, Y2, Y5; \
	VPERM2F128  $0x31, Y8, Y1, Y6; \
	VPERM2F128  $0x31, Y9, Y2, Y7; \
	VMULPD      Y5, Y3, Y5; \
	VADDPD      Y5, Y4, Y4; \
	VMULPD      Y7, Y3, Y7; \
	VADDPD      Y7, Y6, Y6; \
	VMULPD      Y3, Y3, Y3; \
	VMULPD      Y6, Y3, Y6; \
	VADDPD      Y6, Y4, Y4

// func seriesAVX(dst, xs, invF *float64, n int, cf *float64, c float64, a *[5]float64, terms int)
//
// Four frequencies per iteration: x = xs - c; s = int(x) (VCVTTPD2DQ
// truncates as Go's conversion does, and x < 2^31 here); u = x - float64(s);
// the four cubics cf[s & 255] are loaded and transposed into their
// coefficient vectors (VUNPCKLPD/VUNPCKHPD, then VPERM2F128); then
// Estrin's (q0 + u q1) + (u u)(q2 + u q3) and Horner's edge term in y.
TEXT ·seriesAVX(SB), NOSPLIT, $0-64
	MOVQ dst+0(FP), DI
	MOVQ xs+8(FP), SI
	MOVQ invF+16(FP), DX
	MOVQ n+24(FP), CX
	MOVQ cf+32(FP), R9
	VBROADCASTSD c+40(FP), Y15
	MOVQ a+48(FP), AX
	VBROADCASTSD 0(AX), Y14  // a1
	VBROADCASTSD 8(AX), Y13  // a2
	VBROADCASTSD 16(AX), Y12 // a3
	VBROADCASTSD 24(AX), Y11 // a4
	VBROADCASTSD 32(AX), Y10 // a5
	MOVQ terms+56(FP), R13
	XORQ BX, BX

sloop:
	CMPQ        BX, CX
	JGE         sdone
	VMOVUPD     (SI)(BX*8), Y0
	VSUBPD      Y15, Y0, Y0     // x = xs - c
	VCVTTPD2DQY Y0, X1          // s
	LOOKUP4
	VMOVUPD     (DX)(BX*8), Y0  // y
	CMPQ        R13, $5
	JEQ         five
	VMULPD      Y13, Y0, Y1     // y a2
	VADDPD      Y1, Y14, Y1     // a1 + y a2
	VMULPD      Y1, Y0, Y1      // y (a1 + y a2)
	JMP         store

five:
	VMULPD      Y10, Y0, Y1     // y a5
	VADDPD      Y1, Y11, Y1     // a4 + y a5
	VMULPD      Y1, Y0, Y1
	VADDPD      Y1, Y12, Y1     // a3 + ...
	VMULPD      Y1, Y0, Y1
	VADDPD      Y1, Y13, Y1     // a2 + ...
	VMULPD      Y1, Y0, Y1
	VADDPD      Y1, Y14, Y1     // a1 + ...
	VMULPD      Y1, Y0, Y1

store:
	VADDPD      Y1, Y4, Y4
	VMOVUPD     Y4, (DI)(BX*8)
	ADDQ        $4, BX
	JMP         sloop

sdone:
	VZEROUPPER
	RET

// Constants of log1mxAVX2, four copies each (bit patterns of the float64
// constants Run's scalar loop uses, as Go rounds them).
DATA l1mSwitch<>+0(SB)/8, $0x3f50000000000000 // 2^-10
DATA l1mSwitch<>+8(SB)/8, $0x3f50000000000000
DATA l1mSwitch<>+16(SB)/8, $0x3f50000000000000
DATA l1mSwitch<>+24(SB)/8, $0x3f50000000000000
GLOBL l1mSwitch<>(SB), RODATA|NOPTR, $32
DATA l1mIdx<>+0(SB)/8, $0xff // logTabN - 1
DATA l1mIdx<>+8(SB)/8, $0xff
DATA l1mIdx<>+16(SB)/8, $0xff
DATA l1mIdx<>+24(SB)/8, $0xff
GLOBL l1mIdx<>(SB), RODATA|NOPTR, $32
DATA l1mMant<>+0(SB)/8, $0x000fffffffffffff // 1<<52 - 1
DATA l1mMant<>+8(SB)/8, $0x000fffffffffffff
DATA l1mMant<>+16(SB)/8, $0x000fffffffffffff
DATA l1mMant<>+24(SB)/8, $0x000fffffffffffff
GLOBL l1mMant<>(SB), RODATA|NOPTR, $32
DATA l1mOne<>+0(SB)/8, $0x3ff0000000000000 // 1023<<52, the bits of 1.0
DATA l1mOne<>+8(SB)/8, $0x3ff0000000000000
DATA l1mOne<>+16(SB)/8, $0x3ff0000000000000
DATA l1mOne<>+24(SB)/8, $0x3ff0000000000000
GLOBL l1mOne<>(SB), RODATA|NOPTR, $32
DATA l1m2046<>+0(SB)/8, $2046
DATA l1m2046<>+8(SB)/8, $2046
DATA l1m2046<>+16(SB)/8, $2046
DATA l1m2046<>+24(SB)/8, $2046
GLOBL l1m2046<>(SB), RODATA|NOPTR, $32
DATA l1mThird<>+0(SB)/8, $0x3fd5555555555555 // 1.0/3
DATA l1mThird<>+8(SB)/8, $0x3fd5555555555555
DATA l1mThird<>+16(SB)/8, $0x3fd5555555555555
DATA l1mThird<>+24(SB)/8, $0x3fd5555555555555
GLOBL l1mThird<>(SB), RODATA|NOPTR, $32
DATA l1mHalf<>+0(SB)/8, $0xbfe0000000000000 // -1.0/2
DATA l1mHalf<>+8(SB)/8, $0xbfe0000000000000
DATA l1mHalf<>+16(SB)/8, $0xbfe0000000000000
DATA l1mHalf<>+24(SB)/8, $0xbfe0000000000000
GLOBL l1mHalf<>(SB), RODATA|NOPTR, $32
DATA l1mFifth<>+0(SB)/8, $0x3fc999999999999a // 1.0/5
DATA l1mFifth<>+8(SB)/8, $0x3fc999999999999a
DATA l1mFifth<>+16(SB)/8, $0x3fc999999999999a
DATA l1mFifth<>+24(SB)/8, $0x3fc999999999999a
GLOBL l1mFifth<>(SB), RODATA|NOPTR, $32
DATA l1mQuarter<>+0(SB)/8, $0xbfd0000000000000 // -1.0/4
DATA l1mQuarter<>+8(SB)/8, $0xbfd0000000000000
DATA l1mQuarter<>+16(SB)/8, $0xbfd0000000000000
DATA l1mQuarter<>+24(SB)/8, $0xbfd0000000000000
GLOBL l1mQuarter<>(SB), RODATA|NOPTR, $32
DATA l1mMagic<>+0(SB)/8, $0x4330000000000000 // 2^52
DATA l1mMagic<>+8(SB)/8, $0x4330000000000000
DATA l1mMagic<>+16(SB)/8, $0x4330000000000000
DATA l1mMagic<>+24(SB)/8, $0x4330000000000000
GLOBL l1mMagic<>(SB), RODATA|NOPTR, $32
DATA l1mMagic1022<>+0(SB)/8, $0x43300000000003fe // 2^52 + 1022
DATA l1mMagic1022<>+8(SB)/8, $0x43300000000003fe
DATA l1mMagic1022<>+16(SB)/8, $0x43300000000003fe
DATA l1mMagic1022<>+24(SB)/8, $0x43300000000003fe
GLOBL l1mMagic1022<>(SB), RODATA|NOPTR, $32
DATA l1mLn2Hi<>+0(SB)/8, $0x3fe62e42fee00000 // ln2Hi
DATA l1mLn2Hi<>+8(SB)/8, $0x3fe62e42fee00000
DATA l1mLn2Hi<>+16(SB)/8, $0x3fe62e42fee00000
DATA l1mLn2Hi<>+24(SB)/8, $0x3fe62e42fee00000
GLOBL l1mLn2Hi<>(SB), RODATA|NOPTR, $32
DATA l1mLn2Lo<>+0(SB)/8, $0x3dea39ef35793c76 // ln2Lo
DATA l1mLn2Lo<>+8(SB)/8, $0x3dea39ef35793c76
DATA l1mLn2Lo<>+16(SB)/8, $0x3dea39ef35793c76
DATA l1mLn2Lo<>+24(SB)/8, $0x3dea39ef35793c76
GLOBL l1mLn2Lo<>(SB), RODATA|NOPTR, $32

// func log1mxAVX2(dst, invF *float64, n int, c float64, tab *float64) int
//
// LogTable.log1mx on four frequencies per iteration, stopping before the
// first group with a lane below 2^-10. The biased exponent is shifted
// out as a 64-bit integer (VPSRLQ), e + 1 = ex - 1022 becomes a float64
// exactly as 2^52 + ex - (2^52 + 1022), and the four table nodes are
// loaded and transposed (VUNPCKLPD/VUNPCKHPD, VPERM2F128) into m_k, 1/m_k
// and ln(m_k/2).
TEXT ·log1mxAVX2(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ invF+8(FP), SI
	MOVQ n+16(FP), CX
	VBROADCASTSD c+24(FP), Y15
	MOVQ tab+32(FP), R8
	VMOVUPD l1mOne<>(SB), Y14 // 1.0
	XORQ BX, BX

lloop:
	CMPQ       BX, CX
	JGE        ldone
	VMULPD     (SI)(BX*8), Y15, Y0  // x = c invF
	VCMPPD     $1, l1mSwitch<>(SB), Y0, Y1 // x < 2^-10
	VMOVMSKPD  Y1, AX
	TESTQ      AX, AX
	JNE        ldone
	VSUBPD     Y0, Y14, Y2          // y = 1 - x
	VSUBPD     Y2, Y14, Y3          // 1 - y
	VSUBPD     Y0, Y3, Y3           // dy = (1 - y) - x
	VPSRLQ     $52, Y2, Y4          // ex
	VPSRLQ     $44, Y2, Y5
	VANDPD     l1mIdx<>(SB), Y5, Y5 // node index
	VANDPD     l1mMant<>(SB), Y2, Y6
	VORPD      l1mOne<>(SB), Y6, Y6 // m
	VMOVDQU    l1m2046<>(SB), Y7
	VPSUBQ     Y4, Y7, Y7
	VPSLLQ     $52, Y7, Y7          // s = 2^-e
	VMOVQ      X5, AX
	VPEXTRQ    $1, X5, R10
	VEXTRACTF128 $1, Y5, X5
	VMOVQ      X5, R11
	VPEXTRQ    $1, X5, R12
	SHLQ       $5, AX
	SHLQ       $5, R10
	SHLQ       $5, R11
	SHLQ       $5, R12
	VMOVUPD    (R8)(AX*1), Y8
	VMOVUPD    (R8)(R10*1), Y9
	VMOVUPD    (R8)(R11*1), Y10
	VMOVUPD    (R8)(R12*1), Y11
	VUNPCKLPD  Y9, Y8, Y0           // mk[0] mk[1] lh[0] lh[1]
	VUNPCKHPD  Y9, Y8, Y1           // inv[0] inv[1] . .
	VUNPCKLPD  Y11, Y10, Y2         // mk[2] mk[3] lh[2] lh[3]
	VUNPCKHPD  Y11, Y10, Y5         // inv[2] inv[3] . .
	VPERM2F128 $0x20, Y2, Y0, Y8    // m_k
	VPERM2F128 $0x20, Y5, Y1, Y9    // 1/m_k
	VPERM2F128 $0x31, Y2, Y0, Y10   // ln(m_k/2)
	VSUBPD     Y8, Y6, Y6           // m - m_k
	VMULPD     Y7, Y3, Y3           // dy s
	VADDPD     Y3, Y6, Y6
	VMULPD     Y9, Y6, Y6           // r
	VMULPD     Y6, Y6, Y7           // r2
	VMULPD     l1mThird<>(SB), Y6, Y0
	VADDPD     l1mHalf<>(SB), Y0, Y0   // -1/2 + r/3
	VMULPD     l1mFifth<>(SB), Y6, Y1
	VADDPD     l1mQuarter<>(SB), Y1, Y1 // -1/4 + r/5
	VMULPD     Y1, Y7, Y1
	VADDPD     Y1, Y0, Y0
	VMULPD     Y0, Y7, Y0
	VADDPD     Y0, Y6, Y0           // p
	VORPD      l1mMagic<>(SB), Y4, Y4
	VSUBPD     l1mMagic1022<>(SB), Y4, Y4 // e1 = ex - 1022
	VMULPD     l1mLn2Hi<>(SB), Y4, Y1
	VADDPD     Y10, Y1, Y1          // e1 ln2Hi + ln(m_k/2)
	VMULPD     l1mLn2Lo<>(SB), Y4, Y2
	VADDPD     Y2, Y0, Y2           // p + e1 ln2Lo
	VADDPD     Y2, Y1, Y1
	VMOVUPD    Y1, (DI)(BX*8)
	ADDQ       $4, BX
	JMP        lloop

ldone:
	VZEROUPPER
	MOVQ BX, ret+40(FP)
	RET

// func clampedAVX(dst, xs *float64, n int, cf *float64, c float64, last int)
//
// seriesAVX's lookup with the stencil clamped as 32-bit integers
// (s - 1, then VPMAXSD with 0, VPMINSD with last, + 1), added to dst.
TEXT ·clampedAVX(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ xs+8(FP), SI
	MOVQ n+16(FP), CX
	MOVQ cf+24(FP), R9
	VBROADCASTSD c+32(FP), Y15
	MOVQ last+40(FP), AX
	VMOVD AX, X14
	VPSHUFD $0, X14, X14      // last, 4 x int32
	MOVL $1, AX
	VMOVD AX, X13
	VPSHUFD $0, X13, X13      // 1, 4 x int32
	VPXOR X12, X12, X12       // 0
	XORQ BX, BX

cloop:
	CMPQ        BX, CX
	JGE         cldone
	VMOVUPD     (SI)(BX*8), Y0
	VSUBPD      Y15, Y0, Y0     // x = xs - c
	VCVTTPD2DQY Y0, X1          // int(x)
	VPSUBD      X13, X1, X1     // - 1
	VPMAXSD     X12, X1, X1     // max(., 0)
	VPMINSD     X14, X1, X1     // min(., last)
	VPADDD      X13, X1, X1     // s = ... + 1
	LOOKUP4
	VADDPD      (DI)(BX*8), Y4, Y4
	VMOVUPD     Y4, (DI)(BX*8)
	ADDQ        $4, BX
	JMP         cloop

cldone:
	VZEROUPPER
	RET
