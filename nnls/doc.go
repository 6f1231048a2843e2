// Package nnls solves non-negative least-squares problems with free
// (sign-unconstrained) variables,
//
//	minimize ||A x - b||_2  subject to  x_j >= 0 for every constrained column j,
//
// for the small, tall problems of chemical-state fitting: a few hundred
// rows (energy channels), 2-12 constrained columns (references) and a few
// free columns (background terms). It knows nothing about spectra; units
// are whatever A and b carry.
//
// # Choosing a solver
//
// Solver solves one problem exactly: Householder QR of A, then the
// Lawson & Hanson (1974) active-set method on the triangular factor, with
// column scaling so that the result does not depend on the scale of each
// reference. Use it for single spectra and whenever accuracy matters most.
//
// Batch solves many right-hand sides that share one A (the pixels of a
// spectrum image, the steps of a depth profile). It precomputes the Gram
// matrix, eliminates the free columns once (Schur complement) and the
// factorization of every passive set, and then runs the fast NNLS of
// Bro & De Jong (1997) in Gram space per right-hand side without
// allocating. It agrees with Solver to about eps * cond(A)^2.
//
// Bank is a Batch over a list of matrices of the same shape, typically
// the references shifted by a grid of energy shifts: one Gram matrix per
// shift, so that the best shift of each pixel can be searched cheaply.
// Project gives A_k^T b and b^T b; SolveNormal solves shift k from them,
// and Result.ResidualNorm squared is that shift's residual sum of
// squares.
//
// # Results, ownership and aliasing
//
// Every solve writes into a caller-supplied *Result whose slices and
// InvNormal matrix belong to the solver value that filled it: they are
// overwritten by that value's next solve. Copy what must be kept. The
// solvers never modify A or b and keep copies of A, not references.
// X is in the units of the columns of A; Passive lists the free columns
// and the constrained columns with positive coefficients, ascending;
// InvNormal is (A_P^T A_P)^-1 over Passive, so that s^2 * InvNormal, with
// s^2 = ResidualNorm^2 / (m - len(Passive)), is the usual covariance of
// X[Passive].
//
// # Errors
//
// Mismatched sizes are programmer errors and panic. A matrix whose
// columns are numerically dependent (two identical references, a zero
// column, condition number of the column-scaled A above
// Settings.MaxCond) gives a *RankError naming the columns; NaN or Inf
// input gives an error matching ErrNonFinite; hitting the iteration limit
// gives a *ConvergenceError together with the last feasible iterate.
//
// # Concurrency
//
// Solver, Batch and Bank values are not safe for concurrent use. The data
// a Batch or Bank precomputes are read-only and shared by Clone, which
// returns a value with its own small workspace: create one with NewBatch
// or NewBank, then Clone it once per worker goroutine. For a 256 x 256
// map with m = 300 channels, 4 references, 2 background terms and 41
// shifts, each worker does, per pixel,
//
//	for k := 0; k < bank.Len(); k++ {
//		btb := bank.Project(atb, k, spectrum)
//		if err := bank.SolveNormal(&r, k, atb, btb); err != nil { ... }
//		rss := r.ResidualNorm * r.ResidualNorm // keep the best k
//	}
//
// and re-solves the best shift (or a refined one) for the coefficients.
//
// # References
//
// C. L. Lawson and R. J. Hanson, Solving Least Squares Problems,
// Prentice-Hall 1974, ch. 23 (NNLS) and ch. 10 (Householder QR).
// R. Bro and S. De Jong, A fast non-negativity-constrained least squares
// algorithm, J. Chemometrics 11 (1997) 393-401.
// M. H. Van Benthem and M. R. Keenan, Fast algorithm for the solution of
// large-scale non-negativity-constrained least squares problems,
// J. Chemometrics 18 (2004) 441-450.
package nnls
