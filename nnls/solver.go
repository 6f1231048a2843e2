package nnls

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Settings tunes a solver. The zero value is ready to use.
type Settings struct {
	// MaxIter bounds the outer active-set iterations (each one adds a
	// column to the passive set). If MaxIter is 0, it defaults to 3n for n
	// columns, the limit of Lawson & Hanson's NNLS code.
	MaxIter int
	// Tol is the tolerance on the dual (gradient) used to decide
	// optimality. If Tol is 0, it defaults to 10 * eps * n * max|A^T b|
	// scaled by the column norms, that is with A's columns scaled to unit
	// Euclidean norm.
	Tol float64
	// MaxCond is the largest 2-norm condition number of A with unit-norm
	// columns that is accepted; above it the problem is reported as a
	// *RankError. If MaxCond is 0, it defaults to 1/sqrt(eps), about
	// 6.7e7: beyond it a least-squares solution with a nonzero residual has
	// no correct digit even when computed by QR, since its error bound
	// grows like eps * cond^2 (Golub & Van Loan, Matrix Computations,
	// 4th ed., sec. 5.3.8).
	MaxCond float64
}

func (st Settings) maxIter(n int) int {
	if st.MaxIter > 0 {
		return st.MaxIter
	}
	return 3 * n
}

func (st Settings) maxCond() float64 {
	if st.MaxCond > 0 {
		return st.MaxCond
	}
	return 1 / math.Sqrt(eps)
}

const eps = 0x1p-52 // machine epsilon of float64

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
//
// A is first reduced by a Householder QR factorization (Lawson & Hanson,
// ch. 10), A = Q R, to the n x n problem min ||R x - Q^T b||; the columns
// of R are scaled to unit norm (the norms of A's columns), which makes the
// method invariant to the scale of each reference. The condition number of
// the scaled R decides whether A has full column rank. The active-set
// iteration of Lawson & Hanson then runs on the small triangular problem
// with Householder updates when a column becomes passive and Givens
// rotations when one leaves, exactly as in their NNLS algorithm. Free
// columns are made passive first and never leave.
type Solver struct {
	Settings Settings

	m, n   int
	w      []float64 // m*n: column-major copy of A, overwritten by QR
	qb     []float64 // m: copy of b, overwritten by Q^T b
	rd     []float64 // n: diagonal of R
	d      []float64 // n: column norms of A
	t      []float64 // n*n column-major: scaled R, then LH working matrix
	c      []float64 // n: Q^T b (first n entries)
	z      []float64 // n: LH working right-hand side
	y      []float64 // n: scaled iterate
	zs     []float64 // n: trial solution by position
	wd     []float64 // n: dual by column
	pos    []int     // n: column at each passive position
	inP    []bool    // n: column is passive
	fr     []bool    // n: column is free
	tinv   []float64 // n*n: inverse of a triangular factor
	x      []float64 // n: result X
	pas    []int     // n: result Passive
	posOf  []int     // n: passive position of each column
	inv    mat.SymDense
	np     int       // passive columns after the last solve
	bscale float64   // power of two applied to b (1 unless rescaled)
	cs     []float64 // n: power of two applied to each column (1 unless rescaled)
	iter   int       // outer iterations of the last solve
}

func (s *Solver) resize(m, n int) {
	if s.m == m && s.n == n {
		return
	}
	s.m, s.n = m, n
	s.w = make([]float64, m*n)
	s.qb = make([]float64, m)
	s.rd = make([]float64, n)
	s.d = make([]float64, n)
	s.t = make([]float64, n*n)
	s.c = make([]float64, n)
	s.z = make([]float64, n)
	s.y = make([]float64, n)
	s.zs = make([]float64, n)
	s.wd = make([]float64, n)
	s.pos = make([]int, n)
	s.inP = make([]bool, n)
	s.fr = make([]bool, n)
	s.tinv = make([]float64, n*n)
	s.x = make([]float64, n)
	s.pas = make([]int, n)
	s.posOf = make([]int, n)
	s.cs = make([]float64, n)
	s.inv = mat.SymDense{}
	s.inv.ReuseAsSym(n)
}

// Solve solves the problem for A (m x n, m >= 1), b (length m) and free
// (length n, or nil for all constrained) into dst. It returns a
// *RankError when the columns of A are collinear (condition number of the
// column-scaled A above Settings.MaxCond; a zero column or two identical
// columns always are), a *ConvergenceError when the iteration limit is
// reached (dst then holds the last feasible iterate), and an error
// matching ErrNonFinite for NaN or Inf input. Mismatched sizes panic.
func (s *Solver) Solve(dst *Result, a mat.Matrix, b []float64, free []bool) error {
	m, n := a.Dims()
	if m < 1 || n < 1 {
		panic("nnls: empty matrix")
	}
	if len(b) != m {
		panic("nnls: len(b) != rows of A")
	}
	if free != nil && len(free) != n {
		panic("nnls: len(free) != columns of A")
	}
	if dst == nil {
		panic("nnls: nil Result")
	}
	rho0, err := s.prepare(a, b, free)
	if err != nil {
		return err
	}
	err = s.activeSet()
	s.fill(dst, rho0)
	return err
}

// prepare factors A and checks it: on success s.t holds the column-scaled
// R, s.c holds Q^T b, s.d / s.cs the column norms of A, and rho0 is the
// norm of the part of b outside the range of A (all for b times
// s.bscale).
func (s *Solver) prepare(a mat.Matrix, b []float64, free []bool) (rho0 float64, err error) {
	m, n := a.Dims()
	s.resize(m, n)
	for j := range s.fr {
		s.fr[j] = free != nil && free[j]
	}
	s.load(a, b)
	rho0 = s.factor()
	s.bscale = 1
	for j := range s.cs {
		s.cs[j] = 1
	}
	if s.extreme(rho0) {
		// Non-finite input, or magnitudes whose squares over- or
		// underflow: rescale columns and b by powers of two (exactly) and
		// factor again.
		if err := scanNonFinite(a, b); err != nil {
			return 0, err
		}
		rho0 = s.rescaled(a, b)
		if err := s.checkFinite(rho0); err != nil {
			return 0, err
		}
	}
	for j := 0; j < n; j++ {
		if s.d[j] == 0 {
			return 0, &RankError{Columns: []int{j}, Cond: math.Inf(1), Limit: s.Settings.maxCond()}
		}
	}
	s.scaleR()
	if err := checkRank(s.t, n, s.tinv, s.Settings.maxCond()); err != nil {
		return 0, err
	}
	return rho0, nil
}

// load copies A into column-major storage and b into qb.
func (s *Solver) load(a mat.Matrix, b []float64) {
	loadColMajor(s.w, a)
	copy(s.qb, b)
}

// loadColMajor copies the m x n matrix a into w, column j at w[j*m:].
func loadColMajor(w []float64, a mat.Matrix) {
	m, n := a.Dims()
	switch t := a.(type) {
	case mat.RawMatrixer:
		raw := t.RawMatrix()
		transpose(w, raw.Data, m, n, raw.Stride)
	case mat.Untransposer:
		if r, ok := t.Untranspose().(mat.RawMatrixer); ok {
			raw := r.RawMatrix() // n x m: row j is column j of A
			for j := 0; j < n; j++ {
				copy(w[j*m:(j+1)*m], raw.Data[j*raw.Stride:j*raw.Stride+m])
			}
			break
		}
		loadAt(w, a, m, n)
	default:
		loadAt(w, a, m, n)
	}
}

// transpose copies the row-major m x n src (row stride st) into the
// column-major w, several columns per pass over src.
func transpose(w, src []float64, m, n, st int) {
	for j := 0; j < n; {
		switch rem := n - j; {
		case rem >= 8:
			transpose8(w, src, m, st, j)
			j += 8
		case rem == 6:
			transpose6(w, src, m, st, j)
			j += 6
		case rem == 7 || rem == 4:
			transpose4(w, src, m, st, j)
			j += 4
		case rem == 5 || rem == 3:
			transpose3(w, src, m, st, j)
			j += 3
		case rem == 2:
			transpose2(w, src, m, st, j)
			j += 2
		default:
			c0 := w[j*m : (j+1)*m]
			for i := range c0 {
				c0[i] = src[i*st+j]
			}
			j++
		}
	}
}

// transpose8 copies columns j..j+7.
func transpose8(w, src []float64, m, st, j int) {
	c0 := w[j*m : (j+1)*m]
	c1 := w[(j+1)*m : (j+1+1)*m][:len(c0)]
	c2 := w[(j+2)*m : (j+2+1)*m][:len(c0)]
	c3 := w[(j+3)*m : (j+3+1)*m][:len(c0)]
	c4 := w[(j+4)*m : (j+4+1)*m][:len(c0)]
	c5 := w[(j+5)*m : (j+5+1)*m][:len(c0)]
	c6 := w[(j+6)*m : (j+6+1)*m][:len(c0)]
	c7 := w[(j+7)*m : (j+7+1)*m][:len(c0)]
	for i := range c0 {
		r := src[i*st+j : i*st+j+8 : i*st+j+8]
		c0[i], c1[i], c2[i], c3[i], c4[i], c5[i], c6[i], c7[i] = r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7]
	}
}

// transpose6 copies columns j..j+5.
func transpose6(w, src []float64, m, st, j int) {
	c0 := w[j*m : (j+1)*m]
	c1 := w[(j+1)*m : (j+1+1)*m][:len(c0)]
	c2 := w[(j+2)*m : (j+2+1)*m][:len(c0)]
	c3 := w[(j+3)*m : (j+3+1)*m][:len(c0)]
	c4 := w[(j+4)*m : (j+4+1)*m][:len(c0)]
	c5 := w[(j+5)*m : (j+5+1)*m][:len(c0)]
	for i := range c0 {
		r := src[i*st+j : i*st+j+6 : i*st+j+6]
		c0[i], c1[i], c2[i], c3[i], c4[i], c5[i] = r[0], r[1], r[2], r[3], r[4], r[5]
	}
}

// transpose4 copies columns j..j+3.
func transpose4(w, src []float64, m, st, j int) {
	c0 := w[j*m : (j+1)*m]
	c1 := w[(j+1)*m : (j+1+1)*m][:len(c0)]
	c2 := w[(j+2)*m : (j+2+1)*m][:len(c0)]
	c3 := w[(j+3)*m : (j+3+1)*m][:len(c0)]
	for i := range c0 {
		r := src[i*st+j : i*st+j+4 : i*st+j+4]
		c0[i], c1[i], c2[i], c3[i] = r[0], r[1], r[2], r[3]
	}
}

// transpose3 copies columns j..j+2.
func transpose3(w, src []float64, m, st, j int) {
	c0 := w[j*m : (j+1)*m]
	c1 := w[(j+1)*m : (j+1+1)*m][:len(c0)]
	c2 := w[(j+2)*m : (j+2+1)*m][:len(c0)]
	for i := range c0 {
		r := src[i*st+j : i*st+j+3 : i*st+j+3]
		c0[i], c1[i], c2[i] = r[0], r[1], r[2]
	}
}

// transpose2 copies columns j..j+1.
func transpose2(w, src []float64, m, st, j int) {
	c0 := w[j*m : (j+1)*m]
	c1 := w[(j+1)*m : (j+1+1)*m][:len(c0)]
	for i := range c0 {
		r := src[i*st+j : i*st+j+2 : i*st+j+2]
		c0[i], c1[i] = r[0], r[1]
	}
}

func loadAt(w []float64, a mat.Matrix, m, n int) {
	for j := 0; j < n; j++ {
		for i := 0; i < m; i++ {
			w[j*m+i] = a.At(i, j)
		}
	}
}

// factor computes the Householder QR factorization of w in place (R above
// the diagonal of w, its diagonal in rd), applies Q^T to qb, sets the
// column norms d and returns the norm of the part of b orthogonal to the
// range of A.
func (s *Solver) factor() float64 {
	m, n := s.m, s.n
	w := s.w
	kmax := min(m, n)
	for k := 0; k < kmax; k++ {
		col := w[k*m+k : (k+1)*m]
		s.rd[k] = householder(col)
		if s.rd[k] == 0 {
			continue
		}
		beta := -s.rd[k] * col[0]
		// Apply the reflector to the later columns and to b, two at a
		// time so that col is read once per pair.
		qb := s.qb[k:]
		j := k + 1
		for ; j+1 < n; j += 2 {
			c0, c1 := w[j*m+k:(j+1)*m], w[(j+1)*m+k:(j+2)*m]
			d0, d1 := dot2(col, c0, c1)
			axpy2(-d0/beta, -d1/beta, col, c0, c1)
		}
		if j < n {
			c0 := w[j*m+k : (j+1)*m]
			d0, d1 := dot2(col, c0, qb)
			axpy2(-d0/beta, -d1/beta, col, c0, qb)
		} else {
			axpy(-dot(col, qb)/beta, col, qb)
		}
	}
	for j := 0; j < n; j++ {
		var ss float64
		for i := 0; i < min(j, m); i++ {
			v := w[j*m+i]
			ss += v * v
		}
		if j < m {
			ss += s.rd[j] * s.rd[j]
		}
		s.d[j] = math.Sqrt(ss)
	}
	for i := range s.c {
		s.c[i] = 0
	}
	copy(s.c, s.qb[:kmax])
	if m <= n {
		return 0
	}
	r := s.qb[n:]
	return math.Sqrt(dot(r, r))
}

// householder replaces x by the vector u of the reflector H = I - u u^T/beta,
// beta = -alpha*u[0], with H x = alpha e_1, and returns alpha. It returns 0
// and leaves x alone when x is zero.
func householder(x []float64) float64 {
	nrm := math.Sqrt(dot(x, x))
	if nrm == 0 {
		return 0
	}
	alpha := -math.Copysign(nrm, x[0])
	x[0] -= alpha
	return alpha
}

// Column and right-hand-side norms outside [tiny, huge] trigger the
// rescaled factorization, well before squares over- or underflow.
const (
	tiny = 0x1p-450
	huge = 0x1p450
)

// extreme reports whether the factorization may have met non-finite
// input or over- or underflow: a non-finite or extreme column norm, a zero
// column (which may be an underflow), or an extreme norm of b.
func (s *Solver) extreme(rho0 float64) bool {
	out := func(v float64) bool { return !(v >= tiny && v <= huge) }
	for _, v := range s.d {
		if out(v) {
			return true
		}
	}
	bn := math.Sqrt(dotSmall(s.c, s.c) + rho0*rho0)
	if bn == 0 { // b = 0, or an underflow
		for _, v := range s.qb {
			if v != 0 {
				return true
			}
		}
		return false
	}
	return out(bn)
}

// rescaled reloads A with each column scaled by a power of two that
// brings its largest entry into [0.5, 1), and b likewise, factors again,
// and returns rho0. The scales stay in cs and bscale.
func (s *Solver) rescaled(a mat.Matrix, b []float64) float64 {
	m, n := s.m, s.n
	loadColMajor(s.w, a)
	for j := 0; j < n; j++ {
		col := s.w[j*m : (j+1)*m]
		s.cs[j] = pow2Scale(col)
		for i := range col {
			col[i] *= s.cs[j]
		}
	}
	copy(s.qb, b)
	s.bscale = pow2Scale(s.qb)
	for i := range s.qb {
		s.qb[i] *= s.bscale
	}
	return s.factor()
}

// pow2Scale returns the power of two that scales the largest magnitude in
// x into [0.5, 1), or 1 for a zero x.
func pow2Scale(x []float64) float64 {
	var mx float64
	for _, v := range x {
		mx = math.Max(mx, math.Abs(v))
	}
	if mx == 0 {
		return 1
	}
	_, e := math.Frexp(mx)
	return math.Ldexp(1, -e)
}

// checkFinite reports an overflow of the rescaled factorization.
func (s *Solver) checkFinite(rho0 float64) error {
	ok := isFinite(rho0)
	for _, v := range s.c {
		ok = ok && isFinite(v)
	}
	for j := 0; j < s.n; j++ {
		for i := 0; i <= j && i < s.m; i++ {
			ok = ok && isFinite(s.w[j*s.m+i])
		}
		ok = ok && isFinite(s.rd[j])
	}
	if ok {
		return nil
	}
	return &nonFiniteError{}
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// scanNonFinite returns an error naming the first NaN or Inf in a or b,
// or nil.
func scanNonFinite(a mat.Matrix, b []float64) error {
	m, n := a.Dims()
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			if v := a.At(i, j); !isFinite(v) {
				return &nonFiniteError{where: "a[" + itoa(i) + "," + itoa(j) + "]", v: v}
			}
		}
	}
	for i, v := range b {
		if !isFinite(v) {
			return &nonFiniteError{where: "b[" + itoa(i) + "]", v: v}
		}
	}
	return nil
}

// scaleR writes R D^-1 into t (n x n, column-major, zero below the
// diagonal).
func (s *Solver) scaleR() {
	m, n := s.m, s.n
	t := s.t
	for j := 0; j < n; j++ {
		inv := 1 / s.d[j]
		tj := t[j*n : (j+1)*n]
		for i := range tj {
			switch {
			case i < j && i < m:
				tj[i] = s.w[j*m+i] * inv
			case i == j && i < m:
				tj[i] = s.rd[j] * inv
			default:
				tj[i] = 0
			}
		}
	}
}

// activeSet runs the Lawson-Hanson iteration on min ||t y - c|| in place.
func (s *Solver) activeSet() error {
	n := s.n
	t, z, y := s.t, s.z, s.y
	copy(z, s.c)
	tol := s.Settings.Tol
	if tol == 0 {
		var mx float64
		for j := 0; j < n; j++ {
			mx = max(mx, math.Abs(dotSmall(t[j*n:(j+1)*n], s.c)))
		}
		tol = 10 * eps * float64(n) * mx
	}
	for j := range y {
		y[j] = 0
		s.inP[j] = false
	}
	np := 0
	nfree := 0
	for j := 0; j < n; j++ {
		if s.fr[j] {
			s.addColumn(j, np)
			np++
			nfree++
		}
	}
	if nfree > 0 {
		s.backSolve(np)
		for q := 0; q < np; q++ {
			y[s.pos[q]] = s.zs[q]
		}
	}
	maxIter := s.Settings.maxIter(n)
	iter := 0
	for np < n {
		// Dual of the constrained columns outside P.
		for j := 0; j < n; j++ {
			s.wd[j] = 0
			if !s.inP[j] && !s.fr[j] {
				s.wd[j] = dotSmall(t[j*n+np:(j+1)*n], z[np:])
			}
		}
		added := false
		for {
			jmax, wmax := -1, tol
			for j := 0; j < n; j++ {
				if s.wd[j] > wmax {
					jmax, wmax = j, s.wd[j]
				}
			}
			if jmax < 0 {
				break
			}
			if iter == maxIter {
				s.iter, s.np = iter, np
				return &ConvergenceError{Iterations: iter}
			}
			if s.tryAdd(jmax, np) {
				added = true
				break
			}
			s.wd[jmax] = 0 // rejected: roundoff made its coefficient nonpositive
		}
		if !added {
			break
		}
		iter++
		np++
		np = s.inner(np)
	}
	s.iter = iter
	s.np = np
	return nil
}
