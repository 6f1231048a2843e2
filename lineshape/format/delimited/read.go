package delimited

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"statemix/lineshape"
)

// AxisKind says how to read the energy column.
type AxisKind int

const (
	// AxisAuto takes the kind from the energy column's header name and
	// reads kinetic energy when there is no header or it says nothing.
	AxisAuto AxisKind = iota
	// AxisKinetic reads the energy column as kinetic energy in eV.
	AxisKinetic
	// AxisBinding reads the energy column as binding energy in eV, which
	// needs Options.ExcitationEV.
	AxisBinding
)

// Options control reading. The zero value reads energies from column 1 and
// values from column 2, detects a header row, and takes a spectrum without
// a telling header as a derivative.
type Options struct {
	// Mode, if not nil, is the mode of every value column. If Mode is nil,
	// a value column's header name decides ("dN/dE", "counts", ...), and a
	// column without a telling name is Derivative.
	Mode *lineshape.Mode
	// EnergyColumn is the 1-based column of energies. If it is 0, it is 1.
	EnergyColumn int
	// ValueColumn is the 1-based column Read takes values from. If it is 0,
	// it is the first column that is not the energy column (column 2 by
	// default). ReadAll ignores it.
	ValueColumn int
	// Axis says whether the energies are kinetic or binding. If it is
	// AxisAuto (the zero value), the header decides, and without a header
	// the energies are kinetic.
	Axis AxisKind
	// ExcitationEV is the excitation energy in eV used to turn a
	// binding-energy axis into kinetic energy (KE = ExcitationEV - BE). If it
	// is 0, a binding-energy axis is an error.
	ExcitationEV float64
}

// maxLine is the longest line the reader accepts, in bytes.
const maxLine = 1 << 20

// maxEnergy bounds energies in eV: electron spectroscopy stays far below
// 1 MeV, and the bound keeps axis arithmetic finite.
const maxEnergy = 1e6

// maxComments is the number of leading comment lines kept in Meta.Comments.
const maxComments = 1000

// ReadFile reads the spectrum in the file at path, naming path in errors.
func ReadFile(path string, opts Options) (*lineshape.Spectrum, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return Read(f, path, opts)
}

// Read reads one spectrum: the energy column against the value column that
// opts selects. name is the file name used in errors and Meta.Source.
func Read(r io.Reader, name string, opts Options) (*lineshape.Spectrum, error) {
	t, err := parse(r, name)
	if err != nil {
		return nil, err
	}
	ec, err := t.energyColumn(opts)
	if err != nil {
		return nil, err
	}
	vc := opts.ValueColumn - 1
	if opts.ValueColumn == 0 {
		vc = 0
		if vc == ec {
			vc = 1
		}
	}
	if vc < 0 {
		return nil, fmt.Errorf("delimited: value column %d: columns count from 1", opts.ValueColumn)
	}
	if vc == ec {
		return nil, fmt.Errorf("delimited: value column %d is the energy column", vc+1)
	}
	if vc >= t.ncols {
		return nil, lineshape.Errorf(name, t.lines[0], "value column %d asked for, but the rows have %d columns", vc+1, t.ncols)
	}
	e, err := t.energies(ec, opts)
	if err != nil {
		return nil, err
	}
	return t.spectrum(e, ec, vc, 0, opts)
}

// ReadAll reads every value column of a file as its own spectrum, in column
// order, against the energy column opts selects (opts.ValueColumn is
// ignored). The i-th spectrum has Meta.Block i and Meta.BlockID set to its
// header name, or "column N" without a header.
func ReadAll(r io.Reader, name string, opts Options) ([]*lineshape.Spectrum, error) {
	t, err := parse(r, name)
	if err != nil {
		return nil, err
	}
	ec, err := t.energyColumn(opts)
	if err != nil {
		return nil, err
	}
	if t.ncols < 2 {
		return nil, lineshape.Errorf(name, t.lines[0], "only one column: need energies and values")
	}
	e, err := t.energies(ec, opts)
	if err != nil {
		return nil, err
	}
	var out []*lineshape.Spectrum
	for c := 0; c < t.ncols; c++ {
		if c == ec {
			continue
		}
		s, err := t.spectrum(e, ec, c, len(out), opts)
		if err != nil {
			return nil, err
		}
		out = append(out, s)
	}
	return out, nil
}

// table is a parsed file: numeric columns with the line of every row.
type table struct {
	name       string
	header     []string // names, or nil without a usable header
	headerLine int      // 1-based line of the header (or header comment), 0 if none
	ncols      int
	cols       [][]float64
	lines      []int // 1-based line of each row
	comments   []string
}

// parse reads the whole input into a table.
func parse(r io.Reader, name string) (*table, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), maxLine)
	sc.Split(scanLines)
	t := &table{name: name}
	var (
		lineNo      int
		sep         byte // 0 until the first data row fixes it; ' ' means runs of white space
		headerSeen  bool
		lastComment string
		lastCommLn  int
		fields      []string
	)
	for sc.Scan() {
		lineNo++
		line := sc.Text()
		if lineNo == 1 {
			line = strings.TrimPrefix(line, "\ufeff")
		}
		body, comment, hasComment := strings.Cut(line, "#")
		body = strings.TrimSpace(body)
		if body == "" {
			if hasComment && len(t.lines) == 0 && !headerSeen {
				c := strings.TrimSpace(comment)
				if len(t.comments) < maxComments {
					t.comments = append(t.comments, c)
				}
				lastComment, lastCommLn = c, lineNo
			}
			continue
		}
		if sep == 0 {
			sep = detectSep(body)
		}
		fields = split(fields[:0], body, sep)
		if len(t.lines) == 0 && !headerSeen {
			if !allNumbers(fields) {
				// The header row: its own separator may differ from the data's.
				headerSeen = true
				t.headerLine = lineNo
				t.header = split(nil, stripSpacedUnits(body), detectSep(body))
				sep = 0
				continue
			}
		}
		if len(t.lines) == 0 {
			t.ncols = len(fields)
			t.cols = make([][]float64, t.ncols)
			if !headerSeen && lastComment != "" {
				// A commented header such as "# energy dN/dE" is used only if it
				// names the energy column in a way this package knows.
				h := split(nil, stripSpacedUnits(lastComment), detectSep(lastComment))
				if len(h) == t.ncols && (classify(h[0]) == kindKinetic || classify(h[0]) == kindBinding) {
					t.header, t.headerLine = h, lastCommLn
				}
			}
			if t.header != nil && len(t.header) != t.ncols {
				t.header = nil // names cannot be matched to columns
			}
		}
		if len(fields) != t.ncols {
			return nil, lineshape.Errorf(name, lineNo, "%d columns, but line %d has %d", len(fields), t.lines[0], t.ncols)
		}
		for c, f := range fields {
			v, err := parseNumber(f, sep)
			if err != nil {
				return nil, lineshape.Errorf(name, lineNo, "column %d: %v", c+1, err)
			}
			t.cols[c] = append(t.cols[c], v)
		}
		t.lines = append(t.lines, lineNo)
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, lineshape.Errorf(name, lineNo+1, "line longer than %d bytes", maxLine)
		}
		return nil, err
	}
	switch len(t.lines) {
	case 0:
		return nil, lineshape.Errorf(name, 0, "no data rows")
	case 1:
		return nil, lineshape.Errorf(name, t.lines[0], "only one data row: need at least 2 channels")
	}
	return t, nil
}

// scanLines is bufio.ScanLines for lines that end in LF, CRLF or a lone CR.
func scanLines(data []byte, atEOF bool) (advance int, token []byte, err error) {
	for i, c := range data {
		switch c {
		case '\n':
			return i + 1, data[:i], nil
		case '\r':
			if i+1 < len(data) {
				if data[i+1] == '\n' {
					return i + 2, data[:i], nil
				}
				return i + 1, data[:i], nil
			}
			if atEOF {
				return i + 1, data[:i], nil
			}
			return 0, nil, nil // a LF may follow
		}
	}
	if atEOF && len(data) > 0 {
		return len(data), data, nil
	}
	return 0, nil, nil
}

// detectSep picks the column separator of a line: tab, semicolon, comma or
// (' ') runs of white space, in that order of preference.
func detectSep(line string) byte {
	switch {
	case strings.IndexByte(line, '\t') >= 0:
		return '\t'
	case strings.IndexByte(line, ';') >= 0:
		return ';'
	case strings.IndexByte(line, ',') >= 0:
		return ','
	}
	return ' '
}

// split splits a trimmed line into fields, appending to dst. With a tab,
// semicolon or comma separator, fields are trimmed and unquoted, and empty
// fields at the end of the line (a trailing separator) are dropped.
func split(dst []string, line string, sep byte) []string {
	if sep == ' ' {
		return append(dst, strings.Fields(line)...)
	}
	start := len(dst)
	for {
		i := strings.IndexByte(line, sep)
		f := line
		if i >= 0 {
			f = line[:i]
		}
		f = strings.TrimSpace(f)
		if len(f) >= 2 && (f[0] == '"' && f[len(f)-1] == '"' || f[0] == '\'' && f[len(f)-1] == '\'') {
			f = strings.TrimSpace(f[1 : len(f)-1])
		}
		dst = append(dst, f)
		if i < 0 {
			break
		}
		line = line[i+1:]
	}
	for len(dst) > start+1 && dst[len(dst)-1] == "" {
		dst = dst[:len(dst)-1]
	}
	return dst
}

// allNumbers reports whether every field parses as a number.
func allNumbers(fields []string) bool {
	for _, f := range fields {
		if _, err := strconv.ParseFloat(unquote(f), 64); err != nil {
			return false
		}
	}
	return true
}

func unquote(f string) string {
	if len(f) >= 2 && f[0] == '"' && f[len(f)-1] == '"' {
		return f[1 : len(f)-1]
	}
	return f
}

// parseNumber parses one field as a finite float64.
func parseNumber(f string, sep byte) (float64, error) {
	if f == "" {
		return 0, errors.New("empty field")
	}
	v, err := strconv.ParseFloat(unquote(f), 64)
	if err != nil {
		var ne *strconv.NumError
		if errors.As(err, &ne) && ne.Err == strconv.ErrRange {
			return 0, fmt.Errorf("%q is out of the float64 range", f)
		}
		if looksDecimalComma(f) || (sep == ',' && strings.ContainsAny(f, " \t")) {
			return 0, fmt.Errorf("%q is not a number (decimal commas are not supported: use a decimal point)", f)
		}
		return 0, fmt.Errorf("%q is not a number", clip(f))
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a finite number", f)
	}
	return v, nil
}

// looksDecimalComma reports whether f is digits, one comma and digits.
func looksDecimalComma(f string) bool {
	f = strings.TrimLeft(f, "+-")
	a, b, ok := strings.Cut(f, ",")
	return ok && a != "" && b != "" && digits(a) && digits(strings.TrimRight(b, "0123456789eE+-"))
}

func digits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// clip shortens a field for an error message.
func clip(f string) string {
	if len(f) > 40 {
		return f[:40] + "..."
	}
	return f
}

// energyColumn returns the 0-based energy column.
func (t *table) energyColumn(opts Options) (int, error) {
	ec := opts.EnergyColumn - 1
	if opts.EnergyColumn == 0 {
		ec = 0
	}
	if ec < 0 {
		return 0, fmt.Errorf("delimited: energy column %d: columns count from 1", opts.EnergyColumn)
	}
	if ec >= t.ncols {
		return 0, lineshape.Errorf(t.name, t.lines[0], "energy column %d asked for, but the rows have %d columns", ec+1, t.ncols)
	}
	return ec, nil
}

// energies returns the kinetic energies of column ec, after checking that
// no energy appears twice.
func (t *table) energies(ec int, opts Options) ([]float64, error) {
	e := t.cols[ec]
	for i, v := range e {
		if math.Abs(v) > maxEnergy {
			return nil, lineshape.Errorf(t.name, t.lines[i], "energy %v eV is out of range (at most %g eV in magnitude)", v, maxEnergy)
		}
	}
	idx := make([]int, len(e))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return e[idx[a]] < e[idx[b]] })
	for k := 1; k < len(idx); k++ {
		if e[idx[k]] == e[idx[k-1]] {
			i, j := idx[k-1], idx[k]
			if i > j {
				i, j = j, i
			}
			return nil, lineshape.Errorf(t.name, t.lines[j], "energy %v eV already on line %d", e[j], t.lines[i])
		}
	}
	binding := opts.Axis == AxisBinding
	if opts.Axis == AxisAuto && t.header != nil {
		binding = classify(t.header[ec]) == kindBinding
	}
	if !binding {
		return e, nil
	}
	ke, err := lineshape.KineticFromBinding(e, opts.ExcitationEV)
	if err != nil {
		return nil, lineshape.Errorf(t.name, t.headerLine, "%v", err)
	}
	return ke, nil
}

// spectrum builds the spectrum of value column vc.
func (t *table) spectrum(e []float64, ec, vc, block int, opts Options) (*lineshape.Spectrum, error) {
	mode := lineshape.Derivative
	kind := kindUnknown
	if t.header != nil {
		kind = classify(t.header[vc])
	}
	switch kind {
	case kindDirect, kindCounts, kindDirectTimesE:
		mode = lineshape.Direct
	}
	var meta lineshape.Meta
	var metaMode *lineshape.Mode
	comments := splitMeta(t.comments, &meta, &metaMode)
	if kind == kindUnknown && metaMode != nil {
		mode = *metaMode
	}
	if opts.Mode != nil {
		mode = *opts.Mode
	}
	s, err := lineshape.New(e, t.cols[vc], mode)
	if err == nil {
		err = s.Validate()
	}
	if err != nil {
		return nil, lineshape.Errorf(t.name, 0, "%v", err)
	}
	s.Meta = meta
	s.Meta.Source = t.name
	s.Meta.Block = block
	if t.header != nil && t.header[vc] != "" {
		s.Meta.BlockID = t.header[vc]
	} else {
		s.Meta.BlockID = "column " + strconv.Itoa(vc+1)
	}
	if mode == lineshape.Direct {
		s.Meta.Counts = kind == kindCounts
		s.Meta.TimesEnergy = kind == kindDirectTimesE
	}
	if len(comments) > 0 {
		s.Meta.Comments = comments
	}
	return s, nil
}
