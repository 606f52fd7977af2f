//go:build amd64 && !purego

#include "textflag.h"

// Constants broadcast to four float64 lanes.
DATA kone<>+0(SB)/8, $1.0
DATA kone<>+8(SB)/8, $1.0
DATA kone<>+16(SB)/8, $1.0
DATA kone<>+24(SB)/8, $1.0
GLOBL kone<>(SB), RODATA|NOPTR, $32

DATA ktwo<>+0(SB)/8, $2.0
DATA ktwo<>+8(SB)/8, $2.0
DATA ktwo<>+16(SB)/8, $2.0
DATA ktwo<>+24(SB)/8, $2.0
GLOBL ktwo<>(SB), RODATA|NOPTR, $32

DATA kthree<>+0(SB)/8, $3.0
DATA kthree<>+8(SB)/8, $3.0
DATA kthree<>+16(SB)/8, $3.0
DATA kthree<>+24(SB)/8, $3.0
GLOBL kthree<>(SB), RODATA|NOPTR, $32

DATA kfour<>+0(SB)/8, $4.0
DATA kfour<>+8(SB)/8, $4.0
DATA kfour<>+16(SB)/8, $4.0
DATA kfour<>+24(SB)/8, $4.0
GLOBL kfour<>(SB), RODATA|NOPTR, $32

// REDUCE leaves (l0 + l2) + (l1 + l3) of lanes Y in the low element of X,
// using XT as scratch.
#define REDUCE(Y, X, XT) \
	VEXTRACTF128 $1, Y, XT \
	VADDPD       XT, X, X \
	VPERMILPD    $1, X, XT \
	VADDSD       XT, X, X

// GATHER4 loads the points y_j of the four column indices at SI (int32,
// y at DI, 16 bytes a point) and leaves, lane l for index l,
// dx = xi − x_j in Y8, dy = yi − y_j in Y9 and u = (1 + dx²) + dy² in Y10
// (xi, yi broadcast in Y0, Y1; 1.0 in Y2; R8–R11, Y6, Y7, Y11 scratch).
#define GATHER4 \
	MOVL        0(SI), R8 \
	MOVL        4(SI), R9 \
	MOVL        8(SI), R10 \
	MOVL        12(SI), R11 \
	SHLQ        $4, R8 \
	SHLQ        $4, R9 \
	SHLQ        $4, R10 \
	SHLQ        $4, R11 \
	VMOVUPD     (DI)(R8*1), X6 \
	VMOVUPD     (DI)(R9*1), X7 \
	VINSERTF128 $1, (DI)(R10*1), Y6, Y6 \
	VINSERTF128 $1, (DI)(R11*1), Y7, Y7 \
	VUNPCKLPD   Y7, Y6, Y8 \
	VUNPCKHPD   Y7, Y6, Y9 \
	VSUBPD      Y8, Y0, Y8 \
	VSUBPD      Y9, Y1, Y9 \
	VMULPD      Y8, Y8, Y10 \
	VADDPD      Y10, Y2, Y10 \
	VMULPD      Y9, Y9, Y11 \
	VADDPD      Y11, Y10, Y10

// REDUCE3 stores the lane sums of Y3, Y4, Y5, each reduced as in REDUCE,
// as the results z, rx, ry at 40, 48 and 56(FP).
#define REDUCE3 \
	REDUCE(Y3, X3, X6) \
	REDUCE(Y4, X4, X7) \
	REDUCE(Y5, X5, X8) \
	VMOVSD X3, z+40(FP) \
	VMOVSD X4, rx+48(FP) \
	VMOVSD X5, ry+56(FP)

// HALVES3 adds the upper four lanes of Z3, Z4, Z5 to their lower four
// (lane l + 4 to lane l), leaving the sums in Y3, Y4, Y5.
#define HALVES3 \
	VEXTRACTF64X4 $1, Z3, Y6 \
	VADDPD        Y6, Y3, Y3 \
	VEXTRACTF64X4 $1, Z4, Y6 \
	VADDPD        Y6, Y4, Y4 \
	VEXTRACTF64X4 $1, Z5, Y6 \
	VADDPD        Y6, Y5, Y5

// func cpuid(leaf, sub uint32) (eax, ebx, ecx, edx uint32)
TEXT ·cpuid(SB), NOSPLIT, $0-24
	MOVL leaf+0(FP), AX
	MOVL sub+4(FP), CX
	CPUID
	MOVL AX, eax+8(FP)
	MOVL BX, ebx+12(FP)
	MOVL CX, ecx+16(FP)
	MOVL DX, edx+20(FP)
	RET

// func xgetbv() (eax, edx uint32)
TEXT ·xgetbv(SB), NOSPLIT, $0-8
	MOVL $0, CX
	XGETBV
	MOVL AX, eax+0(FP)
	MOVL DX, edx+4(FP)
	RET

// func attract4AVX2(y []float64, col []int32, val []float64, xi, yi float64) (ax, ay float64)
// len(col) = len(val) is a multiple of 4; every index addresses a point of y.
TEXT ·attract4AVX2(SB), NOSPLIT, $0-104
	MOVQ         y_base+0(FP), DI
	MOVQ         col_base+24(FP), SI
	MOVQ         col_len+32(FP), CX
	MOVQ         val_base+48(FP), DX
	VBROADCASTSD xi+72(FP), Y0
	VBROADCASTSD yi+80(FP), Y1
	VMOVUPD      kone<>(SB), Y2
	VXORPD       Y3, Y3, Y3        // ax
	VXORPD       Y4, Y4, Y4        // ay
	SHRQ         $2, CX
	JZ           adone

aloop:
	GATHER4                                   // dx Y8, dy Y9, u Y10
	VMOVUPD     0(DX), Y11                    // p
	VDIVPD      Y10, Y11, Y10                 // p/u
	VMULPD      Y10, Y8, Y8
	VADDPD      Y8, Y3, Y3
	VMULPD      Y10, Y9, Y9
	VADDPD      Y9, Y4, Y4
	ADDQ        $16, SI
	ADDQ        $32, DX
	DECQ        CX
	JNZ         aloop

adone:
	REDUCE(Y3, X3, X6)
	REDUCE(Y4, X4, X7)
	VMOVSD X3, ax+88(FP)
	VMOVSD X4, ay+96(FP)
	VZEROUPPER
	RET

// DIRECT4(OFF, Z, X, Y) adds the direct sums of four points of the block
// at SI to the lanes of Z, X, Y (xi, yi in Y0, Y1; 1.0 in Y2; Y6–Y11
// scratch): the points at byte offsets OFF and OFF + 64, so that the lanes
// hold block positions (0, 4, 1, 5) for OFF = 0 and (2, 6, 3, 7) for
// OFF = 32, as in the AVX-512 kernel's halves.
#define DIRECT4(OFF, Z, X, Y) \
	VMOVUPD   OFF(SI), Y6 \
	VMOVUPD   (OFF+64)(SI), Y7 \
	VUNPCKLPD Y7, Y6, Y8 \
	VUNPCKHPD Y7, Y6, Y9 \
	VSUBPD      Y8, Y0, Y8 \
	VSUBPD      Y9, Y1, Y9 \
	VMOVAPD     Y2, Y10 \
	VFMADD231PD Y8, Y8, Y10 \
	VFMADD231PD Y9, Y9, Y10 \
	VDIVPD      Y10, Y2, Y10 \
	VADDPD      Y10, Z, Z \
	VMULPD      Y10, Y10, Y10 \
	VFMADD231PD Y10, Y8, X \
	VFMADD231PD Y10, Y9, Y

// func direct8AVX2(xi, yi float64, ys []float64) (z, rx, ry float64)
// len(ys) is a multiple of 16 (whole blocks of eight points). Two sets of
// four lanes, added lane by lane before the reduction (see direct8Generic).
TEXT ·direct8AVX2(SB), NOSPLIT, $0-64
	VBROADCASTSD xi+0(FP), Y0
	VBROADCASTSD yi+8(FP), Y1
	VMOVUPD      kone<>(SB), Y2
	VXORPD       Y3, Y3, Y3        // z, positions 0 4 1 5
	VXORPD       Y4, Y4, Y4        // rx
	VXORPD       Y5, Y5, Y5        // ry
	VXORPD       Y12, Y12, Y12     // z, positions 2 6 3 7
	VXORPD       Y13, Y13, Y13
	VXORPD       Y14, Y14, Y14
	MOVQ         ys_base+16(FP), SI
	MOVQ         ys_len+24(FP), CX
	SHRQ         $4, CX
	JZ           d8done

d8loop:
	DIRECT4(0, Y3, Y4, Y5)
	DIRECT4(32, Y12, Y13, Y14)
	ADDQ $128, SI
	DECQ CX
	JNZ  d8loop

d8done:
	VADDPD Y12, Y3, Y3
	VADDPD Y13, Y4, Y4
	VADDPD Y14, Y5, Y5
	REDUCE3
	VZEROUPPER
	RET

// func direct8AVX512(xi, yi float64, ys []float64) (z, rx, ry float64)
// As direct8AVX2 with the eight lanes in one register (positions 0, 4, 1,
// 5, 2, 6, 3, 7); the upper half is added to the lower before the
// four-lane reduction.
TEXT ·direct8AVX512(SB), NOSPLIT, $0-64
	VBROADCASTSD xi+0(FP), Z0
	VBROADCASTSD yi+8(FP), Z1
	VBROADCASTSD kone<>(SB), Z2
	VXORPD       Z3, Z3, Z3
	VXORPD       Z4, Z4, Z4
	VXORPD       Z5, Z5, Z5
	MOVQ         ys_base+16(FP), SI
	MOVQ         ys_len+24(FP), CX
	SHRQ         $4, CX
	JZ           z8done

z8loop:
	VMOVUPD   0(SI), Z6            // points 0–3
	VMOVUPD   64(SI), Z7           // points 4–7
	VUNPCKLPD Z7, Z6, Z8           // x0 x4 x1 x5 x2 x6 x3 x7
	VUNPCKHPD Z7, Z6, Z9           // y in the same order
	VSUBPD      Z8, Z0, Z8
	VSUBPD      Z9, Z1, Z9
	VMOVAPD     Z2, Z10
	VFMADD231PD Z8, Z8, Z10        // 1 + dx², fused
	VFMADD231PD Z9, Z9, Z10        // u = (1 + dx²) + dy², fused
	VDIVPD      Z10, Z2, Z10       // w = 1/u
	VADDPD      Z10, Z3, Z3        // z += w
	VMULPD      Z10, Z10, Z10      // w²
	VFMADD231PD Z10, Z8, Z4        // rx += w²·dx, fused
	VFMADD231PD Z10, Z9, Z5        // ry += w²·dy, fused
	ADDQ        $128, SI
	DECQ        CX
	JNZ         z8loop

z8done:
	HALVES3
	REDUCE3
	VZEROUPPER
	RET

// CELLS4(OFF) adds the expansions of four cells of the block at SI, the
// lanes at byte offset OFF of each 64-byte field, to Y3 (z), Y4 (rx) and
// Y5 (ry) (xi, yi in Y0, Y1; Y2, Y6–Y14 scratch). Block layout as in
// cellList: cx, cy, mass, tr, mxx, mxy, myy at 0, 64, …, 384.
#define CELLS4(OFF) \
	VMOVUPD (OFF)(SI), Y6 \
	VSUBPD  Y6, Y0, Y6 \
	VMOVUPD (OFF+64)(SI), Y7 \
	VSUBPD  Y7, Y1, Y7 \
	VMULPD  Y6, Y6, Y8 \
	VADDPD  kone<>(SB), Y8, Y8 \
	VMULPD  Y7, Y7, Y9 \
	VADDPD  Y9, Y8, Y8 \
	VMOVUPD kone<>(SB), Y9 \
	VDIVPD  Y8, Y9, Y8 \
	VMULPD  Y8, Y8, Y9 \
	VMULPD  Y8, Y9, Y10 \
	VMULPD  (OFF+256)(SI), Y6, Y12 \
	VMULPD  (OFF+320)(SI), Y7, Y13 \
	VADDPD  Y13, Y12, Y12 \
	VMULPD  (OFF+320)(SI), Y6, Y13 \
	VMULPD  (OFF+384)(SI), Y7, Y14 \
	VADDPD  Y14, Y13, Y13 \
	VMULPD  Y12, Y6, Y14 \
	VMULPD  Y13, Y7, Y2 \
	VADDPD  Y2, Y14, Y14 \
	VMULPD  kfour<>(SB), Y14, Y14 \
	VMULPD  Y10, Y14, Y14 \
	VMULPD  kfour<>(SB), Y10, Y10 \
	VMULPD  (OFF+128)(SI), Y8, Y2 \
	VMULPD  (OFF+192)(SI), Y9, Y11 \
	VSUBPD  Y11, Y2, Y2 \
	VADDPD  Y14, Y2, Y2 \
	VADDPD  Y2, Y3, Y3 \
	VMOVUPD (OFF+192)(SI), Y11 \
	VMULPD  ktwo<>(SB), Y11, Y11 \
	VMULPD  Y8, Y11, Y11 \
	VMOVUPD (OFF+128)(SI), Y2 \
	VSUBPD  Y11, Y2, Y2 \
	VMULPD  Y2, Y9, Y2 \
	VMULPD  kthree<>(SB), Y14, Y11 \
	VMULPD  Y8, Y11, Y11 \
	VADDPD  Y11, Y2, Y2 \
	VMULPD  Y6, Y2, Y11 \
	VMULPD  Y10, Y12, Y12 \
	VSUBPD  Y12, Y11, Y11 \
	VADDPD  Y11, Y4, Y4 \
	VMULPD  Y7, Y2, Y11 \
	VMULPD  Y10, Y13, Y13 \
	VSUBPD  Y13, Y11, Y11 \
	VADDPD  Y11, Y5, Y5

// func cells8AVX2(xi, yi float64, blk []float64) (z, rx, ry float64)
// blk holds whole blocks of 56 float64s (see cellList). Lanes 0–3 of every
// block are summed first, then lanes 4–7 (the registers do not hold both
// sets of accumulators); the two sets are added lane by lane before the
// reduction (see cells8Generic). Per cell and lane the operations are
// those of cells8Generic: mdx = mxx·dx + mxy·dy, q = 4·(dx·mdx + dy·mdy)·w³,
// z += (mass·w − tr·w²) + q, s = w²·(mass − 2·tr·w) + 3·q·w,
// r += s·Δ − 4·w³·MΔ.
TEXT ·cells8AVX2(SB), NOSPLIT, $96-64
	VBROADCASTSD xi+0(FP), Y0
	VBROADCASTSD yi+8(FP), Y1
	MOVQ         blk_base+16(FP), SI
	MOVQ         blk_len+24(FP), AX
	XORQ         DX, DX
	MOVQ         $56, CX
	DIVQ         CX                // AX = number of blocks
	MOVQ         AX, BX
	VXORPD       Y3, Y3, Y3
	VXORPD       Y4, Y4, Y4
	VXORPD       Y5, Y5, Y5
	TESTQ        BX, BX
	JZ           c8done
	MOVQ         BX, CX

c8lo:
	CELLS4(0)
	ADDQ $448, SI
	DECQ CX
	JNZ  c8lo
	VMOVUPD Y3, lo_z-96(SP)
	VMOVUPD Y4, lo_x-64(SP)
	VMOVUPD Y5, lo_y-32(SP)
	VXORPD  Y3, Y3, Y3
	VXORPD  Y4, Y4, Y4
	VXORPD  Y5, Y5, Y5
	MOVQ    blk_base+16(FP), SI
	MOVQ    BX, CX

c8hi:
	CELLS4(32)
	ADDQ $448, SI
	DECQ CX
	JNZ  c8hi
	VADDPD lo_z-96(SP), Y3, Y3
	VADDPD lo_x-64(SP), Y4, Y4
	VADDPD lo_y-32(SP), Y5, Y5

c8done:
	REDUCE3
	VZEROUPPER
	RET

// func cells8AVX512(xi, yi float64, blk []float64) (z, rx, ry float64)
// As cells8AVX2 with the eight lanes of a block in one register.
TEXT ·cells8AVX512(SB), NOSPLIT, $0-64
	VBROADCASTSD xi+0(FP), Z0
	VBROADCASTSD yi+8(FP), Z1
	VBROADCASTSD kone<>(SB), Z19
	VBROADCASTSD ktwo<>(SB), Z16
	VBROADCASTSD kthree<>(SB), Z17
	VBROADCASTSD kfour<>(SB), Z18
	VXORPD       Z3, Z3, Z3
	VXORPD       Z4, Z4, Z4
	VXORPD       Z5, Z5, Z5
	MOVQ         blk_base+16(FP), SI
	MOVQ         blk_len+24(FP), AX
	XORQ         DX, DX
	MOVQ         $56, CX
	DIVQ         CX
	MOVQ         AX, CX
	TESTQ        CX, CX
	JZ           cz8done

cz8loop:
	VMOVUPD 0(SI), Z6
	VSUBPD  Z6, Z0, Z6             // dx = xi − cx
	VMOVUPD 64(SI), Z7
	VSUBPD  Z7, Z1, Z7             // dy = yi − cy
	VMULPD  Z6, Z6, Z8
	VADDPD  Z19, Z8, Z8            // 1 + dx²
	VMULPD  Z7, Z7, Z9
	VADDPD  Z9, Z8, Z8             // u
	VDIVPD  Z8, Z19, Z8            // w = 1/u
	VMULPD  Z8, Z8, Z9             // w2
	VMULPD  Z8, Z9, Z10            // w3 = w2·w
	VMULPD  256(SI), Z6, Z12       // mxx·dx
	VMULPD  320(SI), Z7, Z13       // mxy·dy
	VADDPD  Z13, Z12, Z12          // mdx
	VMULPD  320(SI), Z6, Z13       // mxy·dx
	VMULPD  384(SI), Z7, Z14       // myy·dy
	VADDPD  Z14, Z13, Z13          // mdy
	VMULPD  Z12, Z6, Z14           // dx·mdx
	VMULPD  Z13, Z7, Z2            // dy·mdy
	VADDPD  Z2, Z14, Z14
	VMULPD  Z18, Z14, Z14          // 4·(…)
	VMULPD  Z10, Z14, Z14          // q = 4·(…)·w3
	VMULPD  Z18, Z10, Z10          // f = 4·w3
	VMULPD  128(SI), Z8, Z2        // mass·w
	VMULPD  192(SI), Z9, Z11       // tr·w2
	VSUBPD  Z11, Z2, Z2
	VADDPD  Z14, Z2, Z2
	VADDPD  Z2, Z3, Z3             // z += mass·w − tr·w2 + q
	VMULPD  192(SI), Z16, Z11      // 2·tr
	VMULPD  Z8, Z11, Z11           // 2·tr·w
	VMOVUPD 128(SI), Z2
	VSUBPD  Z11, Z2, Z2            // mass − 2·tr·w
	VMULPD  Z2, Z9, Z2             // w2·(…)
	VMULPD  Z17, Z14, Z11          // 3·q
	VMULPD  Z8, Z11, Z11           // 3·q·w
	VADDPD  Z11, Z2, Z2            // s
	VMULPD  Z6, Z2, Z11            // s·dx
	VMULPD  Z10, Z12, Z12          // f·mdx
	VSUBPD  Z12, Z11, Z11
	VADDPD  Z11, Z4, Z4            // rx += s·dx − f·mdx
	VMULPD  Z7, Z2, Z11            // s·dy
	VMULPD  Z10, Z13, Z13          // f·mdy
	VSUBPD  Z13, Z11, Z11
	VADDPD  Z11, Z5, Z5            // ry += s·dy − f·mdy
	ADDQ    $448, SI
	DECQ    CX
	JNZ     cz8loop

cz8done:
	HALVES3
	REDUCE3
	VZEROUPPER
	RET


// func sqDist8AVX2(a, b []float64, bound float64) (s0, s1, s2, s3 float64, over bool)
// len(a) = len(b) is a multiple of 8. Lane l accumulates features l and
// l + 4 of each block of eight; after each block (s0 + s1) + (s2 + s3) is
// compared with bound, as in sqDist8Generic.
TEXT ·sqDist8AVX2(SB), NOSPLIT, $0-89
	MOVQ         a_base+0(FP), SI
	MOVQ         a_len+8(FP), CX
	MOVQ         b_base+24(FP), DI
	VMOVSD       bound+48(FP), X9
	VXORPD       Y0, Y0, Y0
	MOVB         $0, over+88(FP)
	SHRQ         $3, CX
	JZ           sdone

sloop:
	VMOVUPD      0(SI), Y1
	VSUBPD       0(DI), Y1, Y1      // t = a − b, features 0..3
	VMULPD       Y1, Y1, Y1
	VADDPD       Y1, Y0, Y0
	VMOVUPD      32(SI), Y2
	VSUBPD       32(DI), Y2, Y2     // features 4..7
	VMULPD       Y2, Y2, Y2
	VADDPD       Y2, Y0, Y0
	VHADDPD      Y0, Y0, Y3         // s0+s1, s0+s1, s2+s3, s2+s3
	VEXTRACTF128 $1, Y3, X4
	VADDSD       X4, X3, X3         // (s0+s1) + (s2+s3)
	VUCOMISD     X9, X3
	JA           sover
	ADDQ         $64, SI
	ADDQ         $64, DI
	DECQ         CX
	JNZ          sloop
	JMP          sdone

sover:
	MOVB         $1, over+88(FP)

sdone:
	VEXTRACTF128 $1, Y0, X1
	VMOVSD       X0, s0+56(FP)
	VMOVHPD      X0, s1+64(FP)
	VMOVSD       X1, s2+72(FP)
	VMOVHPD      X1, s3+80(FP)
	VZEROUPPER
	RET

// func sqDistRowAVX2(q, x, out []float64)
// len(q) = d ≥ 8, len(x) = len(out)·d. For each point: lanes over whole
// blocks of eight features as in sqDist8AVX2 (no early exit), the d mod 8
// remaining features added to lane 0 in order, then (s0 + s1) + (s2 + s3).
TEXT ·sqDistRowAVX2(SB), NOSPLIT, $0-72
	MOVQ q_base+0(FP), SI
	MOVQ q_len+8(FP), R8             // d
	MOVQ x_base+24(FP), DI
	MOVQ out_base+48(FP), DX
	MOVQ out_len+56(FP), R9          // points
	MOVQ R8, R10
	SHRQ $3, R10                     // whole blocks of eight
	MOVQ R8, R11
	ANDQ $7, R11                     // remaining features
	MOVQ R10, R12
	SHLQ $6, R12                     // bytes in whole blocks
	TESTQ R9, R9
	JZ   rdone

rpoint:
	VXORPD Y0, Y0, Y0
	MOVQ   SI, AX                    // q cursor
	MOVQ   DI, BX                    // x cursor
	MOVQ   R10, CX

rblock:
	VMOVUPD 0(AX), Y1
	VSUBPD  0(BX), Y1, Y1
	VMULPD  Y1, Y1, Y1
	VADDPD  Y1, Y0, Y0
	VMOVUPD 32(AX), Y2
	VSUBPD  32(BX), Y2, Y2
	VMULPD  Y2, Y2, Y2
	VADDPD  Y2, Y0, Y0
	ADDQ    $64, AX
	ADDQ    $64, BX
	DECQ    CX
	JNZ     rblock

	// s0 in X0 low; s1 = X0 high; s2, s3 in X3.
	VEXTRACTF128 $1, Y0, X3
	MOVQ         R11, CX
	TESTQ        CX, CX
	JZ           rsum

rtail:
	VMOVSD 0(AX), X4
	VSUBSD 0(BX), X4, X4
	VMULSD X4, X4, X4
	VADDSD X4, X0, X0               // s0 += t² (high lane kept)
	ADDQ   $8, AX
	ADDQ   $8, BX
	DECQ   CX
	JNZ    rtail

rsum:
	VPERMILPD $1, X0, X5            // s1
	VADDSD    X5, X0, X0            // s0 + s1
	VPERMILPD $1, X3, X6            // s3
	VADDSD    X6, X3, X3            // s2 + s3
	VADDSD    X3, X0, X0
	VMOVSD    X0, 0(DX)
	ADDQ      $8, DX
	MOVQ      BX, DI                 // next point follows
	DECQ      R9
	JNZ       rpoint

rdone:
	VZEROUPPER
	RET

// Scalars for klRow4AVX2, broadcast with VBROADCASTSD.
DATA klc<>+0(SB)/8, $0x000FFFFFFFFFFFFF   // mantissa mask
DATA klc<>+8(SB)/8, $0x3FE0000000000000   // exponent of [0.5, 1)
DATA klc<>+16(SB)/8, $0x4330000000000000  // 2^52 as bits
DATA klc<>+24(SB)/8, $4503599627370496.0  // 2^52
DATA klc<>+32(SB)/8, $1022.0
DATA klc<>+40(SB)/8, $0.70710678118654752440 // √2/2
DATA klc<>+48(SB)/8, $2.0
DATA klc<>+56(SB)/8, $0.5
DATA klc<>+64(SB)/8, $1.479819860511658591e-01 // L7
DATA klc<>+72(SB)/8, $1.818357216161805012e-01 // L5
DATA klc<>+80(SB)/8, $2.857142874366239149e-01 // L3
DATA klc<>+88(SB)/8, $6.666666666666735130e-01 // L1
DATA klc<>+96(SB)/8, $1.531383769920937332e-01 // L6
DATA klc<>+104(SB)/8, $2.222219843214978396e-01 // L4
DATA klc<>+112(SB)/8, $3.999999999940941908e-01 // L2
DATA klc<>+120(SB)/8, $1.90821492927058770002e-10 // Ln2Lo
DATA klc<>+128(SB)/8, $6.93147180369123816490e-01 // Ln2Hi
GLOBL klc<>(SB), RODATA|NOPTR, $136

// func klRow4AVX2(y []float64, col []int32, val []float64, xi, yi float64) float64
// Σ p·ln(1 + d²) over whole blocks of four entries, the operations of
// logAtLeastOne in each lane; lane l holds entry l of a block.
TEXT ·klRow4AVX2(SB), NOSPLIT, $0-96
	MOVQ         y_base+0(FP), DI
	MOVQ         col_base+24(FP), SI
	MOVQ         col_len+32(FP), CX
	MOVQ         val_base+48(FP), DX
	VBROADCASTSD xi+72(FP), Y0
	VBROADCASTSD yi+80(FP), Y1
	VMOVUPD      kone<>(SB), Y2
	VXORPD       Y3, Y3, Y3
	SHRQ         $2, CX
	JZ           kdone

kloop:
	GATHER4                                   // dx Y8, dy Y9, u Y10

	VBROADCASTSD klc<>+0(SB), Y11
	VANDPD       Y11, Y10, Y11
	VBROADCASTSD klc<>+8(SB), Y12
	VORPD        Y12, Y11, Y11                 // f1 in [0.5, 1)
	VPSRLQ       $52, Y10, Y12                 // biased exponent
	VBROADCASTSD klc<>+16(SB), Y13
	VPOR         Y13, Y12, Y12
	VBROADCASTSD klc<>+24(SB), Y13
	VSUBPD       Y13, Y12, Y12
	VBROADCASTSD klc<>+32(SB), Y13
	VSUBPD       Y13, Y12, Y12                 // k
	VBROADCASTSD klc<>+40(SB), Y13
	VCMPPD       $1, Y13, Y11, Y13             // f1 < √2/2
	VADDPD       Y11, Y11, Y14                 // f1 + f1
	VBLENDVPD    Y13, Y14, Y11, Y11
	VSUBPD       Y2, Y12, Y14                  // k − 1
	VBLENDVPD    Y13, Y14, Y12, Y12
	VSUBPD       Y2, Y11, Y11                  // f = f1 − 1
	VBROADCASTSD klc<>+48(SB), Y13
	VADDPD       Y13, Y11, Y13                 // 2 + f
	VDIVPD       Y13, Y11, Y13                 // s = f/(2 + f)
	VMULPD       Y13, Y13, Y14                 // s2
	VMULPD       Y14, Y14, Y8                  // s4
	VBROADCASTSD klc<>+64(SB), Y9
	VMULPD       Y9, Y8, Y9                    // s4·L7
	VBROADCASTSD klc<>+72(SB), Y10
	VADDPD       Y10, Y9, Y9                   // L5 + …
	VMULPD       Y9, Y8, Y9
	VBROADCASTSD klc<>+80(SB), Y10
	VADDPD       Y10, Y9, Y9                   // L3 + …
	VMULPD       Y9, Y8, Y9
	VBROADCASTSD klc<>+88(SB), Y10
	VADDPD       Y10, Y9, Y9                   // L1 + …
	VMULPD       Y9, Y14, Y9                   // t1 = s2·(…)
	VBROADCASTSD klc<>+96(SB), Y10
	VMULPD       Y10, Y8, Y10                  // s4·L6
	VBROADCASTSD klc<>+104(SB), Y7
	VADDPD       Y7, Y10, Y10                  // L4 + …
	VMULPD       Y10, Y8, Y10
	VBROADCASTSD klc<>+112(SB), Y7
	VADDPD       Y7, Y10, Y10                  // L2 + …
	VMULPD       Y10, Y8, Y10                  // t2 = s4·(…)
	VADDPD       Y10, Y9, Y9                   // r = t1 + t2
	VBROADCASTSD klc<>+56(SB), Y10
	VMULPD       Y11, Y10, Y10                 // 0.5·f
	VMULPD       Y11, Y10, Y10                 // hfsq = 0.5·f·f
	VADDPD       Y9, Y10, Y9                   // hfsq + r
	VMULPD       Y9, Y13, Y9                   // s·(hfsq + r)
	VBROADCASTSD klc<>+120(SB), Y14
	VMULPD       Y14, Y12, Y14                 // k·Ln2Lo
	VADDPD       Y14, Y9, Y9
	VSUBPD       Y9, Y10, Y9                   // hfsq − (…)
	VSUBPD       Y11, Y9, Y9                   // (…) − f
	VBROADCASTSD klc<>+128(SB), Y14
	VMULPD       Y14, Y12, Y14                 // k·Ln2Hi
	VSUBPD       Y9, Y14, Y9                   // ln u
	VMOVUPD      0(DX), Y10
	VMULPD       Y9, Y10, Y9                   // p·ln u
	VADDPD       Y9, Y3, Y3
	ADDQ         $16, SI
	ADDQ         $32, DX
	DECQ         CX
	JNZ          kloop

kdone:
	REDUCE(Y3, X3, X6)
	VMOVSD X3, ret+88(FP)
	VZEROUPPER
	RET

// func sqDist32AVX2(a, b []float32) float32
// len(b) ≥ len(a). Lane l of the accumulator holds features l, l + 8, …
// of the whole blocks of eight; the remaining features go into lane 0 in
// order; the lanes are reduced as ((s0 + s4) + (s2 + s6)) + ((s1 + s5) + (s3 + s7)).
TEXT ·sqDist32AVX2(SB), NOSPLIT, $0-52
	MOVQ   a_base+0(FP), SI
	MOVQ   a_len+8(FP), CX
	MOVQ   b_base+24(FP), DI
	VXORPS Y0, Y0, Y0
	MOVQ   CX, DX
	SHRQ   $3, DX
	JZ     fsplit

fblock:
	VMOVUPS 0(SI), Y1
	VSUBPS  0(DI), Y1, Y1
	VMULPS  Y1, Y1, Y1
	VADDPS  Y1, Y0, Y0
	ADDQ    $32, SI
	ADDQ    $32, DI
	DECQ    DX
	JNZ     fblock

fsplit:
	// The scalar tail below clears bits 128–255, so save lanes 4–7 first.
	VEXTRACTF128 $1, Y0, X3
	ANDQ         $7, CX
	JZ           freduce

ftail:
	VMOVSS 0(SI), X1
	VSUBSS 0(DI), X1, X1
	VMULSS X1, X1, X1
	VADDSS X1, X0, X0
	ADDQ   $4, SI
	ADDQ   $4, DI
	DECQ   CX
	JNZ    ftail

freduce:
	VADDPS    X3, X0, X0             // s0+s4, s1+s5, s2+s6, s3+s7
	VMOVHLPS  X0, X0, X1
	VADDPS    X1, X0, X0             // (s0+s4)+(s2+s6), (s1+s5)+(s3+s7)
	VMOVSHDUP X0, X1
	VADDSS    X1, X0, X0
	VMOVSS    X0, ret+48(FP)
	VZEROUPPER
	RET
