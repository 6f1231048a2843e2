package nnls

import (
	"golang.org/x/sys/cpu"
	"gonum.org/v1/gonum/floats"
)

// useAVX selects the AVX2/FMA kernels of kernel_amd64.s.
var useAVX = cpu.X86.HasAVX2 && cpu.X86.HasFMA

//go:noescape
func dotAVX(x, y []float64) float64

//go:noescape
func axpyAVX(alpha float64, x, y []float64)

// dot returns x . y; len(y) must equal len(x).
func dot(x, y []float64) float64 {
	if len(y) != len(x) {
		panic("nnls: internal error: dot length mismatch")
	}
	if useAVX {
		return dotAVX(x, y)
	}
	return floats.Dot(x, y)
}

// axpy sets y += alpha x; len(y) must equal len(x).
func axpy(alpha float64, x, y []float64) {
	if len(y) != len(x) {
		panic("nnls: internal error: axpy length mismatch")
	}
	if useAVX {
		axpyAVX(alpha, x, y)
		return
	}
	floats.AddScaled(y, alpha, x)
}
