package nnls

import "gonum.org/v1/gonum/mat"

// This file fixes the API other packages build on. The owner of package
// nnls replaces the panicking bodies and moves them into their own files.

// Settings tunes a solver. The zero value is ready to use.
type Settings struct {
	// MaxIter bounds the outer active-set iterations. If MaxIter is 0, it
	// defaults to 3n for n columns.
	MaxIter int
	// Tol is the tolerance on the dual (gradient) used to decide
	// optimality. If Tol is 0, it defaults to 10 * eps * n * max|A^T b|
	// scaled by the column norms.
	Tol float64
}

// Result holds a solution. Its slices are owned by the Solver that filled
// it and are overwritten by the next Solve.
type Result struct {
	X            []float64 // solution, length n
	ResidualNorm float64   // ||A x - b||_2
	Passive      []int     // ascending indices of the passive (unconstrained or positive) columns
	Iterations   int
	// InvNormal is (A_P^T A_P)^-1 over the Passive columns in Passive order,
	// so that sigma^2 * InvNormal is the covariance of X[Passive].
	InvNormal *mat.SymDense
}

// Solver solves min ||A x - b||_2 subject to x_i >= 0 for the constrained
// columns, free sign for the others, by the active-set method of Lawson &
// Hanson, Solving Least Squares Problems (1974), ch. 23, extended to free
// variables. It owns its workspace: after the first call for a given size it
// allocates nothing. A Solver is not safe for concurrent use.
type Solver struct {
	Settings Settings
}

// Solve solves the problem for A (m x n, m >= 1), b (length m) and free
// (length n, or nil for all constrained) into dst. It returns a
// *RankError when passive columns are collinear, a *ConvergenceError when
// the iteration limit is reached, and ErrNonFinite for NaN or Inf input.
func (s *Solver) Solve(dst *Result, a mat.Matrix, b []float64, free []bool) error {
	panic("nnls: not implemented")
}
