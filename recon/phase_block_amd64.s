//go:build !purego

#include "textflag.h"

DATA phaseOne<>+0(SB)/8, $0x3ff0000000000000 // 1.0
GLOBL phaseOne<>(SB), RODATA|NOPTR, $8
DATA phaseTwo<>+0(SB)/8, $0x4000000000000000 // 2.0
GLOBL phaseTwo<>(SB), RODATA|NOPTR, $8

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

// func smoothPhaseAVX(b *phaseBlock, n int, eta2 float64)
//
// smoothPhaseBlockGo on four triangles per step, n a multiple of 4: the same operations in the
// same order, each correctly rounded (IEEE 754 multiply, add, divide and square root, no fused
// multiply-add), so the same bits. The branch on a > 0 is a mask: ux, uy and the exact term
// are 0 where a > 0 is false, as the Go form leaves them. The offsets are those of the arrays
// of phaseBlock (phaseBlockLen = 64 values of 8 bytes each).
TEXT ·smoothPhaseAVX(SB), NOSPLIT, $0-24
	MOVQ b+0(FP), SI
	MOVQ n+8(FP), CX
	SHLQ $3, CX
	TESTQ CX, CX
	JZ done
	VBROADCASTSD eta2+16(FP), Y15
	VBROADCASTSD phaseOne<>(SB), Y14
	VBROADCASTSD phaseTwo<>(SB), Y13
	VXORPD Y12, Y12, Y12
	XORQ BX, BX
loop:
	VMOVUPD (SI)(BX*1), Y0        // x = Re z
	VMOVUPD 512(SI)(BX*1), Y1     // y = Im z
	VMOVUPD 1024(SI)(BX*1), Y2    // 1/σ²
	VMULPD Y0, Y0, Y3
	VMULPD Y1, Y1, Y4
	VADDPD Y4, Y3, Y3             // a² = x·x + y·y
	VSQRTPD Y3, Y4                // a
	VADDPD Y15, Y3, Y3            // q² = a² + η²
	VSQRTPD Y3, Y3
	VDIVPD Y3, Y14, Y3            // iq = 1/√q²
	VSUBPD Y0, Y4, Y5             // d = a − x
	VCMPPD $0x1e, Y12, Y4, Y6     // a > 0 (greater than, ordered, quiet)
	VDIVPD Y4, Y14, Y7            // ia = 1/a
	VMULPD Y7, Y0, Y8
	VANDPD Y6, Y8, Y8             // ux = x·ia, or 0
	VMULPD Y7, Y1, Y9
	VANDPD Y6, Y9, Y9             // uy = y·ia, or 0
	VSUBPD Y8, Y14, Y10           // 1 − ux
	VMULPD Y13, Y10, Y10          // 2·(1 − ux)
	VMULPD Y2, Y10, Y10           // ·1/σ²
	VANDPD Y6, Y10, Y10           // exact, or 0
	VMOVUPD Y10, 1536(SI)(BX*1)
	VMULPD Y13, Y2, Y2            // 2·1/σ²
	VMULPD Y3, Y2, Y2             // c = 2/σ²·iq
	VMULPD Y2, Y5, Y10            // v = d·c
	VMOVUPD Y10, 2048(SI)(BX*1)
	VMULPD Y5, Y2, Y10            // c·d
	VMULPD Y3, Y10, Y10           // ·iq
	VMULPD Y3, Y10, Y10           // c3 = c·d·iq·iq
	VSUBPD Y14, Y8, Y8            // ux − 1
	VMULPD Y8, Y2, Y8             // c·(ux − 1)
	VMULPD Y0, Y10, Y0            // c3·x
	VSUBPD Y0, Y8, Y8             // gre = c·(ux − 1) − c3·x
	VMOVUPD Y8, 2560(SI)(BX*1)
	VMULPD Y9, Y2, Y9             // c·uy
	VMULPD Y1, Y10, Y1            // c3·y
	VSUBPD Y1, Y9, Y9             // gim = c·uy − c3·y
	VMOVUPD Y9, 3072(SI)(BX*1)
	ADDQ $32, BX
	CMPQ BX, CX
	JLT loop
	VZEROUPPER
done:
	RET

// func exactPhaseAVX(b *phaseBlock, n int, tw float64)
//
// exactPhaseBlockGo on four triangles per step, n a multiple of 4, with the same operations in
// the same order (see smoothPhaseAVX); the branch on |z|² > 0 is a mask that sets the exact
// term and kb to 0.
TEXT ·exactPhaseAVX(SB), NOSPLIT, $0-24
	MOVQ b+0(FP), SI
	MOVQ n+8(FP), CX
	SHLQ $3, CX
	TESTQ CX, CX
	JZ done
	VBROADCASTSD tw+16(FP), Y15
	VBROADCASTSD phaseOne<>(SB), Y14
	VBROADCASTSD phaseTwo<>(SB), Y13
	VXORPD Y12, Y12, Y12
	XORQ BX, BX
loop:
	VMOVUPD (SI)(BX*1), Y0        // x = Re z
	VMOVUPD 512(SI)(BX*1), Y1     // y = Im z
	VMOVUPD 1024(SI)(BX*1), Y2    // 1/σ²
	VMULPD Y0, Y0, Y3
	VMULPD Y1, Y1, Y4
	VADDPD Y4, Y3, Y3             // |z|² = x·x + y·y
	VMOVUPD Y3, 4096(SI)(BX*1)
	VCMPPD $0x1e, Y12, Y3, Y6     // |z|² > 0 (greater than, ordered, quiet)
	VSQRTPD Y3, Y3
	VDIVPD Y3, Y14, Y3            // ia = 1/|z|
	VMULPD Y3, Y0, Y0             // x·ia
	VSUBPD Y0, Y14, Y0            // 1 − x·ia
	VMULPD Y13, Y0, Y0            // 2·(1 − x·ia)
	VMULPD Y2, Y0, Y0             // ·1/σ²
	VANDPD Y6, Y0, Y0             // exact, or 0
	VMOVUPD Y0, 1536(SI)(BX*1)
	VMULPD Y1, Y15, Y1            // 2w·y
	VMULPD Y3, Y1, Y1             // ·ia
	VMULPD Y2, Y1, Y1             // ·1/σ²
	VMULPD Y3, Y1, Y1             // ·ia
	VMULPD Y3, Y1, Y1             // kb = 2w·y·ia·1/σ²·ia·ia
	VANDPD Y6, Y1, Y1             // kb, or 0
	VMOVUPD Y1, 3584(SI)(BX*1)
	ADDQ $32, BX
	CMPQ BX, CX
	JLT loop
	VZEROUPPER
done:
	RET
