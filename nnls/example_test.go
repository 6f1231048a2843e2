package nnls_test

import (
	"fmt"
	"log"
	"math"

	"gonum.org/v1/gonum/mat"

	"statemix/nnls"
)

// references builds an invented design for the examples: two
// derivative-of-Gaussian references 2.5 eV apart on 200 channels of 0.5 eV
// and a free constant background.
func references() *mat.Dense {
	const m = 200
	a := mat.NewDense(m, 3, nil)
	for i := 0; i < m; i++ {
		e := 0.5 * float64(i)
		u1 := (e - 47.5) / 2
		u2 := (e - 50) / 2.5
		a.Set(i, 0, -u1*math.Exp(-u1*u1/2))
		a.Set(i, 1, -u2*math.Exp(-u2*u2/2))
		a.Set(i, 2, 1)
	}
	return a
}

func ExampleSolver() {
	a := references()
	m, _ := a.Dims()
	b := make([]float64, m)
	for i := range b {
		b[i] = 0.3*a.At(i, 0) + 0.7*a.At(i, 1) + 0.02
	}
	var s nnls.Solver
	var r nnls.Result
	if err := s.Solve(&r, a, b, []bool{false, false, true}); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("x = %.4f %.4f %.4f, passive %v\n", r.X[0], r.X[1], r.X[2], r.Passive)
	fmt.Printf("fraction of the first state %.3f\n", r.X[0]/(r.X[0]+r.X[1]))
	// Output:
	// x = 0.3000 0.7000 0.0200, passive [0 1 2]
	// fraction of the first state 0.300
}

func ExampleBatch() {
	a := references()
	m, _ := a.Dims()
	bt, err := nnls.NewBatch(a, []bool{false, false, true}, nnls.Settings{})
	if err != nil {
		log.Fatal(err)
	}
	// Three pixels: mostly the first state, a 30/70 mixture, and a pixel
	// whose second component would have to be negative. The second
	// reference is then at its bound: not passive, coefficient 0.
	pixels := [][3]float64{{1, -0.1, 0.1}, {0.3, 0.7, -0.05}, {0.5, -0.4, 0.02}}
	b := make([]float64, m)
	var r nnls.Result
	for _, c := range pixels {
		for i := range b {
			b[i] = c[0]*a.At(i, 0) + c[1]*a.At(i, 1) + c[2]
		}
		if err := bt.Solve(&r, b); err != nil {
			log.Fatal(err)
		}
		fmt.Printf("x = %.3f %.3f %.3f, passive %v, residual %.3f\n",
			r.X[0], r.X[1], r.X[2], r.Passive, r.ResidualNorm)
	}
	// Output:
	// x = 0.969 0.000 0.100, passive [0 2], residual 0.202
	// x = 0.300 0.700 -0.050, passive [0 1 2], residual 0.000
	// x = 0.376 0.000 0.020, passive [0 2], residual 0.809
}

// shifted is the design of references with both references moved by
// shift eV.
func shifted(shift float64) *mat.Dense {
	const m = 200
	a := mat.NewDense(m, 3, nil)
	for i := 0; i < m; i++ {
		e := 0.5*float64(i) - shift
		u1 := (e - 47.5) / 2
		u2 := (e - 50) / 2.5
		a.Set(i, 0, -u1*math.Exp(-u1*u1/2))
		a.Set(i, 1, -u2*math.Exp(-u2*u2/2))
		a.Set(i, 2, 1)
	}
	return a
}

func ExampleBank() {
	// One design per energy shift from -1 to +1 eV in steps of 0.25 eV.
	var shifts []float64
	var as []*mat.Dense
	for k := -4; k <= 4; k++ {
		shifts = append(shifts, 0.25*float64(k))
		as = append(as, shifted(0.25*float64(k)))
	}
	bank, err := nnls.NewBank(as, []bool{false, false, true}, nnls.Settings{})
	if err != nil {
		log.Fatal(err)
	}
	// A pixel charged by +0.5 eV: 40/60 mixture with a background.
	truth := shifted(0.5)
	m, n := truth.Dims()
	b := make([]float64, m)
	for i := range b {
		b[i] = 0.4*truth.At(i, 0) + 0.6*truth.At(i, 1) + 0.01
	}
	// Scan the shifts by their residual sum of squares. A worker
	// goroutine would use its own bank.Clone().
	atb := make([]float64, n)
	var r nnls.Result
	best, bestRSS := -1, math.Inf(1)
	for k := 0; k < bank.Len(); k++ {
		btb := bank.Project(atb, k, b)
		if err := bank.SolveNormal(&r, k, atb, btb); err != nil {
			log.Fatal(err)
		}
		if rss := r.ResidualNorm * r.ResidualNorm; rss < bestRSS {
			best, bestRSS = k, rss
		}
	}
	if err := bank.Solve(&r, best, b); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("shift %+.2f eV, x = %.3f %.3f %.3f\n", shifts[best], r.X[0], r.X[1], r.X[2])
	// Output:
	// shift +0.50 eV, x = 0.400 0.600 0.010
}
