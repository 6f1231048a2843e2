package delimited

import (
	"math"
	"strconv"
	"strings"

	"statemix/lineshape"
)

// metaKey is acquisition metadata written as a "# key: value" comment
// line. The keys are the JSON names of lineshape.Meta.
type metaKey struct {
	key string
	// get returns the value to write, or "" to write nothing.
	get func(m *lineshape.Meta, mode lineshape.Mode) string
	// set stores a value read back and reports whether it is one.
	set func(m *lineshape.Meta, mode **lineshape.Mode, v string) bool
}

// fnum formats a float in the shortest form that reads back exactly, ""
// for 0.
func fnum(v float64) string {
	if v == 0 {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// positive parses a finite positive number.
func positive(v string) (float64, bool) {
	x, err := strconv.ParseFloat(v, 64)
	return x, err == nil && x > 0 && !math.IsInf(x, 0)
}

// nonNegative parses a finite number that is not negative.
func nonNegative(v string) (float64, bool) {
	x, err := strconv.ParseFloat(v, 64)
	return x, err == nil && x >= 0 && !math.IsInf(x, 0)
}

// text returns a metaKey for a string field.
func text(key string, field func(m *lineshape.Meta) *string) metaKey {
	return metaKey{key,
		func(m *lineshape.Meta, _ lineshape.Mode) string { return oneLine(*field(m)) },
		func(m *lineshape.Meta, _ **lineshape.Mode, v string) bool {
			if v == "" {
				return false
			}
			*field(m) = v
			return true
		}}
}

// number returns a metaKey for a positive float field.
func number(key string, field func(m *lineshape.Meta) *float64) metaKey {
	return metaKey{key,
		func(m *lineshape.Meta, _ lineshape.Mode) string { return fnum(*field(m)) },
		func(m *lineshape.Meta, _ **lineshape.Mode, v string) bool {
			x, ok := positive(v)
			if ok {
				*field(m) = x
			}
			return ok
		}}
}

// metaKeys lists the metadata Write records and Read reads back, in the
// order they are written.
var metaKeys = []metaKey{
	{"mode",
		func(_ *lineshape.Meta, mode lineshape.Mode) string { return mode.String() },
		func(_ *lineshape.Meta, mode **lineshape.Mode, v string) bool {
			md, err := lineshape.ParseMode(v)
			if err != nil {
				return false
			}
			*mode = &md
			return true
		}},
	text("sample", func(m *lineshape.Meta) *string { return &m.Sample }),
	text("technique", func(m *lineshape.Meta) *string { return &m.Technique }),
	number("beam_energy_kev", func(m *lineshape.Meta) *float64 { return &m.BeamEnergyKeV }),
	number("beam_current_na", func(m *lineshape.Meta) *float64 { return &m.BeamCurrentNA }),
	number("dwell_s", func(m *lineshape.Meta) *float64 { return &m.DwellS }),
	{"scans",
		func(m *lineshape.Meta, _ lineshape.Mode) string {
			if m.Scans <= 0 {
				return ""
			}
			return strconv.Itoa(m.Scans)
		},
		func(m *lineshape.Meta, _ **lineshape.Mode, v string) bool {
			n, err := strconv.Atoi(v)
			if err != nil || n <= 0 {
				return false
			}
			m.Scans = n
			return true
		}},
	number("modulation_ev", func(m *lineshape.Meta) *float64 { return &m.ModulationEV }),
	text("energy_reference", func(m *lineshape.Meta) *string { return &m.EnergyReference }),
	text("analyser_mode", func(m *lineshape.Meta) *string { return &m.AnalyserMode }),
	number("take_off_deg", func(m *lineshape.Meta) *float64 { return &m.TakeOffDeg }),
	number("excitation_ev", func(m *lineshape.Meta) *float64 { return &m.ExcitationEV }),
	{"sputter_time_s",
		func(m *lineshape.Meta, _ lineshape.Mode) string {
			if m.SputterTimeS == nil {
				return ""
			}
			return strconv.FormatFloat(*m.SputterTimeS, 'g', -1, 64)
		},
		func(m *lineshape.Meta, _ **lineshape.Mode, v string) bool {
			x, ok := nonNegative(v)
			if ok {
				m.SputterTimeS = &x
			}
			return ok
		}},
}

// oneLine replaces line breaks by spaces.
func oneLine(s string) string { return strings.NewReplacer("\r", " ", "\n", " ").Replace(s) }

// metaLines returns the "key: value" comment lines (without "# ") for the
// metadata all of specs share, in the order of metaKeys. The mode is
// written only if withMode: a header row's value names already say it.
func metaLines(specs []*lineshape.Spectrum, withMode bool) []string {
	var out []string
	for _, k := range metaKeys {
		if k.key == "mode" && !withMode {
			continue
		}
		v := k.get(&specs[0].Meta, specs[0].Mode)
		if v == "" {
			continue
		}
		same := true
		for _, s := range specs[1:] {
			if k.get(&s.Meta, s.Mode) != v {
				same = false
				break
			}
		}
		if same {
			out = append(out, k.key+": "+v)
		}
	}
	return out
}

// splitMeta sorts leading comment lines into metadata ("key: value" with a
// known key and a valid value), applied to meta and mode, and the other
// comments, which it returns.
func splitMeta(comments []string, meta *lineshape.Meta, mode **lineshape.Mode) []string {
	var rest []string
	for _, c := range comments {
		key, v, ok := strings.Cut(c, ":")
		if ok {
			key = strings.ToLower(strings.TrimSpace(key))
			v = strings.TrimSpace(v)
			ok = false
			for _, k := range metaKeys {
				if k.key == key {
					ok = k.set(meta, mode, v)
					break
				}
			}
		}
		if !ok {
			rest = append(rest, c)
		}
	}
	return rest
}
