package series

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"

	"statemix/lineshape"
	"statemix/lineshape/format/npy"
)

// Cube is a spectrum image: Height x Width pixels, each a spectrum of
// Channels values on one uniform energy axis. Pixel p is row p / Width,
// column p % Width (C order).
type Cube interface {
	// Dims returns the height, width and channel count.
	Dims() (height, width, channels int)
	// Axis returns the uniform energy axis of every pixel, in eV.
	Axis() lineshape.Axis
	// Mode returns the mode of every pixel spectrum.
	Mode() lineshape.Mode
	// Name names the cube in errors (usually its file).
	Name() string
	// ReadPixels fills dst[:n*channels] with the spectra of pixels
	// first..first+n-1. It must be safe for concurrent use.
	ReadPixels(dst []float64, first, n int) error
}

// NPYCube is a Cube read in tiles from a .npy file of shape (height,
// width, channels) with its sidecar. Only the tiles being fitted are in
// memory.
type NPYCube struct {
	r       *npy.Reader
	sc      *npy.Sidecar
	name    string
	h, w, c int
	mode    lineshape.Mode
}

// OpenNPY opens the cube at path and its sidecar <name>.json. Besides
// what npy.OpenCube checks, the array must have three axes, and if the
// sidecar carries the optional field "channels" it must equal the cube's
// last axis. Errors about the content are *lineshape.InputError values.
// The caller closes the cube.
func OpenNPY(path string) (*NPYCube, error) {
	r, sc, err := npy.OpenCube(path)
	if err != nil {
		return nil, err
	}
	shape := r.Shape()
	if len(shape) != 3 {
		r.Close()
		return nil, lineshape.Errorf(path, 0, "array of shape %v: a spectrum image needs the shape (height, width, channels)", shape)
	}
	scPath := npy.SidecarPath(path)
	if b, err := os.ReadFile(scPath); err == nil {
		var extra struct {
			Channels *int `json:"channels"`
		}
		if json.NewDecoder(bytes.NewReader(b)).Decode(&extra) == nil && extra.Channels != nil && *extra.Channels != shape[2] {
			r.Close()
			return nil, lineshape.Errorf(scPath, 0, "sidecar says %d channels, but the cube %s has %d (shape %v)", *extra.Channels, path, shape[2], shape)
		}
	}
	mode, err := sc.SpectrumMode()
	if err != nil {
		r.Close()
		return nil, lineshape.Errorf(scPath, 0, "%v", err)
	}
	return &NPYCube{r: r, sc: sc, name: path, h: shape[0], w: shape[1], c: shape[2], mode: mode}, nil
}

// Dims returns the height, width and channel count.
func (c *NPYCube) Dims() (int, int, int) { return c.h, c.w, c.c }

// Axis returns the energy axis the sidecar defines.
func (c *NPYCube) Axis() lineshape.Axis { return c.sc.Axis(c.c) }

// Mode returns the sidecar's mode.
func (c *NPYCube) Mode() lineshape.Mode { return c.mode }

// Name returns the cube's path.
func (c *NPYCube) Name() string { return c.name }

// Sidecar returns the cube's sidecar.
func (c *NPYCube) Sidecar() npy.Sidecar { return *c.sc }

// ModulationEV returns the peak-to-peak modulation (eV) the sidecar's
// modulation_ev records for a derivative cube, 0 if it records none or
// the cube is direct.
func (c *NPYCube) ModulationEV() float64 { return c.sc.Meta(c.name).ModulationEV }

// CubeModulation returns the peak-to-peak modulation (eV) a derivative
// cube records, for a Cube with a method ModulationEV() float64 (NPYCube,
// MemCube), and 0 otherwise. Map gives it to fit.Prepare as the
// Meta.ModulationEV of the cube's spectra, so references recorded as
// direct spectra can be converted without Options.Modulation.
func CubeModulation(c Cube) float64 {
	if mc, ok := c.(interface{ ModulationEV() float64 }); ok && c.Mode() == lineshape.Derivative {
		return mc.ModulationEV()
	}
	return 0
}

// ReadPixels reads pixels first..first+n-1 from the file.
func (c *NPYCube) ReadPixels(dst []float64, first, n int) error { return c.r.ReadRows(dst, first, n) }

// Close closes the file.
func (c *NPYCube) Close() error { return c.r.Close() }

// MemCube is a Cube held in memory, row-major: Values[p*Channels+j] is
// channel j of pixel p.
type MemCube struct {
	Height, Width, Channels int
	EnergyAxis              lineshape.Axis
	SpectrumMode            lineshape.Mode
	Label                   string
	Values                  []float64
	// Modulation is the peak-to-peak modulation (eV) of a derivative
	// cube; 0 if not known.
	Modulation float64
}

// ModulationEV returns c.Modulation.
func (c *MemCube) ModulationEV() float64 { return c.Modulation }

// Dims returns the height, width and channel count.
func (c *MemCube) Dims() (int, int, int) { return c.Height, c.Width, c.Channels }

// Axis returns the energy axis.
func (c *MemCube) Axis() lineshape.Axis { return c.EnergyAxis }

// Mode returns the spectra's mode.
func (c *MemCube) Mode() lineshape.Mode { return c.SpectrumMode }

// Name returns the label.
func (c *MemCube) Name() string { return c.Label }

// ReadPixels copies pixels first..first+n-1.
func (c *MemCube) ReadPixels(dst []float64, first, n int) error {
	copy(dst[:n*c.Channels], c.Values[first*c.Channels:(first+n)*c.Channels])
	return nil
}

// CubeFromSpectra builds an in-memory cube from the pixel spectra of an ISO
// 14976 map (MAP or MAPDP blocks, or a .npy read by format.ReadFile): every
// spectrum needs Meta.PixelX and PixelY, the same uniform axis and mode,
// and each pixel of the bounding grid must be given exactly once. name is
// used in errors.
func CubeFromSpectra(specs []*lineshape.Spectrum, name string) (*MemCube, error) {
	if len(specs) == 0 {
		return nil, lineshape.Errorf(name, 0, "no spectra to map")
	}
	s0 := specs[0]
	w, h := 0, 0
	for i, s := range specs {
		if s.Meta.PixelX == nil || s.Meta.PixelY == nil {
			return nil, &lineshape.InputError{File: name, Block: i, Err: fmt.Errorf("block has no pixel position: a map needs x and y for every block")}
		}
		if *s.Meta.PixelX < 0 || *s.Meta.PixelY < 0 {
			return nil, &lineshape.InputError{File: name, Block: i, Err: fmt.Errorf("negative pixel position (%d, %d)", *s.Meta.PixelX, *s.Meta.PixelY)}
		}
		if !s.Axis.Uniform() || s.Len() != s0.Len() || s.Axis.Start != s0.Axis.Start || s.Axis.Step != s0.Axis.Step || s.Mode != s0.Mode {
			return nil, &lineshape.InputError{File: name, Block: i, Err: fmt.Errorf("block's energy axis or mode differs from the first block's: every pixel needs the same uniform axis")}
		}
		w, h = max(w, *s.Meta.PixelX+1), max(h, *s.Meta.PixelY+1)
	}
	if w*h != len(specs) {
		return nil, lineshape.Errorf(name, 0, "%d spectra do not fill the %d x %d pixel grid their positions span", len(specs), w, h)
	}
	c := s0.Len()
	vals := make([]float64, w*h*c)
	seen := make([]bool, w*h)
	for i, s := range specs {
		p := *s.Meta.PixelY*w + *s.Meta.PixelX
		if seen[p] {
			return nil, &lineshape.InputError{File: name, Block: i, Err: fmt.Errorf("pixel (%d, %d) given twice", *s.Meta.PixelX, *s.Meta.PixelY)}
		}
		seen[p] = true
		copy(vals[p*c:(p+1)*c], s.Y)
	}
	mod := s0.Meta.ModulationEV
	for _, s := range specs {
		if s.Meta.ModulationEV != mod {
			mod = 0 // the blocks disagree: not one recorded modulation
			break
		}
	}
	return &MemCube{Height: h, Width: w, Channels: c, EnergyAxis: s0.Axis, SpectrumMode: s0.Mode, Label: name, Values: vals, Modulation: mod}, nil
}
