package quant_test

import (
	"fmt"

	"statemix/lineshape/quant"
)

func ExampleTPP2M() {
	m, _ := quant.LookupMaterial("Al2O3")
	r, _ := quant.TPP2M(m, 1000)
	fmt.Printf("IMFP of 1000 eV electrons in %s: %.3f nm (Ep %.2f eV)\n", m.Formula, r.IMFP, r.Ep)
	// Output: IMFP of 1000 eV electrons in Al2O3: 2.497 nm (Ep 27.86 eV)
}

func ExampleEstimateEnergy() {
	for _, s := range []string{"KL23L23", "KLL"} {
		t, _ := quant.ParseTransition(s)
		p, _ := quant.PrincipalLine("Si", t)
		e, _ := quant.EstimateEnergy("Si", t)
		fmt.Printf("Si %s (%s): %.1f eV\n", s, p, e)
	}
	// Output:
	// Si KL23L23 (KL23L23): 1604.0 eV
	// Si KLL (KL23L23): 1604.0 eV
}

func ExampleAtomicFractions() {
	si, _ := quant.AtomicDensity(quant.Material{Formula: "Si", Density: 2.33}, "Si")
	ox, _ := quant.AtomicDensity(quant.Material{Formula: "SiO2", Density: 2.19}, "Si")
	// Equal IMFPs and backscattering: only the atomic densities matter.
	x, _, _ := quant.AtomicFractions([]float64{0.5, 0.5}, nil, []float64{si, ox})
	fmt.Printf("X(Si metal) = %.3f, X(Si in SiO2) = %.3f\n", x[0], x[1])
	// Output: X(Si metal) = 0.695, X(Si in SiO2) = 0.305
}

func ExampleOverlayer_Thickness() {
	o := quant.Overlayer{
		NOverlayer: 4.690e22, NSubstrate: 6.026e22, // Al per cm3 in Al2O3 and Al
		LambdaOverlayer: 3.210, LambdaSubstrate: 3.072, // nm at 1393 eV
		TakeOffDeg: 90,
	}
	th, _ := o.Thickness(1, 0.1)
	fmt.Printf("oxide %.3f +/- %.3f nm\n", th.Thickness, th.SD)
	// Output: oxide 2.574 +/- 0.177 nm
}

func ExampleParseFormula() {
	f, _ := quant.ParseFormula("Ca(OH)2")
	for _, p := range f.Parts {
		fmt.Printf("%s %g\n", p.Symbol, p.Count)
	}
	fmt.Printf("M = %.3f g/mol\n", f.MolarMass())
	// Output:
	// Ca 1
	// O 2
	// H 2
	// M = 74.092 g/mol
}

func ExampleCheckAugerElement() {
	fmt.Println(quant.CheckAugerElement("He"))
	// Output: element He (helium) has no Auger transition: the process needs three electrons, so AES detects Li (Z = 3) and heavier elements only
}
