package npy

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"statemix/internal/atomicfile"
	"statemix/lineshape"
)

// Sidecar describes the energy axis of a spectrum-image cube. It is stored
// as <name>.json beside <name>.npy (DESIGN.md):
//
//	{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "pixel_um": 0.2}
type Sidecar struct {
	StartEV float64 `json:"start_ev"` // kinetic energy of channel 0, eV
	StepEV  float64 `json:"step_ev"`  // channel spacing, eV, > 0
	Mode    string  `json:"mode"`     // "derivative" or "direct"
	PixelUM float64 `json:"pixel_um"` // pixel pitch, µm; 0 if not known
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
// start_ev, step_ev and mode are required; pixel_um may be left out; other
// fields are ignored so later versions can add some. Errors about the
// content are *lineshape.InputError values naming the sidecar and, for JSON
// syntax errors, the line.
func ReadSidecar(cubePath string) (*Sidecar, error) {
	path := SidecarPath(cubePath)
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, maxSidecar+1))
	if err != nil {
		return nil, err
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

// Validate checks the sidecar: a finite start between 0 and 1 MeV, a
// positive finite step, a known mode and a pixel pitch that is not
// negative.
func (s *Sidecar) Validate() error {
	if !(s.StartEV >= 0 && s.StartEV <= maxEnergy) {
		return fmt.Errorf("start_ev %v: want a kinetic energy from 0 to %g eV", s.StartEV, maxEnergy)
	}
	if !(s.StepEV > 0 && s.StepEV <= maxEnergy) {
		return fmt.Errorf("step_ev %v: want a positive step of at most %g eV", s.StepEV, maxEnergy)
	}
	if s.Mode != "derivative" && s.Mode != "direct" {
		return fmt.Errorf("mode %q: want \"derivative\" or \"direct\"", s.Mode)
	}
	if !(s.PixelUM >= 0) || math.IsInf(s.PixelUM, 0) {
		return fmt.Errorf("pixel_um %v: want a pitch of 0 (unknown) or more", s.PixelUM)
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
		return fmt.Errorf("shape %v: %d channels from %g eV in steps of %g eV reach %g eV, beyond %g eV: is step_ev right?",
			shape, c, s.StartEV, s.StepEV, hi, maxEnergy)
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
