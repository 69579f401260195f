//go:build amd64 && !purego

#include "textflag.h"

// func figuresAVX2(n4 int, p *figurePtrs, te2, inv float64)
// For i < n4, four assets a step, the figures of perAsset from
// s = sa_i and a = act_i: mg = s·inv, c = (a·s)·inv, ct = c,
// pc = (100·c)·inv, cr = (s·inv)·isd_i, h = −s·idg_i, hg = h,
// ht = √max(te2 + s·h, 0); each product rounded, as in perAsset's Go loop
// (the dense form; the factor form has factorFiguresAVX2).
TEXT ·figuresAVX2(SB), NOSPLIT, $0-32
	MOVQ n4+0(FP), CX
	MOVQ p+8(FP), R14
	MOVQ 0(R14), SI   // act
	MOVQ 8(R14), DI   // sa
	MOVQ 16(R14), R8  // isd
	MOVQ 24(R14), R9  // idg
	MOVQ 32(R14), R10 // mg
	MOVQ 40(R14), R11 // ct
	MOVQ 48(R14), R12 // pc
	MOVQ 56(R14), R13 // cr
	MOVQ 64(R14), BX  // hg
	MOVQ 72(R14), DX  // ht
	VBROADCASTSD te2+16(FP), Y13
	VBROADCASTSD inv+24(FP), Y15
	MOVQ $0x4059000000000000, R14 // 100.0
	MOVQ R14, X14
	VBROADCASTSD X14, Y14
	VXORPD Y12, Y12, Y12
	XORQ AX, AX

fig:
	CMPQ AX, CX
	JGE  fig_done
	VMOVUPD (SI)(AX*8), Y0
	VMOVUPD (DI)(AX*8), Y1
	VMULPD  Y15, Y1, Y2
	VMOVUPD Y2, (R10)(AX*8)
	VMULPD  (R8)(AX*8), Y2, Y3
	VMOVUPD Y3, (R13)(AX*8)
	VMULPD  Y1, Y0, Y4
	VMULPD  Y15, Y4, Y4
	VMOVUPD Y4, (R11)(AX*8)
	VMULPD  Y14, Y4, Y5
	VMULPD  Y15, Y5, Y5
	VMOVUPD Y5, (R12)(AX*8)
	VSUBPD  Y1, Y12, Y6
	VMULPD  (R9)(AX*8), Y6, Y6
	VMOVUPD Y6, (BX)(AX*8)
	VMULPD  Y6, Y1, Y7
	VADDPD  Y7, Y13, Y7
	VMAXPD  Y12, Y7, Y7
	VSQRTPD Y7, Y7
	VMOVUPD Y7, (DX)(AX*8)
	ADDQ    $4, AX
	JMP     fig

fig_done:
	VZEROUPPER
	RET
