package format

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"statemix/internal/atomicfile"
	"statemix/lineshape"
	"statemix/lineshape/format/delimited"
	"statemix/lineshape/format/npy"
)

// Kinds of file Detect tells apart.
const (
	KindVAMAS     = "vamas"     // ISO 14976
	KindJSON      = "json"      // statemix spectrum JSON
	KindNPY       = "npy"       // NumPy array with a sidecar
	KindDelimited = "delimited" // columns of numbers
)

// Schema is the schema id of statemix's spectrum JSON.
const Schema = "statemix.spectrum/v1"

// vamasFirstLine is the format identifier that opens every ISO 14976 file.
const vamasFirstLine = "VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4"

// ErrNoBlock is wrapped by the error for a block number the file does not
// have; the command line reports it as a usage mistake.
var ErrNoBlock = errors.New("no such block")

// Options control ReadFile. The zero value reads every spectrum with the
// mode its file gives.
type Options struct {
	// Mode, if not nil, is the mode of every spectrum read, whatever the
	// file says.
	Mode *lineshape.Mode
	// Block, if not 0, selects one spectrum: the Block-th block of an ISO
	// 14976 file, spectrum of a JSON file, value column of a delimited file
	// or pixel (in C order) of a cube, counting from 1 as error messages
	// do. If Block is 0, every spectrum is returned.
	Block int
	// Delimited holds the column and axis choices for delimited files; its
	// Mode field is replaced by Mode.
	Delimited delimited.Options
}

// Detect tells the kind of a file from its first bytes (a few hundred are
// enough): the ISO 14976 format identifier on the first line, the NumPy
// magic, a JSON object, or else delimited text.
func Detect(head []byte) string {
	head = bytes.TrimPrefix(head, []byte("\ufeff"))
	if bytes.HasPrefix(head, []byte("\x93NUMPY")) {
		return KindNPY
	}
	first := head
	if i := bytes.IndexAny(head, "\r\n"); i >= 0 {
		first = head[:i]
	}
	if string(bytes.TrimSpace(first)) == vamasFirstLine {
		return KindVAMAS
	}
	if t := bytes.TrimLeft(head, " \t\r\n"); len(t) > 0 && t[0] == '{' {
		return KindJSON
	}
	return KindDelimited
}

// ReadFile reads the spectra in the file at path, whatever its kind (see
// Detect): every block of an ISO 14976 file, every spectrum of a statemix
// JSON file, every value column of a delimited file, or every pixel of a
// .npy cube with its sidecar (pixel positions in Meta.PixelX and PixelY).
// Errors about the content are *lineshape.InputError values naming path.
func ReadFile(path string, opts Options) ([]*lineshape.Spectrum, error) {
	if opts.Block < 0 {
		return nil, fmt.Errorf("format: block %d: blocks count from 1", opts.Block)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	head := make([]byte, 512)
	n, err := io.ReadFull(f, head)
	f.Close()
	if err != nil && err != io.ErrUnexpectedEOF && err != io.EOF {
		return nil, err
	}
	var specs []*lineshape.Spectrum
	switch Detect(head[:n]) {
	case KindVAMAS:
		specs, err = readVAMAS(path)
	case KindJSON:
		specs, err = readJSON(path)
	case KindNPY:
		return readCube(path, opts)
	default:
		do := opts.Delimited
		do.Mode = opts.Mode
		specs, err = readDelimited(path, do)
	}
	if err != nil {
		return nil, err
	}
	specs, err = pick(specs, path, opts.Block)
	if err != nil {
		return nil, err
	}
	for _, s := range specs {
		if opts.Mode != nil {
			s.Mode = *opts.Mode
		}
		if s.Meta.Source == "" {
			s.Meta.Source = path
		}
	}
	return specs, nil
}

// pick returns the spectra a 1-based block selects (all for 0).
func pick(specs []*lineshape.Spectrum, path string, block int) ([]*lineshape.Spectrum, error) {
	if block == 0 {
		return specs, nil
	}
	if block > len(specs) {
		return nil, fmt.Errorf("%s: block %d asked for, but the file has %d: %w", path, block, len(specs), ErrNoBlock)
	}
	return specs[block-1 : block], nil
}

func readDelimited(path string, opts delimited.Options) ([]*lineshape.Spectrum, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return delimited.ReadAll(f, path, opts)
}

// jsonFile is the on-disk form of statemix's spectrum JSON.
type jsonFile struct {
	Schema  string                `json:"schema"`
	Spectra []*lineshape.Spectrum `json:"spectra"`
}

// readJSON reads statemix spectrum JSON.
func readJSON(path string) ([]*lineshape.Spectrum, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return decodeJSON(b, path)
}

// decodeJSON decodes and validates statemix spectrum JSON.
func decodeJSON(b []byte, name string) ([]*lineshape.Spectrum, error) {
	var jf jsonFile
	dec := json.NewDecoder(bytes.NewReader(b))
	if err := dec.Decode(&jf); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		line := 0
		switch {
		case errors.As(err, &se):
			line = lineOf(b, se.Offset)
		case errors.As(err, &te):
			line = lineOf(b, te.Offset)
		}
		return nil, lineshape.Errorf(name, line, "json: %v", err)
	}
	if dec.More() {
		return nil, lineshape.Errorf(name, lineOf(b, dec.InputOffset()), "json: more than one JSON value")
	}
	if jf.Schema != Schema {
		return nil, lineshape.Errorf(name, 0, "json: schema %q, want %q", jf.Schema, Schema)
	}
	if len(jf.Spectra) == 0 {
		return nil, lineshape.Errorf(name, 0, "json: no spectra")
	}
	for i, s := range jf.Spectra {
		if s == nil {
			return nil, &lineshape.InputError{File: name, Block: i, Err: errors.New("spectrum is null")}
		}
		if err := s.Validate(); err != nil {
			return nil, &lineshape.InputError{File: name, Block: i, Err: err}
		}
		if hi := s.Axis.Hi(); math.IsInf(hi, 0) || math.IsNaN(hi) {
			return nil, &lineshape.InputError{File: name, Block: i, Err: fmt.Errorf("energy axis runs to %v eV", hi)}
		}
	}
	return jf.Spectra, nil
}

func lineOf(b []byte, off int64) int {
	off = max(0, min(off, int64(len(b))))
	return 1 + bytes.Count(b[:off], []byte{'\n'})
}

// readCube reads the pixel spectra of a .npy cube described by its sidecar.
func readCube(path string, opts Options) ([]*lineshape.Spectrum, error) {
	r, sc, err := npy.OpenCube(path)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	mode, _ := sc.SpectrumMode() // validated by OpenCube
	if opts.Mode != nil {
		mode = *opts.Mode
	}
	shape := r.Shape()
	c, np := r.Channels(), r.Pixels()
	width := 1
	if len(shape) >= 3 {
		width = shape[len(shape)-2]
	}
	first, count := 0, np
	if opts.Block > 0 {
		if opts.Block > np {
			return nil, fmt.Errorf("%s: pixel %d asked for, but the cube has %d: %w", path, opts.Block, np, ErrNoBlock)
		}
		first, count = opts.Block-1, 1
	}
	out := make([]*lineshape.Spectrum, 0, count)
	for p := first; p < first+count; p++ {
		y := make([]float64, c)
		if err := r.ReadRows(y, p, 1); err != nil {
			return nil, err
		}
		s := &lineshape.Spectrum{Axis: sc.Axis(c), Y: y, Mode: mode}
		if err := s.Validate(); err != nil {
			return nil, &lineshape.InputError{File: path, Block: p, Err: err}
		}
		s.Meta.Source, s.Meta.Block = path, p
		if len(shape) >= 2 {
			x, yy := p%width, p/width
			s.Meta.PixelX, s.Meta.PixelY = &x, &yy
		}
		out = append(out, s)
	}
	return out, nil
}

// Formats Write knows.
const (
	FormatCSV   = "csv"
	FormatVAMAS = "vamas"
	FormatJSON  = "json"
)

// FormatFromPath returns the output format an output file name suggests:
// "csv" for .csv, .txt and .dat, "vamas" for .vms and .vamas, "json" for
// .json, and false for anything else.
func FormatFromPath(path string) (string, bool) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv", ".txt", ".dat":
		return FormatCSV, true
	case ".vms", ".vamas":
		return FormatVAMAS, true
	case ".json":
		return FormatJSON, true
	}
	return "", false
}

// Write writes specs to w in format "csv", "vamas" or "json".
//
// csv is a header row and columns (delimited.WriteTable): one energy column
// and one value column per spectrum, which needs spectra on one axis; only
// the axis, values, mode and comments survive. vamas is ISO 14976
// (vamas.FromSpectra) in experiment mode MAPDP when every spectrum has a
// pixel position and a sputter time, MAP with pixel positions only, SDP with
// sputter times only, and NORM otherwise. json is
// {"schema":"statemix.spectrum/v1","spectra":[...]}, each spectrum in its
// lineshape.Spectrum JSON encoding, which keeps everything.
func Write(w io.Writer, specs []*lineshape.Spectrum, format string) error {
	if len(specs) == 0 {
		return errors.New("format: no spectra to write")
	}
	switch format {
	case FormatCSV:
		return delimited.WriteTable(w, specs, delimited.WriteOptions{})
	case FormatVAMAS:
		return writeVAMAS(w, specs)
	case FormatJSON:
		for i, s := range specs {
			if err := s.Validate(); err != nil {
				return fmt.Errorf("format: spectrum %d: %w", i+1, err)
			}
		}
		b, err := json.MarshalIndent(jsonFile{Schema: Schema, Spectra: specs}, "", " ")
		if err != nil {
			return err
		}
		_, err = w.Write(append(b, '\n'))
		return err
	}
	return fmt.Errorf("format: output format %q: want csv, vamas or json", format)
}

// VAMASMode returns the ISO 14976 experiment mode Write uses for specs.
func VAMASMode(specs []*lineshape.Spectrum) string {
	pixels, sputter := true, true
	for _, s := range specs {
		pixels = pixels && s.Meta.PixelX != nil && s.Meta.PixelY != nil
		sputter = sputter && s.Meta.SputterTimeS != nil
	}
	switch {
	case pixels && sputter:
		return "MAPDP"
	case pixels:
		return "MAP"
	case sputter:
		return "SDP"
	}
	return "NORM"
}

// WriteFile writes specs to path in format (see Write) atomically: to a
// temporary file in the same folder, synced, then renamed over path.
func WriteFile(path string, specs []*lineshape.Spectrum, format string) error {
	return atomicfile.WriteFile(path, func(w io.Writer) error { return Write(w, specs, format) })
}
