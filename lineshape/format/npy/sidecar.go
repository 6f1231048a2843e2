package npy

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"strconv"
	"strings"

	"statemix/internal/atomicfile"
	"statemix/lineshape"
)

// Sidecar describes the energy axis of a spectrum-image cube. It is stored
// as <name>.json beside <name>.npy (DESIGN.md), with the optional
// modulation_ev of a derivative cube:
//
//	{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "pixel_um": 0.2, "modulation_ev": 2}
type Sidecar struct {
	StartEV float64 `json:"start_ev"` // kinetic energy of channel 0, eV
	StepEV  float64 `json:"step_ev"`  // channel spacing, eV, > 0
	Mode    string  `json:"mode"`     // "derivative" or "direct"
	PixelUM float64 `json:"pixel_um"` // pixel pitch, µm; 0 if not known
	// ModulationEV is the peak-to-peak modulation (eV) a derivative cube
	// was recorded with; 0 if not known (and left out of the JSON). It
	// means nothing for a direct cube.
	ModulationEV float64 `json:"modulation_ev,omitempty"`
}

// Meta returns the acquisition metadata the sidecar records, for the
// spectra of the cube at source: the source and the modulation.
func (s *Sidecar) Meta(source string) lineshape.Meta {
	m := lineshape.Meta{Source: source}
	if s.Mode == "derivative" {
		m.ModulationEV = s.ModulationEV
	}
	return m
}

// SidecarPath returns the sidecar path of a cube: the cube's path with a
// final ".npy" replaced by ".json" (or ".json" appended).
func SidecarPath(cubePath string) string {
	if strings.HasSuffix(strings.ToLower(cubePath), ".npy") {
		return cubePath[:len(cubePath)-4] + ".json"
	}
	return cubePath + ".json"
}

// maxSidecar bounds the sidecar size in bytes.
const maxSidecar = 1 << 20

// ReadSidecar reads and validates the sidecar of the cube at cubePath.
// start_ev, step_ev and mode are required; pixel_um and modulation_ev may
// be left out; other fields are ignored so later versions can add some.
// Errors are *lineshape.InputError values naming the sidecar and, for JSON
// syntax errors, the line; a missing sidecar is one that wraps
// fs.ErrNotExist.
func ReadSidecar(cubePath string) (*Sidecar, error) {
	path := SidecarPath(cubePath)
	f, err := os.Open(path)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, &lineshape.InputError{File: path, Block: -1,
				Err: fmt.Errorf("sidecar missing: the spectrum image %s needs one beside it, such as {\"start_ev\": 1330, \"step_ev\": 0.5, \"mode\": \"derivative\", \"pixel_um\": 2} (%w)", cubePath, fs.ErrNotExist)}
		}
		return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("reading the sidecar: %w", unwrapPath(err))}
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, maxSidecar+1))
	if err != nil {
		return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("reading the sidecar: %w", unwrapPath(err))}
	}
	if len(b) > maxSidecar {
		return nil, lineshape.Errorf(path, 0, "sidecar longer than %d bytes", maxSidecar)
	}
	return ParseSidecar(b, path)
}

// ParseSidecar parses and validates sidecar JSON; name is used in errors.
func ParseSidecar(b []byte, name string) (*Sidecar, error) {
	var raw struct {
		StartEV *float64 `json:"start_ev"`
		StepEV  *float64 `json:"step_ev"`
		Mode    *string  `json:"mode"`
		PixelUM *float64 `json:"pixel_um"`
		// ModulationEV is optional.
		ModulationEV *float64 `json:"modulation_ev"`
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	if err := dec.Decode(&raw); err != nil {
		line := 0
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line = lineOf(b, se.Offset)
		case errors.As(err, &te):
			line = lineOf(b, te.Offset)
		}
		return nil, lineshape.Errorf(name, line, "sidecar: %v", err)
	}
	if dec.More() {
		return nil, lineshape.Errorf(name, lineOf(b, dec.InputOffset()), "sidecar: more than one JSON value")
	}
	for _, f := range []struct {
		key string
		ok  bool
	}{{"start_ev", raw.StartEV != nil}, {"step_ev", raw.StepEV != nil}, {"mode", raw.Mode != nil}} {
		if !f.ok {
			return nil, lineshape.Errorf(name, 0, "sidecar: %q missing", f.key)
		}
	}
	s := &Sidecar{StartEV: *raw.StartEV, StepEV: *raw.StepEV, Mode: *raw.Mode}
	if raw.PixelUM != nil {
		s.PixelUM = *raw.PixelUM
	}
	if raw.ModulationEV != nil {
		s.ModulationEV = *raw.ModulationEV
	}
	if err := s.Validate(); err != nil {
		return nil, lineshape.Errorf(name, 0, "sidecar: %v", err)
	}
	return s, nil
}

// lineOf returns the 1-based line of byte offset off.
func lineOf(b []byte, off int64) int {
	if off > int64(len(b)) {
		off = int64(len(b))
	}
	if off < 0 {
		off = 0
	}
	return 1 + bytes.Count(b[:off], []byte{'\n'})
}

// maxEnergy bounds sidecar energies in eV; electron spectroscopy stays far
// below 1 MeV.
const maxEnergy = 1e6

// maxModulation bounds modulation_ev in eV: lock-in modulations are a few
// eV, and one of 100 eV would smear out every Auger line.
const maxModulation = 100

// plain formats v in plain decimal notation, never with an exponent.
func plain(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// unwrapPath drops the *fs.PathError around err, whose path the
// *lineshape.InputError already names.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return fmt.Errorf("%s: %w", pe.Op, pe.Err)
	}
	return err
}

// Validate checks the sidecar: a finite start between 0 and 1 MeV, a
// positive finite step, a known mode, a pixel pitch that is not negative
// and a modulation from 0 (not known) to 100 eV.
func (s *Sidecar) Validate() error {
	if !(s.StartEV >= 0 && s.StartEV <= maxEnergy) {
		return fmt.Errorf("start_ev %s: want a kinetic energy from 0 to %s eV", plain(s.StartEV), plain(maxEnergy))
	}
	if !(s.StepEV > 0 && s.StepEV <= maxEnergy) {
		return fmt.Errorf("step_ev %s: want a positive step of at most %s eV", plain(s.StepEV), plain(maxEnergy))
	}
	if s.Mode != "derivative" && s.Mode != "direct" {
		return fmt.Errorf("mode %q: want \"derivative\" or \"direct\"", s.Mode)
	}
	if !(s.PixelUM >= 0) || math.IsInf(s.PixelUM, 0) {
		return fmt.Errorf("pixel_um %s: want a pitch of 0 (unknown) or more", plain(s.PixelUM))
	}
	if !(s.ModulationEV >= 0 && s.ModulationEV <= maxModulation) {
		return fmt.Errorf("modulation_ev %s: want a peak-to-peak modulation from 0 (not known) to %d eV", plain(s.ModulationEV), maxModulation)
	}
	return nil
}

// SpectrumMode returns the sidecar's mode.
func (s *Sidecar) SpectrumMode() (lineshape.Mode, error) { return lineshape.ParseMode(s.Mode) }

// Axis returns the uniform energy axis of n channels the sidecar defines.
func (s *Sidecar) Axis(n int) lineshape.Axis {
	return lineshape.Axis{Start: s.StartEV, Step: s.StepEV, N: n}
}

// CheckShape checks that a cube of this shape fits the sidecar: at least
// one axis, at least 2 channels on the last, and a last channel energy
// start_ev + (channels-1)*step_ev within 1 MeV.
func (s *Sidecar) CheckShape(shape []int) error {
	if len(shape) == 0 {
		return errors.New("a 0-dimensional array holds no spectrum")
	}
	c := shape[len(shape)-1]
	if c < 2 {
		return fmt.Errorf("shape %v: %d channels on the last axis, need at least 2", shape, c)
	}
	if hi := s.StartEV + float64(c-1)*s.StepEV; hi > maxEnergy {
		return fmt.Errorf("shape %v: %d channels from %s eV in steps of %s eV reach %s eV, beyond %s eV: is step_ev right?",
			shape, c, plain(s.StartEV), plain(s.StepEV), plain(hi), plain(maxEnergy))
	}
	return nil
}

// WriteSidecar writes s, after validating it, as the sidecar of the cube at
// cubePath, atomically.
func WriteSidecar(cubePath string, s Sidecar) error {
	if err := s.Validate(); err != nil {
		return fmt.Errorf("npy: sidecar: %w", err)
	}
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return err
	}
	b = append(b, '\n')
	return atomicfile.WriteFile(SidecarPath(cubePath), func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// OpenCube opens a spectrum-image cube and its sidecar and checks that they
// fit together. The caller closes the Reader.
func OpenCube(cubePath string) (*Reader, *Sidecar, error) {
	sc, err := ReadSidecar(cubePath)
	if err != nil {
		return nil, nil, err
	}
	r, err := Open(cubePath)
	if err != nil {
		return nil, nil, err
	}
	if err := sc.CheckShape(r.Shape()); err != nil {
		r.Close()
		return nil, nil, lineshape.Errorf(cubePath, 0, "npy: %v", err)
	}
	return r, sc, nil
}
