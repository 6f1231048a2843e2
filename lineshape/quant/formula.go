package quant

import (
	"fmt"
	"strconv"
	"strings"
)

// Part is one element of a formula and its number of atoms per formula
// unit.
type Part struct {
	Symbol string
	Z      int
	Count  float64
}

// Formula is a parsed chemical formula: the elements in order of first
// appearance, each with its total count per formula unit.
type Formula struct {
	Text  string // the formula as given
	Parts []Part
}

// Limits of what ParseFormula accepts, to keep hostile input cheap.
const (
	maxFormulaLen   = 256
	maxFormulaDepth = 16
	maxCount        = 1e6
	minCount        = 1e-6
)

// ParseFormula parses a chemical formula such as "Al2O3", "Si3N4",
// "Ca(OH)2", "Ca3(PO4)2" or "Si0.5Ge0.5": element symbols (case-sensitive,
// from the periodic table) followed by optional counts, integer or decimal;
// groups in parentheses or brackets, nested, with a multiplier. Repeated
// elements are summed ("CH3COOH" has 2 C, 4 H, 2 O). Spaces are not allowed.
func ParseFormula(s string) (Formula, error) {
	if s == "" {
		return Formula{}, fmt.Errorf("empty formula")
	}
	if len(s) > maxFormulaLen {
		return Formula{}, fmt.Errorf("formula too long: %d characters, at most %d", len(s), maxFormulaLen)
	}
	p := formulaParser{s: s}
	counts, err := p.group(0)
	if err != nil {
		return Formula{}, fmt.Errorf("formula %q: %w", s, err)
	}
	if p.i < len(s) {
		c := s[p.i]
		if c == ')' || c == ']' {
			return Formula{}, fmt.Errorf("formula %q: position %d: unmatched %q", s, p.i+1, c)
		}
		return Formula{}, fmt.Errorf("formula %q: position %d: unexpected %q", s, p.i+1, c)
	}
	f := Formula{Text: s}
	for _, pc := range counts {
		if pc.n > maxCount {
			return Formula{}, fmt.Errorf("formula %q: %s count %g too large (at most %g)", s, elements[pc.z].Symbol, pc.n, maxCount)
		}
		f.Parts = append(f.Parts, Part{Symbol: elements[pc.z].Symbol, Z: pc.z, Count: pc.n})
	}
	return f, nil
}

type zCount struct {
	z int
	n float64
}

type formulaParser struct {
	s string
	i int
}

// add merges n atoms of element z into list, keeping first-appearance order.
func addCount(list []zCount, z int, n float64) []zCount {
	for k := range list {
		if list[k].z == z {
			list[k].n += n
			return list
		}
	}
	return append(list, zCount{z, n})
}

// group parses a sequence of items until end of input or a closing bracket.
func (p *formulaParser) group(depth int) ([]zCount, error) {
	if depth > maxFormulaDepth {
		return nil, fmt.Errorf("position %d: groups nested deeper than %d", p.i+1, maxFormulaDepth)
	}
	var out []zCount
	start := p.i
	for p.i < len(p.s) {
		c := p.s[p.i]
		switch {
		case c == '(' || c == '[':
			open := p.i
			p.i++
			inner, err := p.group(depth + 1)
			if err != nil {
				return nil, err
			}
			want := byte(')')
			if c == '[' {
				want = ']'
			}
			if p.i >= len(p.s) || p.s[p.i] != want {
				return nil, fmt.Errorf("position %d: %q is never closed", open+1, c)
			}
			if len(inner) == 0 {
				return nil, fmt.Errorf("position %d: empty group", open+1)
			}
			p.i++
			n, err := p.count()
			if err != nil {
				return nil, err
			}
			for _, zc := range inner {
				v := zc.n * n
				if v > maxCount || v < minCount {
					return nil, fmt.Errorf("position %d: %s count %g out of range [%g, %g]", open+1, elements[zc.z].Symbol, v, minCount, maxCount)
				}
				out = addCount(out, zc.z, v)
			}
		case c >= 'A' && c <= 'Z':
			at := p.i
			j := p.i + 1
			if j < len(p.s) && p.s[j] >= 'a' && p.s[j] <= 'z' {
				j++
			}
			sym := p.s[p.i:j]
			z, ok := bySymbol[sym]
			if !ok {
				return nil, fmt.Errorf("position %d: unknown element symbol %q", at+1, sym)
			}
			p.i = j
			n, err := p.count()
			if err != nil {
				return nil, err
			}
			out = addCount(out, z, n)
		case c >= 'a' && c <= 'z':
			return nil, fmt.Errorf("position %d: %q cannot start an element symbol (symbols start with a capital letter)", p.i+1, c)
		case c == ')' || c == ']':
			if depth == 0 {
				return nil, fmt.Errorf("position %d: unmatched %q", p.i+1, c)
			}
			return out, nil
		case c >= '0' && c <= '9' || c == '.':
			if p.i == start {
				return nil, fmt.Errorf("position %d: count %q before any element", p.i+1, c)
			}
			return nil, fmt.Errorf("position %d: unexpected %q", p.i+1, c)
		default:
			return nil, fmt.Errorf("position %d: unexpected %q", p.i+1, c)
		}
	}
	return out, nil
}

// count parses an optional count (default 1) at p.i.
func (p *formulaParser) count() (float64, error) {
	j := p.i
	for j < len(p.s) && (p.s[j] >= '0' && p.s[j] <= '9' || p.s[j] == '.') {
		j++
	}
	if j == p.i {
		return 1, nil
	}
	txt := p.s[p.i:j]
	at := p.i
	p.i = j
	if strings.Count(txt, ".") > 1 || txt[0] == '.' || txt[len(txt)-1] == '.' {
		return 0, fmt.Errorf("position %d: malformed count %q", at+1, txt)
	}
	n, err := strconv.ParseFloat(txt, 64)
	if err != nil {
		return 0, fmt.Errorf("position %d: malformed count %q", at+1, txt)
	}
	if n <= 0 {
		return 0, fmt.Errorf("position %d: count %q must be positive", at+1, txt)
	}
	if n > maxCount {
		return 0, fmt.Errorf("position %d: count %q too large (at most %g)", at+1, txt, maxCount)
	}
	if n < minCount {
		return 0, fmt.Errorf("position %d: count %q too small (at least %g)", at+1, txt, minCount)
	}
	return n, nil
}

// Count returns the number of atoms of the element symbol per formula unit
// (0 if the formula does not contain it).
func (f Formula) Count(symbol string) float64 {
	for _, p := range f.Parts {
		if p.Symbol == symbol {
			return p.Count
		}
	}
	return 0
}

// Atoms returns the total number of atoms per formula unit.
func (f Formula) Atoms() float64 {
	var n float64
	for _, p := range f.Parts {
		n += p.Count
	}
	return n
}

// MolarMass returns the mass of one mole of formula units in g/mol, from the
// standard atomic weights (WeightSource).
func (f Formula) MolarMass() float64 {
	var m float64
	for _, p := range f.Parts {
		m += p.Count * elements[p.Z].Weight
	}
	return m
}

// IsElement reports whether the formula holds a single element.
func (f Formula) IsElement() bool { return len(f.Parts) == 1 }

// String returns the formula in a canonical form: elements in order of first
// appearance, counts of 1 omitted ("Ca(OH)2" becomes "CaO2H2").
func (f Formula) String() string {
	var b strings.Builder
	for _, p := range f.Parts {
		b.WriteString(p.Symbol)
		if p.Count != 1 {
			b.WriteString(strconv.FormatFloat(p.Count, 'f', -1, 64))
		}
	}
	return b.String()
}

// sameComposition reports whether f and g have the same element counts.
func (f Formula) sameComposition(g Formula) bool {
	if len(f.Parts) != len(g.Parts) {
		return false
	}
	for _, p := range f.Parts {
		if q := g.Count(p.Symbol); q == 0 || !approxEqual(q, p.Count, 1e-9) {
			return false
		}
	}
	return true
}
