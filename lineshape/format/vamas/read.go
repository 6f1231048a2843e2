package vamas

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"statemix/lineshape"
)

// maxLineEcho is how much of an offending line an error message quotes.
const maxLineEcho = 40

// Read parses an ISO 14976 experiment from r. name is used in error
// messages (the file name as the user gave it). Lines may end in CRLF, LF
// or CR; a blank line is a value (an empty text item), never skipped.
// Errors about the content are *lineshape.InputError with the 1-based line
// and the 0-based block; an error reading r is returned wrapped, and is
// not an InputError.
func Read(r io.Reader, name string) (*File, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("vamas: reading %s: %w", name, err)
	}
	p := newParser(string(data), name)
	return p.parse()
}

// ReadFile reads the ISO 14976 file at path.
func ReadFile(path string) (*File, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	return Read(bufio.NewReaderSize(fh, 1<<16), path)
}

// parser reads the file line by line. It implements codec. Lines end at
// CRLF, LF or a lone CR, so no text item can hold a line break.
type parser struct {
	name  string
	src   string
	off   int // offset of the next line in src
	line  int // 1-based number of the line last read
	total int // number of lines in src
	block int // 0-based block being read, -1 in the header
	err   error

	// budget bounds the values copied from the first block into later
	// ones, so that a long first block followed by many short ones cannot
	// make the reader allocate far more than the file holds.
	budget int
}

func newParser(src, name string) *parser {
	p := &parser{name: name, src: src, block: -1}
	for i := 0; i < len(src); i++ {
		switch src[i] {
		case '\n':
			p.total++
		case '\r':
			if i+1 < len(src) && src[i+1] == '\n' {
				i++
			}
			p.total++
		}
	}
	if n := len(src); n > 0 && src[n-1] != '\n' && src[n-1] != '\r' {
		p.total++
	}
	p.budget = 8*p.total + 1<<20
	return p
}

// lineAt returns the line starting at off and the offset after its end.
func (p *parser) lineAt(off int) (string, int) {
	rest := p.src[off:]
	i := strings.IndexAny(rest, "\r\n")
	if i < 0 {
		return rest, len(p.src)
	}
	next := off + i + 1
	if rest[i] == '\r' && i+1 < len(rest) && rest[i+1] == '\n' {
		next++
	}
	return rest[:i], next
}

// remaining is the number of lines not read yet.
func (p *parser) remaining() int { return p.total - p.line }

// next returns the next line without its terminator; ok is false at the
// end of the input.
func (p *parser) next() (s string, ok bool) {
	if p.line >= p.total {
		return "", false
	}
	s, p.off = p.lineAt(p.off)
	p.line++
	return s, true
}

// fail records the first error, at the line last read (or the next line
// when nothing could be read).
func (p *parser) fail(format string, args ...any) {
	p.failAt(p.line, format, args...)
}

func (p *parser) failAt(line int, format string, args ...any) {
	if p.err != nil {
		return
	}
	if line < 1 {
		line = 1
	}
	p.err = &lineshape.InputError{File: p.name, Line: line, Block: p.block, Err: fmt.Errorf(format, args...)}
}

func (p *parser) failed() bool { return p.err != nil }

func (p *parser) check(err error) {
	if err != nil {
		p.fail("%v", err)
	}
}

func (p *parser) must(what string) (string, bool) {
	if p.err != nil {
		return "", false
	}
	s, ok := p.next()
	if !ok {
		p.failAt(p.line+1, "%s: unexpected end of file", what)
		return "", false
	}
	return s, true
}

func (p *parser) text(what string, dst *string) {
	if s, ok := p.must(what); ok {
		*dst = strings.Clone(s) // do not keep the whole file alive
	}
}

func (p *parser) real(what string, dst *float64) {
	s, ok := p.must(what)
	if !ok {
		return
	}
	v, err := parseReal(s)
	if err != nil {
		p.fail("%s: %v", what, err)
		return
	}
	*dst = v
}

func (p *parser) integer(what string, dst *int) {
	s, ok := p.must(what)
	if !ok {
		return
	}
	v, err := parseInt(s)
	if err != nil {
		p.fail("%s: %v", what, err)
		return
	}
	*dst = v
}

func (p *parser) count(what string, dst *int, per int) {
	var n int
	p.integer(what, &n)
	if p.err != nil {
		return
	}
	if n < 0 {
		p.fail("%s: %d is negative", what, n)
		return
	}
	p.fits(what, n, per)
	if p.err == nil {
		*dst = n
	}
}

func (p *parser) fits(what string, n, per int) {
	if p.err != nil {
		return
	}
	if per < 1 {
		per = 1
	}
	if rem := p.remaining(); n > rem/per {
		p.fail("%s: %d, but only %s", what, n, linesFollow(rem))
	}
}

func (p *parser) textLines(what string, dst *[]string, n int) {
	if p.err != nil {
		return
	}
	if n > p.remaining() {
		p.failAt(p.total+1, "%s: want %d lines, only %d follow: unexpected end of file", what, n, p.remaining())
		return
	}
	out := make([]string, n)
	for i := range out {
		p.text(what, &out[i])
	}
	if n == 0 {
		out = nil
	}
	*dst = out
}

func (p *parser) parse() (*File, error) {
	first, ok := p.must("format identifier")
	if !ok {
		return nil, p.err
	}
	if !strings.HasPrefix(strings.TrimSpace(first), "VAMAS Surface Chemical Analysis Standard Data Transfer Format") {
		p.fail("not an ISO 14976 (VAMAS) file: first line is %s, want %q", echo(first), FormatIdentifier)
		return nil, p.err
	}
	f := &File{name: p.name}
	var nBlocks int
	headerGrammar(p, f, &nBlocks)
	if p.err != nil {
		return nil, p.err
	}
	f.Blocks = make([]*Block, 0, min(nBlocks, 1024))
	for i := 0; i < nBlocks; i++ {
		p.block = i
		b := &Block{}
		incl := func(int) bool { return true }
		if i > 0 {
			// Omitted items come from the first block, before any
			// condition of this block is evaluated.
			b = f.Blocks[0].cloneHeader()
			incl = f.Included
			p.budget -= b.size()
			if p.budget < 0 {
				p.failAt(p.line+1, "items inherited from the first block exceed %d values in all: refusing the file", 8*p.total+1<<20)
				return nil, p.err
			}
		}
		b.line = p.line + 1
		blockGrammar(p, f, b, incl, false)
		p.readOrdinates(f, b)
		if p.err != nil {
			return nil, p.err
		}
		clearInapplicable(f, b)
		f.Blocks = append(f.Blocks, b)
	}
	p.block = -1
	s, ok := p.next()
	if !ok {
		p.failAt(p.line+1, "missing %q after the last block", Terminator)
		return nil, p.err
	}
	if !strings.EqualFold(strings.TrimSpace(s), Terminator) {
		p.fail("want %q after block %d, got %s (ordinate count too small?)", Terminator, nBlocks, echo(s))
		return nil, p.err
	}
	for {
		s, ok := p.next()
		if !ok {
			break
		}
		if strings.TrimSpace(s) != "" {
			p.fail("text after %q: %s", Terminator, echo(s))
			return nil, p.err
		}
	}
	return f, nil
}

// readOrdinates reads the number of ordinate values, the minimum and
// maximum of each corresponding variable and the interleaved values.
func (p *parser) readOrdinates(f *File, b *Block) {
	if p.err != nil {
		return
	}
	var n int
	p.integer("number of ordinate values", &n)
	if p.err != nil {
		return
	}
	if n < 0 {
		p.fail("ordinate count %d is negative", n)
		return
	}
	countLine := p.line
	nv := len(b.Variables)
	if nv == 0 {
		if n != 0 {
			p.fail("ordinate count %d, want 0: the block has no corresponding variables", n)
		}
		b.Min, b.Max, b.Data = nil, nil, nil
		return
	}
	if n%nv != 0 {
		p.fail("ordinate count %d, want a multiple of the %d corresponding variables", n, nv)
		return
	}
	if rem := p.remaining(); n > rem || n+2*nv > rem {
		if k, at := p.terminatorAhead(); k >= 2*nv {
			p.fail("ordinate count %d, want %d (%q follows at line %d)", n, k-2*nv, Terminator, at)
		} else {
			p.fail("ordinate count %d, but only %s (want %d with the minima and maxima)", n, linesFollow(rem), n+2*nv)
		}
		return
	}
	b.Min = make([]float64, nv)
	b.Max = make([]float64, nv)
	for c := 0; c < nv; c++ {
		p.real("minimum ordinate value", &b.Min[c])
		p.real("maximum ordinate value", &b.Max[c])
	}
	if p.err != nil {
		return
	}
	np := n / nv
	b.Data = make([][]float64, nv)
	for c := range b.Data {
		b.Data[c] = make([]float64, np)
	}
	for i := 0; i < n; i++ {
		s, _ := p.next() // enough lines were checked above
		v, err := parseReal(s)
		if err != nil {
			if strings.EqualFold(strings.TrimSpace(s), Terminator) {
				p.failAt(countLine, "ordinate count %d, want %d (%q follows at line %d)", n, i, Terminator, p.line)
			} else {
				p.fail("ordinate value %d of %d: %v", i+1, n, err)
			}
			return
		}
		b.Data[i%nv][i/nv] = v
	}
}

// clearInapplicable zeroes the fields whose lines the block's modes and
// technique leave out, so that a later block does not keep a value its
// conditions exclude from the copy of the first block. The conditions are
// those of blockGrammar.
func clearInapplicable(f *File, b *Block) {
	m := f.ExperimentMode
	if !hasMapXY(m) {
		b.X, b.Y = 0, 0
	}
	if !depthProfile(m) {
		b.SputterZ, b.SputterAtoms, b.SputterCharge = 0, 0, 0
	}
	if !hasFieldOfView(m) {
		b.FieldOfViewX, b.FieldOfViewY = 0, 0
	}
	if !hasLinescan(m) {
		b.Linescan = [6]int{}
	}
	if !isAESDiff(b.Technique) {
		b.DifferentialWidth = 0
	}
	if f.ScanMode != ScanRegular {
		b.AbscissaLabel, b.AbscissaUnit, b.AbscissaStart, b.AbscissaStep = "", "", 0, 0
	}
	if !(depthProfile(m) && sputterSourceTechnique(b.Technique)) {
		b.SputterEnergy, b.SputterCurrent, b.SputterWidthX, b.SputterWidthY = 0, 0, 0, 0
		b.SputterPolar, b.SputterAzimuth, b.SputterMode = 0, 0, ""
	}
}

// terminatorAhead returns how many lines come before the next line that
// reads "end of experiment", and that line's number; k is -1 if there is
// none. It reads ahead without consuming or allocating.
func (p *parser) terminatorAhead() (k, line int) {
	off := p.off
	for i := 0; p.line+i < p.total; i++ {
		var s string
		s, off = p.lineAt(off)
		if strings.EqualFold(strings.TrimSpace(s), Terminator) {
			return i, p.line + i + 1
		}
	}
	return -1, 0
}

// cloneHeader returns a deep copy of b without its ordinates: the starting
// point of every later block.
func (b *Block) cloneHeader() *Block {
	c := *b
	c.Comment = append([]string(nil), b.Comment...)
	c.VariableValues = append([]float64(nil), b.VariableValues...)
	c.Variables = append([]Variable(nil), b.Variables...)
	c.Params = append([]Param(nil), b.Params...)
	c.Future = append([]string(nil), b.Future...)
	c.Data, c.Min, c.Max = nil, nil, nil
	return &c
}

// size is the number of slice elements cloneHeader copies.
func (b *Block) size() int {
	return len(b.Comment) + len(b.VariableValues) + len(b.Variables) + len(b.Params) + len(b.Future)
}

var errNotNumber = errors.New("not a number")

// parseReal parses a real as ISO 14976 writes it: decimal, optional
// exponent with E or (Fortran) D, surrounding spaces allowed. Infinities,
// NaN, hexadecimal and out-of-range values are refused.
func parseReal(s string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, fmt.Errorf("blank line, want a number")
	}
	ok := true
	fortran := false
	for i := 0; i < len(t); i++ {
		c := t[i]
		switch {
		case c >= '0' && c <= '9', c == '.', c == '+', c == '-', c == 'e', c == 'E':
		case c == 'd' || c == 'D':
			fortran = true
		default:
			ok = false
		}
	}
	if !ok {
		return 0, fmt.Errorf("%s is %w", echo(s), errNotNumber)
	}
	if fortran {
		t = strings.NewReplacer("d", "e", "D", "e").Replace(t)
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		if err != nil && errors.Is(err, strconv.ErrRange) {
			return 0, fmt.Errorf("%s is out of range", echo(s))
		}
		return 0, fmt.Errorf("%s is %w", echo(s), errNotNumber)
	}
	return v, nil
}

// parseInt parses an integer; a real with an integral value ("3.0") is
// accepted too, since some writers print integers that way.
func parseInt(s string) (int, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, fmt.Errorf("blank line, want an integer")
	}
	if v, err := strconv.ParseInt(t, 10, 64); err == nil {
		if v > 1<<40 || v < -(1<<40) || int64(int(v)) != v { // the last for 32-bit int
			return 0, fmt.Errorf("%s is out of range", echo(s))
		}
		return int(v), nil
	}
	v, err := parseReal(s)
	if err != nil {
		return 0, fmt.Errorf("%s is not an integer", echo(s))
	}
	if v != math.Trunc(v) || math.Abs(v) > 1<<40 {
		return 0, fmt.Errorf("%s is not an integer", echo(s))
	}
	if float64(int(v)) != v { // 32-bit int
		return 0, fmt.Errorf("%s is out of range", echo(s))
	}
	return int(v), nil
}

// echo quotes a line for an error message, shortened.
func echo(s string) string {
	if len(s) > maxLineEcho {
		s = s[:maxLineEcho] + "..."
	}
	return strconv.Quote(s)
}

// linesFollow says how many lines follow: "1 line follows", "5 lines
// follow".
func linesFollow(n int) string {
	if n == 1 {
		return "1 line follows"
	}
	return fmt.Sprintf("%d lines follow", n)
}
