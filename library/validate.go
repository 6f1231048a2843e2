package library

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"

	"statemix/lineshape"
	"statemix/lineshape/quant"
)

// The three calls into package quant's periodic table, transition parser
// and Chung-Jenkins estimate are kept here.

// checkElement checks an element symbol (case-sensitive, as IUPAC writes
// it) and refuses H and He, which have no Auger transition.
func checkElement(symbol string) error {
	return quant.CheckAugerElement(symbol)
}

// checkTransition parses a transition in IUPAC / X-ray notation and
// returns its canonical spelling ("kl23l23" -> "KL23L23", "L2,3VV" ->
// "L23VV").
func checkTransition(t string) (string, error) {
	tr, err := quant.ParseTransition(t)
	if err != nil {
		return "", err
	}
	return tr.String(), nil
}

// estimateEnergy returns the Chung-Jenkins estimate of the transition's
// kinetic energy in eV (quant.EstimateEnergy, binding energies from xraylib
// 4.0.0), or the reason there is none.
func estimateEnergy(element, transition string) (float64, error) {
	tr, err := quant.ParseTransition(transition)
	if err != nil {
		return 0, err
	}
	return quant.EstimateEnergy(element, tr)
}

// Plausibility limits.
const (
	// minUsefulEV and maxUsefulEV bound the energies of useful Auger
	// electrons (common practice: about 50 eV - 3 keV; we warn outside
	// 20 eV - 3 keV).
	minUsefulEV = 20
	maxUsefulEV = 3000
	// maxEstimateOffEV is how far the main derivative feature may lie from
	// the Chung-Jenkins estimate before Add warns (DOMAIN.md: the estimate
	// is within about 15 eV of measured energies).
	maxEstimateOffEV = 20
)

// normalize checks an entry's labels and spectrum and brings them to
// canonical form, computing its ID. Errors are *ValidationError.
func normalize(e *Entry) error {
	who := e.Name
	if who == "" {
		who = e.Provenance.SourceFile
		if who != "" {
			who = fmt.Sprintf("%s block %d", who, e.Provenance.Block+1)
		}
	}
	bad := func(field string, err error) error {
		return &ValidationError{Entry: who, Field: field, Err: err}
	}
	switch e.Kind {
	case "":
		e.Kind = KindReference
	case KindReference, KindMeasurement:
	default:
		return bad("kind", fmt.Errorf("unknown kind %q (want reference or measurement)", e.Kind))
	}
	e.Name = strings.TrimSpace(e.Name)
	if err := checkName(e.Name); err != nil {
		return bad("name", err)
	}
	ref := e.Kind == KindReference
	e.Element = strings.TrimSpace(e.Element)
	if e.Element == "" {
		if ref {
			return bad("element", errors.New("a reference needs an element"))
		}
	} else if err := checkElement(e.Element); err != nil {
		return bad("element", err)
	}
	e.Transition = strings.TrimSpace(e.Transition)
	if e.Transition == "" {
		if ref {
			return bad("transition", errors.New("a reference needs a transition, e.g. KL23L23, L3M45M45, LVV"))
		}
	} else {
		t, err := checkTransition(e.Transition)
		if err != nil {
			return bad("transition", err)
		}
		e.Transition = t
	}
	if e.State == "" {
		if ref {
			return bad("state", fmt.Errorf("a reference needs a state (%s, or other:<text>)", strings.Join(States, ", ")))
		}
	} else {
		st, err := ParseState(e.State)
		if err != nil {
			return bad("state", err)
		}
		e.State = st
	}
	e.Compound = strings.TrimSpace(e.Compound)
	if strings.ContainsAny(e.Compound, "\n\r\t") {
		return bad("compound", errors.New("formula has control characters"))
	}
	for k := range e.Tags {
		if err := checkTagKey(k); err != nil {
			return bad("tag", err)
		}
	}
	if len(e.Tags) == 0 {
		e.Tags = nil
	}
	for _, q := range []struct {
		field string
		v     float64
	}{
		{"density_g_cm3", e.Density}, {"valence", e.Valence}, {"band_gap_ev", e.BandGap},
		{"beam_energy_kev", e.Acquisition.BeamEnergyKeV}, {"beam_current_na", e.Acquisition.BeamCurrentNA},
		{"modulation_ev", e.Acquisition.ModulationEV}, {"dwell_s", e.Acquisition.DwellS},
		{"take_off_deg", e.Acquisition.TakeOffDeg},
	} {
		if math.IsNaN(q.v) || math.IsInf(q.v, 0) || q.v < 0 {
			return bad(q.field, fmt.Errorf("%v: want a finite value >= 0", q.v))
		}
	}
	if e.Acquisition.Scans < 0 {
		return bad("scans", fmt.Errorf("%d: want >= 0", e.Acquisition.Scans))
	}
	if e.Spectrum == nil {
		return bad("spectrum", errors.New("no spectrum"))
	}
	if err := e.Spectrum.Validate(); err != nil {
		return bad("spectrum", err)
	}
	if e.Spectrum.Mode != lineshape.Direct && e.Spectrum.Mode != lineshape.Derivative {
		return bad("spectrum", fmt.Errorf("unknown mode %v", e.Spectrum.Mode))
	}
	if e.Kind == KindReference && len(e.Fit) > 0 {
		return bad("fit", errors.New("a reference carries no fit result"))
	}
	if len(e.Fit) > 0 {
		c, err := compactJSON(e.Fit)
		if err != nil {
			return bad("fit", fmt.Errorf("not valid JSON: %v", err))
		}
		e.Fit = c
	}
	id, err := ComputeID(e)
	if err != nil {
		return bad("fit", err)
	}
	e.ID = id
	e.Provenance.ImportedAt = e.Provenance.ImportedAt.UTC()
	e.ModifiedAt = e.ModifiedAt.UTC()
	return nil
}

// checkName refuses names that cannot be typed back: control characters,
// leading dashes (they read as flags).
func checkName(n string) error {
	if n == "" {
		return nil // a default is given later
	}
	if len(n) > 200 {
		return fmt.Errorf("%d characters: at most 200", len(n))
	}
	if strings.HasPrefix(n, "-") {
		return fmt.Errorf("%q starts with '-', which reads as a flag", n)
	}
	for _, r := range n {
		if unicode.IsControl(r) {
			return fmt.Errorf("%q has control characters", n)
		}
	}
	return nil
}

func checkTagKey(k string) error {
	if k == "" {
		return errors.New("empty tag key")
	}
	for _, r := range k {
		if !(unicode.IsLetter(r) || unicode.IsDigit(r) || r == '_' || r == '-' || r == '.') {
			return fmt.Errorf("tag key %q: use letters, digits, '_', '-', '.'", k)
		}
	}
	return nil
}

// applyEdits applies key=value edits to e (see EditKeys).
func applyEdits(e *Entry, set map[string]string) error {
	bad := func(key string, err error) error {
		return &ValidationError{Entry: e.Name, Field: key, Err: err}
	}
	num := func(key, v string, dst *float64) error {
		if v == "" {
			*dst = 0
			return nil
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			return bad(key, fmt.Errorf("%q is not a number", v))
		}
		*dst = f
		return nil
	}
	for key, v := range set {
		v = strings.TrimSpace(v)
		var err error
		switch key {
		case "name":
			if v == "" {
				return bad(key, errors.New("a name cannot be empty"))
			}
			e.Name = v
		case "element":
			e.Element = v
		case "transition":
			e.Transition = v
		case "state":
			e.State = v
		case "compound":
			e.Compound = v
		case "note":
			e.Note = v
		case "density_g_cm3", "density":
			err = num(key, v, &e.Density)
		case "valence":
			err = num(key, v, &e.Valence)
		case "band_gap_ev", "band_gap":
			err = num(key, v, &e.BandGap)
		case "beam_energy_kev":
			err = num(key, v, &e.Acquisition.BeamEnergyKeV)
		case "beam_current_na":
			err = num(key, v, &e.Acquisition.BeamCurrentNA)
		case "modulation_ev":
			err = num(key, v, &e.Acquisition.ModulationEV)
		case "dwell_s":
			err = num(key, v, &e.Acquisition.DwellS)
		case "take_off_deg":
			err = num(key, v, &e.Acquisition.TakeOffDeg)
		case "scans":
			if v == "" {
				e.Acquisition.Scans = 0
				break
			}
			n, perr := strconv.Atoi(v)
			if perr != nil {
				err = bad(key, fmt.Errorf("%q is not a whole number", v))
			}
			e.Acquisition.Scans = n
		case "analyser_mode":
			e.Acquisition.AnalyserMode = v
		case "energy_reference":
			if v != "" && v != "fermi" && v != "vacuum" {
				err = bad(key, fmt.Errorf("%q: want fermi or vacuum", v))
			}
			e.Acquisition.EnergyReference = v
		case "technique":
			e.Acquisition.Technique = v
		default:
			tk, ok := strings.CutPrefix(key, "tag.")
			if !ok {
				tk, ok = strings.CutPrefix(key, "tags.")
			}
			if !ok {
				return bad(key, fmt.Errorf("unknown key (editable: %s)", strings.Join(EditKeys, ", ")))
			}
			if err := checkTagKey(tk); err != nil {
				return bad(key, err)
			}
			if v == "" {
				delete(e.Tags, tk)
			} else {
				if e.Tags == nil {
					e.Tags = map[string]string{}
				}
				e.Tags[tk] = v
			}
		}
		if err != nil {
			return err
		}
	}
	return nil
}

// MainFeature returns the energy in eV of the spectrum's main feature: for a
// derivative spectrum the deepest minimum (the conventional derivative peak
// energy), for a direct one the highest maximum, as lineshape's Features
// defines PeakEnergy. A uniform spectrum of at least 9 channels is first
// smoothed by a 9-point quadratic Savitzky-Golay filter (the customary
// choice Features' documentation recommends), so single noisy channels do
// not move the feature. It reports false for spectra of fewer than 3
// channels. The plausibility and duplicate checks of Add use it.
func MainFeature(s *lineshape.Spectrum) (float64, bool) {
	if s == nil || len(s.Y) < 3 {
		return 0, false
	}
	if s.Axis.Uniform() && len(s.Y) >= 9 {
		if sm, err := s.Smooth(9, 2); err == nil {
			s = sm
		}
	}
	return s.Features(0).PeakEnergy, true
}

// intrinsicWarnings are the checks of one entry on its own: energy range
// and the Chung-Jenkins plausibility of its main feature.
func intrinsicWarnings(e *Entry) []Warning {
	var ws []Warning
	w := func(code, format string, args ...any) {
		ws = append(ws, Warning{Ref: e.ID, Name: e.Name, Code: code, Message: fmt.Sprintf(format, args...)})
	}
	lo, hi := e.EnergyRange()
	if lo < minUsefulEV || hi > maxUsefulEV {
		w(WarnEnergyRange, "spectrum covers %.4g-%.4g eV, outside %d eV - %d keV where useful Auger electrons lie", lo, hi, minUsefulEV, maxUsefulEV/1000)
	}
	if e.Kind != KindReference || e.Element == "" || e.Transition == "" {
		return ws
	}
	est, err := estimateEnergy(e.Element, e.Transition)
	if err != nil {
		w(WarnNoEstimate, "no Chung-Jenkins estimate to check the energy against: %v", err)
		return ws
	}
	feat, ok := MainFeature(e.Spectrum)
	if !ok {
		return ws
	}
	if d := feat - est; math.Abs(d) > maxEstimateOffEV {
		w(WarnTransitionEnergy, "main feature at %.1f eV is %.0f eV from the Chung-Jenkins estimate %.1f eV for %s %s: check element and transition", feat, math.Abs(d), est, e.Element, e.Transition)
	}
	return ws
}
