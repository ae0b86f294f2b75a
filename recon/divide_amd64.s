//go:build !purego

#include "textflag.h"

// func divideAVX(dst, src []float64, d float64)
//
// dst[i] = src[i]/d for the first len(src) &^ 3 elements, four per step with VDIVPD: each
// quotient is the correctly rounded IEEE 754 division, as DIVSD gives it, so the same bits
// as the Go loop. The caller checks the lengths and does the rest.
TEXT ·divideAVX(SB), NOSPLIT, $0-56
	MOVQ dst_base+0(FP), DI
	MOVQ src_base+24(FP), SI
	MOVQ src_len+32(FP), CX
	VBROADCASTSD d+48(FP), Y1
	SHRQ $2, CX
	JZ done
loop:
	VMOVUPD (SI), Y0
	VDIVPD Y1, Y0, Y0
	VMOVUPD Y0, (DI)
	ADDQ $32, SI
	ADDQ $32, DI
	DECQ CX
	JNZ loop
done:
	VZEROUPPER
	RET

// func gradRegAVX(out, adj, r []float64, s0, cm, inv, sc, c, add float64)
//
// out[i] = (s_i·adj[i] − cm)·inv + sc·(r[i] − c) + add with s_i = s0·(−1)^i, for the first
// len(adj) &^ 3 elements, four per step: the operations of the Go loop of
// ForwardModel.gradientWith in its order, each correctly rounded (no fused multiply-add), so
// the same bits. The caller checks the lengths and does the rest.
TEXT ·gradRegAVX(SB), NOSPLIT, $0-120
	MOVQ out_base+0(FP), DI
	MOVQ adj_base+24(FP), SI
	MOVQ adj_len+32(FP), CX
	MOVQ r_base+48(FP), DX
	// Y2 = (s0, −s0, s0, −s0): s0 in every lane, the sign of lanes 1 and 3 flipped.
	VBROADCASTSD s0+72(FP), Y2
	VXORPD Y0, Y0, Y0
	VSUBPD Y2, Y0, Y0            // Y0 = 0 − s0 = −s0 (s0 is ±1)
	VBLENDPD $0x0a, Y0, Y2, Y2   // lanes 1 and 3 from Y0
	VBROADCASTSD cm+80(FP), Y3
	VBROADCASTSD inv+88(FP), Y4
	VBROADCASTSD sc+96(FP), Y5
	VBROADCASTSD c+104(FP), Y6
	VBROADCASTSD add+112(FP), Y7
	SHRQ $2, CX
	JZ gdone
gloop:
	VMOVUPD (SI), Y0
	VMULPD Y0, Y2, Y0            // s·a
	VSUBPD Y3, Y0, Y0            // − cm
	VMULPD Y4, Y0, Y0            // · inv
	VMOVUPD (DX), Y1
	VSUBPD Y6, Y1, Y1            // r − c
	VMULPD Y1, Y5, Y1            // sc·(r − c)
	VADDPD Y1, Y0, Y0
	VADDPD Y7, Y0, Y0            // + add
	VMOVUPD Y0, (DI)
	ADDQ $32, SI
	ADDQ $32, DX
	ADDQ $32, DI
	DECQ CX
	JNZ gloop
gdone:
	VZEROUPPER
	RET
