package nnls

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

func TestSolveSmall(t *testing.T) {
	// Expected values worked by hand: with orthogonal columns the solution
	// is max(a_j^T b / ||a_j||^2, 0) per column (free: no max); with
	// A^T b < 0 componentwise, x = 0 satisfies the KKT conditions.
	for _, tc := range []struct {
		name string
		a    []float64
		m, n int
		b    []float64
		free []bool
		x    []float64
		pas  []int
	}{
		{"identity", []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}, 3, 3, []float64{1, -2, 3}, nil, []float64{1, 0, 3}, []int{0, 2}},
		{"identity free", []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}, 3, 3, []float64{1, -2, 3}, []bool{false, true, false}, []float64{1, -2, 3}, []int{0, 1, 2}},
		{"scaled", []float64{2, 0, 0, 1e-3}, 2, 2, []float64{4, 5e-3}, nil, []float64{2, 5}, []int{0, 1}},
		{"b zero", []float64{1, 2, 3, 4, 5, 7}, 3, 2, []float64{0, 0, 0}, nil, []float64{0, 0}, []int{}},
		{"all negative", []float64{1, 2, 3, 4, 5, 7}, 3, 2, []float64{-1, -1, -1}, nil, []float64{0, 0}, []int{}},
		{"single column", []float64{1, 2, 2}, 3, 1, []float64{1, 2, 2}, nil, []float64{1}, []int{0}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var s Solver
			var r Result
			if err := s.Solve(&r, mat.NewDense(tc.m, tc.n, tc.a), tc.b, tc.free); err != nil {
				t.Fatal(err)
			}
			// Tolerance: a few ulps of O(1) values.
			if !floats.EqualApprox(r.X, tc.x, 1e-14) {
				t.Errorf("X = %v, want %v", r.X, tc.x)
			}
			if len(r.Passive) != len(tc.pas) || (len(tc.pas) > 0 && !equalInts(r.Passive, tc.pas)) {
				t.Errorf("Passive = %v, want %v", r.Passive, tc.pas)
			}
		})
	}
}

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// TestKKTRandom checks optimality on 3000 Gaussian problems of all sizes,
// with and without free columns. Tolerance 1e-10 relative (dual entries
// relative to ||a_j|| ||b||): Gaussian matrices of these shapes have
// condition numbers below about 1e3, so QR gives a dual about 1e-13.
func TestKKTRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var s Solver
	var r Result
	for it := 0; it < 3000; it++ {
		n := 1 + rng.IntN(12)
		m := n + rng.IntN(60)
		nfree := 0
		if it%3 == 1 {
			nfree = rng.IntN(min(n, 3) + 1)
		}
		p := randomProblem(rng, m, n, nfree)
		if err := s.Solve(&r, p.a, p.b, p.free); err != nil {
			t.Fatalf("problem %d (m=%d n=%d): %v", it, m, n, err)
		}
		checkKKT(t, p, &r, 1e-10)
		if t.Failed() {
			t.Fatalf("problem %d (m=%d n=%d free=%d) failed", it, m, n, nfree)
		}
	}
}

// TestKKTSpectro checks optimality on 2000 spectroscopy-like problems:
// strongly correlated derivative-of-Gaussian references plus free
// polynomial background. Their scaled condition numbers reach about 1e4,
// hence the tolerance 1e-9 relative.
func TestKKTSpectro(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var s Solver
	var r Result
	skipped := 0
	defer func() {
		t.Logf("%d of 2000 problems rank deficient", skipped)
		if skipped > 100 {
			t.Errorf("%d of 2000 problems rank deficient: the test checks too few", skipped)
		}
	}()
	for it := 0; it < 2000; it++ {
		m := 200 + rng.IntN(400)
		nref := 2 + rng.IntN(7)
		nfree := rng.IntN(4)
		p := spectroProblem(rng, m, nref, nfree)
		err := s.Solve(&r, p.a, p.b, p.free)
		var re *RankError
		if errors.As(err, &re) {
			skipped++
			continue // close centres and widths can make references collinear
		}
		if err != nil {
			t.Fatalf("problem %d: %v", it, err)
		}
		checkKKT(t, p, &r, 1e-9)
		if t.Failed() {
			t.Fatalf("problem %d (m=%d refs=%d free=%d) failed", it, m, nref, nfree)
		}
	}
}

// TestInteriorMatchesQR checks that a problem whose unconstrained solution
// is positive gives gonum's least-squares solution (mat.Dense.Solve, QR).
// Tolerance 1e-12 relative: both are backward stable QR solutions of a
// well-conditioned problem.
func TestInteriorMatchesQR(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	var s Solver
	var r Result
	for it := 0; it < 500; it++ {
		n := 1 + rng.IntN(12)
		m := n + 5 + rng.IntN(200)
		a := mat.NewDense(m, n, nil)
		for i := 0; i < m; i++ {
			for j := 0; j < n; j++ {
				a.Set(i, j, rng.NormFloat64())
			}
		}
		x0 := make([]float64, n)
		for j := range x0 {
			x0[j] = 1 + rng.Float64()
		}
		b := make([]float64, m)
		for i := range b {
			b[i] = mat.Dot(a.RowView(i), mat.NewVecDense(n, x0)) + 0.01*rng.NormFloat64()
		}
		var want mat.Dense
		if err := want.Solve(a, mat.NewDense(m, 1, b)); err != nil {
			t.Fatal(err)
		}
		if err := s.Solve(&r, a, b, nil); err != nil {
			t.Fatal(err)
		}
		if len(r.Passive) != n {
			t.Fatalf("problem %d: passive %v, want all", it, r.Passive)
		}
		for j := 0; j < n; j++ {
			if !scalar.EqualWithinAbsOrRel(r.X[j], want.At(j, 0), 1e-12, 1e-12) {
				t.Fatalf("problem %d: x[%d] = %v, QR %v", it, j, r.X[j], want.At(j, 0))
			}
		}
		// InvNormal against the explicit inverse of A^T A (1e-9 relative:
		// forming A^T A squares the condition number).
		var ata, inv mat.Dense
		ata.Mul(a.T(), a)
		if err := inv.Inverse(&ata); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if !scalar.EqualWithinAbsOrRel(r.InvNormal.At(i, j), inv.At(i, j), 1e-9, 1e-9) {
					t.Fatalf("problem %d: InvNormal[%d,%d] = %v, want %v", it, i, j, r.InvNormal.At(i, j), inv.At(i, j))
				}
			}
		}
	}
}

func TestRankErrors(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	base := randomProblem(rng, 50, 5, 0)
	col := func(a *mat.Dense, dst, src int, f float64) {
		for i := 0; i < 50; i++ {
			a.Set(i, dst, f*a.At(i, src))
		}
	}
	for _, tc := range []struct {
		name string
		edit func(a *mat.Dense)
		free []bool
		cols []int
	}{
		{"identical 1 3", func(a *mat.Dense) { col(a, 3, 1, 1) }, nil, []int{1, 3}},
		{"scaled copy", func(a *mat.Dense) { col(a, 4, 0, -2.5e3) }, nil, []int{0, 4}},
		{"identical free", func(a *mat.Dense) { col(a, 3, 1, 1) }, []bool{false, true, false, true, false}, []int{1, 3}},
		{"zero column", func(a *mat.Dense) { col(a, 2, 2, 0) }, nil, []int{2}},
		{"sum", func(a *mat.Dense) {
			for i := 0; i < 50; i++ {
				a.Set(i, 4, a.At(i, 0)+a.At(i, 2))
			}
		}, nil, []int{0, 2, 4}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a := mat.DenseCopyOf(base.a)
			tc.edit(a)
			var s Solver
			var r Result
			err := s.Solve(&r, a, base.b, tc.free)
			var re *RankError
			if !errors.As(err, &re) {
				t.Fatalf("err = %v, want *RankError", err)
			}
			if !equalInts(re.Columns, tc.cols) {
				t.Errorf("Columns = %v, want %v (%v)", re.Columns, tc.cols, err)
			}
			if !(re.Cond > re.Limit) {
				t.Errorf("Cond %g not above Limit %g", re.Cond, re.Limit)
			}
			t.Log(err)
		})
	}
	// Message format.
	e := &RankError{Columns: []int{1, 3}, Cond: 3.2e16}
	if got, want := e.Error(), "nnls: columns 1 and 3 are collinear (condition 3e+16)"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
	// Too few rows for the columns is rank deficient too.
	var s Solver
	var r Result
	var re *RankError
	if err := s.Solve(&r, mat.NewDense(2, 3, []float64{1, 2, 3, 4, 5, 7}), []float64{1, 1}, nil); !errors.As(err, &re) {
		t.Errorf("m < n: err = %v, want *RankError", err)
	}
}

func TestNonFinite(t *testing.T) {
	for _, tc := range []struct {
		name string
		ai   int
		bi   int
		v    float64
	}{
		{"nan in a", 4, -1, math.NaN()},
		{"inf in a", 0, -1, math.Inf(1)},
		{"nan in b", -1, 2, math.NaN()},
		{"-inf in b", -1, 0, math.Inf(-1)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a := mat.NewDense(4, 2, []float64{1, 2, 3, 4, 5, 6, 7, 9})
			b := []float64{1, 2, 3, 4}
			if tc.ai >= 0 {
				a.RawMatrix().Data[tc.ai] = tc.v
			}
			if tc.bi >= 0 {
				b[tc.bi] = tc.v
			}
			var s Solver
			var r Result
			err := s.Solve(&r, a, b, nil)
			if !errors.Is(err, ErrNonFinite) {
				t.Fatalf("err = %v, want ErrNonFinite", err)
			}
			t.Log(err)
		})
	}
}

func TestConvergenceError(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	p := randomProblem(rng, 40, 8, 0)
	for i := range p.b { // all-positive coefficients: 8 columns must enter
		p.b[i] = 0
		for j := 0; j < 8; j++ {
			p.b[i] += p.a.At(i, j)
		}
	}
	var s Solver
	var r Result
	if err := s.Solve(&r, p.a, p.b, nil); err != nil || len(r.Passive) < 2 {
		t.Fatalf("setup: err %v, passive %v", err, r.Passive)
	}
	s.Settings.MaxIter = 1
	err := s.Solve(&r, p.a, p.b, nil)
	var ce *ConvergenceError
	if !errors.As(err, &ce) || ce.Iterations != 1 {
		t.Fatalf("err = %v, want *ConvergenceError after 1 iteration", err)
	}
	for j, v := range r.X {
		if v < 0 {
			t.Errorf("last iterate x[%d] = %g infeasible", j, v)
		}
	}
}

// TestFreeProjected checks free columns against the projected problem:
// with Q the orthogonal projector onto the complement of the free columns'
// range, the constrained part solves NNLS(Q A_c, Q b) and the free part is
// the least-squares solution of A_f x_f = b - A_c x_c. Tolerance 1e-9
// relative: the projector is formed from normal equations of A_f.
func TestFreeProjected(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	var s, s2 Solver
	var r, r2 Result
	for it := 0; it < 300; it++ {
		nc := 1 + rng.IntN(6)
		nf := 1 + rng.IntN(3)
		var p problem
		if it%2 == 0 {
			p = randomProblem(rng, nc+nf+rng.IntN(50), nc+nf, nf)
		} else {
			p = spectroProblem(rng, 300, nc, nf)
		}
		m, _ := p.a.Dims()
		if err := s.Solve(&r, p.a, p.b, p.free); err != nil {
			var re *RankError
			if errors.As(err, &re) {
				continue
			}
			t.Fatal(err)
		}
		ac := mat.DenseCopyOf(p.a.Slice(0, m, 0, nc))
		af := mat.DenseCopyOf(p.a.Slice(0, m, nc, nc+nf))
		var qr mat.QR
		qr.Factorize(af)
		var q mat.Dense
		qr.QTo(&q)
		q1 := q.Slice(0, m, 0, nf)
		proj := func(v mat.Matrix) *mat.Dense { // (I - Q1 Q1^T) v
			var t1, t2 mat.Dense
			t1.Mul(q1.T(), v)
			t2.Mul(q1, &t1)
			var out mat.Dense
			out.Sub(v, &t2)
			return &out
		}
		pa := proj(ac)
		pb := proj(mat.NewDense(m, 1, p.b))
		if err := s2.Solve(&r2, pa, pb.RawMatrix().Data, nil); err != nil {
			t.Fatal(err)
		}
		for j := 0; j < nc; j++ {
			if !scalar.EqualWithinAbsOrRel(r.X[j], r2.X[j], 1e-9, 1e-9) {
				t.Fatalf("problem %d: x[%d] = %v, projected %v", it, j, r.X[j], r2.X[j])
			}
		}
		rest := make([]float64, m)
		for i := range rest {
			rest[i] = p.b[i]
			for j := 0; j < nc; j++ {
				rest[i] -= p.a.At(i, j) * r.X[j]
			}
		}
		var xf mat.Dense
		if err := xf.Solve(af, mat.NewDense(m, 1, rest)); err != nil {
			t.Fatal(err)
		}
		for k := 0; k < nf; k++ {
			if !scalar.EqualWithinAbsOrRel(r.X[nc+k], xf.At(k, 0), 1e-9, 1e-9) {
				t.Fatalf("problem %d: free x[%d] = %v, least squares %v", it, nc+k, r.X[nc+k], xf.At(k, 0))
			}
		}
	}
}

func TestSolveAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	p := spectroProblem(rng, 400, 4, 2)
	var s Solver
	var r Result
	if err := s.Solve(&r, p.a, p.b, p.free); err != nil {
		t.Fatal(err)
	}
	at := p.a.T()
	allocs := testing.AllocsPerRun(50, func() {
		if err := s.Solve(&r, p.a, p.b, p.free); err != nil {
			t.Fatal(err)
		}
		if err := s.Solve(&r, at.T(), p.b, p.free); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Errorf("%v allocations per Solve, want 0", allocs)
	}
}

// TestInputLayouts checks that a Dense, a transposed Dense and a generic
// Matrix give the same result bit for bit.
func TestInputLayouts(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	p := randomProblem(rng, 30, 4, 1)
	var s Solver
	var r Result
	var xs [][]float64
	var at mat.Dense
	at.CloneFrom(p.a.T())
	for _, a := range []mat.Matrix{p.a, at.T(), mat.DenseCopyOf(p.a).Slice(0, 30, 0, 4), generic{p.a}} {
		if err := s.Solve(&r, a, p.b, p.free); err != nil {
			t.Fatal(err)
		}
		xs = append(xs, append([]float64(nil), r.X...))
	}
	for k := 1; k < len(xs); k++ {
		if !floats.Equal(xs[0], xs[k]) {
			t.Errorf("layout %d: %v, want %v", k, xs[k], xs[0])
		}
	}
}

type generic struct{ m *mat.Dense }

func (g generic) Dims() (int, int)    { return g.m.Dims() }
func (g generic) At(i, j int) float64 { return g.m.At(i, j) }
func (g generic) T() mat.Matrix       { return mat.Transpose{Matrix: g} }

// TestExtremeScales checks invariance to the scale of columns and of b,
// down to magnitudes whose squares underflow and up to ones whose squares
// overflow. Scaling column j by f_j and b by g scales x_j by g/f_j; the
// factors are powers of ten, so the comparison allows 1e-12 relative.
func TestExtremeScales(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	p := spectroProblem(rng, 300, 4, 2)
	var s Solver
	var r Result
	if err := s.Solve(&r, p.a, p.b, p.free); err != nil {
		t.Fatal(err)
	}
	want := append([]float64(nil), r.X...)
	wantRes := r.ResidualNorm
	wantPas := append([]int(nil), r.Passive...)
	wantInv := mat.NewSymDense(r.InvNormal.SymmetricDim(), nil)
	wantInv.CopySym(r.InvNormal)
	for _, tc := range []struct {
		f []float64
		g float64
	}{
		{[]float64{1e-3, 1, 1e3, 1, 1e-2, 1e2}, 1},
		{[]float64{1e-200, 1, 1e200, 1, 1e-180, 1e150}, 1},
		{[]float64{1, 1, 1, 1, 1, 1}, 1e250},
		{[]float64{1, 1, 1, 1, 1, 1}, 1e-250},
		{[]float64{1e-170, 1e-170, 1e-170, 1e-170, 1e-170, 1e-170}, 1e-170},
	} {
		a := mat.DenseCopyOf(p.a)
		m, n := a.Dims()
		for j := 0; j < n; j++ {
			for i := 0; i < m; i++ {
				a.Set(i, j, a.At(i, j)*tc.f[j])
			}
		}
		b := make([]float64, m)
		for i := range b {
			b[i] = p.b[i] * tc.g
		}
		if err := s.Solve(&r, a, b, p.free); err != nil {
			t.Fatalf("scales %v, %g: %v", tc.f, tc.g, err)
		}
		for j := range want {
			if !scalar.EqualWithinRel(r.X[j], want[j]*tc.g/tc.f[j], 1e-12) {
				t.Errorf("scales %v, %g: x[%d] = %g, want %g", tc.f, tc.g, j, r.X[j], want[j]*tc.g/tc.f[j])
			}
		}
		if !scalar.EqualWithinRel(r.ResidualNorm, wantRes*tc.g, 1e-12) {
			t.Errorf("residual %g, want %g", r.ResidualNorm, wantRes*tc.g)
		}
		if !equalInts(r.Passive, wantPas) {
			t.Fatalf("passive %v, want %v", r.Passive, wantPas)
		}
		for a, ja := range r.Passive {
			for b, jb := range r.Passive {
				w := wantInv.At(a, b) / tc.f[ja] / tc.f[jb]
				if math.Abs(w) > 1e300 {
					continue // not representable
				}
				// Entries are compared relative to sqrt(inv_aa inv_bb):
				// some are roundoff-level zeros (orthogonal columns).
				scale := math.Sqrt(wantInv.At(a, a)*wantInv.At(b, b)) / tc.f[ja] / tc.f[jb]
				if !scalar.EqualWithinAbsOrRel(r.InvNormal.At(a, b), w, 1e-10*scale, 1e-10) {
					t.Errorf("InvNormal[%d,%d] = %g, want %g", a, b, r.InvNormal.At(a, b), w)
				}
			}
		}
	}
}

// TestTranspose checks the blocked copy of a row-major matrix for every
// column count the block widths combine to.
func TestTranspose(t *testing.T) {
	for n := 1; n <= 19; n++ {
		for _, m := range []int{1, 7, 33} {
			st := n + 2
			src := make([]float64, m*st)
			for i := range src {
				src[i] = float64(i)
			}
			w := make([]float64, m*n)
			transpose(w, src, m, n, st)
			for j := 0; j < n; j++ {
				for i := 0; i < m; i++ {
					if w[j*m+i] != src[i*st+j] {
						t.Fatalf("m=%d n=%d: w[%d,%d] = %v, want %v", m, n, i, j, w[j*m+i], src[i*st+j])
					}
				}
			}
		}
	}
}
