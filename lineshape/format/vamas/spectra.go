package vamas

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"statemix/lineshape"
)

// energyRefPrefix starts the block comment line in which FromSpectra keeps
// Meta.EnergyReference (the standard has no item for it); Spectra reads it
// back and leaves the line out of Meta.Comments.
const energyRefPrefix = "energy reference: "

// Spectra returns one spectrum per block, each with the block's first
// signal variable as values (see Spectrum). It fails on the first block that
// cannot be turned into a spectrum.
func (f *File) Spectra() ([]*lineshape.Spectrum, error) {
	out := make([]*lineshape.Spectrum, len(f.Blocks))
	base := f.pixelBase()
	for i := range f.Blocks {
		s, err := f.spectrum(i, -1, base)
		if err != nil {
			return nil, err
		}
		out[i] = s
	}
	return out, nil
}

// AbscissaVariable returns the index in Blocks[block].Variables of the
// corresponding variable that carries the abscissa in IRREGULAR scan mode:
// the first whose label mentions an energy, or failing that whose unit is
// eV or keV, or failing that the first. It returns -1 in the other scan
// modes, where the abscissa is not a corresponding variable.
func (f *File) AbscissaVariable(block int) int {
	if f.ScanMode != ScanIrregular {
		return -1
	}
	b := f.Blocks[block]
	for i, v := range b.Variables {
		if strings.Contains(strings.ToLower(v.Label), "energy") {
			return i
		}
	}
	for i, v := range b.Variables {
		if _, ok := energyUnit(v.Unit); ok {
			return i
		}
	}
	if len(b.Variables) > 0 {
		return 0
	}
	return -1
}

// Spectrum returns block as a spectrum with corresponding variable
// variable (an index into Blocks[block].Variables) as values; variable -1
// selects the first variable that is not the abscissa. block and variable
// out of range are programmer errors and panic.
//
// The abscissa must be an energy in eV or keV: a kinetic energy is used as
// it is; a binding energy (label containing "binding") is turned into
// kinetic energy with lineshape.KineticFromBinding and the analysis source
// characteristic energy, and without that energy it is an error. Meta is
// filled as follows (values given as 1E37 count as not given):
//
//   - Source, Block, BlockID, Sample, Technique, Comments: the file name,
//     the 0-based block, the block and sample identifiers, the technique,
//     the block comment lines.
//   - Mode is Derivative for technique "AES diff" and Direct otherwise;
//     ModulationEV is the differential width of an "AES diff" block.
//   - ExcitationEV is the analysis source characteristic energy. For
//     electron-excited techniques (AES, ELS, EDX) BeamEnergyKeV is the same
//     energy in keV and BeamCurrentNA the analysis source strength.
//   - DwellS is the signal collection time, Scans the number of scans,
//     AnalyserMode the analyser mode.
//   - TakeOffDeg, the take-off angle from the surface, is 90° minus the
//     angle between the analyser axis (take-off polar angle and azimuth)
//     and the sample normal (sample normal polar angle of tilt and tilt
//     azimuth, zero when not given). Both polar angles are measured from the
//     same axis, as ISO 14976 specifies the geometry; with an untilted sample
//     TakeOffDeg = 90 - take-off polar angle.
//   - EnergyReference is "fermi" for a binding-energy abscissa, else what a
//     block comment line "energy reference: X" says (FromSpectra writes it).
//   - SputterTimeS comes from the first experimental variable whose label
//     mentions "sputter" or "etch" (and not "depth" or "rate") with unit s,
//     min or h (converted to s), the unit taken from the label's end, as in
//     "Etch Time (min)", when the units line does not name a time; other
//     units leave it nil.
//   - PixelX and PixelY (MAP and MAPDP) are the block's x and y coordinates
//     made 0-based: ISO 14976 counts from 1, so 1 is subtracted, unless some
//     block of the file has coordinate 0, in which case the file is taken to
//     count from 0 already.
//   - Counts is set when the variable's unit is "counts", "count", "cts" or
//     "c"; for count rates ("c/s") it is not, since the values are not
//     Poisson counts themselves: the counts are value × DwellS × Scans.
//   - TimesEnergy is set when the variable's label reads E*N(E) or EN(E).
//   - Extra holds "ordinate_label" and "ordinate_unit" (the variable's),
//     "corresponding_variables" (all of them, "label [unit]" joined by "; ")
//     when there is more than one, "species", "transition", "signal_mode",
//     "source_label", "analyser_pass_energy", every experimental variable
//     as "experimental_variable:LABEL" = "VALUE UNIT" and every additional
//     numerical parameter as "parameter:LABEL" = "VALUE UNIT", where given.
func (f *File) Spectrum(block, variable int) (*lineshape.Spectrum, error) {
	return f.spectrum(block, variable, f.pixelBase())
}

// pixelBase is what map coordinates count from: 1 as ISO 14976 does, or 0
// when some block has coordinate 0.
func (f *File) pixelBase() int {
	if !hasMapXY(f.ExperimentMode) {
		return 1
	}
	for _, o := range f.Blocks {
		if o.X == 0 || o.Y == 0 {
			return 0
		}
	}
	return 1
}

func (f *File) spectrum(block, variable, base int) (*lineshape.Spectrum, error) {
	if block < 0 || block >= len(f.Blocks) {
		panic(fmt.Sprintf("vamas: block %d out of range [0,%d)", block, len(f.Blocks)))
	}
	b := f.Blocks[block]
	bad := func(format string, args ...any) error {
		return &lineshape.InputError{File: f.name, Line: b.line, Block: block, Err: fmt.Errorf(format, args...)}
	}
	if f.ScanMode == ScanMapping {
		return nil, bad("scan mode MAPPING: the block holds a map, not a spectrum")
	}
	ab := f.AbscissaVariable(block)
	if variable < 0 {
		variable = 0
		if variable == ab {
			variable = 1
		}
		if variable >= len(b.Variables) {
			return nil, bad("no corresponding variable besides the abscissa")
		}
	}
	if variable >= len(b.Variables) {
		panic(fmt.Sprintf("vamas: block %d: corresponding variable %d out of range [0,%d)", block, variable, len(b.Variables)))
	}
	if variable == ab {
		return nil, bad("corresponding variable %d is the abscissa", variable+1)
	}
	y := b.Data[variable]
	mode := lineshape.Direct
	if isAESDiff(b.Technique) {
		mode = lineshape.Derivative
	}
	hv := 0.0
	if Given(b.SourceEnergy) && b.SourceEnergy > 0 {
		hv = b.SourceEnergy
	}

	label, unit := b.AbscissaLabel, b.AbscissaUnit
	if ab >= 0 {
		label, unit = b.Variables[ab].Label, b.Variables[ab].Unit
	}
	scale, ok := energyUnit(unit)
	if !ok {
		if !strings.Contains(strings.ToLower(label), "energy") {
			return nil, bad("abscissa %q in %q is not an energy in eV", label, unit)
		}
		scale = 1 // an energy label with units left blank or unusual: take eV
	}
	binding := strings.Contains(strings.ToLower(label), "binding")

	var s *lineshape.Spectrum
	var err error
	switch {
	case ab < 0 && !binding && scale == 1:
		if !Given(b.AbscissaStart) || !Given(b.AbscissaStep) {
			return nil, bad("abscissa start or increment not given")
		}
		s, err = lineshape.NewUniform(b.AbscissaStart, b.AbscissaStep, y, mode)
	default:
		var e []float64
		if ab >= 0 {
			e = append([]float64(nil), b.Data[ab]...)
		} else {
			if !Given(b.AbscissaStart) || !Given(b.AbscissaStep) {
				return nil, bad("abscissa start or increment not given")
			}
			e = make([]float64, len(y))
			for i := range e {
				e[i] = b.AbscissaStart + float64(i)*b.AbscissaStep
			}
		}
		for i := range e {
			e[i] *= scale
		}
		if binding {
			e, err = lineshape.KineticFromBinding(e, hv)
			if err != nil {
				return nil, bad("%v", err)
			}
		}
		s, err = lineshape.New(e, y, mode)
	}
	if err != nil {
		return nil, bad("%v", err)
	}
	f.fillMeta(&s.Meta, block, variable, ab, binding, hv, base)
	return s, nil
}

// energyUnit returns the factor that turns an abscissa unit into eV.
func energyUnit(u string) (float64, bool) {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "ev":
		return 1, true
	case "kev":
		return 1000, true
	}
	return 0, false
}

// electronExcited reports techniques whose analysis source is an electron beam.
func electronExcited(t string) bool {
	switch strings.ToLower(strings.TrimSpace(t)) {
	case "aes diff", "aes dir", "els", "edx":
		return true
	}
	return false
}

func isCountUnit(u string) bool {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "counts", "count", "cts", "c":
		return true
	}
	return false
}

func isTimesEnergy(label string) bool {
	r := strings.NewReplacer(" ", "", "*", "", "·", "", ".", "", "x", "")
	s := r.Replace(strings.ToLower(label))
	return strings.HasPrefix(s, "en(e)")
}

// timeUnit returns the factor that turns a time unit into seconds.
func timeUnit(u string) (float64, bool) {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "s", "sec", "secs", "second", "seconds":
		return 1, true
	case "min", "mins", "minute", "minutes":
		return 60, true
	case "h", "hr", "hrs", "hour", "hours":
		return 3600, true
	case "ms":
		return 1e-3, true
	}
	return 0, false
}

// labelUnit returns the unit a label carries at its end in parentheses or
// brackets ("Etch Time (min)" gives "min"), or "".
func labelUnit(label string) string {
	l := strings.TrimSpace(label)
	if l == "" {
		return ""
	}
	closeCh := l[len(l)-1]
	openCh := map[byte]byte{')': '(', ']': '['}[closeCh]
	if openCh == 0 {
		return ""
	}
	i := strings.LastIndexByte(l, openCh)
	if i < 0 {
		return ""
	}
	return l[i+1 : len(l)-1]
}

// isSputterTime reports whether an experimental variable label names a
// sputter (etch) time.
func isSputterTime(label string) bool {
	l := strings.ToLower(label)
	if strings.Contains(l, "depth") || strings.Contains(l, "rate") {
		return false
	}
	return strings.Contains(l, "sputter") || strings.Contains(l, "etch")
}

func (f *File) fillMeta(m *lineshape.Meta, block, variable, ab int, binding bool, hv float64, base int) {
	b := f.Blocks[block]
	m.Source = f.name
	m.Block = block
	m.BlockID = b.ID
	m.Sample = b.Sample
	m.Technique = strings.TrimSpace(b.Technique)
	for _, c := range b.Comment {
		if strings.HasPrefix(c, energyRefPrefix) {
			m.EnergyReference = strings.TrimSpace(strings.TrimPrefix(c, energyRefPrefix))
			continue
		}
		m.Comments = append(m.Comments, c)
	}
	if binding {
		m.EnergyReference = "fermi"
	}
	m.ExcitationEV = hv
	if electronExcited(b.Technique) {
		m.BeamEnergyKeV = hv / 1000
		if Given(b.SourceStrength) && b.SourceStrength > 0 {
			m.BeamCurrentNA = b.SourceStrength
		}
	}
	if Given(b.CollectionTime) && b.CollectionTime > 0 {
		m.DwellS = b.CollectionTime
	}
	if b.Scans > 0 {
		m.Scans = b.Scans
	}
	if isAESDiff(b.Technique) && Given(b.DifferentialWidth) && b.DifferentialWidth > 0 {
		m.ModulationEV = b.DifferentialWidth
	}
	m.AnalyserMode = strings.TrimSpace(b.AnalyserMode)
	if Given(b.TakeOffPolar) {
		m.TakeOffDeg = takeOff(b)
	}
	for i, v := range f.Variables {
		if i >= len(b.VariableValues) || !Given(b.VariableValues[i]) {
			continue
		}
		if m.SputterTimeS == nil && isSputterTime(v.Label) {
			k, ok := timeUnit(v.Unit)
			if !ok {
				k, ok = timeUnit(labelUnit(v.Label)) // "Etch Time (min)" with no units
			}
			if ok {
				t := b.VariableValues[i] * k
				m.SputterTimeS = &t
			}
		}
	}
	if hasMapXY(f.ExperimentMode) {
		x, y := b.X-base, b.Y-base
		m.PixelX, m.PixelY = &x, &y
	}
	cv := b.Variables[variable]
	m.Counts = isCountUnit(cv.Unit)
	m.TimesEnergy = isTimesEnergy(cv.Label)

	ex := map[string]string{
		"ordinate_label": cv.Label,
		"ordinate_unit":  cv.Unit,
	}
	put := func(k, v string) {
		if strings.TrimSpace(v) != "" {
			ex[k] = v
		}
	}
	if n := len(b.Variables); n > 1 && !(n == 2 && ab >= 0) {
		var all []string
		for _, v := range b.Variables {
			all = append(all, v.Label+" ["+v.Unit+"]")
		}
		ex["corresponding_variables"] = strings.Join(all, "; ")
	}
	put("species", b.Species)
	put("transition", b.Transition)
	put("signal_mode", b.SignalMode)
	put("source_label", b.SourceLabel)
	if Given(b.PassEnergy) {
		ex["analyser_pass_energy"] = formatReal(b.PassEnergy)
	}
	for i, v := range f.Variables {
		if i < len(b.VariableValues) && Given(b.VariableValues[i]) {
			ex["experimental_variable:"+v.Label] = strings.TrimSpace(formatReal(b.VariableValues[i]) + " " + v.Unit)
		}
	}
	for _, p := range b.Params {
		if Given(p.Value) {
			ex["parameter:"+p.Label] = strings.TrimSpace(formatReal(p.Value) + " " + p.Unit)
		}
	}
	m.Extra = ex
}

// takeOff returns the analyser take-off angle from the sample surface in
// degrees: 90 minus the angle between the analyser axis and the sample
// normal, from the spherical law of cosines.
func takeOff(b *Block) float64 {
	rad := math.Pi / 180
	g := func(v float64) float64 {
		if Given(v) {
			return v
		}
		return 0
	}
	ta, pa := g(b.TakeOffPolar)*rad, g(b.TakeOffAzimuth)*rad
	ts, ps := g(b.TiltPolar)*rad, g(b.TiltAzimuth)*rad
	c := math.Cos(ta)*math.Cos(ts) + math.Sin(ta)*math.Sin(ts)*math.Cos(pa-ps)
	c = math.Max(-1, math.Min(1, c))
	if ts == 0 {
		return 90 - g(b.TakeOffPolar) // exact when the sample is not tilted
	}
	return 90 - math.Acos(c)/rad
}

// FromSpectra builds a file of experiment mode mode ("" means NORM) with
// one block per spectrum, so that Write and then Read and Spectra give the
// spectra back: values exactly, energies exactly on explicit axes and to
// rounding on uniform ones, and the Meta fields Spectrum fills.
//
// The scan mode is REGULAR when every axis is uniform, else IRREGULAR, with
// corresponding variables "Kinetic Energy" (eV) and the values. Technique
// is Meta.Technique, with "AES diff" for a derivative spectrum and "AES dir"
// for a direct one when it is empty or an AES technique of the other mode;
// a derivative spectrum of another technique is an error. Sputter times
// (Meta.SputterTimeS) go into an experimental variable "Sputter Time" in s,
// declared in the depth-profile modes (SDP, SDPSV, MAPDP, MAPSVDP) and
// whenever a spectrum has a sputter time, and written 1E37 for spectra
// without one; other experimental variables and additional numerical
// parameters that Spectrum recorded in Meta.Extra are written back. Pixel
// positions (required in MAP and MAPDP) go into the x and y coordinates,
// counted from 1. Items Meta has nothing for are written as
// 1E37 (reals), 0 (integers: date and time, sputtering ion) or blank
// (text).
func FromSpectra(specs []*lineshape.Spectrum, mode string) (*File, error) {
	if mode == "" {
		mode = ModeNORM
	}
	mode = strings.ToUpper(strings.TrimSpace(mode))
	if !isMode(mode) {
		return nil, fmt.Errorf("vamas: experiment mode %q: want NORM, SDP, SDPSV, MAP, MAPDP, MAPSV, MAPSVDP or SEM", mode)
	}
	if len(specs) == 0 {
		return nil, fmt.Errorf("vamas: no spectra to write")
	}
	f := &File{ExperimentMode: mode, ScanMode: ScanRegular, Comment: []string{"written by statemix"}}
	for i, s := range specs {
		if s == nil {
			return nil, fmt.Errorf("vamas: spectrum %d is nil", i+1)
		}
		if err := s.Validate(); err != nil {
			return nil, fmt.Errorf("vamas: spectrum %d: %w", i+1, err)
		}
		if !s.Axis.Uniform() {
			f.ScanMode = ScanIrregular
		}
	}
	sputter := depthProfile(mode)
	for _, s := range specs {
		if s.Meta.SputterTimeS != nil {
			sputter = true
		}
	}
	if sputter {
		f.Variables = []Variable{{Label: "Sputter Time", Unit: "s"}}
	}
	// Other experimental variables come back from Meta.Extra, as Spectrum
	// recorded them.
	skip := func(l string) bool { return sputter && isSputterTime(l) }
	names, units := extraNames(specs, "experimental_variable:", skip)
	for _, l := range names {
		f.Variables = append(f.Variables, Variable{Label: l, Unit: units[l]})
	}
	regions := map[string]bool{}
	for i, s := range specs {
		b, err := blockFrom(f, s, i, len(specs))
		if err != nil {
			return nil, err
		}
		if hasMapXY(mode) {
			if s.Meta.PixelX == nil || s.Meta.PixelY == nil {
				return nil, fmt.Errorf("vamas: spectrum %d: experiment mode %s needs a pixel position", i+1, mode)
			}
			if *s.Meta.PixelX < 0 || *s.Meta.PixelY < 0 {
				return nil, fmt.Errorf("vamas: spectrum %d: pixel position (%d, %d) is negative", i+1, *s.Meta.PixelX, *s.Meta.PixelY)
			}
			b.X, b.Y = *s.Meta.PixelX+1, *s.Meta.PixelY+1
			f.MapX, f.MapY = max(f.MapX, b.X), max(f.MapY, b.Y)
		}
		regions[fmt.Sprint(s.Axis.Lo(), s.Axis.Hi(), s.Len())] = true
		f.Blocks = append(f.Blocks, b)
	}
	if hasSpectralRegions(mode) {
		f.SpectralRegions = len(regions)
	}
	if hasMapXY(mode) {
		f.AnalysisPositions = len(specs)
	}
	return f, nil
}

func blockFrom(f *File, s *lineshape.Spectrum, i, n int) (*Block, error) {
	m := s.Meta
	nz := func(v float64) float64 {
		if v > 0 {
			return v
		}
		return NotGiven
	}
	tech := strings.TrimSpace(m.Technique)
	switch {
	case s.Mode == lineshape.Derivative && (tech == "" || strings.EqualFold(tech, TechAESDir) || isAESDiff(tech)):
		tech = TechAESDiff
	case s.Mode == lineshape.Direct && (tech == "" || isAESDiff(tech)):
		tech = TechAESDir
	case s.Mode == lineshape.Derivative:
		return nil, fmt.Errorf("vamas: spectrum %d: derivative spectrum of technique %q: ISO 14976 marks derivatives only as \"AES diff\"", i+1, tech)
	}
	b := &Block{
		ID:                m.BlockID,
		Sample:            m.Sample,
		Technique:         tech,
		SourceLabel:       m.Extra["source_label"],
		SourceEnergy:      NotGiven,
		SourceStrength:    NotGiven,
		SourceWidthX:      NotGiven,
		SourceWidthY:      NotGiven,
		FieldOfViewX:      NotGiven,
		FieldOfViewY:      NotGiven,
		SourcePolar:       NotGiven,
		SourceAzimuth:     NotGiven,
		AnalyserMode:      m.AnalyserMode,
		PassEnergy:        NotGiven,
		DifferentialWidth: nz(m.ModulationEV),
		Magnification:     NotGiven,
		WorkFunction:      NotGiven,
		TargetBias:        NotGiven,
		AnalysisWidthX:    NotGiven,
		AnalysisWidthY:    NotGiven,
		TakeOffPolar:      NotGiven,
		TakeOffAzimuth:    NotGiven,
		Species:           m.Extra["species"],
		Transition:        m.Extra["transition"],
		ParticleCharge:    -1,
		SignalMode:        m.Extra["signal_mode"],
		CollectionTime:    nz(m.DwellS),
		Scans:             m.Scans,
		TimeCorrection:    NotGiven,
		SputterEnergy:     NotGiven,
		SputterCurrent:    NotGiven,
		SputterWidthX:     NotGiven,
		SputterWidthY:     NotGiven,
		SputterPolar:      NotGiven,
		SputterAzimuth:    NotGiven,
		TiltPolar:         NotGiven,
		TiltAzimuth:       NotGiven,
		Rotation:          NotGiven,
	}
	if b.ID == "" {
		b.ID = "block " + strconv.Itoa(i+1)
	}
	switch t := strings.ToLower(tech); t {
	case "edx", "xrf":
		b.ParticleCharge = 0 // photons are detected
	}
	b.Comment = append([]string(nil), m.Comments...)
	if m.EnergyReference != "" {
		b.Comment = append(b.Comment, energyRefPrefix+m.EnergyReference)
	}
	switch {
	case m.ExcitationEV > 0:
		b.SourceEnergy = m.ExcitationEV
	case m.BeamEnergyKeV > 0:
		b.SourceEnergy = m.BeamEnergyKeV * 1000
	}
	if electronExcited(tech) && m.BeamCurrentNA > 0 {
		b.SourceStrength = m.BeamCurrentNA
	}
	if v, err := strconv.ParseFloat(m.Extra["analyser_pass_energy"], 64); err == nil && !math.IsInf(v, 0) && !math.IsNaN(v) {
		b.PassEnergy = v
	}
	if m.TakeOffDeg > 0 {
		b.TakeOffPolar = 90 - m.TakeOffDeg
	}
	if b.Scans < 0 {
		b.Scans = 0
	}
	b.VariableValues = make([]float64, len(f.Variables))
	for k, v := range f.Variables {
		b.VariableValues[k] = NotGiven
		if k == 0 && v.Label == "Sputter Time" && m.SputterTimeS != nil {
			b.VariableValues[k] = *m.SputterTimeS
		} else if x, _, ok := extraValue(m.Extra["experimental_variable:"+v.Label]); ok {
			b.VariableValues[k] = x
		}
	}
	params, punits := extraNames([]*lineshape.Spectrum{s}, "parameter:", func(string) bool { return false })
	for _, l := range params {
		x, _, _ := extraValue(m.Extra["parameter:"+l])
		b.Params = append(b.Params, Param{Label: l, Unit: punits[l], Value: x})
	}
	if depthProfile(f.ExperimentMode) {
		b.SputterMode = ""
	}
	if hasLinescan(f.ExperimentMode) {
		b.Linescan = [6]int{1, 1, n, 1, n, 1}
	}
	label := m.Extra["ordinate_label"]
	if label == "" || (m.TimesEnergy && !isTimesEnergy(label)) {
		label = "Intensity"
		if m.TimesEnergy {
			label = "E*N(E)"
		}
	}
	if !m.TimesEnergy && isTimesEnergy(label) {
		label = "Intensity"
	}
	unit := m.Extra["ordinate_unit"]
	switch {
	case m.Counts && !isCountUnit(unit):
		unit = "counts"
	case !m.Counts && isCountUnit(unit), unit == "":
		unit = "d"
	}
	y := append([]float64(nil), s.Y...)
	if f.ScanMode == ScanRegular {
		b.AbscissaLabel, b.AbscissaUnit = "Kinetic Energy", "eV"
		b.AbscissaStart, b.AbscissaStep = s.Axis.Start, s.Axis.Step
		b.Variables = []Variable{{Label: label, Unit: unit}}
		b.Data = [][]float64{y}
	} else {
		b.Variables = []Variable{{Label: "Kinetic Energy", Unit: "eV"}, {Label: label, Unit: unit}}
		b.Data = [][]float64{s.Axis.Energies(), y}
	}
	b.Min, b.Max = minMax(b.Data)
	clearInapplicable(f, b)
	return b, nil
}

// extraValue splits an Extra value "VALUE UNIT" as Spectrum writes it.
func extraValue(s string) (v float64, unit string, ok bool) {
	num, unit, _ := strings.Cut(strings.TrimSpace(s), " ")
	v, err := parseReal(num)
	if err != nil {
		return 0, "", false
	}
	return v, strings.TrimSpace(unit), true
}

// extraNames returns the sorted labels of the Extra keys with prefix across
// specs, with the unit first seen for each.
func extraNames(specs []*lineshape.Spectrum, prefix string, skip func(string) bool) ([]string, map[string]string) {
	units := map[string]string{}
	var names []string
	for _, s := range specs {
		for k, v := range s.Meta.Extra {
			label, ok := strings.CutPrefix(k, prefix)
			if !ok || skip(label) {
				continue
			}
			if _, u, ok := extraValue(v); ok {
				if _, seen := units[label]; !seen {
					units[label] = u
					names = append(names, label)
				}
			}
		}
	}
	sort.Strings(names)
	return names, units
}
