package quant

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestParseFormula(t *testing.T) {
	for _, c := range []struct {
		in    string
		want  map[string]float64
		molar float64 // g/mol from the IUPAC weights of the table, hand-summed
	}{
		{"Al2O3", map[string]float64{"Al": 2, "O": 3}, 2*26.982 + 3*15.999},
		{"Si3N4", map[string]float64{"Si": 3, "N": 4}, 3*28.085 + 4*14.007},
		{"Ca(OH)2", map[string]float64{"Ca": 1, "O": 2, "H": 2}, 40.078 + 2*15.999 + 2*1.0080},
		{"Ca3(PO4)2", map[string]float64{"Ca": 3, "P": 2, "O": 8}, 3*40.078 + 2*30.974 + 8*15.999},
		{"K4[Fe(CN)6]", map[string]float64{"K": 4, "Fe": 1, "C": 6, "N": 6}, 4*39.098 + 55.845 + 6*12.011 + 6*14.007},
		{"CH3COOH", map[string]float64{"C": 2, "H": 4, "O": 2}, 2*12.011 + 4*1.0080 + 2*15.999},
		{"Si0.5Ge0.5", map[string]float64{"Si": 0.5, "Ge": 0.5}, 0.5*28.085 + 0.5*72.630},
		{"SiO2", map[string]float64{"Si": 1, "O": 2}, 28.085 + 2*15.999},
		{"TiN", map[string]float64{"Ti": 1, "N": 1}, 47.867 + 14.007},
		{"Co", map[string]float64{"Co": 1}, 58.933},
		{"CO", map[string]float64{"C": 1, "O": 1}, 12.011 + 15.999},
		{"((Al)2)3", map[string]float64{"Al": 6}, 6 * 26.982},
	} {
		f, err := ParseFormula(c.in)
		if err != nil {
			t.Errorf("ParseFormula(%q): %v", c.in, err)
			continue
		}
		if len(f.Parts) != len(c.want) {
			t.Errorf("ParseFormula(%q) = %v, want %v", c.in, f.Parts, c.want)
		}
		for sym, n := range c.want {
			if got := f.Count(sym); got != n {
				t.Errorf("ParseFormula(%q).Count(%s) = %g, want %g", c.in, sym, got, n)
			}
		}
		// Tolerance 1e-12: same sums, only rounding differs.
		if m := f.MolarMass(); !scalar.EqualWithinAbsOrRel(m, c.molar, 1e-12, 1e-12) {
			t.Errorf("ParseFormula(%q).MolarMass() = %g, want %g", c.in, m, c.molar)
		}
	}
}

func TestParseFormulaErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"Xx2O", `unknown element symbol "Xx"`},
		{"", "empty"},
		{"al2o3", "capital letter"},
		{"Al2O3)", "unmatched"},
		{"Ca(OH2", "never closed"},
		{"Ca()2", "empty group"},
		{"Al0", "must be positive"},
		{"Al2.5.1", "malformed count"},
		{"2Al", "before any element"},
		{"Al2 O3", "unexpected"},
		{"Al1e9", "cannot start an element symbol"},
		{"Al9999999", "too large"},
		{strings.Repeat("(", 20) + "Al" + strings.Repeat(")", 20), "nested"},
		{strings.Repeat("H", 300), "too long"},
	} {
		_, err := ParseFormula(c.in)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseFormula(%q) error %v, want it to contain %q", c.in, err, c.want)
		}
	}
}

func FuzzParseFormula(f *testing.F) {
	for _, s := range []string{"Al2O3", "Si3N4", "Ca(OH)2", "K4[Fe(CN)6]", "Si0.5Ge0.5", "Xx2O", "((", "Al2.", ")(", "al", "H999999", "(Al)0.5", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		fm, err := ParseFormula(s)
		if err != nil {
			if fm.Parts != nil {
				t.Fatalf("error %v with parts %v", err, fm.Parts)
			}
			return
		}
		if len(fm.Parts) == 0 {
			t.Fatalf("ParseFormula(%q) accepted with no elements", s)
		}
		for _, p := range fm.Parts {
			if !(p.Count > 0) || p.Z < 1 || p.Z > MaxZ {
				t.Fatalf("ParseFormula(%q): bad part %+v", s, p)
			}
		}
		// The canonical form parses to the same composition.
		g, err := ParseFormula(fm.String())
		if err != nil {
			t.Fatalf("canonical %q of %q does not parse: %v", fm.String(), s, err)
		}
		if !fm.sameComposition(g) {
			t.Fatalf("canonical %q of %q changes composition", fm.String(), s)
		}
	})
}
