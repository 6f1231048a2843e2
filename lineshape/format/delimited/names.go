package delimited

import "strings"

// kind is what a header name says about its column.
type kind int

const (
	kindUnknown kind = iota
	kindKinetic
	kindBinding
	kindDerivative
	kindDirect
	kindCounts
	kindDirectTimesE
)

// names maps normalised header names to what they say. Names are lower
// case with runs of spaces and underscores folded to one space.
var names = map[string]kind{
	"energy": kindKinetic, "e": kindKinetic, "ke": kindKinetic, "kinetic": kindKinetic,
	"kinetic energy": kindKinetic, "ekin": kindKinetic, "e kin": kindKinetic, "kinetic energy ev": kindKinetic,

	"be": kindBinding, "binding": kindBinding, "binding energy": kindBinding, "ebind": kindBinding,
	"e bind": kindBinding, "eb": kindBinding,

	"dn/de": kindDerivative, "dnde": kindDerivative, "dn de": kindDerivative, "d(n)/de": kindDerivative,
	"dn(e)/de": kindDerivative, "derivative": kindDerivative, "deriv": kindDerivative,
	"diff": kindDerivative, "differential": kindDerivative,

	"n(e)": kindDirect, "n": kindDirect, "direct": kindDirect, "intensity": kindDirect, "cps": kindDirect,
	"counts/s": kindDirect, "count rate": kindDirect,

	"counts": kindCounts, "count": kindCounts,

	"en(e)": kindDirectTimesE, "e*n(e)": kindDirectTimesE, "e.n(e)": kindDirectTimesE,
	"e n(e)": kindDirectTimesE, "e·n(e)": kindDirectTimesE,
}

// classify says what a header name means, ignoring case and units written
// in brackets or after a slash, underscore or space ("Energy (eV)",
// "energy/eV", "energy_ev").
func classify(name string) kind {
	n := normalise(name)
	for range 3 {
		if k, ok := names[n]; ok {
			return k
		}
		m := stripUnit(n)
		if m == n {
			break
		}
		n = m
	}
	return kindUnknown
}

// normalise lower-cases name, removes quotes and folds runs of white space
// and underscores to one space.
func normalise(name string) string {
	name = strings.ToLower(strings.Trim(strings.TrimSpace(name), `"'`))
	return strings.Join(strings.FieldsFunc(name, func(r rune) bool {
		return r == ' ' || r == '\t' || r == '_'
	}), " ")
}

// stripUnit removes one trailing unit from a normalised name: a bracketed
// group "(ev)" or "[a.u.]", or "ev" after a slash or space.
func stripUnit(n string) string {
	if l := len(n); l > 0 && (n[l-1] == ')' || n[l-1] == ']') {
		open := "("
		if n[l-1] == ']' {
			open = "["
		}
		if i := strings.LastIndex(n, open); i > 0 {
			return strings.TrimSpace(n[:i])
		}
	}
	for _, suf := range []string{"/ev", " ev", "/ kev", " kev", "/kev", " / ev"} {
		if strings.HasSuffix(n, suf) && len(n) > len(suf) {
			return strings.TrimSpace(n[:len(n)-len(suf)])
		}
	}
	return n
}

// stripSpacedUnits removes bracketed groups that follow white space, such
// as the " (eV)" of "Energy (eV)", so that a space-separated header splits
// into one field per column; "N(E)" keeps its brackets.
func stripSpacedUnits(line string) string {
	var b strings.Builder
	for i := 0; i < len(line); i++ {
		c := line[i]
		if (c == '(' || c == '[') && i > 0 && (line[i-1] == ' ' || line[i-1] == '\t') {
			closer := byte(')')
			if c == '[' {
				closer = ']'
			}
			if j := strings.IndexByte(line[i:], closer); j > 0 {
				i += j
				continue
			}
		}
		b.WriteByte(c)
	}
	return b.String()
}
