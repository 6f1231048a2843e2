#include "textflag.h"

// func dotAVX(x, y []float64) float64
// Requires AVX2 and FMA, len(y) >= len(x).
TEXT ·dotAVX(SB), NOSPLIT, $0-56
	MOVQ   x_base+0(FP), SI
	MOVQ   x_len+8(FP), CX
	MOVQ   y_base+24(FP), DI
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	MOVQ   CX, BX
	SHRQ   $4, BX
	JZ     dtail4

dloop16:
	VMOVUPD     0(SI), Y4
	VMOVUPD     32(SI), Y5
	VMOVUPD     64(SI), Y6
	VMOVUPD     96(SI), Y7
	VFMADD231PD 0(DI), Y4, Y0
	VFMADD231PD 32(DI), Y5, Y1
	VFMADD231PD 64(DI), Y6, Y2
	VFMADD231PD 96(DI), Y7, Y3
	ADDQ        $128, SI
	ADDQ        $128, DI
	DECQ        BX
	JNZ         dloop16

dtail4:
	ANDQ $15, CX
	MOVQ CX, BX
	SHRQ $2, BX
	JZ   dreduce

dloop4:
	VMOVUPD     0(SI), Y4
	VFMADD231PD 0(DI), Y4, Y0
	ADDQ        $32, SI
	ADDQ        $32, DI
	DECQ        BX
	JNZ         dloop4

dreduce:
	VADDPD       Y1, Y0, Y0
	VADDPD       Y3, Y2, Y2
	VADDPD       Y2, Y0, Y0
	VEXTRACTF128 $1, Y0, X1
	VADDPD       X1, X0, X0
	VHADDPD      X0, X0, X0
	ANDQ         $3, CX
	JZ           ddone

dloop1:
	VMOVSD      0(SI), X4
	VFMADD231SD 0(DI), X4, X0
	ADDQ        $8, SI
	ADDQ        $8, DI
	DECQ        CX
	JNZ         dloop1

ddone:
	VZEROUPPER
	MOVSD X0, ret+48(FP)
	RET

// func axpyAVX(alpha float64, x, y []float64)
// y += alpha * x. Requires AVX2 and FMA, len(y) >= len(x).
TEXT ·axpyAVX(SB), NOSPLIT, $0-56
	VBROADCASTSD alpha+0(FP), Y15
	MOVQ         x_base+8(FP), SI
	MOVQ         x_len+16(FP), CX
	MOVQ         y_base+32(FP), DI
	MOVQ         CX, BX
	SHRQ         $4, BX
	JZ           atail4

aloop16:
	VMOVUPD     0(DI), Y0
	VMOVUPD     32(DI), Y1
	VMOVUPD     64(DI), Y2
	VMOVUPD     96(DI), Y3
	VFMADD231PD 0(SI), Y15, Y0
	VFMADD231PD 32(SI), Y15, Y1
	VFMADD231PD 64(SI), Y15, Y2
	VFMADD231PD 96(SI), Y15, Y3
	VMOVUPD     Y0, 0(DI)
	VMOVUPD     Y1, 32(DI)
	VMOVUPD     Y2, 64(DI)
	VMOVUPD     Y3, 96(DI)
	ADDQ        $128, SI
	ADDQ        $128, DI
	DECQ        BX
	JNZ         aloop16

atail4:
	ANDQ $15, CX
	MOVQ CX, BX
	SHRQ $2, BX
	JZ   atail1

aloop4:
	VMOVUPD     0(DI), Y0
	VFMADD231PD 0(SI), Y15, Y0
	VMOVUPD     Y0, 0(DI)
	ADDQ        $32, SI
	ADDQ        $32, DI
	DECQ        BX
	JNZ         aloop4

atail1:
	ANDQ $3, CX
	JZ   adone

aloop1:
	VMOVSD      0(DI), X0
	VFMADD231SD 0(SI), X15, X0
	VMOVSD      X0, 0(DI)
	ADDQ        $8, SI
	ADDQ        $8, DI
	DECQ        CX
	JNZ         aloop1

adone:
	VZEROUPPER
	RET

// func dot2AVX(u, a, b []float64) (da, db float64)
// da = u.a, db = u.b. Requires AVX2 and FMA, len(a), len(b) >= len(u).
TEXT ·dot2AVX(SB), NOSPLIT, $0-88
	MOVQ   u_base+0(FP), SI
	MOVQ   u_len+8(FP), CX
	MOVQ   a_base+24(FP), DI
	MOVQ   b_base+48(FP), DX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	MOVQ   CX, BX
	SHRQ   $3, BX
	JZ     d2tail4

d2loop8:
	VMOVUPD     0(SI), Y4
	VMOVUPD     32(SI), Y5
	VFMADD231PD 0(DI), Y4, Y0
	VFMADD231PD 32(DI), Y5, Y1
	VFMADD231PD 0(DX), Y4, Y2
	VFMADD231PD 32(DX), Y5, Y3
	ADDQ        $64, SI
	ADDQ        $64, DI
	ADDQ        $64, DX
	DECQ        BX
	JNZ         d2loop8

d2tail4:
	ANDQ $7, CX
	CMPQ CX, $4
	JL   d2reduce
	VMOVUPD     0(SI), Y4
	VFMADD231PD 0(DI), Y4, Y0
	VFMADD231PD 0(DX), Y4, Y2
	ADDQ        $32, SI
	ADDQ        $32, DI
	ADDQ        $32, DX
	SUBQ        $4, CX

d2reduce:
	VADDPD       Y1, Y0, Y0
	VADDPD       Y3, Y2, Y2
	VEXTRACTF128 $1, Y0, X1
	VADDPD       X1, X0, X0
	VHADDPD      X0, X0, X0
	VEXTRACTF128 $1, Y2, X3
	VADDPD       X3, X2, X2
	VHADDPD      X2, X2, X2
	TESTQ        CX, CX
	JZ           d2done

d2loop1:
	VMOVSD      0(SI), X4
	VFMADD231SD 0(DI), X4, X0
	VFMADD231SD 0(DX), X4, X2
	ADDQ        $8, SI
	ADDQ        $8, DI
	ADDQ        $8, DX
	DECQ        CX
	JNZ         d2loop1

d2done:
	VZEROUPPER
	MOVSD X0, da+72(FP)
	MOVSD X2, db+80(FP)
	RET

// func axpy2AVX(alpha, beta float64, u, a, b []float64)
// a += alpha u, b += beta u. Requires AVX2 and FMA, len(a), len(b) >= len(u).
TEXT ·axpy2AVX(SB), NOSPLIT, $0-88
	VBROADCASTSD alpha+0(FP), Y14
	VBROADCASTSD beta+8(FP), Y15
	MOVQ         u_base+16(FP), SI
	MOVQ         u_len+24(FP), CX
	MOVQ         a_base+40(FP), DI
	MOVQ         b_base+64(FP), DX
	MOVQ         CX, BX
	SHRQ         $3, BX
	JZ           a2tail4

a2loop8:
	VMOVUPD     0(SI), Y4
	VMOVUPD     32(SI), Y5
	VMOVUPD     0(DI), Y0
	VMOVUPD     32(DI), Y1
	VMOVUPD     0(DX), Y2
	VMOVUPD     32(DX), Y3
	VFMADD231PD Y4, Y14, Y0
	VFMADD231PD Y5, Y14, Y1
	VFMADD231PD Y4, Y15, Y2
	VFMADD231PD Y5, Y15, Y3
	VMOVUPD     Y0, 0(DI)
	VMOVUPD     Y1, 32(DI)
	VMOVUPD     Y2, 0(DX)
	VMOVUPD     Y3, 32(DX)
	ADDQ        $64, SI
	ADDQ        $64, DI
	ADDQ        $64, DX
	DECQ        BX
	JNZ         a2loop8

a2tail4:
	ANDQ $7, CX
	CMPQ CX, $4
	JL   a2tail1
	VMOVUPD     0(SI), Y4
	VMOVUPD     0(DI), Y0
	VMOVUPD     0(DX), Y2
	VFMADD231PD Y4, Y14, Y0
	VFMADD231PD Y4, Y15, Y2
	VMOVUPD     Y0, 0(DI)
	VMOVUPD     Y2, 0(DX)
	ADDQ        $32, SI
	ADDQ        $32, DI
	ADDQ        $32, DX
	SUBQ        $4, CX

a2tail1:
	TESTQ CX, CX
	JZ    a2done

a2loop1:
	VMOVSD      0(SI), X4
	VMOVSD      0(DI), X0
	VMOVSD      0(DX), X2
	VFMADD231SD X4, X14, X0
	VFMADD231SD X4, X15, X2
	VMOVSD      X0, 0(DI)
	VMOVSD      X2, 0(DX)
	ADDQ        $8, SI
	ADDQ        $8, DI
	ADDQ        $8, DX
	DECQ        CX
	JNZ         a2loop1

a2done:
	VZEROUPPER
	RET
