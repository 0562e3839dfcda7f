//go:build !purego && !amd64.v3

#include "textflag.h"

// func central4(dst *float64, n int, rk0, den float64, coef *[84]float64)
//
// Four ranks per iteration, each lane computing, rounded step by step as
// centralGo does (VMULPD then VADDPD: no fused multiply-add):
//
//	dp = (rk - 0.375)/den - 0.5
//	z  = 0.180625 - dp*dp
//	z1 = (...((a0*z + a1)*z + a2)...)*z + a7, z2 likewise with b
//	out = (dp*z1)/z2
TEXT ·central4(SB), NOSPLIT, $0-40
	MOVQ dst+0(FP), DI
	MOVQ n+8(FP), CX
	MOVQ coef+32(FP), BX
	VBROADCASTSD rk0+16(FP), Y11
	VADDPD       640(BX), Y11, Y11 // rk of the four lanes
	VBROADCASTSD den+24(FP), Y14
	VMOVUPD      512(BX), Y15      // 0.375
	VMOVUPD      544(BX), Y13      // 0.5
	VMOVUPD      576(BX), Y12      // 0.180625
	VMOVUPD      608(BX), Y10      // 4
	SHRQ         $2, CX

loop:
	VSUBPD Y15, Y11, Y0 // rk - 0.375
	VDIVPD Y14, Y0, Y0  // p
	VSUBPD Y13, Y0, Y0  // dp
	VMULPD Y0, Y0, Y1
	VSUBPD Y1, Y12, Y1  // z

	VMULPD 0(BX), Y1, Y2
	VADDPD 32(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 64(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 96(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 128(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 160(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 192(BX), Y2, Y2
	VMULPD Y1, Y2, Y2
	VADDPD 224(BX), Y2, Y2 // z1

	VMULPD 256(BX), Y1, Y3
	VADDPD 288(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 320(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 352(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 384(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 416(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 448(BX), Y3, Y3
	VMULPD Y1, Y3, Y3
	VADDPD 480(BX), Y3, Y3 // z2

	VMULPD  Y2, Y0, Y2 // dp*z1
	VDIVPD  Y3, Y2, Y2
	VMOVUPD Y2, (DI)
	VADDPD  Y10, Y11, Y11
	ADDQ    $32, DI
	DECQ    CX
	JNZ     loop
	VZEROUPPER
	RET
