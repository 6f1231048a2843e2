package library

import (
	"fmt"
	"strings"
)

// Filter selects entries by field values. Empty fields match everything;
// all given fields must match (AND). Comparisons ignore case, except that
// Element compares symbols exactly.
type Filter struct {
	Kind       Kind   // "reference" or "measurement"
	Element    string // element symbol, e.g. "Ti"
	Transition string // e.g. "L3M23M23"
	State      string // e.g. "nitride", or "other:..."
	Compound   string // formula, e.g. "TiN"
	Name       string // substring of the name
	Tags       map[string]string
}

// FilterFields are the field names ParseFilter accepts.
var FilterFields = []string{"kind", "element", "transition", "state", "compound", "name", "tag.<key>"}

// ParseFilter parses a simple query of space-separated field:value terms,
// e.g. `element:Ti state:nitride tag.lab:north`. A value with spaces is
// written in double quotes: `name:"Ti foil"`. Repeated fields must all
// match, so they are allowed only when equal.
func ParseFilter(q string) (Filter, error) {
	var f Filter
	for _, term := range splitQuery(q) {
		key, val, ok := strings.Cut(term, ":")
		if !ok || val == "" {
			return Filter{}, fmt.Errorf("query term %q: want field:value (fields: %s)", term, strings.Join(FilterFields, ", "))
		}
		val = strings.Trim(val, `"`)
		set := func(dst *string) error {
			if *dst != "" && *dst != val {
				return fmt.Errorf("query gives %s twice (%q and %q)", key, *dst, val)
			}
			*dst = val
			return nil
		}
		var err error
		switch strings.ToLower(key) {
		case "kind":
			k := Kind(strings.ToLower(val))
			if k != KindReference && k != KindMeasurement {
				return Filter{}, fmt.Errorf("query term %q: kind is reference or measurement", term)
			}
			s := string(f.Kind)
			err = set(&s)
			f.Kind = k
		case "element":
			err = set(&f.Element)
		case "transition":
			err = set(&f.Transition)
		case "state":
			err = set(&f.State)
		case "compound":
			err = set(&f.Compound)
		case "name":
			err = set(&f.Name)
		default:
			tk, ok := strings.CutPrefix(key, "tag.")
			if !ok || tk == "" {
				return Filter{}, fmt.Errorf("query term %q: unknown field %q (fields: %s)", term, key, strings.Join(FilterFields, ", "))
			}
			if f.Tags == nil {
				f.Tags = map[string]string{}
			}
			f.Tags[tk] = val
		}
		if err != nil {
			return Filter{}, err
		}
	}
	return f, nil
}

// splitQuery splits on spaces outside double quotes.
func splitQuery(q string) []string {
	var out []string
	var cur strings.Builder
	inQ := false
	for _, r := range q {
		switch {
		case r == '"':
			inQ = !inQ
			cur.WriteRune(r)
		case (r == ' ' || r == '\t') && !inQ:
			if cur.Len() > 0 {
				out = append(out, cur.String())
				cur.Reset()
			}
		default:
			cur.WriteRune(r)
		}
	}
	if cur.Len() > 0 {
		out = append(out, cur.String())
	}
	return out
}

// Match reports whether e passes the filter.
func (f Filter) Match(e *Entry) bool {
	if f.Kind != "" && e.Kind != f.Kind {
		return false
	}
	if f.Element != "" && e.Element != f.Element {
		return false
	}
	if f.Transition != "" && !strings.EqualFold(e.Transition, f.Transition) {
		return false
	}
	if f.State != "" && !strings.EqualFold(e.State, f.State) {
		return false
	}
	if f.Compound != "" && !strings.EqualFold(e.Compound, f.Compound) {
		return false
	}
	if f.Name != "" && !strings.Contains(strings.ToLower(e.Name), strings.ToLower(f.Name)) {
		return false
	}
	for k, v := range f.Tags {
		if !strings.EqualFold(e.Tags[k], v) {
			return false
		}
	}
	return true
}
