package vamas

import (
	"errors"
	"strconv"
	"strings"
	"testing"

	"statemix/lineshape"
)

// lines returns twoVariables as lines (no terminators).
func twoVariableLines() []string {
	return strings.Split(strings.TrimSuffix(twoVariables, "\n"), "\n")
}

// edit returns twoVariables with line n (1-based) replaced by repl (which
// may hold several lines, or be nil to delete it).
func edit(n int, repl ...string) string {
	l := twoVariableLines()
	out := append([]string(nil), l[:n-1]...)
	out = append(out, repl...)
	out = append(out, l[n:]...)
	return strings.Join(out, "\n") + "\n"
}

func TestBadFiles(t *testing.T) {
	l := twoVariableLines()
	// Line numbers refer to twoVariables: 7 experiment mode, 11 inclusion
	// count, 15 number of blocks, 16 block identifier, 28 analysis source
	// characteristic energy, 63 number of ordinate values (8), 76 terminator.
	if l[27] != "5000" || l[62] != "8" || l[6] != "NORM" {
		t.Fatalf("twoVariables changed: line 28 %q, line 63 %q", l[27], l[62])
	}
	cases := []struct {
		name  string
		text  string
		line  int
		block int // 0-based; -1 for the header
		msg   string
	}{
		{"empty", "", 1, -1, "format identifier: unexpected end of file"},
		{"not vamas", "hello\n", 1, -1, "not an ISO 14976"},
		{"truncated header", strings.Join(l[:9], "\n") + "\n", 10, -1, "number of experimental variables: unexpected end of file"},
		{"truncated block", strings.Join(l[:30], "\n") + "\n", 31, 0, "analysis source beam width y: unexpected end of file"},
		{"truncated data", strings.Join(l[:68], "\n") + "\n", 63, 0, "ordinate count 8, but only 5 lines follow"},
		{"truncated data, one line", strings.Join(l[:64], "\n") + "\n", 63, 0, "ordinate count 8, but only 1 line follows"},
		{"count too large", edit(63, "10"), 63, 0, "ordinate count 10, want 8"},
		{"count odd", edit(63, "9"), 63, 0, "want a multiple of the 2 corresponding variables"},
		{"count too small", edit(63, "6"), 74, -1, `want "end of experiment" after block 1, got "1020"`},
		{"count hostile", edit(63, "1000000000000"), 63, 0, "ordinate count 1000000000000, want 8"},
		{"count negative", edit(63, "-8"), 63, 0, "negative"},
		{"blocks hostile", edit(15, "1000000000000"), 15, -1, "number of blocks: 1000000000000, but only"},
		{"comment hostile", edit(6, "99999999999"), 6, -1, "number of lines in comment: 99999999999, but only"},
		{"variables hostile", edit(10, "1E12"), 10, -1, "number of experimental variables: 1000000000000, but only"},
		{"not a number", edit(28, "5 keV"), 28, 0, `analysis source characteristic energy: "5 keV" is not a number`},
		{"blank number", edit(28, ""), 28, 0, "analysis source characteristic energy: blank line, want a number"},
		{"nan", edit(28, "NaN"), 28, 0, "not a number"},
		{"infinity", edit(28, "1e999"), 28, 0, "out of range"},
		{"hex", edit(28, "0x10"), 28, 0, "not a number"},
		{"bad integer", edit(18, "2026.5"), 18, 0, "year in full: \"2026.5\" is not an integer"},
		{"bad ordinate", edit(69, "1O1O"), 69, 0, `ordinate value 2 of 8: "1O1O" is not a number`},
		{"bad mode", edit(7, "NORMAL"), 7, -1, "experiment mode \"NORMAL\""},
		{"bad scan", edit(8, "SPIRAL"), 8, -1, "scan mode \"SPIRAL\""},
		{"bad prefix", edit(11, "1", "41"), 12, -1, "prefix number 41: want 1 to 40"},
		{"missing terminator", strings.Join(l[:len(l)-1], "\n") + "\n", 76, -1, `missing "end of experiment"`},
		{"text after", twoVariables + "more\n", 77, -1, "text after"},
		{"zero variables", edit(50, "0"), 52, 0, "signal collection time"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(c.text), "bad.vms")
			var ie *lineshape.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v (%T), want *lineshape.InputError", err, err)
			}
			msgOK := strings.Contains(err.Error(), c.msg)
			if !msgOK && strconv.IntSize == 32 {
				// A count beyond a 32-bit int is refused as out of range
				// on the line that gives it, before it is compared with
				// what follows.
				msgOK = strings.Contains(err.Error(), "is out of range")
			}
			if ie.Line != c.line || ie.Block != c.block || !msgOK {
				t.Fatalf("got line %d block %d %q\nwant line %d block %d containing %q", ie.Line, ie.Block, err, c.line, c.block, c.msg)
			}
			if !strings.HasPrefix(err.Error(), "bad.vms: line ") {
				t.Errorf("error %q does not start with the file and line", err)
			}
		})
	}
}

func TestLenientNumbers(t *testing.T) {
	// Fortran D exponents, spaces and an integer written as a real are read.
	f, err := Read(strings.NewReader(edit(28, " 0.5D+04 ")), "x.vms")
	if err != nil {
		t.Fatal(err)
	}
	if f.Blocks[0].SourceEnergy != 5000 {
		t.Errorf("0.5D+04 read as %v", f.Blocks[0].SourceEnergy)
	}
	f, err = Read(strings.NewReader(edit(18, "2026.0")), "x.vms")
	if err != nil || f.Blocks[0].Year != 2026 {
		t.Errorf("2026.0 as year: %v", err)
	}
	// "1.0E+37" is "not given" too.
	f, err = Read(strings.NewReader(edit(28, "1.0E+37")), "x.vms")
	if err != nil || Given(f.Blocks[0].SourceEnergy) {
		t.Errorf("1.0E+37: %v %v", err, f.Blocks[0].SourceEnergy)
	}
}

func TestWriteRefuses(t *testing.T) {
	cases := map[string]func(f *File){
		"bad mode":        func(f *File) { f.ExperimentMode = "XYZ" },
		"line break":      func(f *File) { f.Blocks[1].Sample = "a\r\nb" },
		"nan":             func(f *File) { f.Blocks[0].SourceEnergy = nanValue() },
		"variable values": func(f *File) { f.Blocks[2].VariableValues = nil },
		"data columns":    func(f *File) { f.Blocks[0].Data = f.Blocks[0].Data[:1] },
		"ragged data":     func(f *File) { f.Blocks[0].Data[1] = f.Blocks[0].Data[1][1:] },
		"future entries":  func(f *File) { f.Blocks[0].Future = nil },
		"nil block":       func(f *File) { f.Blocks[1] = nil },
	}
	for name, mutate := range cases {
		f := fullFile(ModeSDP, ScanRegular)
		mutate(f)
		var sb strings.Builder
		if err := Write(&sb, f); err == nil || !strings.HasPrefix(err.Error(), "vamas: ") {
			t.Errorf("%s: Write error %v", name, err)
		}
	}
}

func nanValue() float64 {
	zero := 0.0
	return zero / zero
}
