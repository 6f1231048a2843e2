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
