package quant

import (
	"fmt"
	"sort"
	"strings"
)

// Material holds what the matrix corrections need of a standard or sample.
type Material struct {
	// Formula is the chemical formula of one formula unit ("Al2O3").
	Formula string
	// Density is the mass density in g/cm3.
	Density float64
	// ValenceElectrons is the number of valence electrons per formula unit
	// in the TPP-2M convention (Tanuma, Powell & Penn 1994): Al 3, Si 4,
	// Cu 11, Au 11, SiO2 16, Al2O3 24.
	ValenceElectrons float64
	// BandGap is the band-gap energy in eV (0 for metals).
	BandGap float64
	// Source says where the values come from.
	Source string
}

// MaterialSource names the source of the built-in table.
const MaterialSource = "statemix built-in table: densities from the CRC Handbook of Chemistry and Physics, band gaps common literature values, both from memory; valence electrons per TPP-2M convention"

// builtinMaterials is the table of common standards. Densities from the
// CRC Handbook of Chemistry and Physics (from memory; thin films are often
// a few percent less dense, so override them with measured values when
// known). Valence electrons per formula unit follow the TPP-2M convention:
// the outer s and p electrons, plus the d electrons of transition metals
// (Cu 11, Au 11), O 6, N 5, C 4. Band gaps are common literature values
// (from memory).
var builtinMaterials = []Material{
	// Elements.
	{Formula: "C", Density: 2.26, ValenceElectrons: 4, BandGap: 0}, // graphite
	{Formula: "Mg", Density: 1.74, ValenceElectrons: 2, BandGap: 0},
	{Formula: "Al", Density: 2.70, ValenceElectrons: 3, BandGap: 0},
	{Formula: "Si", Density: 2.33, ValenceElectrons: 4, BandGap: 1.12},
	{Formula: "Ti", Density: 4.506, ValenceElectrons: 4, BandGap: 0},
	{Formula: "V", Density: 6.0, ValenceElectrons: 5, BandGap: 0},
	{Formula: "Cr", Density: 7.19, ValenceElectrons: 6, BandGap: 0},
	{Formula: "Mn", Density: 7.21, ValenceElectrons: 7, BandGap: 0},
	{Formula: "Fe", Density: 7.874, ValenceElectrons: 8, BandGap: 0},
	{Formula: "Co", Density: 8.90, ValenceElectrons: 9, BandGap: 0},
	{Formula: "Ni", Density: 8.908, ValenceElectrons: 10, BandGap: 0},
	{Formula: "Cu", Density: 8.96, ValenceElectrons: 11, BandGap: 0},
	{Formula: "Zn", Density: 7.14, ValenceElectrons: 12, BandGap: 0},
	{Formula: "Ge", Density: 5.323, ValenceElectrons: 4, BandGap: 0.67},
	{Formula: "Zr", Density: 6.52, ValenceElectrons: 4, BandGap: 0},
	{Formula: "Mo", Density: 10.28, ValenceElectrons: 6, BandGap: 0},
	{Formula: "Ag", Density: 10.49, ValenceElectrons: 11, BandGap: 0},
	{Formula: "Hf", Density: 13.31, ValenceElectrons: 4, BandGap: 0},
	{Formula: "Ta", Density: 16.69, ValenceElectrons: 5, BandGap: 0},
	{Formula: "W", Density: 19.25, ValenceElectrons: 6, BandGap: 0},
	{Formula: "Pt", Density: 21.45, ValenceElectrons: 10, BandGap: 0},
	{Formula: "Au", Density: 19.32, ValenceElectrons: 11, BandGap: 0},
	// Oxides.
	{Formula: "MgO", Density: 3.58, ValenceElectrons: 8, BandGap: 7.8},
	{Formula: "Al2O3", Density: 3.97, ValenceElectrons: 24, BandGap: 8.7}, // corundum
	{Formula: "SiO2", Density: 2.19, ValenceElectrons: 16, BandGap: 9.0},  // fused silica, thermal oxide ~2.2
	{Formula: "TiO2", Density: 4.23, ValenceElectrons: 16, BandGap: 3.0},  // rutile
	{Formula: "Cr2O3", Density: 5.22, ValenceElectrons: 30, BandGap: 3.4},
	{Formula: "Fe2O3", Density: 5.24, ValenceElectrons: 34, BandGap: 2.2},
	{Formula: "Fe3O4", Density: 5.17, ValenceElectrons: 48, BandGap: 0.1},
	{Formula: "NiO", Density: 6.67, ValenceElectrons: 16, BandGap: 4.0},
	{Formula: "CuO", Density: 6.31, ValenceElectrons: 17, BandGap: 1.2},
	{Formula: "Cu2O", Density: 6.0, ValenceElectrons: 28, BandGap: 2.1},
	{Formula: "ZnO", Density: 5.61, ValenceElectrons: 18, BandGap: 3.37},
	{Formula: "ZrO2", Density: 5.68, ValenceElectrons: 16, BandGap: 5.0},
	{Formula: "HfO2", Density: 9.68, ValenceElectrons: 16, BandGap: 5.7},
	{Formula: "Ta2O5", Density: 8.2, ValenceElectrons: 40, BandGap: 4.0},
	{Formula: "WO3", Density: 7.16, ValenceElectrons: 24, BandGap: 2.6},
	// Nitrides, carbides, silicides, others.
	{Formula: "Si3N4", Density: 3.17, ValenceElectrons: 32, BandGap: 5.0}, // amorphous film ~3.1; crystalline 3.44
	{Formula: "AlN", Density: 3.26, ValenceElectrons: 8, BandGap: 6.0},
	{Formula: "TiN", Density: 5.22, ValenceElectrons: 9, BandGap: 0},
	{Formula: "TaN", Density: 14.3, ValenceElectrons: 10, BandGap: 0},
	{Formula: "GaN", Density: 6.15, ValenceElectrons: 8, BandGap: 3.4},
	{Formula: "SiC", Density: 3.21, ValenceElectrons: 8, BandGap: 2.4},
	{Formula: "TiC", Density: 4.93, ValenceElectrons: 8, BandGap: 0},
	{Formula: "WC", Density: 15.63, ValenceElectrons: 10, BandGap: 0},
	{Formula: "TiSi2", Density: 4.02, ValenceElectrons: 12, BandGap: 0},
	{Formula: "NiSi", Density: 7.2, ValenceElectrons: 14, BandGap: 0},
	{Formula: "GaAs", Density: 5.32, ValenceElectrons: 8, BandGap: 1.42},
}

var builtinParsed = func() []Formula {
	out := make([]Formula, len(builtinMaterials))
	for i, m := range builtinMaterials {
		f, err := ParseFormula(m.Formula)
		if err != nil {
			panic("quant: built-in material " + m.Formula + ": " + err.Error())
		}
		out[i] = f
	}
	return out
}()

// LookupMaterial returns the built-in properties of the material with the
// given formula. The formula is matched by composition, so "O2Si" finds
// SiO2. Its Source names the table.
func LookupMaterial(formula string) (Material, error) {
	f, err := ParseFormula(formula)
	if err != nil {
		return Material{}, err
	}
	for i, g := range builtinParsed {
		if f.sameComposition(g) {
			m := builtinMaterials[i]
			m.Source = MaterialSource
			return m, nil
		}
	}
	return Material{}, fmt.Errorf("material %q is not in the built-in table (known: %s); give its density, valence electrons and band gap", formula, strings.Join(BuiltinFormulas(), ", "))
}

// BuiltinFormulas returns the formulas of the built-in table, sorted.
func BuiltinFormulas() []string {
	out := make([]string, len(builtinMaterials))
	for i, m := range builtinMaterials {
		out[i] = m.Formula
	}
	sort.Strings(out)
	return out
}

// Override holds user-given material properties; a nil field keeps the
// value of the built-in table.
type Override struct {
	Density          *float64 // g/cm3
	ValenceElectrons *float64 // per formula unit
	BandGap          *float64 // eV
}

// ResolveMaterial returns the material with the given formula, taking each
// property from o when given and from the built-in table otherwise. A
// formula outside the table needs all three properties in o. The result's
// Source says which values came from where.
func ResolveMaterial(formula string, o Override) (Material, error) {
	if _, err := ParseFormula(formula); err != nil {
		return Material{}, err
	}
	m, lookupErr := LookupMaterial(formula)
	if lookupErr != nil {
		var missing []string
		if o.Density == nil {
			missing = append(missing, "density")
		}
		if o.ValenceElectrons == nil {
			missing = append(missing, "valence electrons")
		}
		if o.BandGap == nil {
			missing = append(missing, "band gap")
		}
		if len(missing) > 0 {
			return Material{}, fmt.Errorf("material %q is not in the built-in table: give its %s", formula, strings.Join(missing, ", "))
		}
		m = Material{Formula: formula}
	}
	var given []string
	if o.Density != nil {
		m.Density = *o.Density
		given = append(given, "density")
	}
	if o.ValenceElectrons != nil {
		m.ValenceElectrons = *o.ValenceElectrons
		given = append(given, "valence electrons")
	}
	if o.BandGap != nil {
		m.BandGap = *o.BandGap
		given = append(given, "band gap")
	}
	switch {
	case lookupErr != nil || len(given) == 3:
		m.Source = "user-given"
	case len(given) > 0:
		m.Source = "user-given " + strings.Join(given, ", ") + "; the rest from the " + MaterialSource
	}
	return m, m.Validate()
}

// Validate checks that the material can be used: a parseable formula,
// positive density and valence electrons, nonnegative band gap.
func (m Material) Validate() error {
	if _, err := ParseFormula(m.Formula); err != nil {
		return err
	}
	switch {
	case !(m.Density > 0) || m.Density > 30:
		return fmt.Errorf("material %s: density %g g/cm3 outside (0, 30]", m.Formula, m.Density)
	case !(m.ValenceElectrons > 0) || m.ValenceElectrons > 1e4:
		return fmt.Errorf("material %s: valence electrons %g per formula unit must be positive", m.Formula, m.ValenceElectrons)
	case !(m.BandGap >= 0) || m.BandGap > 20:
		return fmt.Errorf("material %s: band gap %g eV outside [0, 20]", m.Formula, m.BandGap)
	}
	return nil
}

// Avogadro is the Avogadro constant in 1/mol (SI 2019, exact).
const Avogadro = 6.02214076e23

// AtomicDensity returns the number of atoms of element per cm3 in the
// material: N = rho N_A n / M, with rho the density in g/cm3, n the atoms
// of the element per formula unit and M the molar mass in g/mol. Si at
// 2.33 g/cm3 gives 4.996e22 cm-3; Si in SiO2 at 2.19 g/cm3 gives
// 2.195e22 cm-3.
func AtomicDensity(m Material, element string) (float64, error) {
	f, err := ParseFormula(m.Formula)
	if err != nil {
		return 0, err
	}
	if _, err := Element(element); err != nil {
		return 0, err
	}
	n := f.Count(element)
	if n == 0 {
		return 0, fmt.Errorf("material %s contains no %s", m.Formula, element)
	}
	if !(m.Density > 0) {
		return 0, fmt.Errorf("material %s: density %g g/cm3 must be positive", m.Formula, m.Density)
	}
	return m.Density * Avogadro * n / f.MolarMass(), nil
}
