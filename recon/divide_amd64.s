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
