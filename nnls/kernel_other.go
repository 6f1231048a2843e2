//go:build !amd64

package nnls

import "gonum.org/v1/gonum/floats"

// useAVX is false: there are no assembly kernels on this architecture.
var useAVX = false

// dot returns x . y; len(y) must equal len(x).
func dot(x, y []float64) float64 { return floats.Dot(x, y) }

// axpy sets y += alpha x; len(y) must equal len(x).
func axpy(alpha float64, x, y []float64) { floats.AddScaled(y, alpha, x) }

// dot2 returns u.a and u.b.
func dot2(u, a, b []float64) (float64, float64) { return floats.Dot(u, a), floats.Dot(u, b) }

// axpy2 sets a += alpha u and b += beta u.
func axpy2(alpha, beta float64, u, a, b []float64) {
	floats.AddScaled(a, alpha, u)
	floats.AddScaled(b, beta, u)
}
