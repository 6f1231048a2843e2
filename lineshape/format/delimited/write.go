package delimited

import (
	"bufio"
	"fmt"
	"io"
	"strconv"

	"statemix/lineshape"
)

// WriteOptions control writing. The zero value writes comma-separated
// columns with a header row and the spectrum's comments.
type WriteOptions struct {
	// Separator goes between columns: ',', ';', '\t' or ' '. If it is 0,
	// it is ','.
	Separator rune
	// NoHeader leaves out the header row. Reading such a file back takes
	// the spectrum as a derivative unless told otherwise.
	NoHeader bool
	// NoComments leaves out the "# ..." lines written from Meta.Comments.
	NoComments bool
	// NoMeta leaves out the "# key: value" lines of acquisition metadata
	// (mode, modulation_ev, beam_energy_kev, ...).
	NoMeta bool
}

// ValueName returns the header name Write gives the values of s: "dN/dE"
// for a derivative, and for a direct spectrum "counts" (raw counts),
// "E*N(E)" (values times energy) or "N(E)".
func ValueName(s *lineshape.Spectrum) string {
	if s.Mode == lineshape.Derivative {
		return "dN/dE"
	}
	switch {
	case s.Meta.Counts:
		return "counts"
	case s.Meta.TimesEnergy:
		return "E*N(E)"
	}
	return "N(E)"
}

// Write writes s as two columns, kinetic energy in eV and values, preceded
// by s.Meta.Comments as "# " lines, the acquisition metadata as
// "# key: value" lines (the JSON names of lineshape.Meta: mode (only
// without a header row, whose names say it otherwise), sample,
// technique, beam_energy_kev, beam_current_na, dwell_s, scans,
// modulation_ev, energy_reference, analyser_mode, take_off_deg,
// excitation_ev, sputter_time_s; those not set are left out), which Read
// reads back into Meta, and a header row naming the columns ("energy_ev"
// and ValueName(s)). Numbers are written in the shortest form that reads
// back to the same float64.
func Write(w io.Writer, s *lineshape.Spectrum, opts WriteOptions) error {
	return WriteTable(w, []*lineshape.Spectrum{s}, opts)
}

// WriteTable writes spectra that share one energy axis as one energy column
// and one value column per spectrum, with the comments of the first and the
// metadata all of them share. It is an error if the axes differ.
func WriteTable(w io.Writer, specs []*lineshape.Spectrum, opts WriteOptions) error {
	sep := byte(',')
	switch opts.Separator {
	case 0:
	case ',', ';', '\t', ' ':
		sep = byte(opts.Separator)
	default:
		panic(fmt.Sprintf("delimited: separator %q: want ',', ';', '\\t' or ' '", opts.Separator))
	}
	if len(specs) == 0 {
		return fmt.Errorf("delimited: no spectra to write")
	}
	first := specs[0]
	for i, s := range specs {
		if err := s.Validate(); err != nil {
			return fmt.Errorf("delimited: spectrum %d: %w", i+1, err)
		}
		if i > 0 && !sameAxis(first.Axis, s.Axis) {
			return fmt.Errorf("delimited: spectrum %d has another energy axis than spectrum 1: one table holds one axis", i+1)
		}
	}
	bw := bufio.NewWriter(w)
	if !opts.NoComments {
		for _, c := range first.Meta.Comments {
			bw.WriteString("# " + oneLine(c) + "\n")
		}
	}
	if !opts.NoMeta {
		for _, l := range metaLines(specs, opts.NoHeader) {
			bw.WriteString("# " + l + "\n")
		}
	}
	if !opts.NoHeader {
		bw.WriteString("energy_ev")
		for _, s := range specs {
			bw.WriteByte(sep)
			bw.WriteString(ValueName(s))
		}
		bw.WriteByte('\n')
	}
	buf := make([]byte, 0, 32*(len(specs)+1))
	for i := range first.Y {
		buf = strconv.AppendFloat(buf[:0], first.Energy(i), 'g', -1, 64)
		for _, s := range specs {
			buf = append(buf, sep)
			buf = strconv.AppendFloat(buf, s.Y[i], 'g', -1, 64)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// sameAxis reports whether two axes have the same channels exactly.
func sameAxis(a, b lineshape.Axis) bool {
	if a.Len() != b.Len() {
		return false
	}
	if a.Uniform() && b.Uniform() {
		return a.Start == b.Start && a.Step == b.Step
	}
	for i := 0; i < a.Len(); i++ {
		if a.At(i) != b.At(i) {
			return false
		}
	}
	return true
}
