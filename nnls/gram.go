package nnls

import (
	"math"
	"math/bits"

	"gonum.org/v1/gonum/mat"
)

// maxCached is the largest number of constrained columns for which the
// factorizations of every passive set are precomputed (2^10 sets).
const maxCached = 10

// system holds what the Gram-space solver needs of one matrix A. It is
// immutable after newSystem and shared by every workspace.
type system struct {
	m, n    int
	at      []float64 // n*m: column j of A at at[j*m:(j+1)*m], original units
	d       []float64 // n: column norms of A
	g       []float64 // n*n row-major: Gram matrix of A with unit-norm columns
	cons    []int     // nc constrained columns, ascending
	fre     []int     // nf free columns, ascending
	s       []float64 // nc*nc row-major: Schur complement G_cc - G_cf G_ff^-1 G_fc
	k       []float64 // nc*nf row-major: G_cf G_ff^-1
	lff     []float64 // nf*nf row-major: lower Cholesky factor of G_ff
	maxIter int
	tol     float64 // Settings.Tol; 0 selects the default per right-hand side
	cache   []entry // by passive mask over the constrained columns, or nil
}

// entry holds the factorizations for one passive set.
type entry struct {
	chol []float64 // lower Cholesky factor of S over the set (row-major)
	pas  []int     // ascending passive columns: the free ones and the set's
	inv  []float64 // len(pas)^2 row-major: (A_P^T A_P)^-1 in original units
}

// newSystem checks A by the same QR and condition test as Solver, then
// forms the Gram matrix of the column-scaled A from R (G = R^T R) and the
// Schur complement that eliminates the free columns.
func newSystem(a mat.Matrix, free []bool, st Settings) (*system, error) {
	m, n := a.Dims()
	if m < 1 || n < 1 {
		panic("nnls: empty matrix")
	}
	if free != nil && len(free) != n {
		panic("nnls: len(free) != columns of A")
	}
	var sv Solver
	sv.Settings = st
	if _, err := sv.prepare(a, make([]float64, m), free); err != nil {
		return nil, err
	}
	sys := &system{m: m, n: n, maxIter: st.maxIter(n), tol: st.Tol}
	sys.at = make([]float64, n*m)
	loadColMajor(sys.at, a)
	sys.d = make([]float64, n)
	for j := range sys.d {
		sys.d[j] = sv.d[j] / sv.cs[j]
	}
	sys.g = make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := dot(sv.t[i*n:i*n+i+1], sv.t[j*n:j*n+i+1])
			sys.g[i*n+j], sys.g[j*n+i] = v, v
		}
	}
	for j := 0; j < n; j++ {
		if free != nil && free[j] {
			sys.fre = append(sys.fre, j)
		} else {
			sys.cons = append(sys.cons, j)
		}
	}
	nc, nf := len(sys.cons), len(sys.fre)
	if nc > 64 {
		panic("nnls: Batch supports at most 64 constrained columns")
	}
	fail := func() error {
		err := rankSVD(sv.t, n, 0).(*RankError)
		err.Limit = st.maxCond()
		return err
	}
	sys.lff = make([]float64, nf*nf)
	gatherSym(sys.lff, sys.g, n, sys.fre)
	if !cholesky(sys.lff, nf) {
		return nil, fail()
	}
	sys.k = make([]float64, nc*nf)
	col := make([]float64, nf)
	for i, c := range sys.cons {
		for l, f := range sys.fre {
			col[l] = sys.g[f*n+c]
		}
		cholSolve(sys.lff, nf, col)
		copy(sys.k[i*nf:(i+1)*nf], col)
	}
	sys.s = make([]float64, nc*nc)
	for i, ci := range sys.cons {
		for j, cj := range sys.cons {
			v := sys.g[ci*n+cj]
			for l, f := range sys.fre {
				v -= sys.k[i*nf+l] * sys.g[f*n+cj]
			}
			sys.s[i*nc+j] = v
		}
	}
	for i := 0; i < nc; i++ {
		for j := 0; j < i; j++ {
			v := (sys.s[i*nc+j] + sys.s[j*nc+i]) / 2
			sys.s[i*nc+j], sys.s[j*nc+i] = v, v
		}
	}
	full := make([]float64, nc*nc)
	copy(full, sys.s)
	if !cholesky(full, nc) {
		return nil, fail()
	}
	if nc <= maxCached {
		sys.cache = make([]entry, 1<<nc)
		pl := make([]int, nc)
		for mask := range sys.cache {
			e := &sys.cache[mask]
			k := positions(pl, uint64(mask))
			e.chol = make([]float64, k*k)
			gatherSym(e.chol, sys.s, nc, pl[:k])
			if !cholesky(e.chol, k) {
				return nil, fail()
			}
			e.pas = make([]int, 0, nf+k)
			e.pas = passiveColumns(e.pas, sys, uint64(mask))
			e.inv = make([]float64, len(e.pas)*len(e.pas))
			if !sys.invNormal(e.inv, e.pas, make([]float64, len(e.inv))) {
				return nil, fail()
			}
		}
	}
	return sys, nil
}

// passiveColumns appends to dst the ascending union of the free columns
// and the constrained columns in mask.
func passiveColumns(dst []int, sys *system, mask uint64) []int {
	dst = dst[:0]
	fi := 0
	for i, c := range sys.cons {
		if mask&(1<<i) == 0 {
			continue
		}
		for fi < len(sys.fre) && sys.fre[fi] < c {
			dst = append(dst, sys.fre[fi])
			fi++
		}
		dst = append(dst, c)
	}
	return append(dst, sys.fre[fi:]...)
}

// invNormal writes (A_P^T A_P)^-1 for the columns pas into dst, using work
// (same length) for the factor.
func (sys *system) invNormal(dst []float64, pas []int, work []float64) bool {
	k := len(pas)
	gatherSym(work, sys.g, sys.n, pas)
	if !cholesky(work, k) {
		return false
	}
	cholInverse(work, k, dst)
	for a := 0; a < k; a++ {
		for b := 0; b < k; b++ {
			dst[a*k+b] /= sys.d[pas[a]] * sys.d[pas[b]]
		}
	}
	return true
}

// positions writes the set bits of mask, ascending, into pl and returns
// their number.
func positions(pl []int, mask uint64) int {
	k := 0
	for mask != 0 {
		pl[k] = bits.TrailingZeros64(mask)
		mask &= mask - 1
		k++
	}
	return k
}

// gatherSym sets dst (k x k row-major) to the rows and columns idx of the
// n x n row-major a.
func gatherSym(dst, a []float64, n int, idx []int) {
	k := len(idx)
	for i, r := range idx {
		for j, c := range idx {
			dst[i*k+j] = a[r*n+c]
		}
	}
}

// cholesky overwrites the k x k row-major symmetric positive definite a by
// its lower Cholesky factor (zero above the diagonal). It reports false if
// a is not numerically positive definite.
func cholesky(a []float64, k int) bool {
	for j := 0; j < k; j++ {
		v := a[j*k+j]
		for l := 0; l < j; l++ {
			v -= a[j*k+l] * a[j*k+l]
		}
		if !(v > 0) {
			return false
		}
		djj := math.Sqrt(v)
		a[j*k+j] = djj
		for i := j + 1; i < k; i++ {
			v := a[i*k+j]
			for l := 0; l < j; l++ {
				v -= a[i*k+l] * a[j*k+l]
			}
			a[i*k+j] = v / djj
		}
		for i := 0; i < j; i++ {
			a[i*k+j] = 0
		}
	}
	return true
}

// cholSolve overwrites b by (L L^T)^-1 b.
func cholSolve(l []float64, k int, b []float64) {
	for i := 0; i < k; i++ {
		v := b[i]
		row := l[i*k : i*k+i]
		for j, lv := range row {
			v -= lv * b[j]
		}
		b[i] = v / l[i*k+i]
	}
	for i := k - 1; i >= 0; i-- {
		v := b[i]
		for j := i + 1; j < k; j++ {
			v -= l[j*k+i] * b[j]
		}
		b[i] = v / l[i*k+i]
	}
}

// cholInverse writes (L L^T)^-1 into dst (k x k row-major).
func cholInverse(l []float64, k int, dst []float64) {
	for j := 0; j < k; j++ {
		col := dst[j*k : (j+1)*k]
		for i := range col {
			col[i] = 0
		}
		col[j] = 1
		cholSolve(l, k, col) // row j of the symmetric inverse
	}
}

// workspace is the per-goroutine state of the Gram-space solver.
type workspace struct {
	ds, e, y, z, buf, tf []float64
	rej                  []bool
	pl                   []int
	chol                 []float64 // uncached factor of S over the passive set
	pas                  []int     // uncached passive columns, then Result.Passive
	inv, invWork         []float64 // uncached InvNormal
	x                    []float64
	sym                  mat.SymDense
	atbBuf               []float64
}

func newWorkspace(n, nc, nf int) *workspace {
	return &workspace{
		ds: make([]float64, n), e: make([]float64, nc), y: make([]float64, nc),
		z: make([]float64, nc), buf: make([]float64, nc), tf: make([]float64, nf),
		rej: make([]bool, nc), pl: make([]int, nc), chol: make([]float64, nc*nc),
		pas: make([]int, n), inv: make([]float64, n*n), invWork: make([]float64, n*n),
		x: make([]float64, n),
	}
}

// solveSet sets z over the positions of mask to the solution of
// S_PP z_P = e_P.
func (ws *workspace) solveSet(sys *system, mask uint64) {
	nc := len(sys.cons)
	pl := ws.pl
	k := positions(pl, mask)
	var l []float64
	if sys.cache != nil {
		l = sys.cache[mask].chol
	} else {
		l = ws.chol[:k*k]
		gatherSym(l, sys.s, nc, pl[:k])
		if !cholesky(l, k) {
			// S is positive definite (checked in newSystem), so a principal
			// submatrix can fail only by roundoff at the condition limit.
			for q := 0; q < k; q++ {
				l[q*k+q] = math.Max(l[q*k+q], math.SmallestNonzeroFloat64)
			}
		}
	}
	b := ws.buf[:k]
	for q, p := range pl[:k] {
		b[q] = ws.e[p]
	}
	cholSolve(l, k, b)
	for q, p := range pl[:k] {
		ws.z[p] = b[q]
	}
}

// inner is the Lawson-Hanson inner loop in Gram space: from the feasible
// y, move toward z (solved on mask) and drop the coefficients that reach
// zero until z is feasible; then y = z on the returned mask.
func (ws *workspace) inner(sys *system, mask uint64) uint64 {
	y, z := ws.y, ws.z
	for {
		imin, alpha := -1, math.Inf(1)
		for m := mask; m != 0; m &= m - 1 {
			i := bits.TrailingZeros64(m)
			if z[i] > 0 {
				continue
			}
			var t float64
			if y[i] > 0 {
				t = y[i] / (y[i] - z[i])
			}
			if t < alpha {
				imin, alpha = i, t
			}
		}
		if imin < 0 {
			for m := mask; m != 0; m &= m - 1 {
				i := bits.TrailingZeros64(m)
				y[i] = z[i]
			}
			return mask
		}
		for m := mask; m != 0; m &= m - 1 {
			i := bits.TrailingZeros64(m)
			y[i] += alpha * (z[i] - y[i])
		}
		y[imin] = 0
		for m := mask; m != 0; m &= m - 1 {
			i := bits.TrailingZeros64(m)
			if y[i] <= 0 {
				y[i] = 0
				mask &^= 1 << i
			}
		}
		ws.solveSet(sys, mask)
	}
}

// solve solves the problem for A^T b = atb and b^T b = btb into dst.
func (ws *workspace) solve(sys *system, dst *Result, atb []float64, btb float64) error {
	n, nc, nf := sys.n, len(sys.cons), len(sys.fre)
	if len(atb) != n {
		panic("nnls: len(atb) != columns of A")
	}
	ds := ws.ds
	var dmax float64
	for j := range ds {
		ds[j] = atb[j] / sys.d[j]
		dmax = math.Max(dmax, math.Abs(ds[j]))
	}
	if !isFinite(dmax) || !isFinite(btb) {
		return &nonFiniteError{where: "right-hand side", v: dmax + btb}
	}
	tol := sys.tol
	if tol == 0 {
		tol = 10 * eps * float64(n) * dmax
	}
	for i, c := range sys.cons {
		v := ds[c]
		kr := sys.k[i*nf : (i+1)*nf]
		for l, f := range sys.fre {
			v -= kr[l] * ds[f]
		}
		ws.e[i] = v
	}
	var err error
	var mask uint64
	iter := 0
	if nc > 0 {
		full := uint64(1)<<nc - 1
		if nc == 64 {
			full = ^uint64(0)
		}
		// Start from the clipped unconstrained solution.
		ws.solveSet(sys, full)
		for i := 0; i < nc; i++ {
			ws.y[i] = 0
			if ws.z[i] > 0 {
				ws.y[i] = ws.z[i]
				mask |= 1 << i
			}
		}
		if mask != full {
			ws.solveSet(sys, mask)
			mask = ws.inner(sys, mask)
		}
		for i := range ws.rej {
			ws.rej[i] = false
		}
		for {
			best, bestw := -1, tol
			for i := 0; i < nc; i++ {
				if mask&(1<<i) != 0 || ws.rej[i] {
					continue
				}
				w := ws.e[i]
				sr := sys.s[i*nc : (i+1)*nc]
				for m := mask; m != 0; m &= m - 1 {
					p := bits.TrailingZeros64(m)
					w -= sr[p] * ws.y[p]
				}
				if w > bestw {
					best, bestw = i, w
				}
			}
			if best < 0 {
				break
			}
			if iter == sys.maxIter {
				err = &ConvergenceError{Iterations: iter}
				break
			}
			trial := mask | 1<<best
			ws.solveSet(sys, trial)
			if ws.z[best] <= 0 {
				ws.rej[best] = true // roundoff: the dual said enter, the solve disagrees
				continue
			}
			iter++
			for i := range ws.rej {
				ws.rej[i] = false
			}
			mask = ws.inner(sys, trial)
		}
	}
	// Free coefficients: y_f = G_ff^-1 ds_f - K^T y_c.
	tf := ws.tf
	for l, f := range sys.fre {
		tf[l] = ds[f]
	}
	cholSolve(sys.lff, nf, tf)
	for i := 0; i < nc; i++ {
		if yi := ws.y[i]; yi != 0 {
			kr := sys.k[i*nf : (i+1)*nf]
			for l := range tf {
				tf[l] -= kr[l] * yi
			}
		}
	}
	rss := btb
	for j := range ws.x {
		ws.x[j] = 0
	}
	for i, c := range sys.cons {
		ws.x[c] = ws.y[i] / sys.d[c]
		rss -= ws.y[i] * ds[c]
	}
	for l, f := range sys.fre {
		ws.x[f] = tf[l] / sys.d[f]
		rss -= tf[l] * ds[f]
	}
	dst.X = ws.x
	dst.ResidualNorm = math.Sqrt(math.Max(rss, 0))
	dst.Iterations = iter
	var pas []int
	var inv []float64
	if sys.cache != nil {
		e := &sys.cache[mask]
		pas, inv = e.pas, e.inv
		copy(ws.pas, pas)
		pas = ws.pas[:len(pas)]
	} else {
		pas = passiveColumns(ws.pas[:0], sys, mask)
		inv = ws.inv[:len(pas)*len(pas)]
		sys.invNormal(inv, pas, ws.invWork[:len(inv)])
	}
	dst.Passive = pas
	k := len(pas)
	ws.sym.Reset()
	if k > 0 {
		ws.sym.ReuseAsSym(k)
		raw := ws.sym.RawSymmetric()
		for a := 0; a < k; a++ {
			copy(raw.Data[a*raw.Stride+a:a*raw.Stride+k], inv[a*k+a:(a+1)*k])
		}
	}
	dst.InvNormal = &ws.sym
	return err
}

// project sets dst to A^T b and returns b^T b.
func (sys *system) project(dst, b []float64) float64 {
	if len(b) != sys.m {
		panic("nnls: len(b) != rows of A")
	}
	if len(dst) != sys.n {
		panic("nnls: len(dst) != columns of A")
	}
	m := sys.m
	for j := range dst {
		dst[j] = dot(sys.at[j*m:(j+1)*m], b)
	}
	return dot(b, b)
}

// atb returns the workspace's buffer for A^T b.
func (ws *workspace) atb(n int) []float64 {
	if len(ws.atbBuf) != n {
		ws.atbBuf = make([]float64, n)
	}
	return ws.atbBuf
}
