package nnls

import (
	"errors"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// FuzzSolve builds small problems from bytes (entries are small integers,
// so exact ties and dependent columns are common) and checks that Solve
// either returns a typed error or a solution that satisfies the KKT
// conditions (tolerance 1e-8 relative: integer data can be ill-conditioned
// up to the MaxCond limit), and that Batch agrees with Solve to 1e-6
// whenever the condition number is modest enough for Gram-space accuracy.
func FuzzSolve(f *testing.F) {
	f.Add([]byte{3, 2, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9})
	f.Add([]byte{4, 3, 1, 250, 3, 7, 7, 2, 9, 9, 1, 0, 0, 3, 3, 5, 5, 200, 1, 100})
	f.Add([]byte{2, 2, 0, 1, 1, 1, 1, 5, 5})    // identical columns
	f.Add([]byte{5, 2, 2, 0, 0, 0, 0, 0, 1, 2}) // zero column, free
	f.Add([]byte{1, 1, 0, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 3 {
			return
		}
		m := 1 + int(data[0])%12
		n := 1 + int(data[1])%6
		fm := data[2]
		data = data[3:]
		if len(data) < m*n+m {
			return
		}
		val := func(b byte) float64 { return float64(int8(b)) / 16 }
		a := mat.NewDense(m, n, nil)
		for i := 0; i < m; i++ {
			for j := 0; j < n; j++ {
				a.Set(i, j, val(data[i*n+j]))
			}
		}
		b := make([]float64, m)
		for i := range b {
			b[i] = val(data[m*n+i])
		}
		free := make([]bool, n)
		for j := range free {
			free[j] = fm&(1<<j) != 0
		}
		var s Solver
		var r Result
		err := s.Solve(&r, a, b, free)
		var re *RankError
		var ce *ConvergenceError
		switch {
		case errors.As(err, &re):
			if len(re.Columns) == 0 {
				t.Fatalf("RankError without columns: %v", err)
			}
			return
		case errors.As(err, &ce):
			return
		case err != nil:
			t.Fatalf("unexpected error %v", err)
		}
		checkKKT(t, problem{a: a, b: b, free: free}, &r, 1e-8)
		want := append([]float64(nil), r.X...)
		bt, err := NewBatch(a, free, Settings{MaxCond: 1e3})
		if err != nil {
			return
		}
		if err := bt.Solve(&r, b); err != nil {
			return
		}
		var xmax float64
		for _, v := range want {
			xmax = max(xmax, v, -v)
		}
		for j := range want {
			if d := r.X[j] - want[j]; d > 1e-6*(xmax+1) || d < -1e-6*(xmax+1) {
				t.Fatalf("Batch x[%d] = %v, Solver %v", j, r.X[j], want[j])
			}
		}
	})
}
