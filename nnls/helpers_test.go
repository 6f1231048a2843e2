package nnls

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// problem is one test problem.
type problem struct {
	a    *mat.Dense
	b    []float64
	free []bool
}

// randomProblem draws a Gaussian m x n matrix and a right-hand side from a
// coefficient vector with negative entries, so that the solution has an
// active set. nfree of the columns (the last ones) are free.
func randomProblem(rng *rand.Rand, m, n, nfree int) problem {
	a := mat.NewDense(m, n, nil)
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			a.Set(i, j, rng.NormFloat64())
		}
	}
	x := make([]float64, n)
	for j := range x {
		x[j] = rng.NormFloat64()
	}
	b := make([]float64, m)
	for i := range b {
		var v float64
		for j := 0; j < n; j++ {
			v += a.At(i, j) * x[j]
		}
		b[i] = v + 0.3*rng.NormFloat64()
	}
	return problem{a: a, b: b, free: freeLast(n, nfree)}
}

func freeLast(n, nfree int) []bool {
	if nfree == 0 {
		return nil
	}
	f := make([]bool, n)
	for j := n - nfree; j < n; j++ {
		f[j] = true
	}
	return f
}

// spectroProblem builds a derivative-mode fit as in DOMAIN.md: nref
// derivative-of-Gaussian references (sigma 1.5-3 eV) whose centres lie
// within a few eV of each other on an m-channel axis of 0.5 eV steps,
// plus nfree free background columns (Legendre-like polynomials in the
// scaled energy), and a noisy mixture in which some references are absent.
func spectroProblem(rng *rand.Rand, m, nref, nfree int) problem {
	n := nref + nfree
	a := mat.NewDense(m, n, nil)
	e0 := 0.5 * float64(m) / 2
	for j := 0; j < nref; j++ {
		c := e0 + 6*(rng.Float64()-0.5)
		s := 1.5 + 1.5*rng.Float64()
		for i := 0; i < m; i++ {
			e := 0.5 * float64(i)
			u := (e - c) / s
			a.Set(i, j, -u*math.Exp(-u*u/2))
		}
	}
	for k := 0; k < nfree; k++ {
		for i := 0; i < m; i++ {
			u := 2*float64(i)/float64(m-1) - 1
			a.Set(i, nref+k, math.Pow(u, float64(k)))
		}
	}
	coef := make([]float64, n)
	for j := 0; j < nref; j++ {
		if rng.Float64() < 0.6 {
			coef[j] = rng.Float64()
		} else {
			coef[j] = -0.2 * rng.Float64() // pushes the fit against the bound
		}
	}
	for k := 0; k < nfree; k++ {
		coef[nref+k] = 0.2 * rng.NormFloat64()
	}
	b := make([]float64, m)
	for i := range b {
		var v float64
		for j := 0; j < n; j++ {
			v += a.At(i, j) * coef[j]
		}
		b[i] = v + 0.02*rng.NormFloat64()
	}
	return problem{a: a, b: b, free: freeLast(n, nfree)}
}

// checkKKT checks the optimality conditions of min ||A x - b|| with x_j >=
// 0 for constrained j: x feasible, Passive exactly the free and positive
// columns, and the dual w = A^T (b - A x) zero on the passive set and <=
// tol on the others. tol for column j is rel * ||a_j|| * ||b||, the size
// of a dual entry computed in floating point for a unit relative error.
func checkKKT(t *testing.T, p problem, r *Result, rel float64) {
	t.Helper()
	m, n := p.a.Dims()
	res := make([]float64, m)
	for i := 0; i < m; i++ {
		v := p.b[i]
		for j := 0; j < n; j++ {
			v -= p.a.At(i, j) * r.X[j]
		}
		res[i] = v
	}
	var bn, rn float64
	for i := range res {
		bn += p.b[i] * p.b[i]
		rn += res[i] * res[i]
	}
	bn, rn = math.Sqrt(bn), math.Sqrt(rn)
	if math.Abs(rn-r.ResidualNorm) > 1e-9*bn+1e-300 {
		t.Errorf("ResidualNorm %g, recomputed %g", r.ResidualNorm, rn)
	}
	inP := make([]bool, n)
	for k, j := range r.Passive {
		if k > 0 && r.Passive[k-1] >= j {
			t.Fatalf("Passive %v not ascending", r.Passive)
		}
		inP[j] = true
	}
	for j := 0; j < n; j++ {
		free := p.free != nil && p.free[j]
		var w, an float64
		for i := 0; i < m; i++ {
			w += p.a.At(i, j) * res[i]
			an += p.a.At(i, j) * p.a.At(i, j)
		}
		tol := rel*math.Sqrt(an)*bn + 1e-300
		switch {
		case free && !inP[j]:
			t.Errorf("free column %d not passive", j)
		case !free && r.X[j] < 0:
			t.Errorf("x[%d] = %g < 0", j, r.X[j])
		case inP[j] && !free && r.X[j] <= 0:
			t.Errorf("passive x[%d] = %g not positive", j, r.X[j])
		case !inP[j] && r.X[j] != 0:
			t.Errorf("active x[%d] = %g not zero", j, r.X[j])
		}
		if inP[j] && math.Abs(w) > tol {
			t.Errorf("dual w[%d] = %g on passive column, tol %g", j, w, tol)
		}
		if !inP[j] && w > tol {
			t.Errorf("dual w[%d] = %g > tol %g on active column", j, w, tol)
		}
	}
}
