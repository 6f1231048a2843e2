package quant

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Factor returns the matrix factor N L (1 + r) of one standard: n the
// atomic density of the element in the standard (atoms/cm3, AtomicDensity),
// lambda its IMFP at the transition energy (nm, TPP2M) and r its
// backscattering factor (0 if taken equal for all standards).
func Factor(n, lambda, r float64) float64 { return n * lambda * (1 + r) }

// AtomicFractions converts fitted coefficients c (each the fraction of the
// pure-standard signal of a reference) into atomic fractions of the element
// in each chemical state:
//
//	X_j = c_j F_j / sum_k c_k F_k,  F_j = N_j L_j (1 + r_j)  (Factor)
//
// The conversion assumes a sample homogeneous within the analysed depth,
// references and unknown recorded under the same conditions (beam energy,
// analyser settings, modulation), and backscattering equal for all
// standards unless the factors include it.
//
// If cov is not nil it is the covariance of c, and sd holds the standard
// deviations of X propagated to first order (delta method):
// dX_j/dc_k = F_k (delta_jk - X_j) / S with S = sum_k c_k F_k. A
// coefficient pinned at zero by nonnegativity has no symmetric error; the
// caller should report a one-sided limit for it instead (bootstrap samples
// through AtomicFractionSamples do that naturally). If cov is nil, sd is
// nil.
//
// AtomicFractions panics if the lengths of c, factors and cov differ. It
// returns an error if a factor is not positive and finite or if the
// weighted coefficients do not sum to a positive number.
func AtomicFractions(c []float64, cov mat.Symmetric, factors []float64) (x, sd []float64, err error) {
	n := len(c)
	if len(factors) != n {
		panic(fmt.Sprintf("quant: AtomicFractions: %d coefficients, %d factors", n, len(factors)))
	}
	if cov != nil && cov.SymmetricDim() != n {
		panic(fmt.Sprintf("quant: AtomicFractions: %d coefficients, covariance %dx%d", n, cov.SymmetricDim(), cov.SymmetricDim()))
	}
	if err := checkFactors(factors); err != nil {
		return nil, nil, err
	}
	x = make([]float64, n)
	s, err := fractionsTo(x, c, factors)
	if err != nil {
		return nil, nil, err
	}
	if cov == nil {
		return x, nil, nil
	}
	// Jacobian J[j][k] = F_k (delta_jk - X_j) / S.
	j := mat.NewDense(n, n, nil)
	for r := 0; r < n; r++ {
		for k := 0; k < n; k++ {
			d := 0.0
			if r == k {
				d = 1
			}
			j.Set(r, k, factors[k]*(d-x[r])/s)
		}
	}
	var jc mat.Dense
	jc.Mul(j, cov)
	sd = make([]float64, n)
	for r := 0; r < n; r++ {
		v := mat.Dot(jc.RowView(r), j.RowView(r))
		if v < 0 {
			v = 0 // rounding
		}
		sd[r] = math.Sqrt(v)
	}
	return x, sd, nil
}

// checkFactors returns an error unless every factor is positive and finite.
func checkFactors(factors []float64) error {
	for i, f := range factors {
		if !(f > 0) || math.IsInf(f, 0) {
			return fmt.Errorf("atomic fractions: factor %d is %g; N L (1+r) must be positive and finite", i, f)
		}
	}
	return nil
}

// fractionsTo writes the atomic fractions of c into dst and returns the
// weighted sum S.
func fractionsTo(dst, c, factors []float64) (float64, error) {
	var s float64
	for i := range c {
		dst[i] = c[i] * factors[i]
		s += dst[i]
	}
	if !(s > 0) || math.IsInf(s, 0) {
		return s, fmt.Errorf("atomic fractions: weighted coefficients sum to %g; need a positive total signal", s)
	}
	for i := range dst {
		dst[i] /= s
	}
	return s, nil
}

// AtomicFractionSamples applies the conversion of AtomicFractions to each
// resampled coefficient vector (bootstrap or Monte Carlo) and returns the
// transformed samples xs, their means and their standard deviations.
// Percentile intervals or one-sided limits are then taken from xs by the
// caller. A sample whose weighted coefficients do not sum to a positive
// number (every coefficient zero) has no fractions: its row of xs is NaN
// and it is left out of mean and sd; skipped counts them. It returns an
// error if no sample can be converted or a factor is not positive.
func AtomicFractionSamples(samples [][]float64, factors []float64) (xs [][]float64, mean, sd []float64, skipped int, err error) {
	if err := checkFactors(factors); err != nil {
		return nil, nil, nil, 0, err
	}
	n := len(factors)
	xs = make([][]float64, len(samples))
	mean = make([]float64, n)
	m2 := make([]float64, n)
	used := 0
	for i, c := range samples {
		if len(c) != n {
			panic(fmt.Sprintf("quant: AtomicFractionSamples: sample %d has %d coefficients, %d factors", i, len(c), n))
		}
		x := make([]float64, n)
		xs[i] = x
		if _, err := fractionsTo(x, c, factors); err != nil {
			for k := range x {
				x[k] = math.NaN()
			}
			skipped++
			continue
		}
		used++
		for k, v := range x { // Welford's running mean and variance.
			d := v - mean[k]
			mean[k] += d / float64(used)
			m2[k] += d * (v - mean[k])
		}
	}
	if used == 0 {
		return xs, nil, nil, skipped, fmt.Errorf("atomic fractions: none of %d samples has a positive total signal", len(samples))
	}
	sd = make([]float64, n)
	if used > 1 {
		for k := range sd {
			sd[k] = math.Sqrt(m2[k] / float64(used-1))
		}
	}
	return xs, mean, sd, skipped, nil
}

// StandardFactor returns the factor F = N L (1 + r) of AtomicFractions for
// element in the standard material m at the transition's kinetic energy
// energyEV: N by AtomicDensity, L by TPP2M (whose result, with any
// warnings, is returned too), r the backscattering factor (0 to take it
// equal for all standards).
func StandardFactor(m Material, element string, energyEV, backscatter float64) (float64, IMFPResult, error) {
	n, err := AtomicDensity(m, element)
	if err != nil {
		return 0, IMFPResult{}, err
	}
	l, err := TPP2M(m, energyEV)
	if err != nil {
		return 0, l, err
	}
	if !(backscatter > -1) || math.IsInf(backscatter, 0) {
		return 0, l, fmt.Errorf("standard factor: backscattering factor %g must exceed -1", backscatter)
	}
	return Factor(n, l.IMFP, backscatter), l, nil
}
