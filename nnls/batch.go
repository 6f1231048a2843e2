package nnls

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// Batch solves many problems min ||A x - b||_2 (x_j >= 0 for the
// constrained columns) that share one A, as the pixels of a spectrum image
// or the steps of a depth profile do.
//
// NewBatch checks A as Solver does, forms the Gram matrix of A with
// unit-norm columns, eliminates the free columns once by their Schur
// complement, and, for at most 10 constrained columns, precomputes the
// Cholesky factor and the inverse normal matrix of every passive set
// (Van Benthem & Keenan, J. Chemometrics 18 (2004) 441, who group
// right-hand sides by passive set for the same reason). Each right-hand
// side then costs A^T b and a small active-set iteration in Gram space
// (Bro & De Jong, J. Chemometrics 11 (1997) 393, "fast NNLS"), started
// from the clipped unconstrained solution; it allocates nothing.
//
// Working with A^T A squares the condition number: expect agreement with
// Solver to about eps * cond^2 relative, which is why Settings.MaxCond
// defaults to 1/sqrt(eps).
//
// The precomputed data are shared and read-only; the workspace is not. A
// Batch is not safe for concurrent use: give each goroutine its own with
// Clone, which is cheap.
type Batch struct {
	sys *system
	ws  *workspace
}

// NewBatch prepares A (m x n) with the columns named in free (length n, or
// nil for all constrained) left free of sign. It returns the errors
// Solver.Solve returns for a bad A: a *RankError or an error matching
// ErrNonFinite. A is copied; later changes to it have no effect.
func NewBatch(a mat.Matrix, free []bool, s Settings) (*Batch, error) {
	sys, err := newSystem(a, free, s)
	if err != nil {
		return nil, err
	}
	return &Batch{sys: sys, ws: newWorkspace(sys.n, len(sys.cons), len(sys.fre))}, nil
}

// Clone returns a Batch that shares bt's precomputed data and has its own
// workspace, for use in another goroutine.
func (bt *Batch) Clone() *Batch {
	return &Batch{sys: bt.sys, ws: newWorkspace(bt.sys.n, len(bt.sys.cons), len(bt.sys.fre))}
}

// Dims returns the dimensions of A.
func (bt *Batch) Dims() (m, n int) { return bt.sys.m, bt.sys.n }

// Solve solves the problem for b (length m) into dst. X, ResidualNorm,
// Passive, Iterations and InvNormal mean what they mean for Solver; the
// slices belong to bt and are overwritten by its next solve. It returns a
// *ConvergenceError when the iteration limit is reached (dst then holds
// the last feasible iterate) and an error matching ErrNonFinite for NaN or
// Inf in b.
func (bt *Batch) Solve(dst *Result, b []float64) error {
	atb := bt.ws.atb(bt.sys.n)
	btb := bt.sys.project(atb, b)
	return bt.ws.solve(bt.sys, dst, atb, btb)
}

// SolveNormal is Solve for a right-hand side given by atb = A^T b (length
// n) and btb = b^T b, for callers that form them themselves. The residual
// norm is then sqrt(btb - x^T A^T b), which loses relative accuracy when
// the fit is nearly perfect (about eps*btb absolute in its square).
func (bt *Batch) SolveNormal(dst *Result, atb []float64, btb float64) error {
	return bt.ws.solve(bt.sys, dst, atb, btb)
}

// Project sets dst (length n) to A^T b and returns b^T b.
func (bt *Batch) Project(dst, b []float64) float64 { return bt.sys.project(dst, b) }

// Bank is a Batch for a set of matrices of equal shape and free columns,
// typically the references shifted in energy by a grid of shifts: one Gram
// matrix and passive-set cache per matrix, so that a caller can scan the
// shifts for every pixel without rebuilding anything. Shift k refers to
// the k-th matrix given to NewBank.
//
// As for Batch, the precomputed data are shared and read-only, and a Bank
// is not safe for concurrent use: give each goroutine its own with Clone.
type Bank struct {
	sys []*system
	ws  *workspace
}

// NewBank prepares the matrices as (all m x n, at least one) with the
// columns named in free left free of sign. A rank-deficient or non-finite
// matrix is reported with its index, wrapping the *RankError or
// ErrNonFinite error that NewBatch would return.
func NewBank(as []*mat.Dense, free []bool, s Settings) (*Bank, error) {
	if len(as) == 0 {
		panic("nnls: NewBank with no matrices")
	}
	m, n := as[0].Dims()
	bk := &Bank{sys: make([]*system, len(as))}
	for k, a := range as {
		if r, c := a.Dims(); r != m || c != n {
			panic(fmt.Sprintf("nnls: NewBank: matrix %d is %dx%d, want %dx%d", k, r, c, m, n))
		}
		sys, err := newSystem(a, free, s)
		if err != nil {
			return nil, fmt.Errorf("nnls: shift %d: %w", k, err)
		}
		bk.sys[k] = sys
	}
	bk.ws = newWorkspace(n, len(bk.sys[0].cons), len(bk.sys[0].fre))
	return bk, nil
}

// Clone returns a Bank that shares bk's precomputed data and has its own
// workspace, for use in another goroutine.
func (bk *Bank) Clone() *Bank {
	s := bk.sys[0]
	return &Bank{sys: bk.sys, ws: newWorkspace(s.n, len(s.cons), len(s.fre))}
}

// Len returns the number of matrices (shifts).
func (bk *Bank) Len() int { return len(bk.sys) }

// Dims returns the dimensions shared by the matrices.
func (bk *Bank) Dims() (m, n int) { return bk.sys[0].m, bk.sys[0].n }

// Solve solves the problem of matrix k for b (length m) into dst, as
// Batch.Solve does.
func (bk *Bank) Solve(dst *Result, k int, b []float64) error {
	bk.check(k)
	sys := bk.sys[k]
	atb := bk.ws.atb(sys.n)
	btb := sys.project(atb, b)
	return bk.ws.solve(sys, dst, atb, btb)
}

// SolveNormal solves the problem of matrix k for atb = A_k^T b and
// btb = b^T b, as Batch.SolveNormal does; dst.ResidualNorm squared is the
// residual sum of squares of that shift. With the A_k^T b of all shifts at
// hand (see Project), scanning the shifts touches no m-length data.
func (bk *Bank) SolveNormal(dst *Result, k int, atb []float64, btb float64) error {
	bk.check(k)
	return bk.ws.solve(bk.sys[k], dst, atb, btb)
}

// Project sets dst (length n) to A_k^T b and returns b^T b.
func (bk *Bank) Project(dst []float64, k int, b []float64) float64 {
	bk.check(k)
	return bk.sys[k].project(dst, b)
}

func (bk *Bank) check(k int) {
	if k < 0 || k >= len(bk.sys) {
		panic(fmt.Sprintf("nnls: shift %d out of range [0, %d)", k, len(bk.sys)))
	}
}
