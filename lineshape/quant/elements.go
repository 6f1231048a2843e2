package quant

import (
	"fmt"
	"strings"
)

// ElementInfo describes one chemical element.
type ElementInfo struct {
	Z      int    // atomic number
	Symbol string // chemical symbol, case as IUPAC writes it ("Al")
	Name   string // English name
	// Weight is the standard atomic weight in g/mol (IUPAC 2021 abridged
	// values, entered from memory and cross-checked against xraylib 4.0.0
	// AtomicWeight in the tests). For elements without a standard atomic
	// weight it is the mass number of the longest-lived isotope and
	// Standard is false.
	Weight   float64
	Standard bool
}

// WeightSource names the source of ElementInfo.Weight.
const WeightSource = "IUPAC 2021 abridged standard atomic weights (entered from memory, cross-checked against xraylib 4.0.0 AtomicWeight)"

// elements is indexed by Z; elements[0] is unused.
var elements = [...]ElementInfo{
	{},
	{1, "H", "hydrogen", 1.0080, true},
	{2, "He", "helium", 4.0026, true},
	{3, "Li", "lithium", 6.94, true},
	{4, "Be", "beryllium", 9.0122, true},
	{5, "B", "boron", 10.81, true},
	{6, "C", "carbon", 12.011, true},
	{7, "N", "nitrogen", 14.007, true},
	{8, "O", "oxygen", 15.999, true},
	{9, "F", "fluorine", 18.998, true},
	{10, "Ne", "neon", 20.180, true},
	{11, "Na", "sodium", 22.990, true},
	{12, "Mg", "magnesium", 24.305, true},
	{13, "Al", "aluminium", 26.982, true},
	{14, "Si", "silicon", 28.085, true},
	{15, "P", "phosphorus", 30.974, true},
	{16, "S", "sulfur", 32.06, true},
	{17, "Cl", "chlorine", 35.45, true},
	{18, "Ar", "argon", 39.95, true},
	{19, "K", "potassium", 39.098, true},
	{20, "Ca", "calcium", 40.078, true},
	{21, "Sc", "scandium", 44.956, true},
	{22, "Ti", "titanium", 47.867, true},
	{23, "V", "vanadium", 50.942, true},
	{24, "Cr", "chromium", 51.996, true},
	{25, "Mn", "manganese", 54.938, true},
	{26, "Fe", "iron", 55.845, true},
	{27, "Co", "cobalt", 58.933, true},
	{28, "Ni", "nickel", 58.693, true},
	{29, "Cu", "copper", 63.546, true},
	{30, "Zn", "zinc", 65.38, true},
	{31, "Ga", "gallium", 69.723, true},
	{32, "Ge", "germanium", 72.630, true},
	{33, "As", "arsenic", 74.922, true},
	{34, "Se", "selenium", 78.971, true},
	{35, "Br", "bromine", 79.904, true},
	{36, "Kr", "krypton", 83.798, true},
	{37, "Rb", "rubidium", 85.468, true},
	{38, "Sr", "strontium", 87.62, true},
	{39, "Y", "yttrium", 88.906, true},
	{40, "Zr", "zirconium", 91.222, true},
	{41, "Nb", "niobium", 92.906, true},
	{42, "Mo", "molybdenum", 95.95, true},
	{43, "Tc", "technetium", 97, false},
	{44, "Ru", "ruthenium", 101.07, true},
	{45, "Rh", "rhodium", 102.91, true},
	{46, "Pd", "palladium", 106.42, true},
	{47, "Ag", "silver", 107.87, true},
	{48, "Cd", "cadmium", 112.41, true},
	{49, "In", "indium", 114.82, true},
	{50, "Sn", "tin", 118.71, true},
	{51, "Sb", "antimony", 121.76, true},
	{52, "Te", "tellurium", 127.60, true},
	{53, "I", "iodine", 126.90, true},
	{54, "Xe", "xenon", 131.29, true},
	{55, "Cs", "caesium", 132.91, true},
	{56, "Ba", "barium", 137.33, true},
	{57, "La", "lanthanum", 138.91, true},
	{58, "Ce", "cerium", 140.12, true},
	{59, "Pr", "praseodymium", 140.91, true},
	{60, "Nd", "neodymium", 144.24, true},
	{61, "Pm", "promethium", 145, false},
	{62, "Sm", "samarium", 150.36, true},
	{63, "Eu", "europium", 151.96, true},
	{64, "Gd", "gadolinium", 157.25, true},
	{65, "Tb", "terbium", 158.93, true},
	{66, "Dy", "dysprosium", 162.50, true},
	{67, "Ho", "holmium", 164.93, true},
	{68, "Er", "erbium", 167.26, true},
	{69, "Tm", "thulium", 168.93, true},
	{70, "Yb", "ytterbium", 173.05, true},
	{71, "Lu", "lutetium", 174.97, true},
	{72, "Hf", "hafnium", 178.49, true},
	{73, "Ta", "tantalum", 180.95, true},
	{74, "W", "tungsten", 183.84, true},
	{75, "Re", "rhenium", 186.21, true},
	{76, "Os", "osmium", 190.23, true},
	{77, "Ir", "iridium", 192.22, true},
	{78, "Pt", "platinum", 195.08, true},
	{79, "Au", "gold", 196.97, true},
	{80, "Hg", "mercury", 200.59, true},
	{81, "Tl", "thallium", 204.38, true},
	{82, "Pb", "lead", 207.2, true},
	{83, "Bi", "bismuth", 208.98, true},
	{84, "Po", "polonium", 209, false},
	{85, "At", "astatine", 210, false},
	{86, "Rn", "radon", 222, false},
	{87, "Fr", "francium", 223, false},
	{88, "Ra", "radium", 226, false},
	{89, "Ac", "actinium", 227, false},
	{90, "Th", "thorium", 232.04, true},
	{91, "Pa", "protactinium", 231.04, true},
	{92, "U", "uranium", 238.03, true},
	{93, "Np", "neptunium", 237, false},
	{94, "Pu", "plutonium", 244, false},
	{95, "Am", "americium", 243, false},
	{96, "Cm", "curium", 247, false},
	{97, "Bk", "berkelium", 247, false},
	{98, "Cf", "californium", 251, false},
	{99, "Es", "einsteinium", 252, false},
	{100, "Fm", "fermium", 257, false},
	{101, "Md", "mendelevium", 258, false},
	{102, "No", "nobelium", 259, false},
	{103, "Lr", "lawrencium", 266, false},
}

// MaxZ is the highest atomic number the periodic table holds.
const MaxZ = len(elements) - 1

var bySymbol = func() map[string]int {
	m := make(map[string]int, len(elements))
	for z := 1; z < len(elements); z++ {
		m[elements[z].Symbol] = z
	}
	return m
}()

// Element returns the element with the given chemical symbol. Symbols are
// case-sensitive ("Co" is cobalt, "CO" is not a symbol); an unknown symbol
// gives an error that suggests the symbol with corrected case when there is
// one.
func Element(symbol string) (ElementInfo, error) {
	if z, ok := bySymbol[symbol]; ok {
		return elements[z], nil
	}
	if symbol == "" {
		return ElementInfo{}, fmt.Errorf("empty element symbol")
	}
	for z := 1; z < len(elements); z++ {
		if strings.EqualFold(elements[z].Symbol, symbol) {
			return ElementInfo{}, fmt.Errorf("unknown element symbol %q: did you mean %q? (symbols are case-sensitive: capital first letter, lower-case second)", symbol, elements[z].Symbol)
		}
	}
	return ElementInfo{}, fmt.Errorf("unknown element symbol %q: not in the periodic table (Z = 1..%d)", symbol, MaxZ)
}

// ElementByZ returns the element with atomic number z, or false if z is
// outside 1..MaxZ.
func ElementByZ(z int) (ElementInfo, bool) {
	if z < 1 || z > MaxZ {
		return ElementInfo{}, false
	}
	return elements[z], true
}

// CheckAugerElement returns nil if symbol names an element that has Auger
// transitions. H and He are refused: an Auger transition involves three
// electrons (the core hole, the electron that fills it and the emitted one),
// so AES detects lithium (Z = 3) and heavier elements only.
func CheckAugerElement(symbol string) error {
	el, err := Element(symbol)
	if err != nil {
		return err
	}
	if el.Z < 3 {
		return fmt.Errorf("element %s (%s) has no Auger transition: the process needs three electrons, so AES detects Li (Z = 3) and heavier elements only", el.Symbol, el.Name)
	}
	return nil
}
