package nnls

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchProblem is a deterministic spectroscopy-like problem: m channels of
// 0.5 eV, n derivative-of-Gaussian references 1.2 eV apart (strongly
// correlated), alternating present and absent, plus uniform noise of 0.04
// peak to peak from an LCG. testdata/time_scipy.py builds the same problem
// for the SciPy timing; keep the two in step.
func benchProblem(m, n int) (*mat.Dense, []float64) {
	a := mat.NewDense(m, n, nil)
	e0 := 0.25 * float64(m)
	for j := 0; j < n; j++ {
		c := e0 + 1.2*(float64(j)-float64(n-1)/2)
		s := 2 + 0.25*float64(j)
		for i := 0; i < m; i++ {
			u := (0.5*float64(i) - c) / s
			a.Set(i, j, -u*math.Exp(-u*u/2))
		}
	}
	b := make([]float64, m)
	state := uint64(12345)
	for i := range b {
		for j := 0; j < n; j++ {
			coef := -0.2
			if j%2 == 0 {
				coef = 1 + 0.1*float64(j)
			}
			b[i] += a.At(i, j) * coef
		}
		state = (1103515245*state + 12345) % (1 << 31)
		b[i] += 0.04 * (float64(state)/float64(1<<31) - 0.5)
	}
	return a, b
}

// BenchmarkSolver times one Solve of benchProblem(m, n).
func BenchmarkSolver(b *testing.B) {
	for _, m := range []int{200, 400} {
		for _, n := range []int{3, 6, 12} {
			b.Run(fmt.Sprintf("m=%d/n=%d", m, n), func(b *testing.B) {
				a, rhs := benchProblem(m, n)
				var s Solver
				var r Result
				if err := s.Solve(&r, a, rhs, nil); err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				c := startCPU(b)
				for b.Loop() {
					s.Solve(&r, a, rhs, nil)
				}
				c.stop()
			})
		}
	}
}

// BenchmarkBatch times one right-hand side of a map fit: m channels, 4
// constrained references and 2 free background columns (mapMatrix), over
// 256 distinct noisy pixel spectra.
func BenchmarkBatch(b *testing.B) {
	for _, m := range []int{300} {
		for _, nc := range []int{4} {
			const nf = 2
			b.Run(fmt.Sprintf("m=%d/n=%d+%d", m, nc, nf), func(b *testing.B) {
				rng := rand.New(rand.NewPCG(1, 2))
				a, free := mapMatrix(m, nc, nf, 0)
				bt, err := NewBatch(a, free, Settings{})
				if err != nil {
					b.Fatal(err)
				}
				bs := make([][]float64, 256)
				for i := range bs {
					bs[i] = mapRHS(rng, a, nf, 0.02)
				}
				var r Result
				b.ReportAllocs()
				i := 0
				c := startCPU(b)
				for b.Loop() {
					bt.Solve(&r, bs[i&255])
					i++
				}
				c.stop()
			})
		}
	}
}

// BenchmarkBankScan times the shift scan of one pixel: A_k^T b by Project
// and SolveNormal for each of 41 shifts.
func BenchmarkBankScan(b *testing.B) {
	const m, nc, nf, shifts = 300, 4, 2, 41
	b.Run(fmt.Sprintf("m=%d/n=%d+%d/shifts=%d", m, nc, nf, shifts), func(b *testing.B) {
		rng := rand.New(rand.NewPCG(3, 4))
		var as []*mat.Dense
		var free []bool
		for k := 0; k < shifts; k++ {
			a, f := mapMatrix(m, nc, nf, -2+0.1*float64(k))
			as, free = append(as, a), f
		}
		bk, err := NewBank(as, free, Settings{})
		if err != nil {
			b.Fatal(err)
		}
		bs := make([][]float64, 64)
		for i := range bs {
			bs[i] = mapRHS(rng, as[rng.IntN(shifts)], nf, 0.02)
		}
		atb := make([]float64, nc+nf)
		var r Result
		b.ReportAllocs()
		i := 0
		c := startCPU(b)
		for b.Loop() {
			rhs := bs[i&63]
			i++
			for k := 0; k < shifts; k++ {
				btb := bk.Project(atb, k, rhs)
				bk.SolveNormal(&r, k, atb, btb)
			}
		}
		c.stop()
	})
}
