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

//go:noescape
func dot2AVX(u, a, b []float64) (da, db float64)

//go:noescape
func axpy2AVX(alpha, beta float64, u, a, b []float64)

// dot2 returns u.a and u.b; a and b must have the length of u.
func dot2(u, a, b []float64) (float64, float64) {
	if len(a) != len(u) || len(b) != len(u) {
		panic("nnls: internal error: dot2 length mismatch")
	}
	if useAVX {
		return dot2AVX(u, a, b)
	}
	return floats.Dot(u, a), floats.Dot(u, b)
}

// axpy2 sets a += alpha u and b += beta u; a and b must have the length
// of u.
func axpy2(alpha, beta float64, u, a, b []float64) {
	if len(a) != len(u) || len(b) != len(u) {
		panic("nnls: internal error: axpy2 length mismatch")
	}
	if useAVX {
		axpy2AVX(alpha, beta, u, a, b)
		return
	}
	floats.AddScaled(a, alpha, u)
	floats.AddScaled(b, beta, u)
}
