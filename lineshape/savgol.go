package lineshape

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// SavitzkyGolay returns the convolution weights, ordered -m..+m for a window
// of 2m+1 points, of the least-squares polynomial of degree order evaluated
// for derivative deriv at the window centre, for unit step (divide by
// step^deriv). Savitzky & Golay, Anal. Chem. 36 (1964) 1627, as corrected
// by Steinier, Termonia & Deltour, Anal. Chem. 44 (1972) 1906.
//
// The weights are computed, not tabulated: the window's Vandermonde matrix
// (abscissae scaled to [-1, 1] for conditioning) is solved in the least
// squares sense by QR (gonum mat), and the requested derivative of the
// fitted polynomial at the centre is read off as a linear combination of the
// samples. It is an error unless window is odd and positive, 0 <= order <
// window and 0 <= deriv <= order.
func SavitzkyGolay(window, order, deriv int) ([]float64, error) {
	if err := checkSG(window, order, deriv); err != nil {
		return nil, err
	}
	return sgWeights(window, order, deriv, 0), nil
}

// SavitzkyGolayAt returns the weights, ordered -m..+m, of the same
// least-squares polynomial evaluated for derivative deriv at offset pos
// (-m <= pos <= m channels) from the window centre instead of at the centre.
// These asymmetric weights are what Smooth, Differentiate and
// SavitzkyGolayFilter use for the first and last m channels. The parameters
// are checked as in SavitzkyGolay; pos outside the window is an error.
func SavitzkyGolayAt(window, order, deriv, pos int) ([]float64, error) {
	if err := checkSG(window, order, deriv); err != nil {
		return nil, err
	}
	if m := window / 2; pos < -m || pos > m {
		return nil, fmt.Errorf("savitzky-golay: offset %d outside the %d-point window", pos, window)
	}
	return sgWeights(window, order, deriv, pos), nil
}

func checkSG(window, order, deriv int) error {
	switch {
	case window < 1 || window%2 == 0:
		return fmt.Errorf("savitzky-golay: window %d: need an odd number of points >= 1", window)
	case order < 0 || order >= window:
		return fmt.Errorf("savitzky-golay: polynomial order %d with a %d-point window: need 0 <= order < window", order, window)
	case deriv < 0 || deriv > order:
		return fmt.Errorf("savitzky-golay: derivative %d of a polynomial of order %d: need 0 <= derivative <= order", deriv, order)
	}
	return nil
}

// sgWeights returns the weights for derivative deriv at offset pos of the
// least-squares polynomial of the given order over a window of points
// -m..m, for unit step. Parameters must already be checked.
func sgWeights(window, order, deriv, pos int) []float64 {
	w := make([]float64, window)
	sgEval(w, sgPinv(window, order), window, order, deriv, pos)
	return w
}

// sgPinv returns the pseudo-inverse of the window's Vandermonde matrix
// A[j][p] = z_j^p, z_j = (j-m)/m in [-1, 1]: row p holds the weights that
// give the fitted coefficient of z^p. For a one-point window it is nil.
func sgPinv(window, order int) *mat.Dense {
	m := window / 2
	if m == 0 {
		return nil
	}
	np := order + 1
	a := mat.NewDense(window, np, nil)
	for j := 0; j < window; j++ {
		z := float64(j-m) / float64(m)
		v := 1.0
		for p := 0; p < np; p++ {
			a.Set(j, p, v)
			v *= z
		}
	}
	var pinv mat.Dense
	if err := pinv.Solve(a, eye(window)); err != nil {
		// A has full column rank for order < window (distinct abscissae), so
		// this cannot happen short of a bug.
		panic("lineshape: savitzky-golay: " + err.Error())
	}
	return &pinv
}

// sgEval sets w to the weights of d^deriv/dx^deriv of the fitted polynomial
// at offset pos (channels) from the centre, for unit step, from the
// pseudo-inverse pinv of sgPinv.
func sgEval(w []float64, pinv *mat.Dense, window, order, deriv, pos int) {
	m := window / 2
	for j := range w {
		w[j] = 0
	}
	if m == 0 { // one point, order 0, deriv 0
		w[0] = 1
		return
	}
	// d^deriv/dx^deriv of sum a_p z^p at z0, with dz/dx = 1/m.
	z0 := float64(pos) / float64(m)
	scale := math.Pow(float64(m), -float64(deriv))
	for p := deriv; p <= order; p++ {
		f := 1.0
		for q := p - deriv + 1; q <= p; q++ {
			f *= float64(q)
		}
		f *= math.Pow(z0, float64(p-deriv)) * scale
		if f == 0 {
			continue
		}
		for j := 0; j < window; j++ {
			w[j] += f * pinv.At(p, j)
		}
	}
}

func eye(n int) *mat.Dense {
	d := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		d.Set(i, i, 1)
	}
	return d
}

// SavitzkyGolayFilter fills dst with the Savitzky-Golay filtered y: the
// derivative deriv (0 for smoothing) of the least-squares polynomial of the
// given order over a window of points centred on each channel, divided by
// step^deriv. Edge handling: the first and last m = window/2 channels take
// the polynomial fitted to the first (last) full window, evaluated at their
// own position (asymmetric weights, see SavitzkyGolayAt), so no data are
// invented beyond the ends and the result has the input's length.
//
// It panics if len(dst) != len(y) and returns an error if the parameters
// are invalid (see SavitzkyGolay) or the window is longer than y. dst may be
// y itself.
func SavitzkyGolayFilter(dst, y []float64, window, order, deriv int, step float64) error {
	if len(dst) != len(y) {
		panic(fmt.Sprintf("lineshape: SavitzkyGolayFilter: len(dst) = %d, len(y) = %d", len(dst), len(y)))
	}
	if err := checkSG(window, order, deriv); err != nil {
		return err
	}
	if window > len(y) {
		return fmt.Errorf("savitzky-golay: %d-point window longer than the %d channels", window, len(y))
	}
	if !(step > 0) || math.IsInf(step, 0) {
		return fmt.Errorf("savitzky-golay: step %g: need a positive step", step)
	}
	n, m := len(y), window/2
	inv := math.Pow(step, -float64(deriv))
	pinv := sgPinv(window, order)
	centre := make([]float64, window)
	sgEval(centre, pinv, window, order, deriv, 0)
	for j := range centre {
		centre[j] *= inv
	}
	out := dst
	if &dst[0] == &y[0] {
		out = make([]float64, n)
	}
	for i := m; i < n-m; i++ {
		var sum float64
		win := y[i-m : i+m+1]
		for j, wj := range centre {
			sum += wj * win[j]
		}
		out[i] = sum
	}
	lw, hw := make([]float64, window), make([]float64, window)
	for k := 0; k < m; k++ {
		// Low end: channel k sits at offset k-m in the first window; high
		// end: channel n-m+k sits at offset k+1 in the last window.
		sgEval(lw, pinv, window, order, deriv, k-m)
		sgEval(hw, pinv, window, order, deriv, k+1)
		var ls, hs float64
		for j := 0; j < window; j++ {
			ls += lw[j] * y[j]
			hs += hw[j] * y[n-window+j]
		}
		out[k] = ls * inv
		out[n-m+k] = hs * inv
	}
	if &out[0] != &dst[0] {
		copy(dst, out)
	}
	return nil
}

// uniformOnly returns an error naming op when s's axis is not uniform.
func (s *Spectrum) uniformOnly(op string) error {
	if !s.Axis.Uniform() {
		return fmt.Errorf("%s needs a uniform energy axis: resample the spectrum (%d channels, %.6g-%.6g eV) first",
			op, s.Len(), s.Axis.Lo(), s.Axis.Hi())
	}
	return nil
}

// Smooth returns s smoothed by a Savitzky-Golay filter. s must be uniform.
//
// The filter is SavitzkyGolayFilter with deriv 0: a window of window points
// and a polynomial of degree order (a 9-point quadratic is a common choice
// for Auger derivative data at 0.25-0.5 eV steps). The first and last
// window/2 channels take the polynomial of the first and last full window.
// Mode and metadata are kept.
func (s *Spectrum) Smooth(window, order int) (*Spectrum, error) {
	if err := s.uniformOnly("smoothing"); err != nil {
		return nil, err
	}
	y := make([]float64, s.Len())
	if err := SavitzkyGolayFilter(y, s.Y, window, order, 0, s.Axis.Step); err != nil {
		return nil, err
	}
	return s.withValues(s.Axis, y), nil
}

// Differentiate returns the Savitzky-Golay first derivative of a direct
// spectrum (mode Derivative, units of value per eV). s must be uniform.
//
// Edge handling is that of Smooth: the first and last window/2 channels
// take the derivative of the polynomial fitted to the first and last full
// window. The receiver's mode is not checked, so the derivative of a
// derivative spectrum (d2N/dE2, for example as the linearised-shift column
// of a fit) can be had too; the result is always labelled Derivative.
func (s *Spectrum) Differentiate(window, order int) (*Spectrum, error) {
	if err := s.uniformOnly("differentiation"); err != nil {
		return nil, err
	}
	y := make([]float64, s.Len())
	if err := SavitzkyGolayFilter(y, s.Y, window, order, 1, s.Axis.Step); err != nil {
		return nil, err
	}
	d := s.withValues(s.Axis, y)
	d.Mode = Derivative
	return d, nil
}
