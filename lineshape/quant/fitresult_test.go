package quant

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestStandardFactors: each factor is StandardFactor's (same formula,
// tolerance 1e-15 relative), and a material without the element is a
// *StandardError naming the standard.
func TestStandardFactors(t *testing.T) {
	al, _ := LookupMaterial("Al")
	ox, _ := LookupMaterial("Al2O3")
	f, err := StandardFactors([]string{"Al", "Al"}, []Material{al, ox}, 1396)
	if err != nil {
		t.Fatal(err)
	}
	for i, m := range []Material{al, ox} {
		want, _, _ := StandardFactor(m, "Al", 1396, 0)
		if !scalar.EqualWithinRel(f[i], want, 1e-15) {
			t.Errorf("factor %d = %g, want %g", i, f[i], want)
		}
	}
	si, _ := LookupMaterial("SiO2")
	_, err = StandardFactors([]string{"Al", "Al"}, []Material{al, si}, 1396)
	var se *StandardError
	if !errors.As(err, &se) || se.Index != 1 {
		t.Errorf("Al in SiO2: %v, want a *StandardError for standard 1", err)
	}
}

// TestFitCoefficientsAtomic is DOMAIN.md's worked check through
// FitCoefficients (Si / SiO2, c = 0.5 / 0.5, equal L: X(Si) = 0.695,
// quoted to 3 digits, tolerance 5e-4), with the covariance SDs equal to
// AtomicFractions' (same code path, 1e-15) and bootstrap SDs equal to
// AtomicFractionSamples' when samples are given.
func TestFitCoefficientsAtomic(t *testing.T) {
	si, _ := AtomicDensity(Material{Formula: "Si", Density: 2.33}, "Si")
	ox, _ := AtomicDensity(Material{Formula: "SiO2", Density: 2.19}, "Si")
	f := []float64{Factor(si, 2.0, 0), Factor(ox, 2.0, 0)}
	cov := mat.NewSymDense(2, []float64{4e-4, -1e-4, -1e-4, 9e-4})
	fc := FitCoefficients{Values: []float64{0.5, 0.5}, Covariance: cov}
	x, sd, err := fc.AtomicFractions(f)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbs(x[0], 0.695, 5e-4) {
		t.Errorf("X = %v, want 0.695 first", x)
	}
	_, wsd, _ := AtomicFractions(fc.Values, cov, f)
	for i := range sd {
		if !scalar.EqualWithinRel(sd[i], wsd[i], 1e-15) {
			t.Errorf("sd %v, want %v", sd, wsd)
		}
	}
	rng := rand.New(rand.NewPCG(7, 1))
	for range 200 {
		fc.Samples = append(fc.Samples, []float64{0.5 + 0.02*rng.NormFloat64(), 0.5 + 0.03*rng.NormFloat64()})
	}
	_, bsd, err := fc.AtomicFractions(f)
	if err != nil {
		t.Fatal(err)
	}
	_, _, want, _, _ := AtomicFractionSamples(fc.Samples, f)
	for i := range bsd {
		if !scalar.EqualWithinRel(bsd[i], want[i], 1e-15) || scalar.EqualWithinRel(bsd[i], wsd[i], 1e-3) {
			t.Errorf("bootstrap sd %v, want %v (not the covariance's %v)", bsd, want, wsd)
		}
	}
	if _, _, err := (FitCoefficients{Values: []float64{0, 0}}).AtomicFractions(f); err == nil {
		t.Errorf("zero coefficients: no error")
	}
}

// TestFitCoefficientsPair: variances from the covariance matrix, or from
// the samples (checked against a two-pass sample covariance written out
// here, 1e-12 relative), and the bound flags carried over.
func TestFitCoefficientsPair(t *testing.T) {
	cov := mat.NewSymDense(3, []float64{1, 0.1, 0.2, 0.1, 2, 0.3, 0.2, 0.3, 3})
	fc := FitCoefficients{Values: []float64{0.1, 0.2, 0.3}, Covariance: cov, AtBound: []bool{false, false, true}}
	p := fc.Pair(2, 0)
	if p.Overlayer != 0.3 || p.Substrate != 0.1 || p.VarOverlayer != 3 || p.VarSubstrate != 1 || p.Covariance != 0.2 ||
		!p.OverlayerAtBound || p.SubstrateAtBound {
		t.Errorf("covariance pair %+v", p)
	}
	fc.Samples = [][]float64{{1, 0, 2}, {2, 0, 5}, {4, 0, 4}, {5, 0, 9}}
	p = fc.Pair(0, 2)
	// Means 3 and 5; deviations (-2,-1,1,2) and (-3,0,-1,4).
	wantVO, wantVS, wantC := 10.0/3, 26.0/3, 13.0/3
	if !scalar.EqualWithinRel(p.VarOverlayer, wantVO, 1e-12) || !scalar.EqualWithinRel(p.VarSubstrate, wantVS, 1e-12) ||
		!scalar.EqualWithinRel(p.Covariance, wantC, 1e-12) {
		t.Errorf("sample pair %+v, want %g %g %g", p, wantVO, wantVS, wantC)
	}
}

// TestStandardsOverlayer is DOMAIN.md's worked thickness check built from
// materials: Al2O3 on Al with N and L computed here, a coefficient ratio
// of 1 against pure standards gives L_ox ln(2) at normal exit (k = 1,
// same formula, 1e-12), and an oxide-only fit is an *OverlayerError.
func TestStandardsOverlayer(t *testing.T) {
	al, _ := LookupMaterial("Al")
	ox, _ := LookupMaterial("Al2O3")
	o, err := StandardsOverlayer("Al", ox, al, 1396, 0)
	if err != nil {
		t.Fatal(err)
	}
	lo, _ := TPP2M(ox, 1396)
	no, _ := AtomicDensity(ox, "Al")
	if o.SensitivityRatio != 1 || !scalar.EqualWithinRel(o.LambdaOverlayer, lo.IMFP, 1e-15) || !scalar.EqualWithinRel(o.NOverlayer, no, 1e-15) {
		t.Errorf("model %+v", o)
	}
	th, err := o.ThicknessFromCoefficients(FitCoefficients{Values: []float64{0.4, 0.4}}.Pair(0, 1))
	if err != nil {
		t.Fatal(err)
	}
	if want := lo.IMFP * math.Ln2; !scalar.EqualWithinRel(th.Thickness, want, 1e-12) {
		t.Errorf("thickness %g, want %g", th.Thickness, want)
	}
	_, err = o.ThicknessFromCoefficients(FitCoefficients{Values: []float64{0.4, 0}, AtBound: []bool{false, true}}.Pair(0, 1))
	var oe *OverlayerError
	if !errors.As(err, &oe) {
		t.Errorf("oxide only: %v, want *OverlayerError", err)
	}
	if _, err := StandardsOverlayer("Si", ox, al, 1396, 0); err == nil {
		t.Errorf("Si in Al2O3: no error")
	}
}
