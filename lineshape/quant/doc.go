// Package quant turns fitted signal fractions into atomic fractions and
// overlayer thicknesses, and holds the physical data behind them: the
// periodic table, electron binding energies and Auger transition notation.
//
// # Units
//
// Energies are in eV (kinetic energies Fermi-level referenced, binding
// energies as xraylib 4.0.0 tabulates its edge energies), lengths in nm,
// densities in g/cm3, atomic densities in atoms per cm3, molar masses in
// g/mol, angles in degrees from the surface plane.
//
// # Elements, formulas and transitions
//
// Element validates a case-sensitive chemical symbol against the periodic
// table (standard atomic weights: WeightSource); CheckAugerElement also
// refuses H and He, which have no Auger transition. ParseFormula reads
// formulas such as Al2O3, Si3N4 or Ca(OH)2. ParseTransition reads IUPAC
// (X-ray) notation: KL23L23, L3M45M45, LVV, KLL. EstimateEnergy estimates a
// transition's kinetic energy by the Chung-Jenkins rule from the binding
// energies generated from xraylib by gen_binding.py.
//
// # Matrix corrections
//
// Material carries formula, density, valence electrons and band gap;
// LookupMaterial and ResolveMaterial fill them from a built-in table of
// common standards (MaterialSource). TPP2M gives the inelastic mean free
// path (Tanuma, Powell & Penn 1994), SeahDench the attenuation length
// (Seah & Dench 1979), AtomicDensity the atoms of an element per cm3.
//
// # Fractions and thickness
//
// AtomicFractions converts coefficients of a fit against pure standards to
// atomic fractions X_j = c_j N_j L_j (1 + r_j) / sum_k c_k N_k L_k (1 + r_k),
// propagating the coefficient covariance; AtomicFractionSamples does the
// same for bootstrap samples. The conversion assumes a sample homogeneous
// within the analysed depth, standards and unknown recorded under the same
// conditions, and equal backscattering unless the factors include it.
// Overlayer.Thickness gives an oxide thickness on its metal by the
// Strohmeier (1990) equation.
//
// FitCoefficients carries a fit's coefficients with their covariance or
// bootstrap samples as plain numbers, so that this package need not know
// the fit's types: with StandardFactors it gives atomic fractions, and its
// Pair with StandardsOverlayer gives an overlayer thickness.
//
// Functions leave their arguments alone and return new slices.
package quant
