//go:build amd64 && !purego

#include "textflag.h"

// Matrix–vector kernels with AVX2 and FMA (vec_amd64.go checks the bounds).
// Each sum runs in a fixed order that depends on the lengths only.

// func dotAxpyAVX2(n int, a, x, z *float64, s float64) float64
// Returns Σ_j a_j x_j and sets z_j ← z_j + s·a_j, reading a once: eight
// elements a step in two accumulators, then one at a time; the result is
// ((acc0 + acc1) summed across lanes) + the scalar tail.
TEXT ·dotAxpyAVX2(SB), NOSPLIT, $0-48
	MOVQ n+0(FP), CX
	MOVQ a+8(FP), SI
	MOVQ x+16(FP), DI
	MOVQ z+24(FP), DX
	VBROADCASTSD s+32(FP), Y15
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD X6, X6, X6
	XORQ AX, AX
	MOVQ CX, BX
	ANDQ $-8, BX

loop8:
	CMPQ AX, BX
	JGE  scalar
	VMOVUPD (SI)(AX*8), Y2
	VMOVUPD 32(SI)(AX*8), Y3
	VFMADD231PD (DI)(AX*8), Y2, Y0
	VFMADD231PD 32(DI)(AX*8), Y3, Y1
	VMOVUPD (DX)(AX*8), Y4
	VMOVUPD 32(DX)(AX*8), Y5
	VFMADD231PD Y2, Y15, Y4
	VFMADD231PD Y3, Y15, Y5
	VMOVUPD Y4, (DX)(AX*8)
	VMOVUPD Y5, 32(DX)(AX*8)
	ADDQ $8, AX
	JMP  loop8

scalar:
	CMPQ AX, CX
	JGE  done
	VMOVSD (SI)(AX*8), X2
	VFMADD231SD (DI)(AX*8), X2, X6
	VMOVSD (DX)(AX*8), X4
	VFMADD231SD X2, X15, X4
	VMOVSD X4, (DX)(AX*8)
	INCQ AX
	JMP  scalar

done:
	VADDPD       Y1, Y0, Y0
	VEXTRACTF128 $1, Y0, X1
	VADDPD       X1, X0, X0
	VHADDPD      X0, X0, X0
	VADDSD       X6, X0, X0
	VMOVSD       X0, ret+40(FP)
	VZEROUPPER
	RET

// func mulTAddAVX2(rows, k4 int, b *float64, ldb int, x, y *float64)
// Sets y_c ← y_c + Σ_i x_i b_ic for c < k4 (a multiple of 4), rows in
// order, one fused multiply-add per row: two rows a step share each load
// and store of y.
TEXT ·mulTAddAVX2(SB), NOSPLIT, $0-48
	MOVQ rows+0(FP), CX
	MOVQ k4+8(FP), R8
	MOVQ b+16(FP), SI
	MOVQ ldb+24(FP), R9
	SHLQ $3, R9
	MOVQ x+32(FP), DI
	MOVQ y+40(FP), DX
	XORQ AX, AX

two:
	LEAQ 2(AX), R10
	CMPQ R10, CX
	JG   one
	VBROADCASTSD (DI)(AX*8), Y0
	VBROADCASTSD 8(DI)(AX*8), Y1
	LEAQ (SI)(R9*1), R11
	XORQ BX, BX

two_cols:
	CMPQ BX, R8
	JGE  two_next
	VMOVUPD (DX)(BX*8), Y2
	VFMADD231PD (SI)(BX*8), Y0, Y2
	VFMADD231PD (R11)(BX*8), Y1, Y2
	VMOVUPD Y2, (DX)(BX*8)
	ADDQ $4, BX
	JMP  two_cols

two_next:
	LEAQ (R11)(R9*1), SI
	ADDQ $2, AX
	JMP  two

one:
	CMPQ AX, CX
	JGE  end
	VBROADCASTSD (DI)(AX*8), Y0
	XORQ BX, BX

one_cols:
	CMPQ BX, R8
	JGE  end
	VMOVUPD (DX)(BX*8), Y2
	VFMADD231PD (SI)(BX*8), Y0, Y2
	VMOVUPD Y2, (DX)(BX*8)
	ADDQ $4, BX
	JMP  one_cols

end:
	VZEROUPPER
	RET

// func mulRowsAVX2(rows, k4 int, b *float64, ldb int, z, d, x, dst *float64)
// For i < rows (a multiple of 4), four rows a step: dst_i = Σ_{c<k4} b_ic z_c,
// plus d_i·x_i (rounded, then added) when d is not nil. Each row sums in
// four lanes, c ≡ 0, 1, 2, 3 mod 4, then (lane0 + lane1) + (lane2 + lane3).
// x_i is read before dst_i is written, so dst may be x.
TEXT ·mulRowsAVX2(SB), NOSPLIT, $0-64
	MOVQ rows+0(FP), CX
	MOVQ k4+8(FP), R8
	MOVQ b+16(FP), SI
	MOVQ ldb+24(FP), R9
	SHLQ $3, R9
	MOVQ z+32(FP), DI
	MOVQ dst+56(FP), DX
	XORQ AX, AX

rows4:
	CMPQ AX, CX
	JGE  fin
	LEAQ (SI)(R9*1), R10
	LEAQ (R10)(R9*1), R11
	LEAQ (R11)(R9*1), R12
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	XORQ BX, BX

cols4:
	CMPQ BX, R8
	JGE  reduce
	VMOVUPD (DI)(BX*8), Y4
	VFMADD231PD (SI)(BX*8), Y4, Y0
	VFMADD231PD (R10)(BX*8), Y4, Y1
	VFMADD231PD (R11)(BX*8), Y4, Y2
	VFMADD231PD (R12)(BX*8), Y4, Y3
	ADDQ $4, BX
	JMP  cols4

reduce:
	VHADDPD    Y1, Y0, Y5
	VHADDPD    Y3, Y2, Y6
	VPERM2F128 $0x21, Y6, Y5, Y7
	VBLENDPD   $0x0C, Y6, Y5, Y8
	VADDPD     Y7, Y8, Y8
	MOVQ       d+40(FP), R13
	TESTQ      R13, R13
	JZ         store
	VMOVUPD    (R13)(AX*8), Y9
	MOVQ       x+48(FP), R13
	VMULPD     (R13)(AX*8), Y9, Y9
	VADDPD     Y9, Y8, Y8

store:
	VMOVUPD Y8, (DX)(AX*8)
	LEAQ    (R12)(R9*1), SI
	ADDQ    $4, AX
	JMP     rows4

fin:
	VZEROUPPER
	RET

// func symv4AVX2(n4 int, a *float64, lda int, x, z *float64, s *[4]float64, out *[4]float64)
// For the four rows a, a+lda, a+2·lda, a+3·lda and columns j < n4 (a
// multiple of 4): out_r = Σ_j a_rj x_j, summed in four lanes (j mod 4) then
// (lane0 + lane1) + (lane2 + lane3), and z_j ← (((z_j + s0 a_0j) + s1 a_1j)
// + s2 a_2j) + s3 a_3j, each step one fused multiply-add. Four rows share
// each load of x and each load and store of z.
TEXT ·symv4AVX2(SB), NOSPLIT, $0-56
	MOVQ n4+0(FP), CX
	MOVQ a+8(FP), SI
	MOVQ lda+16(FP), R9
	SHLQ $3, R9
	MOVQ x+24(FP), DI
	MOVQ z+32(FP), DX
	MOVQ s+40(FP), R13
	VBROADCASTSD 0(R13), Y12
	VBROADCASTSD 8(R13), Y13
	VBROADCASTSD 16(R13), Y14
	VBROADCASTSD 24(R13), Y15
	LEAQ (SI)(R9*1), R10
	LEAQ (R10)(R9*1), R11
	LEAQ (R11)(R9*1), R12
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	XORQ AX, AX

cols:
	CMPQ AX, CX
	JGE  sums
	VMOVUPD (DI)(AX*8), Y4
	VMOVUPD (DX)(AX*8), Y5
	VMOVUPD (SI)(AX*8), Y6
	VMOVUPD (R10)(AX*8), Y7
	VMOVUPD (R11)(AX*8), Y8
	VMOVUPD (R12)(AX*8), Y9
	VFMADD231PD Y6, Y4, Y0
	VFMADD231PD Y7, Y4, Y1
	VFMADD231PD Y8, Y4, Y2
	VFMADD231PD Y9, Y4, Y3
	VFMADD231PD Y6, Y12, Y5
	VFMADD231PD Y7, Y13, Y5
	VFMADD231PD Y8, Y14, Y5
	VFMADD231PD Y9, Y15, Y5
	VMOVUPD Y5, (DX)(AX*8)
	ADDQ $4, AX
	JMP  cols

sums:
	VHADDPD    Y1, Y0, Y5
	VHADDPD    Y3, Y2, Y6
	VPERM2F128 $0x21, Y6, Y5, Y7
	VBLENDPD   $0x0C, Y6, Y5, Y8
	VADDPD     Y7, Y8, Y8
	MOVQ       out+48(FP), R13
	VMOVUPD    Y8, (R13)
	VZEROUPPER
	RET
