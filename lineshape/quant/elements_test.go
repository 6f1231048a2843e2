package quant

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestElement(t *testing.T) {
	for _, c := range []struct {
		sym    string
		z      int
		weight float64 // IUPAC 2021 abridged, from memory
	}{
		{"Li", 3, 6.94}, {"Al", 13, 26.982}, {"Si", 14, 28.085}, {"Cu", 29, 63.546},
		{"Au", 79, 196.97}, {"W", 74, 183.84}, {"Co", 27, 58.933}, {"U", 92, 238.03},
	} {
		el, err := Element(c.sym)
		if err != nil {
			t.Fatalf("Element(%q): %v", c.sym, err)
		}
		if el.Z != c.z || el.Weight != c.weight || el.Symbol != c.sym {
			t.Errorf("Element(%q) = %+v, want Z %d weight %g", c.sym, el, c.z, c.weight)
		}
	}
	for _, c := range []struct{ sym, want string }{
		{"Xx", `unknown element symbol "Xx"`},
		{"h", `did you mean "H"`},
		{"AL", `did you mean "Al"`},
		{"CO", `did you mean "Co"`},
		{"", "empty"},
		{"Al ", `unknown element symbol "Al "`},
	} {
		_, err := Element(c.sym)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Element(%q) error %v, want it to contain %q", c.sym, err, c.want)
		}
	}
}

// TestTableAgainstXraylib cross-checks the hand-entered symbols and
// IUPAC weights against xraylib 4.0.0 (AtomicNumberToSymbol, AtomicWeight)
// in the generated file. xraylib's weights are older values (Al 26.97, Au
// 197.2), so the tolerance is 0.3 % for elements with a standard atomic
// weight, enough to catch a mistyped digit; for elements without one the
// isotope mass numbers differ by a few units (2 %). Known disagreements
// where the IUPAC value stands: xraylib 4.0.0 gives Tm 167.27 (the value of
// Er; IUPAC Tm is 168.93), Tc 99 and Pu 239.1 (other isotopes than the
// longest-lived 97Tc and 244Pu).
func TestTableAgainstXraylib(t *testing.T) {
	known := map[string]bool{"Tm": true, "Tc": true, "Pu": true}
	for z := 1; z <= bindingZMax; z++ {
		el, ok := ElementByZ(z)
		if !ok || el.Z != z {
			t.Fatalf("ElementByZ(%d) = %+v, %v", z, el, ok)
		}
		if el.Symbol != xraylibSymbol[z] {
			t.Errorf("Z %d: symbol %q, xraylib %q", z, el.Symbol, xraylibSymbol[z])
		}
		tol := 0.003
		if !el.Standard {
			tol = 0.02
		}
		if known[el.Symbol] {
			continue
		}
		if !scalar.EqualWithinRel(el.Weight, xraylibWeight[z], tol) {
			t.Errorf("%s: weight %g, xraylib %g (tolerance %g relative)", el.Symbol, el.Weight, xraylibWeight[z], tol)
		}
	}
}

func TestCheckAugerElement(t *testing.T) {
	for _, s := range []string{"H", "He"} {
		err := CheckAugerElement(s)
		if err == nil || !strings.Contains(err.Error(), "three electrons") || !strings.Contains(err.Error(), "Li") {
			t.Errorf("CheckAugerElement(%q) = %v, want refusal naming three electrons and Li", s, err)
		}
	}
	for _, s := range []string{"Li", "C", "Si", "Au", "U"} {
		if err := CheckAugerElement(s); err != nil {
			t.Errorf("CheckAugerElement(%q) = %v", s, err)
		}
	}
	if err := CheckAugerElement("Xx"); err == nil || !strings.Contains(err.Error(), "Xx") {
		t.Errorf("CheckAugerElement(Xx) = %v", err)
	}
}
