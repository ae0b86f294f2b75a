//go:build !purego

#include "textflag.h"

DATA tvOne<>+0(SB)/8, $0x3ff0000000000000 // 1.0
GLOBL tvOne<>(SB), RODATA|NOPTR, $8

// func cpuHasAVX() bool
//
// Reports whether the processor has AVX (CPUID.1:ECX bit 28) and the operating system saves
// the YMM registers (OSXSAVE, bit 27, and XCR0 bits 1 and 2; Intel SDM vol. 1, sect. 14.3).
TEXT ·cpuHasAVX(SB), NOSPLIT, $0-1
	MOVL $1, AX
	XORL CX, CX
	CPUID
	ANDL $0x18000000, CX
	CMPL CX, $0x18000000
	JNE no
	XORL CX, CX
	XGETBV
	ANDL $6, AX
	CMPL AX, $6
	JNE no
	MOVB $1, ret+0(FP)
	RET
no:
	MOVB $0, ret+0(FP)
	RET

// func rowTermsAVX(tt *tvTerms, row, below *float64, n int, e2 float64)
//
// rowTermsGo on four pixels per step, n a multiple of 4: dx = row[k+1] − row[k], dy = below[k]
// − row[k], s = √((dx·dx + dy·dy) + e2), t = 1/s, and dx·t, dy·t, (dx+dy)·t, the operations of
// the Go loop in its order, each correctly rounded (IEEE 754, no fused multiply-add), so the
// same bits. The offsets are those of the arrays of tvTerms (tvChunk = 128 values of 8 bytes).
TEXT ·rowTermsAVX(SB), NOSPLIT, $0-40
	MOVQ tt+0(FP), DI
	MOVQ row+8(FP), SI
	MOVQ below+16(FP), DX
	MOVQ n+24(FP), CX
	SHLQ $3, CX
	TESTQ CX, CX
	JZ done
	VBROADCASTSD e2+32(FP), Y15
	VBROADCASTSD tvOne<>(SB), Y14
	XORQ BX, BX
loop:
	VMOVUPD (SI)(BX*1), Y0        // row[k]
	VMOVUPD 8(SI)(BX*1), Y1       // row[k+1]
	VMOVUPD (DX)(BX*1), Y2        // below[k]
	VSUBPD Y0, Y1, Y1             // dx
	VSUBPD Y0, Y2, Y2             // dy
	VMULPD Y1, Y1, Y3             // dx·dx
	VMULPD Y2, Y2, Y4             // dy·dy
	VADDPD Y4, Y3, Y3
	VADDPD Y15, Y3, Y3            // + e2
	VSQRTPD Y3, Y3                // s
	VMOVUPD Y3, (DI)(BX*1)
	VDIVPD Y3, Y14, Y4            // t = 1/s
	VMULPD Y4, Y1, Y5             // dx·t
	VMOVUPD Y5, 1024(DI)(BX*1)
	VMULPD Y4, Y2, Y5             // dy·t
	VMOVUPD Y5, 2048(DI)(BX*1)
	VADDPD Y2, Y1, Y5             // dx + dy
	VMULPD Y4, Y5, Y5             // (dx+dy)·t
	VMOVUPD Y5, 3072(DI)(BX*1)
	ADDQ $32, BX
	CMPQ BX, CX
	JB loop
	VZEROUPPER
done:
	RET
