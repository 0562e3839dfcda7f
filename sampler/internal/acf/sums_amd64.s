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
