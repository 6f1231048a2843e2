package lineshape

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Mode says whether a spectrum is the direct electron distribution N(E) (or
// E·N(E)) or its energy derivative dN/dE.
type Mode int

const (
	// Direct is N(E) or E·N(E) against kinetic energy.
	Direct Mode = iota
	// Derivative is dN/dE, as recorded by lock-in detection or computed.
	Derivative
)

// String returns "direct" or "derivative".
func (m Mode) String() string {
	switch m {
	case Direct:
		return "direct"
	case Derivative:
		return "derivative"
	}
	return fmt.Sprintf("Mode(%d)", int(m))
}

// ParseMode parses "direct" or "derivative" (also "dir", "diff", "n(e)",
// "dn/de", case-insensitive).
func ParseMode(s string) (Mode, error) {
	switch lower(s) {
	case "direct", "dir", "n(e)", "en(e)":
		return Direct, nil
	case "derivative", "diff", "differential", "dn/de":
		return Derivative, nil
	}
	return 0, fmt.Errorf("unknown spectrum mode %q (want direct or derivative)", s)
}

// MarshalText implements encoding.TextMarshaler.
func (m Mode) MarshalText() ([]byte, error) { return []byte(m.String()), nil }

// UnmarshalText implements encoding.TextUnmarshaler.
func (m *Mode) UnmarshalText(b []byte) error {
	v, err := ParseMode(string(b))
	if err != nil {
		return err
	}
	*m = v
	return nil
}

func lower(s string) string {
	b := []byte(s)
	for i, c := range b {
		if c >= 'A' && c <= 'Z' {
			b[i] = c + 'a' - 'A'
		}
	}
	return string(b)
}

// Meta holds what the source file says about how a spectrum was acquired.
// Zero values mean "not given" except where a field is a pointer, which is
// nil when not given (zero is a valid sputter time or pixel position).
type Meta struct {
	Source          string            `json:"source,omitempty"`           // file the spectrum was read from
	Block           int               `json:"block,omitempty"`            // 0-based block index in the source file
	BlockID         string            `json:"block_id,omitempty"`         // block identifier as written in the file
	Sample          string            `json:"sample,omitempty"`           // sample identifier
	Technique       string            `json:"technique,omitempty"`        // e.g. "AES diff", "AES dir"
	Comments        []string          `json:"comments,omitempty"`         // free-text comment lines
	BeamEnergyKeV   float64           `json:"beam_energy_kev,omitempty"`  // primary beam energy, keV
	BeamCurrentNA   float64           `json:"beam_current_na,omitempty"`  // primary beam current, nA
	DwellS          float64           `json:"dwell_s,omitempty"`          // dwell time per channel, s
	Scans           int               `json:"scans,omitempty"`            // number of scans accumulated
	ModulationEV    float64           `json:"modulation_ev,omitempty"`    // modulation peak-to-peak or differential width, eV
	EnergyReference string            `json:"energy_reference,omitempty"` // "fermi" or "vacuum"
	AnalyserMode    string            `json:"analyser_mode,omitempty"`    // e.g. "FAT", "FRR"
	TakeOffDeg      float64           `json:"take_off_deg,omitempty"`     // analyser take-off angle from the surface, degrees
	ExcitationEV    float64           `json:"excitation_ev,omitempty"`    // analysis source characteristic energy, eV
	Counts          bool              `json:"counts,omitempty"`           // values are raw counts (Poisson statistics apply)
	TimesEnergy     bool              `json:"times_energy,omitempty"`     // direct values are E·N(E)
	SputterTimeS    *float64          `json:"sputter_time_s,omitempty"`   // cumulative sputter time, s
	PixelX          *int              `json:"pixel_x,omitempty"`          // pixel column in a spectrum image
	PixelY          *int              `json:"pixel_y,omitempty"`          // pixel row in a spectrum image
	Extra           map[string]string `json:"extra,omitempty"`            // other named values (experimental variables, ...)
}

// Axis is a kinetic-energy axis in eV. It is uniform (Start + i*Step,
// i < N) when Values is nil, and explicit otherwise; explicit values are
// strictly increasing.
type Axis struct {
	Start  float64   `json:"start_ev"`
	Step   float64   `json:"step_ev"`
	N      int       `json:"n"`
	Values []float64 `json:"values_ev,omitempty"`
}

// Len returns the number of channels.
func (a Axis) Len() int {
	if a.Values != nil {
		return len(a.Values)
	}
	return a.N
}

// Uniform reports whether the axis is uniform.
func (a Axis) Uniform() bool { return a.Values == nil }

// At returns the energy of channel i in eV.
func (a Axis) At(i int) float64 {
	if a.Values != nil {
		return a.Values[i]
	}
	return a.Start + float64(i)*a.Step
}

// Lo returns the lowest energy, Hi the highest.
func (a Axis) Lo() float64 { return a.At(0) }

// Hi returns the highest energy on the axis.
func (a Axis) Hi() float64 { return a.At(a.Len() - 1) }

// Energies returns a new slice with every channel's energy.
func (a Axis) Energies() []float64 {
	e := make([]float64, a.Len())
	for i := range e {
		e[i] = a.At(i)
	}
	return e
}

// Spectrum is a spectrum against kinetic energy in eV.
//
// Operations return new spectra and leave their receiver alone; Meta is
// copied (shallowly, with Comments and Extra duplicated) into results.
type Spectrum struct {
	Axis Axis      `json:"axis"`
	Y    []float64 `json:"values"`
	Mode Mode      `json:"mode"`
	Meta Meta      `json:"meta"`
}

// uniformRelTol is the relative tolerance on step variation under which an
// explicit axis is recognised as uniform (text files carry 5-7 digits).
const uniformRelTol = 1e-6

// New returns a spectrum over explicit energies e (eV) with values y. A
// descending axis is reordered to ascending; an axis whose steps are equal to
// within 1e-6 relative is stored as uniform. Energies must be finite and
// distinct, values finite, and len(e) == len(y) >= 2.
func New(e, y []float64, mode Mode) (*Spectrum, error) {
	if len(e) != len(y) {
		return nil, fmt.Errorf("%d energies but %d values", len(e), len(y))
	}
	if len(e) < 2 {
		return nil, fmt.Errorf("%d channels: need at least 2", len(e))
	}
	ee := append([]float64(nil), e...)
	yy := append([]float64(nil), y...)
	for i := range ee {
		if !isFinite(ee[i]) {
			return nil, fmt.Errorf("channel %d: energy is %v", i, ee[i])
		}
		if !isFinite(yy[i]) {
			return nil, fmt.Errorf("channel %d (%.4g eV): value is %v", i, ee[i], yy[i])
		}
	}
	if ee[0] > ee[len(ee)-1] {
		reverse(ee)
		reverse(yy)
	}
	if !sort.Float64sAreSorted(ee) {
		// Not monotone: sort pairs so the error below names a duplicate if any.
		idx := make([]int, len(ee))
		for i := range idx {
			idx[i] = i
		}
		sort.SliceStable(idx, func(a, b int) bool { return ee[idx[a]] < ee[idx[b]] })
		e2, y2 := make([]float64, len(ee)), make([]float64, len(ee))
		for i, j := range idx {
			e2[i], y2[i] = ee[j], yy[j]
		}
		ee, yy = e2, y2
	}
	for i := 1; i < len(ee); i++ {
		if ee[i] <= ee[i-1] {
			return nil, fmt.Errorf("energy %.6g eV appears twice", ee[i])
		}
	}
	s := &Spectrum{Y: yy, Mode: mode}
	step := (ee[len(ee)-1] - ee[0]) / float64(len(ee)-1)
	uniform := true
	for i := 1; i < len(ee); i++ {
		if math.Abs((ee[i]-ee[i-1])-step) > uniformRelTol*math.Abs(step)+1e-9*math.Abs(ee[i]) {
			uniform = false
			break
		}
	}
	if uniform {
		s.Axis = Axis{Start: ee[0], Step: step, N: len(ee)}
	} else {
		s.Axis = Axis{Values: ee}
	}
	return s, nil
}

// NewUniform returns a spectrum on the uniform axis start + i*step. A
// negative step is turned into an ascending axis with the values reversed.
func NewUniform(start, step float64, y []float64, mode Mode) (*Spectrum, error) {
	if len(y) < 2 {
		return nil, fmt.Errorf("%d channels: need at least 2", len(y))
	}
	if !isFinite(start) || !isFinite(step) || step == 0 {
		return nil, fmt.Errorf("bad energy axis: start %v eV, step %v eV", start, step)
	}
	yy := append([]float64(nil), y...)
	for i, v := range yy {
		if !isFinite(v) {
			return nil, fmt.Errorf("channel %d (%.4g eV): value is %v", i, start+float64(i)*step, v)
		}
	}
	if step < 0 {
		start += float64(len(yy)-1) * step
		step = -step
		reverse(yy)
	}
	return &Spectrum{Axis: Axis{Start: start, Step: step, N: len(yy)}, Y: yy, Mode: mode}, nil
}

// KineticFromBinding converts binding energies (eV, Fermi-referenced) to
// kinetic energies KE = hv - BE for an excitation energy hv in eV. It is an
// error when hv is not known (zero, negative or not finite): a binding-energy
// axis cannot be placed on the kinetic scale without it.
func KineticFromBinding(binding []float64, excitationEV float64) ([]float64, error) {
	if !(excitationEV > 0) || math.IsInf(excitationEV, 0) {
		return nil, errors.New("binding-energy axis but no excitation energy given: cannot convert to kinetic energy")
	}
	ke := make([]float64, len(binding))
	for i, b := range binding {
		ke[i] = excitationEV - b
	}
	return ke, nil
}

// Len returns the number of channels.
func (s *Spectrum) Len() int { return len(s.Y) }

// Energy returns the energy of channel i in eV.
func (s *Spectrum) Energy(i int) float64 { return s.Axis.At(i) }

// Validate checks the axis and values for consistency: matching lengths, at
// least two channels, a positive step or strictly increasing explicit
// energies, and finite numbers.
func (s *Spectrum) Validate() error {
	if s.Axis.Len() != len(s.Y) {
		return fmt.Errorf("axis has %d channels but there are %d values", s.Axis.Len(), len(s.Y))
	}
	if len(s.Y) < 2 {
		return fmt.Errorf("%d channels: need at least 2", len(s.Y))
	}
	if s.Axis.Uniform() {
		if !isFinite(s.Axis.Start) || !isFinite(s.Axis.Step) || s.Axis.Step <= 0 {
			return fmt.Errorf("bad energy axis: start %v eV, step %v eV", s.Axis.Start, s.Axis.Step)
		}
	} else {
		for i, e := range s.Axis.Values {
			if !isFinite(e) {
				return fmt.Errorf("channel %d: energy is %v", i, e)
			}
			if i > 0 && e <= s.Axis.Values[i-1] {
				return fmt.Errorf("channel %d: energy %.6g eV not above %.6g eV", i, e, s.Axis.Values[i-1])
			}
		}
	}
	for i, v := range s.Y {
		if !isFinite(v) {
			return fmt.Errorf("channel %d (%.4g eV): value is %v", i, s.Energy(i), v)
		}
	}
	return nil
}

// Clone returns a deep copy of s.
func (s *Spectrum) Clone() *Spectrum {
	c := *s
	c.Y = append([]float64(nil), s.Y...)
	if s.Axis.Values != nil {
		c.Axis.Values = append([]float64(nil), s.Axis.Values...)
	}
	c.Meta = s.Meta.Clone()
	return &c
}

// Clone returns a copy of m that shares no slices, maps or pointers with it.
func (m Meta) Clone() Meta {
	c := m
	if m.Comments != nil {
		c.Comments = append([]string(nil), m.Comments...)
	}
	if m.Extra != nil {
		c.Extra = make(map[string]string, len(m.Extra))
		for k, v := range m.Extra {
			c.Extra[k] = v
		}
	}
	if m.SputterTimeS != nil {
		v := *m.SputterTimeS
		c.SputterTimeS = &v
	}
	if m.PixelX != nil {
		v := *m.PixelX
		c.PixelX = &v
	}
	if m.PixelY != nil {
		v := *m.PixelY
		c.PixelY = &v
	}
	return c
}

// withValues returns a spectrum with s's mode and metadata on axis a with
// values y (which it takes ownership of).
func (s *Spectrum) withValues(a Axis, y []float64) *Spectrum {
	return &Spectrum{Axis: a, Y: y, Mode: s.Mode, Meta: s.Meta.Clone()}
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func reverse(v []float64) {
	for i, j := 0, len(v)-1; i < j; i, j = i+1, j-1 {
		v[i], v[j] = v[j], v[i]
	}
}
