package quant

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestAtomicDensity checks DOMAIN.md's values (Si 2.33 g/cm3 -> 4.996e22,
// SiO2 2.19 g/cm3 -> 2.195e22 Si/cm3; Al 2.70 -> 6.026e22, the worked
// thickness check's substrate), quoted to 4 digits: tolerance 1e-4 relative.
func TestAtomicDensity(t *testing.T) {
	for _, c := range []struct {
		m    Material
		el   string
		want float64
	}{
		{Material{Formula: "Si", Density: 2.33}, "Si", 4.996e22},
		{Material{Formula: "SiO2", Density: 2.19}, "Si", 2.195e22},
		{Material{Formula: "SiO2", Density: 2.19}, "O", 2 * 2.195e22},
		{Material{Formula: "Al", Density: 2.70}, "Al", 6.026e22},
	} {
		n, err := AtomicDensity(c.m, c.el)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinRel(n, c.want, 1e-4) {
			t.Errorf("AtomicDensity(%s, %s) = %.4e, want %.4e", c.m.Formula, c.el, n, c.want)
		}
	}
	if _, err := AtomicDensity(Material{Formula: "SiO2", Density: 2.19}, "Al"); err == nil || !strings.Contains(err.Error(), "no Al") {
		t.Errorf("Al in SiO2: %v", err)
	}
}

// TestAtomicFractionsWorked is DOMAIN.md's worked check: Si and SiO2,
// c = 0.5 / 0.5, equal L and r, X(Si metal) = 0.695 (quoted to 3 digits:
// tolerance 5e-4).
func TestAtomicFractionsWorked(t *testing.T) {
	si, _ := AtomicDensity(Material{Formula: "Si", Density: 2.33}, "Si")
	ox, _ := AtomicDensity(Material{Formula: "SiO2", Density: 2.19}, "Si")
	f := []float64{Factor(si, 2.0, 0), Factor(ox, 2.0, 0)}
	x, sd, err := AtomicFractions([]float64{0.5, 0.5}, nil, f)
	if err != nil {
		t.Fatal(err)
	}
	if sd != nil {
		t.Errorf("sd = %v without covariance, want nil", sd)
	}
	if !scalar.EqualWithinAbs(x[0], 0.695, 5e-4) || !scalar.EqualWithinAbs(x[0]+x[1], 1, 1e-12) {
		t.Errorf("X = %v, want [0.695 0.305]", x)
	}
}

// TestAtomicFractionsDelta checks the analytic delta-method propagation
// against a central finite-difference Jacobian (tolerance 1e-6 relative:
// the transform is smooth and the step is 1e-6 of the coefficients).
func TestAtomicFractionsDelta(t *testing.T) {
	c := []float64{0.42, 0.31, 0.2}
	f := []float64{5e22 * 2.4, 2.2e22 * 3.0, 3.1e22 * 2.7}
	cov := mat.NewSymDense(3, []float64{
		0.0004, 0.0001, -0.00005,
		0.0001, 0.0009, 0.0002,
		-0.00005, 0.0002, 0.0016,
	})
	x, sd, err := AtomicFractions(c, cov, f)
	if err != nil {
		t.Fatal(err)
	}
	jac := mat.NewDense(3, 3, nil)
	for k := range c {
		h := 1e-6 * c[k]
		up := append([]float64(nil), c...)
		dn := append([]float64(nil), c...)
		up[k] += h
		dn[k] -= h
		xu, _, _ := AtomicFractions(up, nil, f)
		xd, _, _ := AtomicFractions(dn, nil, f)
		for j := range c {
			jac.Set(j, k, (xu[j]-xd[j])/(2*h))
		}
	}
	var jc, v mat.Dense
	jc.Mul(jac, cov)
	v.Mul(&jc, jac.T())
	for j := range c {
		if want := math.Sqrt(v.At(j, j)); !scalar.EqualWithinRel(sd[j], want, 1e-6) {
			t.Errorf("sd[%d] = %g, finite differences %g", j, sd[j], want)
		}
	}
	if s := x[0] + x[1] + x[2]; !scalar.EqualWithinAbs(s, 1, 1e-12) {
		t.Errorf("fractions sum to %g", s)
	}
}

// TestAtomicFractionSamples checks that transforming Gaussian samples of
// the coefficients gives the delta-method standard deviations when the
// noise is small (2 % of the coefficients). 20000 samples, fixed seed:
// the relative standard error of a standard deviation is 1/sqrt(2n) = 0.5 %,
// tolerance 3 % leaves room for the second-order terms.
func TestAtomicFractionSamples(t *testing.T) {
	c := []float64{0.6, 0.4}
	f := []float64{1.2e23, 0.7e23}
	sig := []float64{0.012, 0.008}
	cov := mat.NewSymDense(2, []float64{sig[0] * sig[0], 0, 0, sig[1] * sig[1]})
	x, sd, err := AtomicFractions(c, cov, f)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	samples := make([][]float64, 20000)
	for i := range samples {
		samples[i] = []float64{c[0] + sig[0]*rng.NormFloat64(), c[1] + sig[1]*rng.NormFloat64()}
	}
	samples = append(samples, []float64{0, 0}) // no signal: skipped
	xs, mean, ssd, skipped, err := AtomicFractionSamples(samples, f)
	if err != nil {
		t.Fatal(err)
	}
	if skipped != 1 || !math.IsNaN(xs[len(xs)-1][0]) {
		t.Errorf("skipped %d, last row %v; want 1 and NaN", skipped, xs[len(xs)-1])
	}
	for j := range c {
		if !scalar.EqualWithinAbs(mean[j], x[j], 1e-3) || !scalar.EqualWithinRel(ssd[j], sd[j], 0.03) {
			t.Errorf("component %d: samples mean %g sd %g, delta method %g sd %g", j, mean[j], ssd[j], x[j], sd[j])
		}
	}
	if _, _, _, _, err := AtomicFractionSamples([][]float64{{0, 0}}, f); err == nil {
		t.Error("all-zero samples accepted")
	}
}

func TestAtomicFractionsErrors(t *testing.T) {
	if _, _, err := AtomicFractions([]float64{0, 0}, nil, []float64{1, 1}); err == nil {
		t.Error("zero signal accepted")
	}
	if _, _, err := AtomicFractions([]float64{1, 1}, nil, []float64{1, 0}); err == nil {
		t.Error("zero factor accepted")
	}
	defer func() {
		if r := recover(); r == nil || !strings.HasPrefix(r.(string), "quant:") {
			t.Errorf("length mismatch: recover() = %v, want quant: panic", r)
		}
	}()
	AtomicFractions([]float64{1, 1}, nil, []float64{1})
}

// TestStandardFactor: Si metal and SiO2 at the Si LVV energy (92 eV):
// the factor is the product of AtomicDensity and TPP2M (exact), and the
// metal fraction of a 0.5/0.5 fit moves from 0.695 (equal L) towards the
// oxide because the oxide's IMFP is longer.
func TestStandardFactor(t *testing.T) {
	si, _ := LookupMaterial("Si")
	ox, _ := LookupMaterial("SiO2")
	fs, ls, err := StandardFactor(si, "Si", 92, 0)
	if err != nil {
		t.Fatal(err)
	}
	fo, lo, err := StandardFactor(ox, "Si", 92, 0)
	if err != nil {
		t.Fatal(err)
	}
	ns, _ := AtomicDensity(si, "Si")
	if !scalar.EqualWithinRel(fs, ns*ls.IMFP, 1e-15) {
		t.Errorf("factor %g, want N L %g", fs, ns*ls.IMFP)
	}
	x, _, _ := AtomicFractions([]float64{0.5, 0.5}, nil, []float64{fs, fo})
	if !(lo.IMFP > ls.IMFP) || !(x[0] < 0.695) || !(x[0] > 0.5) {
		t.Errorf("L(Si) %g, L(SiO2) %g nm, X(Si) %g", ls.IMFP, lo.IMFP, x[0])
	}
	if _, _, err := StandardFactor(si, "Si", 92, -1); err == nil {
		t.Error("backscattering -1 accepted")
	}
}

func BenchmarkAtomicFractions(b *testing.B) {
	for _, n := range []int{2, 8} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			c := make([]float64, n)
			f := make([]float64, n)
			cov := mat.NewSymDense(n, nil)
			for i := range c {
				c[i] = float64(i + 1)
				f[i] = 1e22 * float64(n-i)
				cov.SetSym(i, i, 0.01)
			}
			for b.Loop() {
				_, _, _ = AtomicFractions(c, cov, f)
			}
		})
	}
}

func BenchmarkParseFormula(b *testing.B) {
	for _, s := range []string{"Al2O3", "K4[Fe(CN)6]"} {
		b.Run("formula="+s, func(b *testing.B) {
			for b.Loop() {
				_, _ = ParseFormula(s)
			}
		})
	}
}
