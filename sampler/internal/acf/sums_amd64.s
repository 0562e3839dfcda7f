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
// s[i] = sum_{t<n} d[t]*e[t+i], i < 32, n >= 16, each lag in one lane of
// eight AVX2 accumulators, every product rounded then added in t order
// (VMULPD then VADDPD: no fused multiply-add), as the scalar loop does.
// Lags 16-31 at step t read e[t+16 : t+32], as lags 0-15 do at step t+16:
// the main loop runs the first half 16 steps ahead of the second so that
// they share these loads, after a prologue (the first half's first 16
// steps) and before an epilogue (the second half's last 16).
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
	MOVQ $16, BX

pro32:
	VBROADCASTSD (SI), Y8
	VMULPD 0(DI), Y8, Y12
	VADDPD Y12, Y0, Y0
	VMULPD 32(DI), Y8, Y13
	VADDPD Y13, Y1, Y1
	VMULPD 64(DI), Y8, Y14
	VADDPD Y14, Y2, Y2
	VMULPD 96(DI), Y8, Y15
	VADDPD Y15, Y3, Y3
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  pro32
	SUBQ $16, CX
	JZ   epi32

main32:
	VBROADCASTSD (SI), Y8
	VBROADCASTSD -128(SI), Y9
	VMOVUPD 0(DI), Y10
	VMULPD Y10, Y8, Y12
	VADDPD Y12, Y0, Y0
	VMULPD Y10, Y9, Y13
	VADDPD Y13, Y4, Y4
	VMOVUPD 32(DI), Y11
	VMULPD Y11, Y8, Y14
	VADDPD Y14, Y1, Y1
	VMULPD Y11, Y9, Y15
	VADDPD Y15, Y5, Y5
	VMOVUPD 64(DI), Y10
	VMULPD Y10, Y8, Y12
	VADDPD Y12, Y2, Y2
	VMULPD Y10, Y9, Y13
	VADDPD Y13, Y6, Y6
	VMOVUPD 96(DI), Y11
	VMULPD Y11, Y8, Y14
	VADDPD Y14, Y3, Y3
	VMULPD Y11, Y9, Y15
	VADDPD Y15, Y7, Y7
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ CX
	JNZ  main32

epi32:
	MOVQ $16, BX

epiloop32:
	VBROADCASTSD -128(SI), Y9
	VMULPD 0(DI), Y9, Y12
	VADDPD Y12, Y4, Y4
	VMULPD 32(DI), Y9, Y13
	VADDPD Y13, Y5, Y5
	VMULPD 64(DI), Y9, Y14
	VADDPD Y14, Y6, Y6
	VMULPD 96(DI), Y9, Y15
	VADDPD Y15, Y7, Y7
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  epiloop32

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

// func sums32avx512(d, e *float64, n int, s *[32]float64)
//
// s[i] = sum_{t<n} d[t]*e[t+i], i < 32, n >= 24, each lag in one lane of
// four AVX-512 accumulators, every product rounded then added in t order
// (VMULPD then VADDPD: no fused multiply-add), as the scalar loop does.
// Accumulator g holds lags 8g .. 8g+7, whose terms at step t read
// e[t+8g : t+8g+8], as accumulator 0 does at step t+8g: at "time" u the
// kernel loads e[u : u+8] once and accumulator g adds d[u-8g] times it,
// for 8g <= u < n+8g. The first 24 and last 24 times, when some
// accumulators are idle, have loops of their own.
TEXT ·sums32avx512(SB), NOSPLIT, $0-32
	MOVQ d+0(FP), SI
	MOVQ e+8(FP), DI
	MOVQ n+16(FP), CX
	MOVQ s+24(FP), DX
	VPXORQ Z0, Z0, Z0
	VPXORQ Z1, Z1, Z1
	VPXORQ Z2, Z2, Z2
	VPXORQ Z3, Z3, Z3
	MOVQ $8, BX
pro0:
	VMOVUPD (DI), Z9
	VBROADCASTSD (SI), Z10
	VMULPD Z9, Z10, Z10
	VADDPD Z10, Z0, Z0
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  pro0
	MOVQ $8, BX
pro1:
	VMOVUPD (DI), Z9
	VBROADCASTSD (SI), Z10
	VMULPD Z9, Z10, Z10
	VADDPD Z10, Z0, Z0
	VBROADCASTSD -64(SI), Z11
	VMULPD Z9, Z11, Z11
	VADDPD Z11, Z1, Z1
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  pro1
	MOVQ $8, BX
pro2:
	VMOVUPD (DI), Z9
	VBROADCASTSD (SI), Z10
	VMULPD Z9, Z10, Z10
	VADDPD Z10, Z0, Z0
	VBROADCASTSD -64(SI), Z11
	VMULPD Z9, Z11, Z11
	VADDPD Z11, Z1, Z1
	VBROADCASTSD -128(SI), Z12
	VMULPD Z9, Z12, Z12
	VADDPD Z12, Z2, Z2
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  pro2
	SUBQ $24, CX
	JZ   epi0
	MOVQ CX, BX
main:
	VMOVUPD (DI), Z9
	VBROADCASTSD (SI), Z10
	VMULPD Z9, Z10, Z10
	VADDPD Z10, Z0, Z0
	VBROADCASTSD -64(SI), Z11
	VMULPD Z9, Z11, Z11
	VADDPD Z11, Z1, Z1
	VBROADCASTSD -128(SI), Z12
	VMULPD Z9, Z12, Z12
	VADDPD Z12, Z2, Z2
	VBROADCASTSD -192(SI), Z13
	VMULPD Z9, Z13, Z13
	VADDPD Z13, Z3, Z3
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  main
epi0:
	MOVQ $8, BX
epi0x:
	VMOVUPD (DI), Z9
	VBROADCASTSD -64(SI), Z11
	VMULPD Z9, Z11, Z11
	VADDPD Z11, Z1, Z1
	VBROADCASTSD -128(SI), Z12
	VMULPD Z9, Z12, Z12
	VADDPD Z12, Z2, Z2
	VBROADCASTSD -192(SI), Z13
	VMULPD Z9, Z13, Z13
	VADDPD Z13, Z3, Z3
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  epi0x
	MOVQ $8, BX
epi1x:
	VMOVUPD (DI), Z9
	VBROADCASTSD -128(SI), Z12
	VMULPD Z9, Z12, Z12
	VADDPD Z12, Z2, Z2
	VBROADCASTSD -192(SI), Z13
	VMULPD Z9, Z13, Z13
	VADDPD Z13, Z3, Z3
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  epi1x
	MOVQ $8, BX
epi2x:
	VMOVUPD (DI), Z9
	VBROADCASTSD -192(SI), Z13
	VMULPD Z9, Z13, Z13
	VADDPD Z13, Z3, Z3
	ADDQ $8, SI
	ADDQ $8, DI
	DECQ BX
	JNZ  epi2x
	VMOVUPD Z0, 0(DX)
	VMOVUPD Z1, 64(DX)
	VMOVUPD Z2, 128(DX)
	VMOVUPD Z3, 192(DX)
	VZEROUPPER
	RET
