package nnls

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// mapMatrix is a map-fit design: nref derivative-of-Gaussian references
// 1.2 eV apart (as benchProblem) shifted by shift eV, plus nfree
// polynomial background columns.
func mapMatrix(m, nref, nfree int, shift float64) (*mat.Dense, []bool) {
	n := nref + nfree
	a := mat.NewDense(m, n, nil)
	e0 := 0.25*float64(m) + shift
	for j := 0; j < nref; j++ {
		c := e0 + 1.2*(float64(j)-float64(nref-1)/2)
		s := 2 + 0.25*float64(j)
		for i := 0; i < m; i++ {
			u := (0.5*float64(i) - c) / s
			a.Set(i, j, -u*math.Exp(-u*u/2))
		}
	}
	for k := 0; k < nfree; k++ {
		for i := 0; i < m; i++ {
			u := 2*float64(i)/float64(m-1) - 1
			a.Set(i, nref+k, math.Pow(u, float64(k)))
		}
	}
	return a, freeLast(n, nfree)
}

// mapRHS draws a pixel spectrum for a: random mixture (some references
// absent or pushed below zero), background and noise.
func mapRHS(rng *rand.Rand, a *mat.Dense, nfree int, noise float64) []float64 {
	m, n := a.Dims()
	coef := make([]float64, n)
	for j := range coef {
		if j >= n-nfree {
			coef[j] = 0.1 * rng.NormFloat64()
		} else if rng.Float64() < 0.6 {
			coef[j] = rng.Float64()
		} else {
			coef[j] = -0.3 * rng.Float64()
		}
	}
	b := make([]float64, m)
	for i := range b {
		for j := 0; j < n; j++ {
			b[i] += a.At(i, j) * coef[j]
		}
		b[i] += noise * rng.NormFloat64()
	}
	return b
}

// compareResults checks a Batch result against a Solver result. x and the
// free coefficients to rel relative to max|x|, the residual norm and
// InvNormal to 1e3*rel (the residual comes from b^T b - x^T A^T b, with
// cancellation).
func compareResults(t *testing.T, got, want *Result, rel float64) {
	t.Helper()
	var xmax float64
	for _, v := range want.X {
		xmax = math.Max(xmax, math.Abs(v))
	}
	for j := range want.X {
		if !scalar.EqualWithinAbsOrRel(got.X[j], want.X[j], rel*xmax, rel) {
			t.Errorf("x[%d] = %.17g, Solver %.17g", j, got.X[j], want.X[j])
		}
	}
	if !equalInts(got.Passive, want.Passive) {
		t.Errorf("passive %v, Solver %v", got.Passive, want.Passive)
		return
	}
	if !scalar.EqualWithinAbsOrRel(got.ResidualNorm, want.ResidualNorm, 1e3*rel*want.ResidualNorm, 1e3*rel) {
		t.Errorf("residual %.17g, Solver %.17g", got.ResidualNorm, want.ResidualNorm)
	}
	k := len(want.Passive)
	for a := 0; a < k; a++ {
		for b := 0; b < k; b++ {
			w := want.InvNormal.At(a, b)
			scale := math.Sqrt(want.InvNormal.At(a, a) * want.InvNormal.At(b, b))
			if !scalar.EqualWithinAbsOrRel(got.InvNormal.At(a, b), w, 1e3*rel*scale, 1e3*rel) {
				t.Errorf("InvNormal[%d,%d] = %g, Solver %g", a, b, got.InvNormal.At(a, b), w)
			}
		}
	}
}

// TestBatchMatchesSolver solves 4000 right-hand sides with Batch and with
// Solver. Tolerance 1e-10 relative: the designs have scaled condition
// numbers below 200, so the Gram-space error (about eps cond^2 ~ 1e-11)
// stays below it.
func TestBatchMatchesSolver(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for _, tc := range []struct {
		name        string
		m, nc, nf   int
		rhs         int
		wantUncache bool
	}{
		{"m=300/n=4+2", 300, 4, 2, 2000, false},
		{"m=200/n=3+0", 200, 3, 0, 500, false},
		{"m=250/n=6+3", 250, 6, 3, 500, false},
		{"m=120/n=1+1", 120, 1, 1, 300, false},
		{"m=80/n=0+2", 80, 0, 2, 100, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a, free := mapMatrix(tc.m, tc.nc, tc.nf, 0)
			bt, err := NewBatch(a, free, Settings{})
			if err != nil {
				t.Fatal(err)
			}
			var s Solver
			var rb, rs Result
			for it := 0; it < tc.rhs; it++ {
				b := mapRHS(rng, a, tc.nf, 0.02)
				if err := bt.Solve(&rb, b); err != nil {
					t.Fatal(err)
				}
				if err := s.Solve(&rs, a, b, free); err != nil {
					t.Fatal(err)
				}
				compareResults(t, &rb, &rs, 1e-10)
				if t.Failed() {
					t.Fatalf("right-hand side %d", it)
				}
			}
		})
	}
}

// TestBatchRandom compares Batch with Solver on Gaussian designs, including
// more than 10 constrained columns (no passive-set cache). Tolerance 1e-10
// relative: Gaussian designs are well conditioned (below about 30).
func TestBatchRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 24))
	var s Solver
	var rb, rs Result
	for it := 0; it < 200; it++ {
		n := 1 + rng.IntN(14)
		nf := rng.IntN(min(n, 3) + 1)
		m := 3*n + 20 + rng.IntN(100)
		p := randomProblem(rng, m, n, nf)
		bt, err := NewBatch(p.a, p.free, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		if n-nf > maxCached && bt.sys.cache != nil {
			t.Fatal("cache built beyond maxCached")
		}
		for r := 0; r < 10; r++ {
			q := randomProblem(rng, m, n, nf)
			if err := bt.Solve(&rb, q.b); err != nil {
				t.Fatal(err)
			}
			if err := s.Solve(&rs, p.a, q.b, p.free); err != nil {
				t.Fatal(err)
			}
			compareResults(t, &rb, &rs, 1e-10)
			if t.Failed() {
				t.Fatalf("design %d (m=%d n=%d free=%d), rhs %d", it, m, n, nf, r)
			}
		}
	}
}

func TestBatchAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(25, 26))
	for _, nc := range []int{4, 12} { // cached and uncached
		a, free := mapMatrix(300, nc, 2, 0)
		if nc == 12 {
			p := randomProblem(rng, 300, nc+2, 2)
			a, free = p.a, p.free
		}
		bt, err := NewBatch(a, free, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		bs := make([][]float64, 64)
		for i := range bs {
			bs[i] = mapRHS(rng, a, 2, 0.02)
		}
		var r Result
		atb := make([]float64, nc+2)
		i := 0
		allocs := testing.AllocsPerRun(200, func() {
			b := bs[i%len(bs)]
			i++
			if err := bt.Solve(&r, b); err != nil {
				t.Fatal(err)
			}
			btb := bt.Project(atb, b)
			if err := bt.SolveNormal(&r, atb, btb); err != nil {
				t.Fatal(err)
			}
		})
		if allocs != 0 {
			t.Errorf("nc=%d: %v allocations per right-hand side, want 0", nc, allocs)
		}
	}
}

// TestBank checks each shift of a Bank against Solver with that shift's
// matrix, and SolveNormal from Project against Solve (bit for bit: same
// arithmetic).
func TestBank(t *testing.T) {
	rng := rand.New(rand.NewPCG(27, 28))
	var as []*mat.Dense
	var free []bool
	for k := 0; k < 41; k++ {
		a, f := mapMatrix(300, 4, 2, -2+0.1*float64(k))
		as = append(as, a)
		free = f
	}
	bk, err := NewBank(as, free, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if bk.Len() != 41 {
		t.Fatalf("Len = %d", bk.Len())
	}
	var s Solver
	var rb, rs Result
	atb := make([]float64, 6)
	for it := 0; it < 20; it++ {
		b := mapRHS(rng, as[rng.IntN(41)], 2, 0.02)
		best, bestRSS := -1, math.Inf(1)
		for k := range as {
			btb := bk.Project(atb, k, b)
			if err := bk.SolveNormal(&rb, k, atb, btb); err != nil {
				t.Fatal(err)
			}
			rss := rb.ResidualNorm * rb.ResidualNorm
			x := append([]float64(nil), rb.X...)
			if err := bk.Solve(&rb, k, b); err != nil {
				t.Fatal(err)
			}
			for j := range x {
				if x[j] != rb.X[j] {
					t.Fatalf("shift %d: SolveNormal x %v, Solve %v", k, x, rb.X)
				}
			}
			if err := s.Solve(&rs, as[k], b, free); err != nil {
				t.Fatal(err)
			}
			compareResults(t, &rb, &rs, 1e-10)
			if t.Failed() {
				t.Fatalf("rhs %d shift %d", it, k)
			}
			if rss < bestRSS {
				best, bestRSS = k, rss
			}
		}
		if best < 0 {
			t.Fatal("no best shift")
		}
	}
}

// TestBatchConcurrent runs clones in goroutines (run with -race) and checks
// they give the results of the original.
func TestBatchConcurrent(t *testing.T) {
	rng := rand.New(rand.NewPCG(29, 30))
	a, free := mapMatrix(300, 4, 2, 0)
	bt, err := NewBatch(a, free, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	bs := make([][]float64, 400)
	want := make([][]float64, len(bs))
	var r Result
	for i := range bs {
		bs[i] = mapRHS(rng, a, 2, 0.02)
		if err := bt.Solve(&r, bs[i]); err != nil {
			t.Fatal(err)
		}
		want[i] = append([]float64(nil), r.X...)
	}
	var wg sync.WaitGroup
	errs := make(chan string, 4)
	for g := 0; g < 4; g++ {
		c := bt.Clone()
		wg.Go(func() {
			var r Result
			for i := g; i < len(bs); i += 4 {
				if err := c.Solve(&r, bs[i]); err != nil {
					errs <- err.Error()
					return
				}
				for j := range r.X {
					if r.X[j] != want[i][j] {
						errs <- "clone result differs"
						return
					}
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
}

func TestBatchErrors(t *testing.T) {
	a, free := mapMatrix(100, 4, 2, 0)
	bad := mat.DenseCopyOf(a)
	for i := 0; i < 100; i++ {
		bad.Set(i, 3, a.At(i, 1))
	}
	_, err := NewBatch(bad, free, Settings{})
	var re *RankError
	if !errors.As(err, &re) || !equalInts(re.Columns, []int{1, 3}) {
		t.Errorf("identical columns: err = %v, want RankError on 1 and 3", err)
	}
	_, err = NewBank([]*mat.Dense{a, a, bad}, free, Settings{})
	if !errors.As(err, &re) || !strings.HasPrefix(err.Error(), "nnls: shift 2: nnls: columns 1 and 3 are collinear (condition ") {
		t.Errorf("bank: err = %v", err)
	}
	bt, err := NewBatch(a, free, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	b := make([]float64, 100)
	b[7] = math.NaN()
	var r Result
	if err := bt.Solve(&r, b); !errors.Is(err, ErrNonFinite) {
		t.Errorf("NaN in b: err = %v", err)
	}
	// b = 0 gives x = 0; so do all-negative correlations: positive
	// Gaussian peaks against a negative spectrum.
	if err := bt.Solve(&r, make([]float64, 100)); err != nil {
		t.Fatal(err)
	}
	for j, v := range r.X {
		if v != 0 {
			t.Errorf("b = 0: x[%d] = %g, want 0", j, v)
		}
	}
	peaks := mat.NewDense(100, 3, nil)
	neg := make([]float64, 100)
	for i := 0; i < 100; i++ {
		for j := 0; j < 3; j++ {
			u := (float64(i) - 40 - 5*float64(j)) / 6
			peaks.Set(i, j, math.Exp(-u*u/2))
			neg[i] -= peaks.At(i, j)
		}
	}
	pb, err := NewBatch(peaks, nil, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if err := pb.Solve(&r, neg); err != nil {
		t.Fatal(err)
	}
	if len(r.Passive) != 0 || r.X[0] != 0 || r.X[1] != 0 || r.X[2] != 0 {
		t.Errorf("negative correlations: x = %v, passive %v, want 0", r.X, r.Passive)
	}
	bt.sys.maxIter = 0 // force the limit
	bt2 := bt.Clone()
	err = bt2.Solve(&r, mapRHS(rand.New(rand.NewPCG(1, 1)), a, 2, 0.001))
	var ce *ConvergenceError
	if !errors.As(err, &ce) && len(r.Passive) != 6 {
		t.Errorf("MaxIter 0: err = %v, passive %v", err, r.Passive)
	}
}
