package quant

import (
	"errors"
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// FitCoefficients are the coefficients of a fit against pure standards,
// one per reference, with what is known of their uncertainty. The package
// takes them as plain numbers so that it need not know the fit's types.
type FitCoefficients struct {
	// Values are the fitted coefficients, each the fraction of the
	// pure-standard signal of a reference.
	Values []float64
	// Covariance is the covariance of Values, nil if not known.
	Covariance mat.Symmetric
	// Samples are bootstrap replicates of Values, [sample][reference].
	// With two or more, standard deviations come from them instead of
	// from Covariance; nil or one sample means none.
	Samples [][]float64
	// AtBound marks coefficients pinned at zero by nonnegativity; nil
	// means none is.
	AtBound []bool
}

// hasSamples reports whether the standard deviations come from Samples.
func (c FitCoefficients) hasSamples() bool { return len(c.Samples) > 1 }

// StandardError says which standard a matrix factor could not be found
// for, and why.
type StandardError struct {
	Index int // position of the standard among the references
	Err   error
}

func (e *StandardError) Error() string { return fmt.Sprintf("standard %d: %v", e.Index, e.Err) }

func (e *StandardError) Unwrap() error { return e.Err }

// StandardFactors returns the factor N L of StandardFactor for each
// standard i (element elements[i] in material materials[i]) at the
// transition's kinetic energy energyEV, with backscattering taken equal
// for all standards (r = 0). A factor that cannot be found is a
// *StandardError naming the standard. StandardFactors panics if the
// lengths of elements and materials differ.
func StandardFactors(elements []string, materials []Material, energyEV float64) ([]float64, error) {
	if len(elements) != len(materials) {
		panic(fmt.Sprintf("quant: StandardFactors: %d elements, %d materials", len(elements), len(materials)))
	}
	out := make([]float64, len(elements))
	for i, el := range elements {
		f, _, err := StandardFactor(materials[i], el, energyEV, 0)
		if err != nil {
			return nil, &StandardError{Index: i, Err: err}
		}
		out[i] = f
	}
	return out, nil
}

// AtomicFractions converts the coefficients to atomic fractions with the
// matrix factors of StandardFactors (see the package function
// AtomicFractions for the formula and its assumptions). The standard
// deviations come from the bootstrap samples when there are two or more
// (AtomicFractionSamples; samples with no positive total are left out)
// and they can be converted, else from Covariance by first-order
// propagation, else sd is nil.
//
// AtomicFractions panics if the lengths of Values, factors, Covariance or a
// sample differ.
func (c FitCoefficients) AtomicFractions(factors []float64) (x, sd []float64, err error) {
	x, sd, err = AtomicFractions(c.Values, c.Covariance, factors)
	if err != nil {
		return nil, nil, err
	}
	if c.hasSamples() {
		if _, _, bsd, _, err := AtomicFractionSamples(c.Samples, factors); err == nil {
			sd = bsd
		}
	}
	return x, sd, nil
}

// Pair returns the coefficients ox and sub (an overlayer state and its
// substrate) with their variances and covariance, for
// Overlayer.ThicknessFromCoefficients: from the bootstrap samples when
// there are two or more, else from Covariance, else zero (unknown). Pair
// panics if ox or sub is out of range.
func (c FitCoefficients) Pair(ox, sub int) Coefficients {
	n := len(c.Values)
	if ox < 0 || ox >= n || sub < 0 || sub >= n {
		panic(fmt.Sprintf("quant: Pair(%d, %d) of %d coefficients", ox, sub, n))
	}
	p := Coefficients{Overlayer: c.Values[ox], Substrate: c.Values[sub]}
	if c.AtBound != nil {
		p.OverlayerAtBound, p.SubstrateAtBound = c.AtBound[ox], c.AtBound[sub]
	}
	switch {
	case c.hasSamples():
		p.VarOverlayer, p.VarSubstrate, p.Covariance = sampleCov(c.Samples, ox, sub)
	case c.Covariance != nil:
		p.VarOverlayer, p.VarSubstrate, p.Covariance = c.Covariance.At(ox, ox), c.Covariance.At(sub, sub), c.Covariance.At(ox, sub)
	}
	return p
}

// sampleCov returns the sample variances of columns a and b of rows and
// their covariance (n - 1 in the denominator).
func sampleCov(rows [][]float64, a, b int) (va, vb, cab float64) {
	n := float64(len(rows))
	var ma, mb float64
	for _, r := range rows {
		ma += r[a]
		mb += r[b]
	}
	ma /= n
	mb /= n
	for _, r := range rows {
		va += (r[a] - ma) * (r[a] - ma)
		vb += (r[b] - mb) * (r[b] - mb)
		cab += (r[a] - ma) * (r[b] - mb)
	}
	return va / (n - 1), vb / (n - 1), cab / (n - 1)
}

// StandardsOverlayer returns the Overlayer model for coefficients fitted
// against pure standards of the overlayer and substrate materials: atomic
// densities of element by AtomicDensity, IMFPs by TPP2M at the transition's
// kinetic energy energyEV, the take-off angle takeOffDeg (0 for 90), and
// SensitivityRatio 1 because the standards' signals already carry N L. It
// returns an error if a density or an IMFP cannot be found.
func StandardsOverlayer(element string, overlayer, substrate Material, energyEV, takeOffDeg float64) (Overlayer, error) {
	no, err1 := AtomicDensity(overlayer, element)
	ns, err2 := AtomicDensity(substrate, element)
	lo, err3 := TPP2M(overlayer, energyEV)
	ls, err4 := TPP2M(substrate, energyEV)
	if err := errors.Join(err1, err2, err3, err4); err != nil {
		return Overlayer{}, err
	}
	return Overlayer{NOverlayer: no, NSubstrate: ns, LambdaOverlayer: lo.IMFP, LambdaSubstrate: ls.IMFP,
		TakeOffDeg: takeOffDeg, SensitivityRatio: 1}, nil
}
