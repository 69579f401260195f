//go:build amd64 && !purego

#include "textflag.h"

// Plane rotations of the QL/QR iteration (eigensym.go) on sixteen columns
// with AVX2, without FMA: each element is computed as the Go code computes
// it, c·y − s·x and s·y + c·x with two roundings of the products and one of
// the sum, so the results are bit-identical to rotateCols. An identity
// rotation (c = 1, s = ±0) is skipped, as in gonum's Dlasr.

// The sixteen carried values, Y0–Y3, from and to the row at r.
#define CARRY_LOAD(r) VMOVUPD (r), Y0; VMOVUPD 32(r), Y1; VMOVUPD 64(r), Y2; VMOVUPD 96(r), Y3
#define CARRY_STORE(r) VMOVUPD Y0, (r); VMOVUPD Y1, 32(r); VMOVUPD Y2, 64(r); VMOVUPD Y3, 96(r)

// func rotateBackward16AVX2(mm int, c, s, a *float64, lda int)
// For j = mm−2 down to 0: rows j, j+1 of a (lda float64 apart) ←
// (s·y + c·x, c·y − s·x) with x = row j and y = row j+1 as rotation j+1
// left it, carried in Y0–Y3.
TEXT ·rotateBackward16AVX2(SB), NOSPLIT, $0-40
	MOVQ mm+0(FP), CX
	MOVQ c+8(FP), SI
	MOVQ s+16(FP), DI
	MOVQ a+24(FP), DX
	MOVQ lda+32(FP), R8
	SHLQ $3, R8
	LEAQ -1(CX), AX
	IMULQ R8, AX
	LEAQ (DX)(AX*1), R9 // row mm−1
	CARRY_LOAD(R9)
	LEAQ -2(CX), AX // j
	MOVQ $0x3FF0000000000000, R14

bloop:
	CMPQ AX, $0
	JL   bdone
	MOVQ R9, R13
	SUBQ R8, R13 // row j
	MOVQ (SI)(AX*8), R11
	MOVQ (DI)(AX*8), R12
	SHLQ $1, R12
	CMPQ R11, R14
	JNE  brotate
	TESTQ R12, R12
	JNZ  brotate
	CARRY_STORE(R9)
	CARRY_LOAD(R13)
	JMP  bnext

brotate:
	VBROADCASTSD (SI)(AX*8), Y14
	VBROADCASTSD (DI)(AX*8), Y15
	VMOVUPD (R13), Y4
	VMOVUPD 32(R13), Y5
	VMOVUPD 64(R13), Y6
	VMOVUPD 96(R13), Y7
	VMULPD Y0, Y14, Y8
	VMULPD Y1, Y14, Y9
	VMULPD Y2, Y14, Y10
	VMULPD Y3, Y14, Y11
	VMULPD Y4, Y15, Y12
	VMULPD Y5, Y15, Y13
	VSUBPD Y12, Y8, Y8
	VSUBPD Y13, Y9, Y9
	VMULPD Y6, Y15, Y12
	VMULPD Y7, Y15, Y13
	VSUBPD Y12, Y10, Y10
	VSUBPD Y13, Y11, Y11
	VMOVUPD Y8, (R9)
	VMOVUPD Y9, 32(R9)
	VMOVUPD Y10, 64(R9)
	VMOVUPD Y11, 96(R9)
	VMULPD Y0, Y15, Y0
	VMULPD Y1, Y15, Y1
	VMULPD Y2, Y15, Y2
	VMULPD Y3, Y15, Y3
	VMULPD Y4, Y14, Y4
	VMULPD Y5, Y14, Y5
	VMULPD Y6, Y14, Y6
	VMULPD Y7, Y14, Y7
	VADDPD Y4, Y0, Y0
	VADDPD Y5, Y1, Y1
	VADDPD Y6, Y2, Y2
	VADDPD Y7, Y3, Y3

bnext:
	MOVQ R13, R9
	DECQ AX
	JMP  bloop

bdone:
	CARRY_STORE(R9)
	VZEROUPPER
	RET

// func rotateForward16AVX2(mm int, c, s, a *float64, lda int)
// For j = 0 to mm−2: rows j, j+1 of a ← (s·x + c·y, c·x − s·y) with
// y = row j as rotation j−1 left it, carried in Y0–Y3, and x = row j+1.
TEXT ·rotateForward16AVX2(SB), NOSPLIT, $0-40
	MOVQ mm+0(FP), CX
	MOVQ c+8(FP), SI
	MOVQ s+16(FP), DI
	MOVQ a+24(FP), DX
	MOVQ lda+32(FP), R8
	SHLQ $3, R8
	MOVQ DX, R9 // row j
	CARRY_LOAD(R9)
	XORQ AX, AX
	DECQ CX // mm−1 rotations
	MOVQ $0x3FF0000000000000, R14

floop:
	CMPQ AX, CX
	JGE  fdone
	LEAQ (R9)(R8*1), R13 // row j+1
	MOVQ (SI)(AX*8), R11
	MOVQ (DI)(AX*8), R12
	SHLQ $1, R12
	CMPQ R11, R14
	JNE  frotate
	TESTQ R12, R12
	JNZ  frotate
	CARRY_STORE(R9)
	CARRY_LOAD(R13)
	JMP  fnext

frotate:
	VBROADCASTSD (SI)(AX*8), Y14
	VBROADCASTSD (DI)(AX*8), Y15
	VMOVUPD (R13), Y4
	VMOVUPD 32(R13), Y5
	VMOVUPD 64(R13), Y6
	VMOVUPD 96(R13), Y7
	VMULPD Y4, Y15, Y8
	VMULPD Y5, Y15, Y9
	VMULPD Y6, Y15, Y10
	VMULPD Y7, Y15, Y11
	VMULPD Y0, Y14, Y12
	VMULPD Y1, Y14, Y13
	VADDPD Y12, Y8, Y8
	VADDPD Y13, Y9, Y9
	VMULPD Y2, Y14, Y12
	VMULPD Y3, Y14, Y13
	VADDPD Y12, Y10, Y10
	VADDPD Y13, Y11, Y11
	VMOVUPD Y8, (R9)
	VMOVUPD Y9, 32(R9)
	VMOVUPD Y10, 64(R9)
	VMOVUPD Y11, 96(R9)
	VMULPD Y0, Y15, Y0
	VMULPD Y1, Y15, Y1
	VMULPD Y2, Y15, Y2
	VMULPD Y3, Y15, Y3
	VMULPD Y4, Y14, Y4
	VMULPD Y5, Y14, Y5
	VMULPD Y6, Y14, Y6
	VMULPD Y7, Y14, Y7
	VSUBPD Y0, Y4, Y0
	VSUBPD Y1, Y5, Y1
	VSUBPD Y2, Y6, Y2
	VSUBPD Y3, Y7, Y3

fnext:
	MOVQ R13, R9
	INCQ AX
	JMP  floop

fdone:
	CARRY_STORE(R9)
	VZEROUPPER
	RET
