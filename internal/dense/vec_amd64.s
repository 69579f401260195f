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

// func mulT16AVX2(rows int, b *float64, ldb int, x, y *float64)
// Adds Σ_i x_i b_ic to y_c for c < 16, the sums held in registers: even
// rows in Y0–Y3, odd rows in Y4–Y7 (two chains, so that the fused
// multiply-adds do not wait on each other), each in order of i; then
// y_c ← y_c + (even_c + odd_c).
TEXT ·mulT16AVX2(SB), NOSPLIT, $0-40
	MOVQ rows+0(FP), CX
	MOVQ b+8(FP), SI
	MOVQ ldb+16(FP), R9
	SHLQ $3, R9
	MOVQ x+24(FP), DI
	MOVQ y+32(FP), DX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD Y5, Y5, Y5
	VXORPD Y6, Y6, Y6
	VXORPD Y7, Y7, Y7
	XORQ AX, AX

t16_two:
	LEAQ 2(AX), R10
	CMPQ R10, CX
	JG   t16_one
	LEAQ (SI)(R9*1), R11
	VBROADCASTSD (DI)(AX*8), Y8
	VBROADCASTSD 8(DI)(AX*8), Y9
	VFMADD231PD (SI), Y8, Y0
	VFMADD231PD 32(SI), Y8, Y1
	VFMADD231PD 64(SI), Y8, Y2
	VFMADD231PD 96(SI), Y8, Y3
	VFMADD231PD (R11), Y9, Y4
	VFMADD231PD 32(R11), Y9, Y5
	VFMADD231PD 64(R11), Y9, Y6
	VFMADD231PD 96(R11), Y9, Y7
	LEAQ (R11)(R9*1), SI
	MOVQ R10, AX
	JMP  t16_two

t16_one:
	CMPQ AX, CX
	JGE  t16_sum
	VBROADCASTSD (DI)(AX*8), Y8
	VFMADD231PD (SI), Y8, Y0
	VFMADD231PD 32(SI), Y8, Y1
	VFMADD231PD 64(SI), Y8, Y2
	VFMADD231PD 96(SI), Y8, Y3

t16_sum:
	VADDPD Y4, Y0, Y0
	VADDPD Y5, Y1, Y1
	VADDPD Y6, Y2, Y2
	VADDPD Y7, Y3, Y3
	VADDPD (DX), Y0, Y0
	VADDPD 32(DX), Y1, Y1
	VADDPD 64(DX), Y2, Y2
	VADDPD 96(DX), Y3, Y3
	VMOVUPD Y0, (DX)
	VMOVUPD Y1, 32(DX)
	VMOVUPD Y2, 64(DX)
	VMOVUPD Y3, 96(DX)
	VZEROUPPER
	RET

// func mulT4AVX2(rows int, b *float64, ldb int, x, y *float64)
// As mulT16AVX2 for c < 4: rows i ≡ 0, 1, 2, 3 mod 4 in Y0–Y3, then
// y ← y + ((Y0 + Y1) + (Y2 + Y3)).
TEXT ·mulT4AVX2(SB), NOSPLIT, $0-40
	MOVQ rows+0(FP), CX
	MOVQ b+8(FP), SI
	MOVQ ldb+16(FP), R9
	SHLQ $3, R9
	MOVQ x+24(FP), DI
	MOVQ y+32(FP), DX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	XORQ AX, AX

t4_four:
	LEAQ 4(AX), R10
	CMPQ R10, CX
	JG   t4_one
	VBROADCASTSD (DI)(AX*8), Y8
	VBROADCASTSD 8(DI)(AX*8), Y9
	VBROADCASTSD 16(DI)(AX*8), Y10
	VBROADCASTSD 24(DI)(AX*8), Y11
	VFMADD231PD (SI), Y8, Y0
	ADDQ R9, SI
	VFMADD231PD (SI), Y9, Y1
	ADDQ R9, SI
	VFMADD231PD (SI), Y10, Y2
	ADDQ R9, SI
	VFMADD231PD (SI), Y11, Y3
	ADDQ R9, SI
	MOVQ R10, AX
	JMP  t4_four

t4_one:
	CMPQ AX, CX
	JGE  t4_sum
	VBROADCASTSD (DI)(AX*8), Y8
	VFMADD231PD (SI), Y8, Y0
	ADDQ R9, SI
	INCQ AX
	JMP  t4_one

t4_sum:
	VADDPD Y1, Y0, Y0
	VADDPD Y3, Y2, Y2
	VADDPD Y2, Y0, Y0
	VADDPD (DX), Y0, Y0
	VMOVUPD Y0, (DX)
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

// func axpyAVX2(n int, s float64, x, y *float64)
// Sets y_j ← y_j + s·x_j: a multiply, then an add (no fused multiply-add,
// so every element is rounded as the plain Go loop rounds it), eight
// elements a step, then one at a time.
TEXT ·axpyAVX2(SB), NOSPLIT, $0-32
	MOVQ n+0(FP), CX
	VBROADCASTSD s+8(FP), Y15
	MOVQ x+16(FP), SI
	MOVQ y+24(FP), DI
	XORQ AX, AX
	MOVQ CX, BX
	ANDQ $-8, BX

axpy8:
	CMPQ AX, BX
	JGE  axpy1
	VMULPD (SI)(AX*8), Y15, Y0
	VMULPD 32(SI)(AX*8), Y15, Y1
	VADDPD (DI)(AX*8), Y0, Y0
	VADDPD 32(DI)(AX*8), Y1, Y1
	VMOVUPD Y0, (DI)(AX*8)
	VMOVUPD Y1, 32(DI)(AX*8)
	ADDQ $8, AX
	JMP  axpy8

axpy1:
	CMPQ AX, CX
	JGE  axpydone
	VMULSD (SI)(AX*8), X15, X0
	VADDSD (DI)(AX*8), X0, X0
	VMOVSD X0, (DI)(AX*8)
	INCQ AX
	JMP  axpy1

axpydone:
	VZEROUPPER
	RET
