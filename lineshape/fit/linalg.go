package fit

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"

	"statemix/nnls"
)

// condition returns the 2-norm condition number of the matrix whose columns
// are cols, each scaled to unit length, and the pair (a, b) of columns with
// the largest absolute partial correlation (the raw correlation if the
// matrix is singular), with that correlation.
func condition(cols [][]float64) (cond float64, a, b int, corr float64) {
	p := len(cols)
	g := mat.NewSymDense(p, nil)
	norms := make([]float64, p)
	for i := range cols {
		norms[i] = math.Sqrt(dot(cols[i], cols[i]))
	}
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			v := dot(cols[i], cols[j]) / (norms[i] * norms[j])
			if math.IsNaN(v) {
				v = 0
			}
			g.SetSym(i, j, v)
		}
	}
	var eig mat.EigenSym
	cond = math.Inf(1)
	if eig.Factorize(g, false) {
		ev := eig.Values(nil)
		lo, hi := ev[0], ev[len(ev)-1]
		if lo > 0 {
			cond = math.Sqrt(hi / lo)
		}
	}
	pc := func(i, j int) float64 { return g.At(i, j) }
	var inv mat.SymDense
	var chol mat.Cholesky
	if !math.IsInf(cond, 0) && chol.Factorize(g) {
		if err := chol.InverseTo(&inv); err == nil {
			pc = func(i, j int) float64 { return -inv.At(i, j) / math.Sqrt(inv.At(i, i)*inv.At(j, j)) }
		}
	}
	a, b = 0, min(1, p-1)
	best := -1.0
	for i := 0; i < p; i++ {
		for j := i + 1; j < p; j++ {
			if v := math.Abs(pc(i, j)); v > best {
				best, a, b, corr = v, i, j, pc(i, j)
			}
		}
	}
	if p == 1 {
		cond = 1
	}
	return cond, a, b, corr
}

// errSingular reports a Gram matrix that is not positive definite.
var errSingular = errors.New("fit: singular normal matrix")

// linear is the workspace of the linear subproblem: given columns (k
// reference columns, then the background basis) and data y, minimise
// ||A x - y|| with x >= 0 for the references and free background terms.
// It forms the scaled Gram matrix, factors it as U^T U (Cholesky) and hands
// the equivalent p x p problem min ||U z - c||, U^T c = D A^T y, to
// nnls.Solver, so each solve costs O(p^2 n) for the products and O(p^3)
// for the solver, whatever n is.
type linear struct {
	k, q   int
	solver nnls.Solver
	res    nnls.Result
	gram   []float64 // p x p
	ga     []float64 // A^T y
	d      []float64 // column scales
	u      *mat.Dense
	c      []float64
	free   []bool
	x      []float64 // solution (unscaled), length p
	err    error     // last solver error
}

func newLinear(k, q int) *linear {
	p := k + q
	l := &linear{k: k, q: q,
		gram: make([]float64, p*p), ga: make([]float64, p), d: make([]float64, p),
		u: mat.NewDense(p, p, nil), c: make([]float64, p), free: make([]bool, p), x: make([]float64, p)}
	for i := k; i < p; i++ {
		l.free[i] = true
	}
	return l
}

// solve solves for cols (len k+q) against y, with yy = y.y, basisGram the
// precomputed q x q products of the background columns and by = basis.y.
// It returns the residual sum of squares.
func (l *linear) solve(cols [][]float64, y []float64, yy float64, basisGram, by []float64) (float64, error) {
	k, q := l.k, l.q
	p := k + q
	g := l.gram
	for a := 0; a < k; a++ {
		for b := a; b < p; b++ {
			v := dot(cols[a], cols[b])
			g[a*p+b], g[b*p+a] = v, v
		}
		l.ga[a] = dot(cols[a], y)
	}
	for a := 0; a < q; a++ {
		for b := 0; b < q; b++ {
			g[(k+a)*p+k+b] = basisGram[a*q+b]
		}
		l.ga[k+a] = by[a]
	}
	for a := 0; a < p; a++ {
		if !(g[a*p+a] > 0) {
			return math.Inf(1), errSingular
		}
		l.d[a] = 1 / math.Sqrt(g[a*p+a])
	}
	// Scaled Gram in place, then Cholesky U^T U into l.u (upper).
	u := l.u.RawMatrix()
	for a := 0; a < p; a++ {
		for b := 0; b < p; b++ {
			u.Data[a*u.Stride+b] = 0
		}
	}
	for j := 0; j < p; j++ {
		s := g[j*p+j] * l.d[j] * l.d[j]
		for i := 0; i < j; i++ {
			s -= u.Data[i*u.Stride+j] * u.Data[i*u.Stride+j]
		}
		if !(s > 1e-13) {
			return math.Inf(1), errSingular
		}
		ujj := math.Sqrt(s)
		u.Data[j*u.Stride+j] = ujj
		for c := j + 1; c < p; c++ {
			t := g[j*p+c] * l.d[j] * l.d[c]
			for i := 0; i < j; i++ {
				t -= u.Data[i*u.Stride+j] * u.Data[i*u.Stride+c]
			}
			u.Data[j*u.Stride+c] = t / ujj
		}
	}
	// Forward substitution U^T c = D A^T y.
	cc := 0.0
	for i := 0; i < p; i++ {
		s := l.ga[i] * l.d[i]
		for j := 0; j < i; j++ {
			s -= u.Data[j*u.Stride+i] * l.c[j]
		}
		l.c[i] = s / u.Data[i*u.Stride+i]
		cc += l.c[i] * l.c[i]
	}
	if err := l.solver.Solve(&l.res, l.u, l.c, l.free); err != nil {
		l.err = err
		return math.Inf(1), err
	}
	for i := 0; i < p; i++ {
		l.x[i] = l.res.X[i] * l.d[i]
	}
	rss := yy - cc + l.res.ResidualNorm*l.res.ResidualNorm
	if rss < 0 {
		rss = 0
	}
	return rss, nil
}
