package nnls

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

type goldenFile struct {
	Source   string `json:"source"`
	Problems []struct {
		Kind    string    `json:"kind"`
		M       int       `json:"m"`
		N       int       `json:"n"`
		A       []float64 `json:"a"`
		B       []float64 `json:"b"`
		X       []float64 `json:"x"`
		RNorm   float64   `json:"rnorm"`
		Passive []int     `json:"passive"`
	} `json:"problems"`
}

// TestSciPyGolden compares with SciPy 1.10.1 scipy.optimize.nnls (the
// Lawson-Hanson Fortran code, Debian python3-scipy), solutions written by
// testdata/gen_scipy.py. x must agree to 1e-8 relative (absolute 1e-8
// times max|x| for small entries) and the passive set exactly; the
// problems have scaled condition numbers below 1e5 and a margin of 1e-6
// on every coefficient and dual, so both codes see the same active set.
func TestSciPyGolden(t *testing.T) {
	data, err := os.ReadFile("testdata/scipy_nnls.json")
	if err != nil {
		t.Fatal(err)
	}
	var g goldenFile
	if err := json.Unmarshal(data, &g); err != nil {
		t.Fatal(err)
	}
	if len(g.Problems) < 100 {
		t.Fatalf("only %d golden problems", len(g.Problems))
	}
	var s Solver
	var r Result
	for k, p := range g.Problems {
		a := mat.NewDense(p.M, p.N, p.A)
		if err := s.Solve(&r, a, p.B, nil); err != nil {
			t.Errorf("problem %d (%s %dx%d): %v", k, p.Kind, p.M, p.N, err)
			continue
		}
		var xmax float64
		for _, v := range p.X {
			xmax = max(xmax, math.Abs(v))
		}
		for j := range p.X {
			if !scalar.EqualWithinAbsOrRel(r.X[j], p.X[j], 1e-8*xmax, 1e-8) {
				t.Errorf("problem %d (%s %dx%d): x[%d] = %.17g, SciPy %.17g", k, p.Kind, p.M, p.N, j, r.X[j], p.X[j])
			}
		}
		if !equalInts(r.Passive, p.Passive) {
			t.Errorf("problem %d (%s %dx%d): passive %v, SciPy %v", k, p.Kind, p.M, p.N, r.Passive, p.Passive)
		}
		if !scalar.EqualWithinAbsOrRel(r.ResidualNorm, p.RNorm, 1e-10, 1e-10) {
			t.Errorf("problem %d: residual %.17g, SciPy %.17g", k, r.ResidualNorm, p.RNorm)
		}
	}
}
