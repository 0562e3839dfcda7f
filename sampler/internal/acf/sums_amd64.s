//go:build !purego

#include "textflag.h"

// func sums16(d, e *float64, n int, s *[16]float64)
//
// s[i] = sum_{t<n} d[t]*e[t+i], i < 16, each lag in one lane of eight SSE2
// accumulators, every product rounded then added in t order (MULPD then
// ADDPD: no fused multiply-add), as the scalar loop does.
TEXT ·sums16(SB), NOSPLIT, $0-32
	MOVQ d+0(FP), SI
	MOVQ e+8(FP), DI
	MOVQ n+16(FP), CX
	MOVQ s+24(FP), DX
	XORPS X0, X0
	XORPS X1, X1
	XORPS X2, X2
	XORPS X3, X3
	XORPS X4, X4
	XORPS X5, X5
	XORPS X6, X6
	XORPS X7, X7

loop:
	MOVSD    (SI), X8
	UNPCKLPD X8, X8
	MOVUPD   0(DI), X9
	MULPD    X8, X9
	ADDPD    X9, X0
	MOVUPD   16(DI), X10
	MULPD    X8, X10
	ADDPD    X10, X1
	MOVUPD   32(DI), X11
	MULPD    X8, X11
	ADDPD    X11, X2
	MOVUPD   48(DI), X12
	MULPD    X8, X12
	ADDPD    X12, X3
	MOVUPD   64(DI), X13
	MULPD    X8, X13
	ADDPD    X13, X4
	MOVUPD   80(DI), X14
	MULPD    X8, X14
	ADDPD    X14, X5
	MOVUPD   96(DI), X15
	MULPD    X8, X15
	ADDPD    X15, X6
	MOVUPD   112(DI), X9
	MULPD    X8, X9
	ADDPD    X9, X7
	ADDQ     $8, SI
	ADDQ     $8, DI
	DECQ     CX
	JNZ      loop

	MOVUPD X0, 0(DX)
	MOVUPD X1, 16(DX)
	MOVUPD X2, 32(DX)
	MOVUPD X3, 48(DX)
	MOVUPD X4, 64(DX)
	MOVUPD X5, 80(DX)
	MOVUPD X6, 96(DX)
	MOVUPD X7, 112(DX)
	RET

// func sums32avx2(d, e *float64, n int, s *[32]float64)
//
// s[i] = sum_{t<n} d[t]*e[t+i], i < 32, each lag in one lane of eight AVX2
// accumulators, every product rounded then added in t order (VMULPD then
// VADDPD: no fused multiply-add), as the scalar loop does.
TEXT ·sums32avx2(SB), NOSPLIT, $0-32
	MOVQ d+0(FP), SI
	MOVQ e+8(FP), DI
	MOVQ n+16(FP), CX
	MOVQ s+24(FP), DX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD Y5, Y5, Y5
	VXORPD Y6, Y6, Y6
	VXORPD Y7, Y7, Y7

loop32:
	VBROADCASTSD (SI), Y8
	VMULPD 0(DI), Y8, Y9
	VADDPD Y9, Y0, Y0
	VMULPD 32(DI), Y8, Y10
	VADDPD Y10, Y1, Y1
	VMULPD 64(DI), Y8, Y11
	VADDPD Y11, Y2, Y2
	VMULPD 96(DI), Y8, Y12
	VADDPD Y12, Y3, Y3
	VMULPD 128(DI), Y8, Y13
	VADDPD Y13, Y4, Y4
	VMULPD 160(DI), Y8, Y14
	VADDPD Y14, Y5, Y5
	VMULPD 192(DI), Y8, Y15
	VADDPD Y15, Y6, Y6
	VMULPD 224(DI), Y8, Y9
	VADDPD Y9, Y7, Y7
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ CX
	JNZ  loop32

	VMOVUPD Y0, 0(DX)
	VMOVUPD Y1, 32(DX)
	VMOVUPD Y2, 64(DX)
	VMOVUPD Y3, 96(DX)
	VMOVUPD Y4, 128(DX)
	VMOVUPD Y5, 160(DX)
	VMOVUPD Y6, 192(DX)
	VMOVUPD Y7, 224(DX)
	VZEROUPPER
	RET
