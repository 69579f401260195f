//go:build amd64 && !purego

#include "textflag.h"

// The factor-form kernels of DecomposeTo and GroupsTo (factor_amd64.go
// checks the bounds, factor.go has the same loops in Go). Every sum runs
// in a fixed order that depends on the sizes only, one fused multiply-add
// a step, so the Go loops (math.FMA) give the same bits.

// func exposures20AVX2(rows int, b *float64, ldb int, x1, x2, y1, y2 *float64)
// For c < 20: y1_c = Σ_i b_ic x1_i and y2_c = Σ_i b_ic x2_i, each one
// chain of fused multiply-adds from 0 in order of i; both from one pass
// over the rows (ldb values apart).
TEXT ·exposures20AVX2(SB), NOSPLIT, $0-56
	MOVQ rows+0(FP), CX
	MOVQ b+8(FP), SI
	MOVQ ldb+16(FP), R9
	SHLQ $3, R9
	MOVQ x1+24(FP), DI
	MOVQ x2+32(FP), R8
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD Y5, Y5, Y5
	VXORPD Y6, Y6, Y6
	VXORPD Y7, Y7, Y7
	VXORPD Y8, Y8, Y8
	VXORPD Y9, Y9, Y9
	XORQ AX, AX

e20:
	CMPQ AX, CX
	JGE  e20_done
	VBROADCASTSD (DI)(AX*8), Y10
	VBROADCASTSD (R8)(AX*8), Y11
	VMOVUPD      (SI), Y12
	VMOVUPD      32(SI), Y13
	VFMADD231PD  Y12, Y10, Y0
	VFMADD231PD  Y12, Y11, Y5
	VMOVUPD      64(SI), Y14
	VFMADD231PD  Y13, Y10, Y1
	VFMADD231PD  Y13, Y11, Y6
	VMOVUPD      96(SI), Y15
	VFMADD231PD  Y14, Y10, Y2
	VFMADD231PD  Y14, Y11, Y7
	VMOVUPD      128(SI), Y12
	VFMADD231PD  Y15, Y10, Y3
	VFMADD231PD  Y15, Y11, Y8
	VFMADD231PD  Y12, Y10, Y4
	VFMADD231PD  Y12, Y11, Y9
	ADDQ         R9, SI
	INCQ         AX
	JMP          e20

e20_done:
	MOVQ    y1+40(FP), DX
	VMOVUPD Y0, (DX)
	VMOVUPD Y1, 32(DX)
	VMOVUPD Y2, 64(DX)
	VMOVUPD Y3, 96(DX)
	VMOVUPD Y4, 128(DX)
	MOVQ    y2+48(FP), DX
	VMOVUPD Y5, (DX)
	VMOVUPD Y6, 32(DX)
	VMOVUPD Y7, 64(DX)
	VMOVUPD Y8, 96(DX)
	VMOVUPD Y9, 128(DX)
	VZEROUPPER
	RET

// func exposures4AVX2(rows int, b *float64, ldb int, x1, x2, y1, y2 *float64)
// As exposures20AVX2 for c < 4.
TEXT ·exposures4AVX2(SB), NOSPLIT, $0-56
	MOVQ rows+0(FP), CX
	MOVQ b+8(FP), SI
	MOVQ ldb+16(FP), R9
	SHLQ $3, R9
	MOVQ x1+24(FP), DI
	MOVQ x2+32(FP), R8
	VXORPD Y0, Y0, Y0
	VXORPD Y5, Y5, Y5
	XORQ AX, AX

e4:
	CMPQ AX, CX
	JGE  e4_done
	VBROADCASTSD (DI)(AX*8), Y10
	VBROADCASTSD (R8)(AX*8), Y11
	VMOVUPD      (SI), Y12
	VFMADD231PD  Y12, Y10, Y0
	VFMADD231PD  Y12, Y11, Y5
	ADDQ         R9, SI
	INCQ         AX
	JMP          e4

e4_done:
	MOVQ    y1+40(FP), DX
	VMOVUPD Y0, (DX)
	MOVQ    y2+48(FP), DX
	VMOVUPD Y5, (DX)
	VZEROUPPER
	RET

// func factorFiguresAVX2(n4 int, p *factorPtrs, te2, inv float64)
// For i < n4 (a multiple of 4), four assets a step: the factor part
// f_i = b_i·fx, summed in four lanes c ≡ 0, 1, 2, 3 mod 4 (fused
// multiply-adds from 0 in order of c) then (lane0 + lane1) + (lane2 +
// lane3); then with a = act_i, spec = d_i·a, s = f_i + spec:
// fp = (a·f)·inv, sp = (a·spec)·inv, sa = s, mg = s·inv, c = (a·s)·inv,
// ct = c, pc = (100·c)·inv, cr = (s·inv)·isd_i, h = −s·idg_i, hg = h,
// ht = √max(te2 + s·h, 0); each product rounded, as in factorFiguresGo.
TEXT ·factorFiguresAVX2(SB), NOSPLIT, $0-32
	MOVQ n4+0(FP), CX
	MOVQ p+8(FP), R14
	MOVQ 0(R14), R15  // b
	MOVQ 8(R14), R9   // ldb
	SHLQ $3, R9
	MOVQ 16(R14), R8  // kp
	MOVQ 24(R14), DI  // fx
	VBROADCASTSD te2+16(FP), Y13
	VBROADCASTSD inv+24(FP), Y15
	MOVQ $0x4059000000000000, DX // 100.0
	MOVQ DX, X14
	VBROADCASTSD X14, Y14
	VXORPD Y12, Y12, Y12
	MOVQ CX, AX

	// From the last four rows back to the first: the rows are
	// independent, and the pass over the groups that follows finds the
	// first rows of B (and of the vectors) still in cache.
rows4:
	SUBQ  $4, AX
	JLT   fin
	MOVQ  AX, SI
	IMULQ R9, SI
	ADDQ  R15, SI
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
	VMOVUPD     (DI)(BX*8), Y4
	VFMADD231PD (SI)(BX*8), Y4, Y0
	VFMADD231PD (R10)(BX*8), Y4, Y1
	VFMADD231PD (R11)(BX*8), Y4, Y2
	VFMADD231PD (R12)(BX*8), Y4, Y3
	ADDQ        $4, BX
	JMP         cols4

reduce:
	VHADDPD    Y1, Y0, Y5
	VHADDPD    Y3, Y2, Y6
	VPERM2F128 $0x21, Y6, Y5, Y7
	VBLENDPD   $0x0C, Y6, Y5, Y8
	VADDPD     Y7, Y8, Y8          // f, the factor part

	MOVQ    32(R14), DX            // act
	VMOVUPD (DX)(AX*8), Y0         // a
	MOVQ    40(R14), DX            // d
	VMULPD  (DX)(AX*8), Y0, Y2     // spec = a·d
	VMULPD  Y8, Y0, Y3
	VMULPD  Y15, Y3, Y3
	MOVQ    72(R14), DX            // fp
	VMOVUPD Y3, (DX)(AX*8)
	VMULPD  Y2, Y0, Y4
	VMULPD  Y15, Y4, Y4
	MOVQ    80(R14), DX            // sp
	VMOVUPD Y4, (DX)(AX*8)
	VADDPD  Y2, Y8, Y1             // s = f + spec
	MOVQ    64(R14), DX            // sa
	VMOVUPD Y1, (DX)(AX*8)

	VMULPD  Y15, Y1, Y2            // s·inv
	MOVQ    88(R14), DX            // mg
	VMOVUPD Y2, (DX)(AX*8)
	MOVQ    48(R14), DX            // isd
	VMULPD  (DX)(AX*8), Y2, Y3
	MOVQ    112(R14), DX           // cr
	VMOVUPD Y3, (DX)(AX*8)
	VMULPD  Y1, Y0, Y4
	VMULPD  Y15, Y4, Y4            // c
	MOVQ    96(R14), DX            // ct
	VMOVUPD Y4, (DX)(AX*8)
	VMULPD  Y14, Y4, Y5
	VMULPD  Y15, Y5, Y5
	MOVQ    104(R14), DX           // pc
	VMOVUPD Y5, (DX)(AX*8)
	VSUBPD  Y1, Y12, Y6            // −s
	MOVQ    56(R14), DX            // idg
	VMULPD  (DX)(AX*8), Y6, Y6     // h
	MOVQ    120(R14), DX           // hg
	VMOVUPD Y6, (DX)(AX*8)
	VMULPD  Y6, Y1, Y7
	VADDPD  Y7, Y13, Y7
	VMAXPD  Y12, Y7, Y7
	VSQRTPD Y7, Y7
	MOVQ    128(R14), DX           // ht
	VMOVUPD Y7, (DX)(AX*8)
	JMP     rows4

fin:
	VZEROUPPER
	RET

// func activeSumsAVX2(n4 int, p, b, d, act *float64, sums *[12]float64)
// For i < n4 (a multiple of 4), four assets a step: act_i = p_i − b_i and,
// with t = a_i·d_i, the lanes (i mod 4) of Σ t·a_i, Σ t·b_i and
// Σ (d_i·b_i)·b_i, each product rounded, written to sums[0:4], [4:8],
// [8:12].
TEXT ·activeSumsAVX2(SB), NOSPLIT, $0-48
	MOVQ n4+0(FP), CX
	MOVQ p+8(FP), SI
	MOVQ b+16(FP), DI
	MOVQ d+24(FP), R8
	MOVQ act+32(FP), R9
	MOVQ sums+40(FP), DX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	XORQ AX, AX

act4:
	CMPQ AX, CX
	JGE  act_done
	VMOVUPD (SI)(AX*8), Y4
	VMOVUPD (DI)(AX*8), Y5
	VMOVUPD (R8)(AX*8), Y3
	VSUBPD  Y5, Y4, Y4          // a = p − b
	VMOVUPD Y4, (R9)(AX*8)
	VMULPD  Y3, Y4, Y6          // t = a·d
	VMULPD  Y4, Y6, Y7
	VADDPD  Y7, Y0, Y0
	VMULPD  Y5, Y6, Y7
	VADDPD  Y7, Y1, Y1
	VMULPD  Y5, Y3, Y6
	VMULPD  Y5, Y6, Y6
	VADDPD  Y6, Y2, Y2
	ADDQ    $4, AX
	JMP     act4

act_done:
	VMOVUPD Y0, (DX)
	VMOVUPD Y1, 32(DX)
	VMOVUPD Y2, 64(DX)
	VZEROUPPER
	RET

// func gather20AVX2(gp *gatherPtrs)
// For each group g and c < 20: x_gc = Σ_{i∈g} a_i b_ic, one chain of
// fused multiply-adds from 0 over the members in increasing order, the
// sums in registers, written to accX + g·stride. When gp.sums is not 0,
// also (Σ a_i, Σ ct_i, Σ fp_i, Σ sp_i) and Σ (d_i a_i)·a_i over the members
// in the same order, one rounded addition each, to accS + g·stride.
TEXT ·gather20AVX2(SB), NOSPLIT, $0-8
	MOVQ gp+0(FP), DX
	MOVQ 0(DX), SI                 // b, at the first column
	MOVQ 8(DX), R9                 // ldb
	SHLQ $3, R9
	MOVQ 16(DX), R11               // order
	MOVQ 24(DX), R12               // start
	MOVQ 32(DX), R8                // ng
	MOVQ 40(DX), R13               // act
	XORQ CX, CX

gather20avx2_group:
	CMPQ CX, R8
	JGE  gather20avx2_done
	MOVQ (R12)(CX*8), AX
	MOVQ 8(R12)(CX*8), BX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD X5, X5, X5
	VXORPD X6, X6, X6

gather20avx2_member:
	CMPQ AX, BX
	JGE  gather20avx2_store
	MOVQ         64(R11)(AX*8), R10 // the member eight ahead (order is padded)
	PREFETCHT0   (R13)(R10*8)
	MOVQ         72(DX), R14
	PREFETCHT0   (R14)(R10*8)
	IMULQ        R9, R10
	PREFETCHT0   (SI)(R10*1)
	PREFETCHT0   64(SI)(R10*1)
	PREFETCHT0   128(SI)(R10*1)
	MOVQ         (R11)(AX*8), R15  // i
	VMOVSD       (R13)(R15*8), X7  // a_i
	VBROADCASTSD X7, Y8
	MOVQ         R15, R10
	IMULQ        R9, R10
	ADDQ         SI, R10           // row i
	VFMADD231PD (R10), Y8, Y0
	VFMADD231PD 32(R10), Y8, Y1
	VFMADD231PD 64(R10), Y8, Y2
	VFMADD231PD 96(R10), Y8, Y3
	VFMADD231PD 128(R10), Y8, Y4
	CMPQ         64(DX), $0
	JEQ          gather20avx2_next
	VADDSD       X7, X5, X5        // Σ a_i
	MOVQ         72(DX), R14       // d
	VMULSD       (R14)(R15*8), X7, X10
	VMULSD       X7, X10, X10
	VADDSD       X10, X6, X6       // Σ (d_i a_i)·a_i

gather20avx2_next:
	INCQ AX
	JMP  gather20avx2_member

gather20avx2_store:
	MOVQ  56(DX), R10              // stride
	IMULQ CX, R10
	MOVQ  48(DX), R14              // accX
	ADDQ  R10, R14
	VMOVUPD Y0, (R14)
	VMOVUPD Y1, 32(R14)
	VMOVUPD Y2, 64(R14)
	VMOVUPD Y3, 96(R14)
	VMOVUPD Y4, 128(R14)
	CMPQ    64(DX), $0
	JEQ     gather20avx2_nextg
	MOVQ    80(DX), R14            // accS
	ADDQ    R10, R14
	VMOVSD  X5, (R14)
	VMOVSD  X6, 8(R14)

gather20avx2_nextg:
	INCQ CX
	JMP  gather20avx2_group

gather20avx2_done:
	VZEROUPPER
	RET

// func gather4AVX2(gp *gatherPtrs)
// For each group g and c < 4: x_gc = Σ_{i∈g} a_i b_ic, one chain of
// fused multiply-adds from 0 over the members in increasing order, the
// sums in registers, written to accX + g·stride. When gp.sums is not 0,
// also (Σ a_i, Σ ct_i, Σ fp_i, Σ sp_i) and Σ (d_i a_i)·a_i over the members
// in the same order, one rounded addition each, to accS + g·stride.
TEXT ·gather4AVX2(SB), NOSPLIT, $0-8
	MOVQ gp+0(FP), DX
	MOVQ 0(DX), SI                 // b, at the first column
	MOVQ 8(DX), R9                 // ldb
	SHLQ $3, R9
	MOVQ 16(DX), R11               // order
	MOVQ 24(DX), R12               // start
	MOVQ 32(DX), R8                // ng
	MOVQ 40(DX), R13               // act
	XORQ CX, CX

gather4avx2_group:
	CMPQ CX, R8
	JGE  gather4avx2_done
	MOVQ (R12)(CX*8), AX
	MOVQ 8(R12)(CX*8), BX
	VXORPD Y0, Y0, Y0
	VXORPD X5, X5, X5
	VXORPD X6, X6, X6

gather4avx2_member:
	CMPQ AX, BX
	JGE  gather4avx2_store
	MOVQ         64(R11)(AX*8), R10 // the member eight ahead (order is padded)
	PREFETCHT0   (R13)(R10*8)
	MOVQ         72(DX), R14
	PREFETCHT0   (R14)(R10*8)
	IMULQ        R9, R10
	PREFETCHT0   (SI)(R10*1)
	PREFETCHT0   64(SI)(R10*1)
	PREFETCHT0   128(SI)(R10*1)
	MOVQ         (R11)(AX*8), R15  // i
	VMOVSD       (R13)(R15*8), X7  // a_i
	VBROADCASTSD X7, Y8
	MOVQ         R15, R10
	IMULQ        R9, R10
	ADDQ         SI, R10           // row i
	VFMADD231PD (R10), Y8, Y0
	CMPQ         64(DX), $0
	JEQ          gather4avx2_next
	VADDSD       X7, X5, X5        // Σ a_i
	MOVQ         72(DX), R14       // d
	VMULSD       (R14)(R15*8), X7, X10
	VMULSD       X7, X10, X10
	VADDSD       X10, X6, X6       // Σ (d_i a_i)·a_i

gather4avx2_next:
	INCQ AX
	JMP  gather4avx2_member

gather4avx2_store:
	MOVQ  56(DX), R10              // stride
	IMULQ CX, R10
	MOVQ  48(DX), R14              // accX
	ADDQ  R10, R14
	VMOVUPD Y0, (R14)
	CMPQ    64(DX), $0
	JEQ     gather4avx2_nextg
	MOVQ    80(DX), R14            // accS
	ADDQ    R10, R14
	VMOVSD  X5, (R14)
	VMOVSD  X6, 8(R14)

gather4avx2_nextg:
	INCQ CX
	JMP  gather4avx2_group

gather4avx2_done:
	VZEROUPPER
	RET
