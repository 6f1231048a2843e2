package fit

import (
	"fmt"
	"math"
	"strings"

	"statemix/lineshape"
)

// Reference is a reference spectrum of a known chemical state.
type Reference struct {
	ID      string // library id (may be empty for ad-hoc references)
	Name    string // human name
	Element string // element symbol
	State   string // chemical state
	// Spectrum is the reference, at the relative intensity it was recorded
	// with. Prepare does not modify it.
	Spectrum *lineshape.Spectrum
}

// Label returns the name, else the id, else the state of r.
func (r Reference) Label() string {
	switch {
	case r.Name != "":
		return r.Name
	case r.ID != "":
		return r.ID
	case r.State != "":
		return r.State
	}
	return "(unnamed reference)"
}

// Model is a prepared fit: the references on the fit grid, the background
// basis and the shift scan tables. It is read-only after Prepare, so one
// Model may fit many spectra (a depth profile, a map) concurrently.
type Model struct {
	opts Options // resolved
	refs []Reference
	mode lineshape.Mode // mode of the fit

	// lockIn > 0 means unknowns are direct and converted by lock-in
	// emulation with this peak-to-peak modulation (eV) before fitting.
	lockIn     float64
	modulation float64 // modulation the fit works at, 0 if not known

	window       [2]float64
	start, step  float64
	n            int
	energy       []float64
	basis        [][]float64 // Legendre background columns
	basisGram    []float64   // basis_a . basis_b, q x q
	curves       []*lineshape.Curve
	bound        float64     // |shift| bound, 0 for ShiftNone
	shifts       []float64   // scan grid of shifts, eV
	zero         [][]float64 // [ref][channel]: references at zero shift
	search       searchSpace // the shift search's smoothed problem
	refScale     []float64   // normalisation scale of each reference (1 if none)
	warnings     []string
	unknownLabel string
}

// Window returns the fit window [lo, hi] in eV (the first and last grid
// energies).
func (m *Model) Window() [2]float64 { return m.window }

// Mode returns the mode the fit works in.
func (m *Model) Mode() lineshape.Mode { return m.mode }

// Modulation returns the peak-to-peak modulation (eV) the derivative fit
// works at, or 0 if it is a direct fit or the modulation is not recorded.
func (m *Model) Modulation() float64 { return m.modulation }

// Options returns the options with their defaults filled in.
func (m *Model) Options() Options { return m.opts }

// References returns the references in fit order.
func (m *Model) References() []Reference { return append([]Reference(nil), m.refs...) }

// Points returns the number of channels in the fit window.
func (m *Model) Points() int { return m.n }

// Warnings returns what Prepare found worth saying (truncated window,
// mixed elements, near collinearity, ...).
func (m *Model) Warnings() []string { return append([]string(nil), m.warnings...) }

// inputErr returns a *lineshape.InputError about file.
func inputErr(file string, format string, args ...any) error {
	return &lineshape.InputError{File: file, Block: -1, Err: fmt.Errorf(format, args...)}
}

const (
	minChannels       = 20
	modulationRelTol  = 0.10    // modulations within 10 % are taken as equal
	collinearError    = 1e7     // condition number of the scaled design: refuse
	collinearWarning  = 1e3     // condition number of the scaled design: warn
	nearCollinearCorr = 0.95    // detrended pairwise correlation of references: warn
	multipleCorr      = 0.99995 // plain correlation that prints as 1.0000: a multiple
	modulationAbsTolV = 0.05    // eV
)

// Prepare brings unknown and refs to one mode and one grid and returns the
// model that Fit uses. The unknown fixes the grid (its channels inside the
// window; a non-uniform axis is resampled to its mean step) and, with the
// references, the mode: if any spectrum is a derivative, direct spectra are
// converted by lock-in emulation (lineshape.Spectrum.LockIn) with the
// derivative spectra's modulation. Derivative spectra recorded with
// modulations that differ by more than 10 % cannot be reconciled (a
// recorded modulation cannot be undone) and are refused.
//
// Bad input (no references, a reference given twice, an unknown that is
// zero, not finite or does not overlap the references, a window with fewer
// than 20 channels or less than half of the requested one) is reported as
// a *lineshape.InputError; collinear references as a *CollinearError.
func Prepare(unknown *lineshape.Spectrum, refs []Reference, opts Options) (*Model, error) {
	if unknown == nil {
		panic("fit: Prepare with a nil unknown")
	}
	o := opts.resolved()
	deg := o.BackgroundDegree()
	ulabel := unknown.Meta.Source
	if ulabel == "" {
		ulabel = "unknown spectrum"
	}
	m := &Model{opts: o, unknownLabel: ulabel}

	if len(refs) == 0 {
		return nil, inputErr(ulabel, "no references to fit with")
	}
	if err := unknown.Validate(); err != nil {
		return nil, inputErr(ulabel, "%v", err)
	}
	if allZero(unknown.Y) {
		return nil, inputErr(ulabel, "the spectrum is zero in every channel")
	}
	seen := map[string]int{}
	elements := map[string]bool{}
	for i, r := range refs {
		if r.Spectrum == nil {
			return nil, inputErr(r.Label(), "reference has no spectrum")
		}
		if err := r.Spectrum.Validate(); err != nil {
			return nil, inputErr(r.Label(), "reference spectrum: %v", err)
		}
		if allZero(r.Spectrum.Y) {
			return nil, inputErr(r.Label(), "reference spectrum is zero in every channel")
		}
		if r.ID != "" {
			if j, ok := seen[r.ID]; ok {
				return nil, inputErr(r.Label(), "reference %s is given twice (positions %d and %d)", r.ID, j+1, i+1)
			}
			seen[r.ID] = i
		}
		for j := 0; j < i; j++ {
			if sameSpectrum(refs[j].Spectrum, r.Spectrum) {
				return nil, inputErr(r.Label(), "references %s and %s have identical spectra: give each reference once", refs[j].Label(), r.Label())
			}
		}
		if o.Element != "" && r.Element != "" && !strings.EqualFold(o.Element, r.Element) {
			return nil, inputErr(r.Label(), "reference is of element %s, but the analysis is for %s", r.Element, o.Element)
		}
		if r.Element != "" {
			elements[strings.ToLower(r.Element)] = true
		}
	}
	if len(elements) > 1 {
		var els []string
		for _, r := range refs {
			if r.Element != "" {
				els = append(els, r.Label()+"="+r.Element)
			}
		}
		m.warnings = append(m.warnings, "references of different elements are fitted together ("+strings.Join(els, ", ")+"): fractions then mix elements")
	}

	if o.Shift != ShiftNone {
		if err := checkMaxShift(o.MaxShift, unknown); err != nil {
			return nil, err
		}
	}

	// Uniform unknown.
	u := unknown
	if !u.Axis.Uniform() {
		n := u.Len()
		step := (u.Axis.Hi() - u.Axis.Lo()) / float64(n-1)
		r, err := u.Resample(u.Axis.Lo(), step, n)
		if err != nil {
			return nil, inputErr(ulabel, "resampling the non-uniform energy axis: %v", err)
		}
		u = r
		m.warnings = append(m.warnings, fmt.Sprintf("the unknown's energy axis is not uniform: resampled to %s eV steps", plain(step, 4)))
	}

	// Mode and modulation.
	mode := lineshape.Direct
	if u.Mode == lineshape.Derivative {
		mode = lineshape.Derivative
	}
	for _, r := range refs {
		if r.Spectrum.Mode == lineshape.Derivative {
			mode = lineshape.Derivative
		}
	}
	m.mode = mode
	k, err := m.reconcileModulation(u, refs)
	if err != nil {
		return nil, err
	}
	m.modulation = k
	conv := make([]*lineshape.Spectrum, len(refs))
	trim := make([]float64, len(refs)) // eV lost at each end by conversion
	for i, r := range refs {
		s := r.Spectrum
		if mode == lineshape.Derivative && s.Mode == lineshape.Direct {
			if !s.Axis.Uniform() {
				n := s.Len()
				rs, err := s.Resample(s.Axis.Lo(), (s.Axis.Hi()-s.Axis.Lo())/float64(n-1), n)
				if err != nil {
					return nil, inputErr(r.Label(), "resampling the non-uniform energy axis: %v", err)
				}
				s = rs
			}
			d, err := s.LockIn(k)
			if err != nil {
				return nil, inputErr(r.Label(), "lock-in emulation with %s eV modulation: %v", plain(k, 3), err)
			}
			s = d
			trim[i] = k / 2
		}
		conv[i] = s
	}
	utrim := 0.0
	if mode == lineshape.Derivative && u.Mode == lineshape.Direct {
		m.lockIn = k
		utrim = k / 2
	}
	m.refScale = make([]float64, len(refs))
	for i := range conv {
		m.refScale[i] = 1
		if o.Normalize != lineshape.NormNone {
			s, scale, err := conv[i].Normalize(o.Normalize)
			if err != nil {
				return nil, inputErr(refs[i].Label(), "normalising: %v", err)
			}
			conv[i], m.refScale[i] = s, scale
		}
	}
	if o.Normalize != lineshape.NormNone {
		m.warnings = append(m.warnings, fmt.Sprintf("references normalised (%v): fractions are shares of normalised signal, not of the signal of pure standards at their recorded intensity", o.Normalize))
	}

	// Window.
	m.bound = o.MaxShift
	if o.Shift == ShiftNone {
		m.bound = 0
	}
	lo, hi := u.Axis.Lo()+utrim, u.Axis.Hi()-utrim
	for i, s := range conv {
		rlo, rhi := s.Axis.Lo()+trim[i]+m.bound, s.Axis.Hi()-trim[i]-m.bound
		if rlo >= rhi {
			return nil, inputErr(refs[i].Label(), "reference covers %s-%s eV, too short to be compared anywhere when shifted by up to %s eV either way",
				plain(s.Axis.Lo(), 6), plain(s.Axis.Hi(), 6), plain(m.bound, 4))
		}
		if rlo >= hi || rhi <= lo {
			if m.bound == 0 {
				return nil, inputErr(refs[i].Label(), "reference covers %s-%s eV, which does not overlap the unknown's %s-%s eV",
					plain(s.Axis.Lo(), 6), plain(s.Axis.Hi(), 6), plain(u.Axis.Lo(), 6), plain(u.Axis.Hi(), 6))
			}
			return nil, inputErr(refs[i].Label(), "reference covers %s-%s eV; shifted by up to %s eV either way it is known at every shift only in %s-%s eV, which does not overlap the unknown's %s-%s eV",
				plain(s.Axis.Lo(), 6), plain(s.Axis.Hi(), 6), plain(m.bound, 4), plain(rlo, 6), plain(rhi, 6), plain(u.Axis.Lo(), 6), plain(u.Axis.Hi(), 6))
		}
		lo, hi = math.Max(lo, rlo), math.Min(hi, rhi)
	}
	if lo >= hi {
		return nil, inputErr(ulabel, "the references have no energy range in common with each other and the unknown")
	}
	if w := o.Window; w != [2]float64{} {
		if !(w[0] < w[1]) {
			return nil, inputErr(ulabel, "window %s:%s eV: low end must be below the high end", plain(w[0], 5), plain(w[1], 5))
		}
		clo, chi := math.Max(lo, w[0]), math.Min(hi, w[1])
		if chi-clo < 0.5*(w[1]-w[0]) {
			return nil, inputErr(ulabel, "window %s:%s eV: the unknown and all references (allowing shifts of up to %s eV) only cover %s-%s eV of it, less than half", plain(w[0], 5), plain(w[1], 5), plain(m.bound, 3), plain(lo, 5), plain(hi, 5))
		}
		if clo > w[0]+1e-9 || chi < w[1]-1e-9 {
			m.warnings = append(m.warnings, fmt.Sprintf("window truncated from %s:%s eV to %s:%s eV, the range covered by the unknown and all references (allowing shifts of up to %s eV)", plain(w[0], 5), plain(w[1], 5), plain(clo, 5), plain(chi, 5), plain(m.bound, 3)))
		}
		lo, hi = clo, chi
	}
	step := u.Axis.Step
	i0 := int(math.Ceil((lo-u.Axis.Start)/step - 1e-9))
	i1 := int(math.Floor((hi-u.Axis.Start)/step + 1e-9))
	if i0 < 0 {
		i0 = 0
	}
	if i1 > u.Len()-1 {
		i1 = u.Len() - 1
	}
	n := i1 - i0 + 1
	if n < minChannels {
		return nil, inputErr(ulabel, "fit window %s-%s eV holds %d channels: need at least %d", plain(lo, 5), plain(hi, 5), max(n, 0), minChannels)
	}
	m.start, m.step, m.n = u.Axis.At(i0), step, n
	m.energy = make([]float64, n)
	for i := range m.energy {
		m.energy[i] = m.start + float64(i)*step
	}
	m.window = [2]float64{m.energy[0], m.energy[n-1]}

	// Background basis: Legendre polynomials on the window mapped to [-1, 1].
	m.basis = legendreBasis(m.energy, deg)
	q := len(m.basis)
	m.basisGram = make([]float64, q*q)
	for a := 0; a < q; a++ {
		for b := 0; b < q; b++ {
			m.basisGram[a*q+b] = dot(m.basis[a], m.basis[b])
		}
	}

	// Curves and scan tables.
	m.refs = append([]Reference(nil), refs...)
	m.curves = make([]*lineshape.Curve, len(conv))
	for i, s := range conv {
		m.curves[i] = s.Curve()
	}
	if m.bound == 0 {
		m.shifts = []float64{0}
	} else {
		half := int(math.Ceil(m.bound/o.ScanStep - 1e-9))
		h := m.bound / float64(half)
		m.shifts = make([]float64, 2*half+1)
		for j := range m.shifts {
			m.shifts[j] = -m.bound + float64(j)*h
		}
		m.shifts[half] = 0
	}
	m.zero = make([][]float64, len(conv))
	for i, c := range m.curves {
		m.zero[i] = make([]float64, n)
		c.SampleShifted(m.zero[i], m.start, m.step, 0)
		if allZero(m.zero[i]) {
			return nil, inputErr(refs[i].Label(), "reference is zero across the fit window %s-%s eV", plain(m.window[0], 5), plain(m.window[1], 5))
		}
	}
	if m.bound > 0 {
		m.prepareSearch(conv)
	}
	if err := m.checkCollinear(); err != nil {
		return nil, err
	}
	return m, nil
}

// prepareSearch sets up the smoothed problem of the shift search: the
// kernel SD is kernelWidth times the coarsest node spacing of the unknown
// and the converted references; the window loses the kernelCut SDs at each
// end that the smoothing of the unknown needs. If less than half the
// window would remain, the search uses the interpolated references and
// the unsmoothed unknown, with a warning.
func (m *Model) prepareSearch(conv []*lineshape.Spectrum) {
	h := m.step
	for _, s := range conv {
		h = math.Max(h, maxSpacing(s))
	}
	sp := &m.search
	sp.sigma = kernelWidth * h
	sp.r = int(math.Floor(kernelCut*sp.sigma/m.step + 1e-9))
	sp.n = m.n - 2*sp.r
	if sp.n < max(minChannels/2, m.n/2) {
		m.warnings = append(m.warnings, fmt.Sprintf("the fit window is too short for the smoothing kernel of the shift search (%s eV SD): reference noise may pull the shift towards whole channels", plain(sp.sigma, 3)))
		sp.sigma, sp.r, sp.n = 0, 0, m.n
	}
	if sp.sigma > 0 {
		sp.taps = make([]float64, 2*sp.r+1)
		sum := 0.0
		for t := range sp.taps {
			x := float64(t-sp.r) * m.step
			sp.taps[t] = math.Exp(-x * x / (2 * sp.sigma * sp.sigma))
			sum += sp.taps[t]
		}
		for t := range sp.taps {
			sp.taps[t] /= sum
		}
	}
	sp.samplers = make([]*kernelSampler, len(conv))
	for i, s := range conv {
		sp.samplers[i] = newKernelSampler(s, sp.sigma, m.curves[i])
	}
	sp.basis = make([][]float64, len(m.basis))
	for a, b := range m.basis {
		sp.basis[a] = b[sp.r : sp.r+sp.n : sp.r+sp.n]
	}
	q := len(sp.basis)
	sp.basisGram = make([]float64, q*q)
	for a := 0; a < q; a++ {
		for b := 0; b < q; b++ {
			sp.basisGram[a*q+b] = dot(sp.basis[a], sp.basis[b])
		}
	}
	sp.tables = make([][][]float64, len(conv))
	for i := range conv {
		sp.tables[i] = make([][]float64, len(m.shifts))
		flat := make([]float64, len(m.shifts)*sp.n)
		for j, d := range m.shifts {
			t := flat[j*sp.n : (j+1)*sp.n : (j+1)*sp.n]
			m.searchRef(t, i, d)
			sp.tables[i][j] = t
		}
	}
}

// searchRef fills dst (length of the search space) with reference i
// shifted by d eV as the shift search sees it.
func (m *Model) searchRef(dst []float64, i int, d float64) {
	sp := &m.search
	m.search.samplers[i].sample(dst, m.start+float64(sp.r)*m.step, m.step, d)
}

// reconcileModulation returns the modulation the fit works at.
func (m *Model) reconcileModulation(u *lineshape.Spectrum, refs []Reference) (float64, error) {
	if m.mode == lineshape.Direct {
		return 0, nil
	}
	type rec struct {
		label string
		k     float64
	}
	var recorded []rec
	var unrecorded []string
	needConversion := u.Mode == lineshape.Direct
	if u.Mode == lineshape.Derivative {
		if u.Meta.ModulationEV > 0 {
			recorded = append(recorded, rec{"the unknown", u.Meta.ModulationEV})
		} else {
			unrecorded = append(unrecorded, "the unknown")
		}
	}
	for _, r := range refs {
		s := r.Spectrum
		if s.Mode == lineshape.Direct {
			needConversion = true
			continue
		}
		if s.Meta.ModulationEV > 0 {
			recorded = append(recorded, rec{"reference " + r.Label(), s.Meta.ModulationEV})
		} else {
			unrecorded = append(unrecorded, "reference "+r.Label())
		}
	}
	same := func(a, b float64) bool {
		return math.Abs(a-b) <= math.Max(modulationRelTol*math.Max(a, b), modulationAbsTolV)
	}
	k := m.opts.Modulation
	if k < 0 || math.IsNaN(k) || math.IsInf(k, 0) {
		return 0, inputErr(m.unknownLabel, "modulation %v eV is not a positive number", k)
	}
	if k > 0 {
		for _, r := range recorded {
			if !same(r.k, k) {
				return 0, inputErr(m.unknownLabel, "%s was recorded with %s eV modulation, but %s eV is asked for: a recorded modulation cannot be changed; leave the modulation unset or use references recorded at %s eV", r.label, plain(r.k, 3), plain(k, 3), plain(k, 3))
			}
		}
	} else if len(recorded) > 0 {
		k = recorded[0].k
		for _, r := range recorded[1:] {
			if !same(r.k, k) {
				return 0, inputErr(m.unknownLabel, "%s was recorded with %s eV modulation but %s with %s eV: derivative lineshapes depend on the modulation and a recorded one cannot be undone; record the references at the unknown's modulation, or fit direct spectra", recorded[0].label, plain(recorded[0].k, 3), r.label, plain(r.k, 3))
			}
		}
	}
	if needConversion && k == 0 {
		var direct, deriv []string
		for _, r := range refs {
			if r.Spectrum.Mode == lineshape.Direct {
				direct = append(direct, r.Label())
			} else {
				deriv = append(deriv, r.Label())
			}
		}
		ud := u.Mode == lineshape.Direct
		nd, nv := len(direct), len(deriv)
		if ud {
			nd++
		} else {
			nv++
		}
		return 0, inputErr(m.unknownLabel, "%s %s direct but %s %s derivative: the direct %s must be converted by lock-in emulation at the derivative %s modulation, which %s; give the peak-to-peak modulation in eV (Options.Modulation, --modulation EV on the command line)",
			spectraList(ud, direct), isAre(nd), spectraList(!ud, deriv), isAre(nv), plural(nd, "spectrum", "spectra"),
			plural(nv, "spectrum's", "spectra's"), plural(nv, "it does not record", "none of them records"))
	} // A modulation given in the options is what the user asked for: no
	// need to say that it is assumed.
	if len(unrecorded) > 0 && (len(recorded) > 0 || needConversion) && m.opts.Modulation == 0 {
		m.warnings = append(m.warnings, fmt.Sprintf("modulation not recorded for %s: assumed to be %s eV like the others", strings.Join(unrecorded, ", "), plain(k, 3)))
	}
	return k, nil
}

// MaxShiftLimit is the largest Options.MaxShift Prepare accepts, in eV.
// Chemical shifts in AES are a few eV and charging rarely moves a line by
// more than tens of eV; a larger bound is a typing mistake.
const MaxShiftLimit = 50

// checkMaxShift refuses a shift bound above MaxShiftLimit or one not below
// the unknown's energy range (a bound of more than half the range leaves
// no window either, which the window checks of Prepare then explain).
func checkMaxShift(b float64, u *lineshape.Spectrum) error {
	const opt = "(Options.MaxShift, --max-shift on the command line)"
	if b > MaxShiftLimit || math.IsInf(b, 0) || math.IsNaN(b) {
		return &lineshape.InputError{Block: -1, Err: fmt.Errorf("maximum shift %s eV %s is more than %d eV: chemical shifts and charging are a few to tens of eV; give a bound of at most %d eV",
			plain(b, 4), opt, MaxShiftLimit, MaxShiftLimit)}
	}
	if u.Len() >= 2 {
		span := u.Axis.Hi() - u.Axis.Lo()
		if b >= span {
			return &lineshape.InputError{Block: -1, Err: fmt.Errorf("maximum shift %s eV %s is not less than the energy range of the unknown, %s-%s eV (%s eV): give a bound well below that range",
				plain(b, 4), opt, plain(u.Axis.Lo(), 6), plain(u.Axis.Hi(), 6), plain(span, 4))}
		}
	}
	return nil
}

// spectraList names the unknown (if unknown) and the references labels:
// "the unknown and references A, B and C".
func spectraList(unknown bool, labels []string) string {
	var parts []string
	if unknown {
		parts = append(parts, "the unknown")
	}
	switch len(labels) {
	case 0:
	case 1:
		parts = append(parts, "reference "+labels[0])
	default:
		parts = append(parts, "references "+strings.Join(labels[:len(labels)-1], ", ")+" and "+labels[len(labels)-1])
	}
	return strings.Join(parts, " and ")
}

// isAre returns "is" for one and "are" for more.
func isAre(n int) string { return plural(n, "is", "are") }

// plural returns one for n == 1 and many otherwise.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// checkCollinear refuses references that are collinear with each other (or
// the background) in the window at zero shift and warns when they are
// nearly so: when two reference columns, with the background projected
// out, correlate more strongly than nearCollinearCorr, or else when the
// condition number of the scaled design exceeds collinearWarning.
func (m *Model) checkCollinear() error {
	k := len(m.refs)
	cols := make([][]float64, 0, k+len(m.basis))
	for i := 0; i < k; i++ {
		cols = append(cols, m.zero[i])
	}
	cols = append(cols, m.basis...)
	cond, a, b, corr := condition(cols)
	if cond > collinearError || math.IsInf(cond, 0) || math.IsNaN(cond) {
		return m.collinearError(cols, a, b, cond, corr)
	}
	warned := false
	for _, p := range correlatedPairs(m.zero, m.basis, nearCollinearCorr) {
		m.warnings = append(m.warnings, m.alikeWarning(p, ""))
		warned = true
	}
	if !warned && cond > collinearWarning {
		m.warnings = append(m.warnings, fmt.Sprintf("%s and %s are nearly collinear in the fit window (condition number %s, partial correlation %.4f): their fractions trade off against each other and their uncertainties are large",
			m.columnName(a), m.columnName(b), plain(cond, 3), corr))
	}
	return nil
}

// alikeWarning says that the references of p are alike; where, if not
// empty, says at which shifts.
func (m *Model) alikeWarning(p pair, where string) string {
	na, nb := m.refs[p.a].Label(), m.refs[p.b].Label()
	effect := "strongly anti-correlated"
	if p.r < 0 {
		effect = "strongly correlated"
	}
	return fmt.Sprintf("references %s and %s are alike in the fit window%s (correlation %.3f once the background is allowed for, above %.2f): fractions of %s and %s are %s; their uncertainties are large",
		na, nb, where, p.r, nearCollinearCorr, na, nb, effect)
}

// columnName names column i of the design: a reference or a background
// term.
func (m *Model) columnName(i int) string {
	if i < len(m.refs) {
		return m.refs[i].Label()
	}
	return fmt.Sprintf("background term %d", i-len(m.refs))
}

// collinearError builds the error for columns a and b of cols (the first
// len(m.refs) are references), with the condition number and the
// correlation condition returned.
func (m *Model) collinearError(cols [][]float64, a, b int, cond, corr float64) *CollinearError {
	e := &CollinearError{A: m.columnName(a), B: m.columnName(b), Condition: cond, Correlation: corr,
		refA: a < len(m.refs), refB: b < len(m.refs)}
	if a != b && a < len(cols) && b < len(cols) {
		raw := dot(cols[a], cols[b]) / math.Sqrt(dot(cols[a], cols[a])*dot(cols[b], cols[b]))
		if math.Abs(raw) >= multipleCorr {
			e.Correlation, e.Multiple = raw, true
		}
	}
	return e
}

// pair is two reference columns and their correlation.
type pair struct {
	a, b int
	r    float64
}

// correlatedPairs returns the pairs of columns of refs whose correlation,
// after projecting the basis columns out of each, exceeds thr in absolute
// value. With no basis it is the uncentred correlation (cosine); with a
// constant in the basis it is the Pearson correlation of the columns
// detrended by the background, the one that decides how much the two
// coefficients trade off: for two references alone the SD of each
// coefficient grows by 1/sqrt(1-r^2).
func correlatedPairs(refs, basis [][]float64, thr float64) []pair {
	// Orthonormal basis by modified Gram-Schmidt (a few columns).
	var ortho [][]float64
	for _, b := range basis {
		v := append([]float64(nil), b...)
		for _, q := range ortho {
			axpy(v, -dot(v, q), q)
		}
		if nv := math.Sqrt(dot(v, v)); nv > 0 {
			for i := range v {
				v[i] /= nv
			}
			ortho = append(ortho, v)
		}
	}
	res := make([][]float64, len(refs))
	for i, c := range refs {
		v := append([]float64(nil), c...)
		for _, q := range ortho {
			axpy(v, -dot(v, q), q)
		}
		res[i] = v
	}
	var out []pair
	for i := range res {
		for j := i + 1; j < len(res); j++ {
			r := dot(res[i], res[j]) / math.Sqrt(dot(res[i], res[i])*dot(res[j], res[j]))
			if math.Abs(r) > thr {
				out = append(out, pair{i, j, r})
			}
		}
	}
	return out
}

// axpy sets y += a x.
func axpy(y []float64, a float64, x []float64) {
	for i := range y {
		y[i] += a * x[i]
	}
}

// CollinearError reports references that cannot be told apart in the fit
// window: the scaled design matrix has condition number Condition (+Inf
// when singular), and A and B are the pair (references or background
// terms) with the largest partial correlation, Correlation (the plain
// correlation when Multiple is set or the design is singular). Multiple is
// set when one of the pair is a multiple of the other (plain correlation
// +/-1 to 4 decimals).
type CollinearError struct {
	A, B        string
	Condition   float64
	Correlation float64
	Multiple    bool

	refA, refB bool // A, B are references (else background terms)
}

func (e *CollinearError) Error() string {
	var who string
	switch {
	case e.refA && e.refB:
		who = "references " + e.A + " and " + e.B
	case e.refA:
		who = "reference " + e.A + " and " + e.B
	case e.refB:
		who = e.A + " and reference " + e.B
	default:
		who = e.A + " and " + e.B
	}
	var why string
	switch {
	case e.Multiple:
		why = fmt.Sprintf("correlation %.4f: one is a multiple of the other", e.Correlation)
	case !math.IsInf(e.Condition, 0) && !math.IsNaN(e.Condition) && e.Correlation != 0:
		why = fmt.Sprintf("correlation %.4f once the other references and the background are allowed for", e.Correlation)
	default:
		why = "one is a combination of the other references and the background"
	}
	return fmt.Sprintf("%s are collinear in the fit window (%s): their fractions cannot be told apart; drop one of them", who, why)
}

func allZero(v []float64) bool {
	for _, x := range v {
		if x != 0 {
			return false
		}
	}
	return true
}

func sameSpectrum(a, b *lineshape.Spectrum) bool {
	if a == b {
		return true
	}
	if a.Len() != b.Len() || a.Mode != b.Mode {
		return false
	}
	for i := range a.Y {
		if a.Y[i] != b.Y[i] || a.Energy(i) != b.Energy(i) {
			return false
		}
	}
	return true
}

// legendreBasis returns Legendre polynomials P_0..P_deg of t = 2(E-lo)/(hi-lo)-1.
func legendreBasis(e []float64, deg int) [][]float64 {
	if deg < 0 {
		return nil
	}
	n := len(e)
	lo, hi := e[0], e[n-1]
	b := make([][]float64, deg+1)
	for j := range b {
		b[j] = make([]float64, n)
	}
	for i, x := range e {
		t := 2*(x-lo)/(hi-lo) - 1
		b[0][i] = 1
		if deg >= 1 {
			b[1][i] = t
		}
		for j := 1; j < deg; j++ {
			b[j+1][i] = (float64(2*j+1)*t*b[j][i] - float64(j)*b[j-1][i]) / float64(j+1)
		}
	}
	return b
}

func dot(a, b []float64) float64 {
	var s0, s1, s2, s3 float64
	n := len(a)
	b = b[:n]
	i := 0
	for ; i+4 <= n; i += 4 {
		s0 += a[i] * b[i]
		s1 += a[i+1] * b[i+1]
		s2 += a[i+2] * b[i+2]
		s3 += a[i+3] * b[i+3]
	}
	for ; i < n; i++ {
		s0 += a[i] * b[i]
	}
	return (s0 + s1) + (s2 + s3)
}
