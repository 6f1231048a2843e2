package nnls

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// checkRank returns a *RankError when the n x n upper triangular t
// (column-major, unit-norm columns) has a 2-norm condition number above
// limit. The cheap test is the exact 1-norm condition number from the
// explicit inverse (into work, n*n); since cond1/n <= cond2 <= n*cond1 for
// an n x n matrix, only the doubtful band and the failures need an SVD,
// which also names the dependent columns.
func checkRank(t []float64, n int, work []float64, limit float64) error {
	singular := false
	for j := 0; j < n; j++ {
		if t[j*n+j] == 0 {
			singular = true
			break
		}
	}
	if !singular {
		// work[j*n+i] = (t^-1)[i][j].
		for j := 0; j < n; j++ {
			for i := j + 1; i < n; i++ {
				work[j*n+i] = 0
			}
			work[j*n+j] = 1 / t[j*n+j]
			for i := j - 1; i >= 0; i-- {
				var v float64
				for l := i + 1; l <= j; l++ {
					v += t[l*n+i] * work[j*n+l]
				}
				work[j*n+i] = -v / t[i*n+i]
			}
		}
		var na, ni float64
		for j := 0; j < n; j++ {
			var sa, si float64
			for i := 0; i <= j; i++ {
				sa += math.Abs(t[j*n+i])
				si += math.Abs(work[j*n+i])
			}
			na, ni = max(na, sa), max(ni, si)
		}
		cond1 := na * ni
		if cond1 <= limit/float64(n) && isFinite(cond1) {
			return nil
		}
	}
	return rankSVD(t, n, limit)
}

// rankSVD decides rank by the singular values of t and names the columns
// in the support of the right singular vectors below the limit. It
// allocates; it runs only for doubtful or failing matrices.
func rankSVD(t []float64, n int, limit float64) error {
	a := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		for i := 0; i <= j; i++ {
			a.Set(i, j, t[j*n+i])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDFull) {
		return &RankError{Columns: allColumns(n), Cond: math.Inf(1), Limit: limit}
	}
	sv := svd.Values(nil)
	smax, smin := sv[0], sv[n-1]
	cond := math.Inf(1)
	if smin > 0 {
		cond = smax / smin
	}
	if cond <= limit {
		return nil
	}
	var v mat.Dense
	svd.VTo(&v)
	in := make([]bool, n)
	for k := 0; k < n; k++ {
		if sv[k]*limit >= smax {
			continue
		}
		var vmax float64
		for j := 0; j < n; j++ {
			vmax = max(vmax, math.Abs(v.At(j, k)))
		}
		for j := 0; j < n; j++ {
			// A component above 1% of the largest marks a column that
			// takes part in the dependency (a chosen threshold: identical
			// columns give equal components, unrelated ones give roundoff).
			if math.Abs(v.At(j, k)) >= 0.01*vmax {
				in[j] = true
			}
		}
	}
	var cols []int
	for j, ok := range in {
		if ok {
			cols = append(cols, j)
		}
	}
	return &RankError{Columns: cols, Cond: cond, Limit: limit}
}

func allColumns(n int) []int {
	c := make([]int, n)
	for i := range c {
		c[i] = i
	}
	return c
}
