package nnls

import (
	"math"
	"strconv"

	"gonum.org/v1/gonum/mat"
)

// tryAdd makes column j passive at position p by a Householder reflection
// of rows p..n-1, applied to every non-passive column and to z. A
// constrained column is refused, leaving everything unchanged, when its
// new coefficient would not be positive (Lawson & Hanson's test that
// guards against roundoff, ch. 23, step 6) or when it is numerically
// dependent on the passive columns.
func (s *Solver) tryAdd(j, p int) bool {
	n := s.n
	t, z := s.t, s.z
	col := t[j*n+p : (j+1)*n]
	nrm := math.Sqrt(dotSmall(col, col))
	if nrm == 0 {
		return false
	}
	alpha := -math.Copysign(nrm, col[0])
	u0 := col[0] - alpha
	beta := -alpha * u0
	if !s.fr[j] {
		sc := (u0*z[p] + dotSmall(col[1:], z[p+1:])) / beta
		if (z[p]-sc*u0)/alpha <= 0 {
			return false
		}
	}
	col[0] = u0
	for k := 0; k < n; k++ {
		if k == j || s.inP[k] {
			continue
		}
		tk := t[k*n+p : (k+1)*n]
		axpySmall(-dotSmall(col, tk)/beta, col, tk)
	}
	zp := z[p:]
	axpySmall(-dotSmall(col, zp)/beta, col, zp)
	col[0] = alpha
	for i := 1; i < len(col); i++ {
		col[i] = 0
	}
	s.inP[j] = true
	s.pos[p] = j
	return true
}

// addColumn makes free column j passive at position p.
func (s *Solver) addColumn(j, p int) {
	if !s.tryAdd(j, p) {
		panic("nnls: internal error: free column rejected after rank check")
	}
}

// backSolve solves U zs = z[:np] for the triangular factor U of the
// passive columns (in position order).
func (s *Solver) backSolve(np int) {
	n := s.n
	t, z, zs, pos := s.t, s.z, s.zs, s.pos
	for q := np - 1; q >= 0; q-- {
		v := z[q]
		for r := q + 1; r < np; r++ {
			v -= t[pos[r]*n+q] * zs[r]
		}
		zs[q] = v / t[pos[q]*n+q]
	}
}

// inner runs Lawson & Hanson's inner loop (ch. 23, steps 6-11): move from
// the feasible y toward the least-squares solution on P, dropping the
// constrained columns that reach zero, until that solution is feasible.
// It returns the new number of passive columns.
func (s *Solver) inner(np int) int {
	y, zs, pos, fr := s.y, s.zs, s.pos, s.fr
	for {
		s.backSolve(np)
		qmin, alpha := -1, math.Inf(1)
		for q := 0; q < np; q++ {
			col := pos[q]
			if fr[col] || zs[q] > 0 {
				continue
			}
			var tq float64
			if y[col] > 0 {
				tq = y[col] / (y[col] - zs[q])
			}
			if tq < alpha {
				qmin, alpha = q, tq
			}
		}
		if qmin < 0 {
			for q := 0; q < np; q++ {
				y[pos[q]] = zs[q]
			}
			return np
		}
		for q := 0; q < np; q++ {
			col := pos[q]
			y[col] += alpha * (zs[q] - y[col])
		}
		y[pos[qmin]] = 0
		for q := 0; q < np; {
			col := pos[q]
			if !fr[col] && y[col] <= 0 {
				y[col] = 0
				s.removePos(q, np)
				np--
			} else {
				q++
			}
		}
	}
}

// removePos removes the passive column at position q and restores the
// triangular form with Givens rotations of rows q..np-1 (applied to all
// columns and to z).
func (s *Solver) removePos(q, np int) {
	n := s.n
	t, z, pos := s.t, s.z, s.pos
	s.inP[pos[q]] = false
	copy(pos[q:np-1], pos[q+1:np])
	for i := q; i < np-1; i++ {
		cc := pos[i]
		a, b := t[cc*n+i], t[cc*n+i+1]
		r := math.Hypot(a, b)
		if r == 0 {
			continue
		}
		c, sn := a/r, b/r
		for k := 0; k < n; k++ {
			u, v := t[k*n+i], t[k*n+i+1]
			t[k*n+i], t[k*n+i+1] = c*u+sn*v, c*v-sn*u
		}
		u, v := z[i], z[i+1]
		z[i], z[i+1] = c*u+sn*v, c*v-sn*u
		t[cc*n+i], t[cc*n+i+1] = r, 0
	}
}

// fill writes the solution into dst.
func (s *Solver) fill(dst *Result, rho0 float64) {
	n, np := s.n, s.np
	for j := 0; j < n; j++ {
		s.x[j] = 0
	}
	for q := 0; q < np; q++ {
		col := s.pos[q]
		s.x[col] = s.y[col] / s.d[col] * s.cs[col] / s.bscale
		s.posOf[col] = q
	}
	rz := s.z[np:]
	dst.X = s.x
	dst.ResidualNorm = math.Sqrt(dotSmall(rz, rz)+rho0*rho0) / s.bscale
	pas := s.pas[:np]
	copy(pas, s.pos[:np])
	sortInts(pas)
	dst.Passive = pas
	dst.Iterations = s.iter
	dst.InvNormal = s.invNormal(pas)
}

// invNormal returns (A_P^T A_P)^-1 = D^-1 (U^T U)^-1 D^-1 in the order of
// pas, from the triangular factor U of the passive columns.
func (s *Solver) invNormal(pas []int) *mat.SymDense {
	k := len(pas)
	n := s.n
	ui := s.tinv[:k*k] // column-major inverse of U, position order
	for j := 0; j < k; j++ {
		ui[j*k+j] = 1 / s.t[s.pos[j]*n+j]
		for i := j - 1; i >= 0; i-- {
			var v float64
			for l := i + 1; l <= j; l++ {
				v += s.t[s.pos[l]*n+i] * ui[j*k+l]
			}
			ui[j*k+i] = -v * ui[i*k+i]
		}
	}
	s.inv.Reset()
	if k == 0 {
		return &s.inv
	}
	s.inv.ReuseAsSym(k)
	raw := s.inv.RawSymmetric()
	for a := 0; a < k; a++ {
		pa := s.posOf[pas[a]]
		for b := a; b < k; b++ {
			pb := s.posOf[pas[b]]
			// (U^-1 U^-T)[pa][pb] = sum over l >= max(pa,pb) of ui[pa][l] ui[pb][l].
			var v float64
			for l := max(pa, pb); l < k; l++ {
				v += ui[l*k+pa] * ui[l*k+pb]
			}
			raw.Data[a*raw.Stride+b] = v / (s.d[pas[a]] * s.d[pas[b]]) * (s.cs[pas[a]] * s.cs[pas[b]])
		}
	}
	return &s.inv
}

func sortInts(a []int) {
	for i := 1; i < len(a); i++ {
		v := a[i]
		j := i - 1
		for ; j >= 0 && a[j] > v; j-- {
			a[j+1] = a[j]
		}
		a[j+1] = v
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// dotSmall is dot for the short vectors of the n x n problem, where a
// plain loop beats the call into assembly.
func dotSmall(x, y []float64) float64 {
	y = y[:len(x)]
	var v float64
	for i, xv := range x {
		v += xv * y[i]
	}
	return v
}

// axpySmall sets y += alpha x for short vectors.
func axpySmall(alpha float64, x, y []float64) {
	y = y[:len(x)]
	for i, xv := range x {
		y[i] += alpha * xv
	}
}
