package lineshape

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
)

func TestSavitzkyGolayPublished(t *testing.T) {
	// Convolution weights, points ordered -m..+m, from Savitzky & Golay,
	// Anal. Chem. 36 (1964) 1627, Tables I-III as corrected by Steinier,
	// Termonia & Deltour, Anal. Chem. 44 (1972) 1906; the seven sets as
	// listed in DOMAIN.md. The tables are exact rationals, so the computed
	// weights must match to rounding: tolerance 1e-12 absolute.
	const tol = 1e-12
	for _, tc := range []struct {
		window, order, deriv int
		num                  []float64
		norm                 float64
	}{
		{5, 2, 0, []float64{-3, 12, 17, 12, -3}, 35},
		{7, 2, 0, []float64{-2, 3, 6, 7, 6, 3, -2}, 21},
		{9, 2, 0, []float64{-21, 14, 39, 54, 59, 54, 39, 14, -21}, 231},
		{5, 2, 1, []float64{-2, -1, 0, 1, 2}, 10},
		{5, 3, 1, []float64{1, -8, 0, 8, -1}, 12},
		{7, 2, 1, []float64{-3, -2, -1, 0, 1, 2, 3}, 28},
		{7, 3, 1, []float64{22, -67, -58, 0, 58, 67, -22}, 252},
		// Smoothing weights of a quadratic and a cubic are the same (the
		// odd term does not contribute at the centre): same tables.
		{5, 3, 0, []float64{-3, 12, 17, 12, -3}, 35},
		{9, 3, 0, []float64{-21, 14, 39, 54, 59, 54, 39, 14, -21}, 231},
	} {
		w, err := SavitzkyGolay(tc.window, tc.order, tc.deriv)
		if err != nil {
			t.Fatal(err)
		}
		want := make([]float64, len(tc.num))
		for i, v := range tc.num {
			want[i] = v / tc.norm
		}
		if !floats.EqualApprox(w, want, tol) {
			t.Errorf("window %d order %d deriv %d: got %v, want %v", tc.window, tc.order, tc.deriv, w, want)
		}
	}
}

func TestSavitzkyGolayErrors(t *testing.T) {
	for _, p := range [][3]int{{4, 2, 0}, {0, 0, 0}, {-3, 1, 0}, {5, 5, 0}, {5, -1, 0}, {5, 2, 3}, {5, 2, -1}} {
		if _, err := SavitzkyGolay(p[0], p[1], p[2]); err == nil {
			t.Errorf("SavitzkyGolay%v: no error", p)
		}
	}
	if _, err := SavitzkyGolayAt(5, 2, 0, 3); err == nil {
		t.Errorf("SavitzkyGolayAt offset 3 in a 5-point window: no error")
	}
	w, err := SavitzkyGolay(1, 0, 0)
	if err != nil || len(w) != 1 || w[0] != 1 {
		t.Errorf("one-point window: %v, %v; want [1]", w, err)
	}
}

func TestSavitzkyGolayFilterPolynomial(t *testing.T) {
	// A least-squares polynomial of degree order reproduces any polynomial
	// of that degree exactly, in the middle and (with the end-window
	// polynomials) at the edges, and so do its derivatives. This checks the
	// asymmetric edge weights independently of any table. Tolerance 1e-8
	// relative to the values (up to ~1e4 here; rounding in the QR solve).
	const step = 0.25
	n := 40
	poly := func(x float64) float64 { return 3 - 2*x + 0.5*x*x - 0.05*x*x*x }
	dpoly := func(x float64) float64 { return -2 + x - 0.15*x*x }
	d2poly := func(x float64) float64 { return 1 - 0.3*x }
	y := make([]float64, n)
	for i := range y {
		y[i] = poly(10 + float64(i)*step)
	}
	for _, window := range []int{5, 7, 11, 21} {
		for deriv, f := range []func(float64) float64{poly, dpoly, d2poly} {
			got := make([]float64, n)
			if err := SavitzkyGolayFilter(got, y, window, 3, deriv, step); err != nil {
				t.Fatal(err)
			}
			for i := range got {
				want := f(10 + float64(i)*step)
				if !scalar.EqualWithinAbsOrRel(got[i], want, 1e-8, 1e-8) {
					t.Errorf("window %d deriv %d channel %d: %v, want %v", window, deriv, i, got[i], want)
				}
			}
		}
	}
	// In place.
	z := append([]float64(nil), y...)
	if err := SavitzkyGolayFilter(z, z, 7, 3, 0, step); err != nil {
		t.Fatal(err)
	}
	if !floats.EqualApprox(z, y, 1e-9) {
		t.Errorf("in-place cubic smoothing of a cubic changed it")
	}
	if err := SavitzkyGolayFilter(make([]float64, 3), y[:3], 5, 2, 0, 1); err == nil {
		t.Errorf("window longer than the data: no error")
	}
}

func TestSmoothDifferentiate(t *testing.T) {
	// Gaussian sigma 2 eV at 0.1 eV steps: a 9-point quadratic smoothing
	// barely changes it (relative curvature error ~ (window*h/sigma)^2/..,
	// measured 2.5e-3 at the peak; tolerance 5e-3 absolute) and the
	// 9-point quadratic derivative is the analytic derivative to the same
	// order (tolerance 5e-3 absolute on a maximum slope of 0.30).
	y := make([]float64, 301)
	for i := range y {
		y[i] = gaussian(float64(i)*0.1, 15, 2)
	}
	s := mustUniform(t, 0, 0.1, y, Direct)
	sm, err := s.Smooth(9, 2)
	if err != nil {
		t.Fatal(err)
	}
	d, err := s.Differentiate(9, 2)
	if err != nil {
		t.Fatal(err)
	}
	if sm.Mode != Direct || d.Mode != Derivative {
		t.Errorf("modes: smooth %v, derivative %v", sm.Mode, d.Mode)
	}
	for i := range y {
		e := s.Energy(i)
		if !scalar.EqualWithinAbs(sm.Y[i], y[i], 5e-3) {
			t.Errorf("smooth channel %d: %v, want %v", i, sm.Y[i], y[i])
		}
		want := -(e - 15) / 4 * gaussian(e, 15, 2)
		if !scalar.EqualWithinAbs(d.Y[i], want, 5e-3) {
			t.Errorf("derivative channel %d: %v, want %v", i, d.Y[i], want)
		}
	}
	u := unevenSpectrum(t, 50, 1)
	if _, err := u.Smooth(5, 2); err == nil {
		t.Errorf("Smooth of an uneven axis: no error")
	}
	if _, err := u.Differentiate(5, 2); err == nil {
		t.Errorf("Differentiate of an uneven axis: no error")
	}
}

func ExampleSavitzkyGolay() {
	w, _ := SavitzkyGolay(7, 3, 1) // 7-point cubic first derivative
	for _, v := range w {
		fmt.Printf("%.0f ", math.Round(v*252)+0) // +0 turns -0 into 0
	}
	fmt.Println()
	// Output:
	// 22 -67 -58 0 58 67 -22
}

func ExampleSpectrum_Smooth() {
	s, _ := NewUniform(100, 0.5, []float64{0, 1, 0, 1, 0, 1, 0, 1, 0}, Derivative)
	sm, _ := s.Smooth(5, 2)
	fmt.Printf("%.3f\n", sm.Y)
	// Output:
	// [0.114 0.543 0.686 0.314 0.686 0.314 0.686 0.543 0.114]
}
