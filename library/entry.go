package library

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"time"

	"statemix/lineshape"
)

// Kind says whether an entry is a reference standard or an archived
// measurement.
type Kind string

// The entry kinds.
const (
	KindReference   Kind = "reference"   // a standard of known chemical state, in refs/
	KindMeasurement Kind = "measurement" // an archived unknown and its fit, in runs/
)

// Provenance records where an entry's spectrum came from.
type Provenance struct {
	SourceFile   string    `json:"source_file,omitempty"`   // file name as given when added
	SourceSHA256 string    `json:"source_sha256,omitempty"` // SHA-256 of the source file, hex
	Block        int       `json:"block"`                   // 0-based block index in the source file
	BlockID      string    `json:"block_id,omitempty"`      // block identifier as written in the file
	ImportedAt   time.Time `json:"imported_at"`             // when the entry was added (UTC)
	ToolVersion  string    `json:"tool_version,omitempty"`  // program and version that added it
}

// Acquisition holds the acquisition conditions recorded with a spectrum.
// Zero values mean "not given".
type Acquisition struct {
	BeamEnergyKeV   float64 `json:"beam_energy_kev,omitempty"`  // primary beam energy, keV
	BeamCurrentNA   float64 `json:"beam_current_na,omitempty"`  // primary beam current, nA
	ModulationEV    float64 `json:"modulation_ev,omitempty"`    // modulation peak-to-peak or differential width, eV
	DwellS          float64 `json:"dwell_s,omitempty"`          // dwell per channel, s
	Scans           int     `json:"scans,omitempty"`            // scans accumulated
	AnalyserMode    string  `json:"analyser_mode,omitempty"`    // e.g. "FAT", "FRR"
	EnergyReference string  `json:"energy_reference,omitempty"` // "fermi" or "vacuum"
	Technique       string  `json:"technique,omitempty"`        // e.g. "AES diff"
	TakeOffDeg      float64 `json:"take_off_deg,omitempty"`     // analyser take-off angle, degrees
}

// AcquisitionFromMeta copies the acquisition conditions a source file gave.
func AcquisitionFromMeta(m lineshape.Meta) Acquisition {
	return Acquisition{
		BeamEnergyKeV:   m.BeamEnergyKeV,
		BeamCurrentNA:   m.BeamCurrentNA,
		ModulationEV:    m.ModulationEV,
		DwellS:          m.DwellS,
		Scans:           m.Scans,
		AnalyserMode:    m.AnalyserMode,
		EnergyReference: m.EnergyReference,
		Technique:       m.Technique,
		TakeOffDeg:      m.TakeOffDeg,
	}
}

// Entry is one reference or measurement: labels, provenance, acquisition
// conditions and the spectrum itself.
type Entry struct {
	ID          string            `json:"id"`                   // see ComputeID; set by Store.Add
	Kind        Kind              `json:"kind"`                 // "reference" (default when empty) or "measurement"
	Name        string            `json:"name"`                 // unique in the library
	Element     string            `json:"element,omitempty"`    // element symbol, e.g. "Ti"; required for references
	Transition  string            `json:"transition,omitempty"` // e.g. "L3M23M23", "KLL"; required for references
	State       string            `json:"state,omitempty"`      // one of States or "other:<text>"; required for references
	Compound    string            `json:"compound,omitempty"`   // formula, e.g. "TiN"
	Tags        map[string]string `json:"tags,omitempty"`       // free key=value labels
	Note        string            `json:"note,omitempty"`       // free text
	Provenance  Provenance        `json:"provenance"`
	Acquisition Acquisition       `json:"acquisition"`

	// Optional quantification data for matrix corrections (IMFP by TPP-2M).
	Density float64 `json:"density_g_cm3,omitempty"` // g/cm3
	Valence float64 `json:"valence,omitempty"`       // valence electrons per formula unit
	BandGap float64 `json:"band_gap_ev,omitempty"`   // eV

	Revision   int       `json:"revision"`             // library revision of the last write of this entry
	ModifiedAt time.Time `json:"modified_at,omitzero"` // time of the last edit (UTC); zero if never edited

	Spectrum *lineshape.Spectrum `json:"spectrum"`
	// Fit holds, for a measurement, the fit result it got (the statemix.fit/v1
	// document); nil for references. Add and the readers hold it compacted
	// (encoding/json.Compact); files hold it indented.
	Fit json.RawMessage `json:"fit,omitempty"`
}

// entryFile is the on-disk form of an entry.
type entryFile struct {
	Format  string `json:"format"`
	Version int    `json:"version"`
	Entry
}

const (
	entryFormat  = "statemix-entry"
	entryVersion = 1
)

// EnergyRange returns the lowest and highest energy of the entry's spectrum
// in eV, or zeros when it has none.
func (e *Entry) EnergyRange() (lo, hi float64) {
	if e.Spectrum == nil || e.Spectrum.Axis.Len() == 0 {
		return 0, 0
	}
	return e.Spectrum.Axis.Lo(), e.Spectrum.Axis.Hi()
}

// Clone returns a deep copy of e.
func (e *Entry) Clone() *Entry {
	c := *e
	if e.Tags != nil {
		c.Tags = make(map[string]string, len(e.Tags))
		for k, v := range e.Tags {
			c.Tags[k] = v
		}
	}
	if e.Spectrum != nil {
		c.Spectrum = e.Spectrum.Clone()
	}
	if e.Fit != nil {
		c.Fit = append(json.RawMessage(nil), e.Fit...)
	}
	return &c
}

// kind returns e.Kind with the empty kind read as a reference.
func (e *Entry) kind() Kind {
	if e.Kind == "" {
		return KindReference
	}
	return e.Kind
}

// folder returns the library subfolder the entry's file lives in.
func (k Kind) folder() string {
	if k == KindMeasurement {
		return "runs"
	}
	return "refs"
}

// ComputeID returns the entry's identity: the first 12 hexadecimal digits
// of SHA-256 over, in order,
//
//	"statemix-entry-id/v1\n"
//	kind ("reference" or "measurement") and "\n"
//	mode ("direct" or "derivative") and "\n"
//	"uniform\n" + start, step (float64 bits, big-endian) + n (uint64), or
//	"explicit\n" + n (uint64) + each energy (float64 bits)
//	n (uint64) + each value (float64 bits, big-endian)
//	for measurements: "fit\n" + the fit JSON compacted (encoding/json.Compact)
//
// Labels are not included, so editing them keeps the ID. e.Spectrum must
// not be nil.
func ComputeID(e *Entry) (string, error) {
	if e.Spectrum == nil {
		return "", fmt.Errorf("entry %q has no spectrum", e.Name)
	}
	s := e.Spectrum
	h := sha256.New()
	var b [8]byte
	putU := func(v uint64) {
		binary.BigEndian.PutUint64(b[:], v)
		h.Write(b[:])
	}
	putF := func(v float64) { putU(math.Float64bits(v)) }
	fmt.Fprintf(h, "statemix-entry-id/v1\n%s\n%s\n", e.kind(), s.Mode)
	if s.Axis.Uniform() {
		h.Write([]byte("uniform\n"))
		putF(s.Axis.Start)
		putF(s.Axis.Step)
		putU(uint64(s.Axis.N))
	} else {
		h.Write([]byte("explicit\n"))
		putU(uint64(len(s.Axis.Values)))
		for _, v := range s.Axis.Values {
			putF(v)
		}
	}
	putU(uint64(len(s.Y)))
	for _, v := range s.Y {
		putF(v)
	}
	if e.kind() == KindMeasurement && len(e.Fit) > 0 {
		var buf bytes.Buffer
		if err := json.Compact(&buf, e.Fit); err != nil {
			return "", fmt.Errorf("entry %q: fit result is not valid JSON: %v", e.Name, err)
		}
		h.Write([]byte("fit\n"))
		h.Write(buf.Bytes())
	}
	return hex.EncodeToString(h.Sum(nil))[:idLen], nil
}

// idLen is the number of hex digits in an ID; minPrefix the shortest prefix
// Resolve accepts.
const (
	idLen     = 12
	minPrefix = 4
)

// isID reports whether s looks like a full entry ID.
func isID(s string) bool {
	return len(s) == idLen && isHex(s)
}

func isHex(s string) bool {
	for _, c := range s {
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return s != ""
}

// States are the chemical states a reference may carry, besides
// "other:<text>".
var States = []string{"metal", "oxide", "nitride", "carbide", "silicide", "sulfide", "hydroxide", "fluoride", "boride"}

// ParseState checks a chemical state and returns it in canonical form
// (lower case; "other:" keeps its text as given, trimmed).
func ParseState(s string) (string, error) {
	t := strings.TrimSpace(s)
	l := strings.ToLower(t)
	for _, v := range States {
		if l == v {
			return v, nil
		}
	}
	if strings.HasPrefix(l, "other:") {
		text := strings.TrimSpace(t[len("other:"):])
		if text == "" {
			return "", fmt.Errorf("state %q: other: needs a description, e.g. other:oxynitride", s)
		}
		if strings.ContainsAny(text, "\n\r\t") {
			return "", fmt.Errorf("state %q: description has control characters", s)
		}
		return "other:" + text, nil
	}
	return "", fmt.Errorf("unknown state %q (want one of %s, or other:<text>)", s, strings.Join(States, ", "))
}
