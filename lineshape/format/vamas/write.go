package vamas

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"statemix/internal/atomicfile"
)

// Write writes f to w in ISO 14976 form, one item per line, lines ending in
// CRLF as the standard's examples do. Reals are written with the shortest
// representation that reads back to the same float64 (NotGiven as "1E37");
// the minimum and maximum ordinate lines are recomputed from Block.Data.
//
// Write checks what the grammar needs: known experiment and scan modes,
// one value per experimental variable, Data matching the corresponding
// variables, the right number of future upgrade block entries, finite
// numbers, no line breaks inside text items, and, when a parameter
// inclusion or exclusion list leaves items out of later blocks, that those
// items equal the first block's (they could not be read back otherwise).
func Write(w io.Writer, f *File) error {
	if f == nil {
		return errors.New("vamas: nil file")
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	if err := write(bw, f); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("vamas: %w", err)
	}
	return nil
}

// WriteFile writes f to path atomically: to a temporary file in the same
// folder, synced to disk, then renamed over path (mode 0644). On error
// path is left as it was.
func WriteFile(path string, f *File) error {
	var werr error // Write's own error goes back as it is; file system errors get the prefix
	err := atomicfile.WriteFile(path, func(w io.Writer) error {
		werr = Write(w, f)
		return werr
	})
	if err != nil && werr == nil {
		return fmt.Errorf("vamas: %w", err)
	}
	return err
}

// sink is where a printer writes: a bufio.Writer or a strings.Builder.
type sink interface {
	Write([]byte) (int, error)
	WriteString(string) (int, error)
}

// printer implements codec for writing.
type printer struct {
	out   sink
	block int // 0-based block, -1 in the header
	err   error
	buf   []byte // scratch for number formatting
}

func (w *printer) fail(format string, args ...any) {
	if w.err != nil {
		return
	}
	where := "vamas: "
	if w.block >= 0 {
		where += fmt.Sprintf("block %d: ", w.block+1)
	}
	w.err = errors.New(where + fmt.Sprintf(format, args...))
}

func (w *printer) line(s string) {
	if w.err != nil {
		return
	}
	w.out.WriteString(s)
	w.out.WriteString("\r\n")
}

func (w *printer) text(what string, p *string) {
	if strings.ContainsAny(*p, "\r\n") {
		w.fail("%s: text contains a line break", what)
		return
	}
	w.line(*p)
}

func (w *printer) real(what string, p *float64) {
	if math.IsNaN(*p) || math.IsInf(*p, 0) {
		w.fail("%s: %v is not a finite number", what, *p)
		return
	}
	if w.err != nil {
		return
	}
	if *p == NotGiven {
		w.line("1E37")
		return
	}
	w.buf = strconv.AppendFloat(w.buf[:0], *p, 'G', -1, 64)
	w.buf = append(w.buf, '\r', '\n')
	w.out.Write(w.buf)
}

func (w *printer) integer(what string, p *int) {
	if w.err != nil {
		return
	}
	w.buf = strconv.AppendInt(w.buf[:0], int64(*p), 10)
	w.buf = append(w.buf, '\r', '\n')
	w.out.Write(w.buf)
}

func (w *printer) count(what string, p *int, per int) {
	if *p < 0 {
		w.fail("%s: %d is negative", what, *p)
		return
	}
	w.line(strconv.Itoa(*p))
}

func (w *printer) textLines(what string, p *[]string, n int) {
	if len(*p) != n {
		w.fail("%s: %d lines, want %d", what, len(*p), n)
		return
	}
	for i := range *p {
		w.text(what, &(*p)[i])
	}
}

func (w *printer) fits(string, int, int) {}

func (w *printer) check(err error) {
	if err != nil {
		w.fail("%v", err)
	}
}

func (w *printer) failed() bool { return w.err != nil }

// formatReal prints v so that it reads back to the same float64.
func formatReal(v float64) string {
	if v == NotGiven {
		return "1E37"
	}
	return strconv.FormatFloat(v, 'G', -1, 64)
}

func write(out sink, f *File) error {
	w := &printer{out: out, block: -1}
	h := *f // the grammar canonicalises modes; leave the caller's File alone
	w.line(FormatIdentifier)
	n := len(f.Blocks)
	headerGrammar(w, &h, &n)
	if w.err != nil {
		return w.err
	}
	all := func(int) bool { return true }
	var first *Block
	for i, b := range f.Blocks {
		w.block = i
		if b == nil {
			return fmt.Errorf("vamas: block %d is nil", i+1)
		}
		if err := checkBlock(&h, b, i); err != nil {
			return err
		}
		incl := all
		if i == 0 && len(h.ParamList) > 0 {
			first = readBack(&h, b)
		}
		if i > 0 && len(h.ParamList) > 0 {
			incl = h.Included
			if err := checkOmitted(&h, first, b, i); err != nil {
				return err
			}
		}
		blockGrammar(w, &h, b, incl, false)
		writeOrdinates(w, b)
		if w.err != nil {
			return w.err
		}
	}
	w.block = -1
	w.line(Terminator)
	return w.err
}

// checkBlock checks the lengths the grammar relies on.
func checkBlock(f *File, b *Block, i int) error {
	if len(b.VariableValues) != len(f.Variables) {
		return fmt.Errorf("vamas: block %d: %d experimental variable values, want %d", i+1, len(b.VariableValues), len(f.Variables))
	}
	if len(b.Data) != len(b.Variables) {
		return fmt.Errorf("vamas: block %d: %d data columns for %d corresponding variables", i+1, len(b.Data), len(b.Variables))
	}
	for c := range b.Data {
		if len(b.Data[c]) != len(b.Data[0]) {
			return fmt.Errorf("vamas: block %d: corresponding variable %d has %d values, variable 1 has %d", i+1, c+1, len(b.Data[c]), len(b.Data[0]))
		}
	}
	return nil
}

// checkOmitted makes sure block i reads back as written when the
// parameter list leaves items out: it reads the block's text the way Read
// does (starting from the first block as Read would have it) and compares
// every item and the data. first is the first block as Read returns it.
func checkOmitted(f *File, first, b *Block, i int) error {
	var sb strings.Builder
	w := &printer{out: &sb, block: i}
	blockGrammar(w, f, b, f.Included, false)
	writeOrdinates(w, b)
	if w.err != nil {
		return w.err
	}
	want := b.cloneHeader()
	want.Data = b.Data
	clearInapplicable(f, want)
	p := newParser(sb.String(), "")
	p.block = i
	back := first.cloneHeader()
	blockGrammar(p, f, back, f.Included, false)
	p.readOrdinates(f, back)
	clearInapplicable(f, back)
	if p.err == nil && blockText(f, back) == blockText(f, want) {
		return nil
	}
	// Name the first omitted item that differs from the first block.
	for item := 1; item <= NumItems; item++ {
		if f.Included(item) {
			continue
		}
		if a, z := itemText(f, first, item), itemText(f, want, item); a != z {
			return fmt.Errorf("vamas: block %d: item %d is left out by the parameter inclusion or exclusion list but differs from block 1 (%s, block 1 %s)", i+1, item, echo(z), echo(a))
		}
	}
	return fmt.Errorf("vamas: block %d: does not read back as written under the parameter inclusion or exclusion list", i+1)
}

// blockText prints every item of b whatever its conditions, and its data.
func blockText(f *File, b *Block) string {
	var sb strings.Builder
	w := &printer{out: &sb}
	blockGrammar(w, f, b, func(int) bool { return true }, true)
	writeOrdinates(w, b)
	return sb.String()
}

// itemText prints one item of b whatever its conditions.
func itemText(f *File, b *Block, item int) string {
	var sb strings.Builder
	blockGrammar(&printer{out: &sb}, f, b, func(k int) bool { return k == item }, true)
	return sb.String()
}

// readBack returns the first block as Read would return it.
func readBack(f *File, b *Block) *Block {
	c := b.cloneHeader()
	c.Data = b.Data
	clearInapplicable(f, c)
	return c
}

func writeOrdinates(w *printer, b *Block) {
	nv := len(b.Data)
	np := b.Points()
	w.line(strconv.Itoa(nv * np))
	lo, hi := minMax(b.Data)
	for c := 0; c < nv; c++ {
		w.real("minimum ordinate value", &lo[c])
		w.real("maximum ordinate value", &hi[c])
	}
	for i := 0; i < np; i++ {
		for c := 0; c < nv; c++ {
			w.real("ordinate value", &b.Data[c][i])
		}
	}
}

// minMax returns the minimum and maximum of each column (NotGiven for an
// empty one).
func minMax(data [][]float64) (lo, hi []float64) {
	lo, hi = make([]float64, len(data)), make([]float64, len(data))
	for c, d := range data {
		lo[c], hi[c] = NotGiven, NotGiven
		if len(d) > 0 {
			lo[c], hi[c] = math.Inf(1), math.Inf(-1)
			for _, v := range d {
				lo[c] = math.Min(lo[c], v)
				hi[c] = math.Max(hi[c], v)
			}
		}
	}
	return lo, hi
}
