package nnls

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestKernels checks dot and axpy against plain loops for every length up
// to 100 and unaligned starts. Tolerance 1e-14 relative to sum |x_i y_i|:
// the kernels only reorder the sums and fuse the multiply-adds.
func TestKernels(t *testing.T) {
	saved := useAVX
	defer func() { useAVX = saved }()
	for _, avx := range []bool{false, saved} {
		useAVX = avx
		testKernels(t)
	}
}

func testKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	buf := make([]float64, 210)
	for i := range buf {
		buf[i] = rng.NormFloat64()
	}
	for n := 0; n <= 100; n++ {
		for off := 0; off < 3; off++ {
			x := buf[off : off+n]
			y := append([]float64(nil), buf[off+105:off+105+n]...)
			var want, abs float64
			for i := range x {
				want += x[i] * y[i]
				abs += math.Abs(x[i] * y[i])
			}
			if got := dot(x, y); !scalar.EqualWithinAbs(got, want, 1e-14*abs+1e-300) {
				t.Errorf("n=%d: dot = %v, want %v", n, got, want)
			}
			z := append([]float64(nil), buf[off+50:off+50+n]...)
			var wantz, absz float64
			for i := range x {
				wantz += x[i] * z[i]
				absz += math.Abs(x[i] * z[i])
			}
			g1, g2 := dot2(x, y, z)
			if !scalar.EqualWithinAbs(g1, want, 1e-14*abs+1e-300) || !scalar.EqualWithinAbs(g2, wantz, 1e-14*absz+1e-300) {
				t.Errorf("n=%d: dot2 = %v %v, want %v %v", n, g1, g2, want, wantz)
			}
			y2, z2 := append([]float64(nil), y...), append([]float64(nil), z...)
			axpy2(0.37, -1.5, x, y2, z2)
			for i := range x {
				if !scalar.EqualWithinAbsOrRel(y2[i], y[i]+0.37*x[i], 1e-15, 1e-15) ||
					!scalar.EqualWithinAbsOrRel(z2[i], z[i]-1.5*x[i], 1e-15, 1e-15) {
					t.Fatalf("n=%d: axpy2[%d] = %v %v", n, i, y2[i], z2[i])
				}
			}
			want2 := make([]float64, n)
			for i := range x {
				want2[i] = y[i] + 0.37*x[i]
			}
			axpy(0.37, x, y)
			for i := range y {
				if !scalar.EqualWithinAbsOrRel(y[i], want2[i], 1e-15, 1e-15) {
					t.Fatalf("n=%d: axpy[%d] = %v, want %v", n, i, y[i], want2[i])
				}
			}
		}
	}
}
