package delimited

import (
	"bytes"
	"errors"
	"math"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

const realFile = "../../../../shared/realdata/derivative-aes-metal-crystal.dat"

func modePtr(m lineshape.Mode) *lineshape.Mode { return &m }

// TestRealFile reads the measured derivative spectrum described in
// ../shared/realdata/README.md: 1151 points from 97.76098 to 486.92144 eV,
// tab-separated, no header, slightly uneven grid. The first and last rows
// (97.76098 -0.01938 and 486.92144 0.00025) are copied from the file itself.
func TestRealFile(t *testing.T) {
	if _, err := os.Stat(realFile); err != nil {
		t.Skipf("real data not present (%v): this check needs ../shared/realdata beside the repository", err)
	}
	s, err := ReadFile(realFile, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 1151 {
		t.Fatalf("got %d channels, want 1151", s.Len())
	}
	if s.Axis.Uniform() {
		t.Errorf("axis stored as uniform; the README says steps vary from 0.29 to 0.38 eV")
	}
	if s.Mode != lineshape.Derivative {
		t.Errorf("mode %v, want derivative (no header: the documented default)", s.Mode)
	}
	// Exact decimal text parsed by strconv: compare to 1e-12 relative.
	checks := []struct{ got, want float64 }{
		{s.Axis.Lo(), 97.76098}, {s.Axis.Hi(), 486.92144},
		{s.Y[0], -0.01938}, {s.Y[s.Len()-1], 0.00025},
	}
	for i, c := range checks {
		if !scalar.EqualWithinAbsOrRel(c.got, c.want, 0, 1e-12) {
			t.Errorf("check %d: got %v, want %v", i, c.got, c.want)
		}
	}
	minStep, maxStep := math.Inf(1), 0.0
	for i := 1; i < s.Len(); i++ {
		d := s.Energy(i) - s.Energy(i-1)
		minStep, maxStep = math.Min(minStep, d), math.Max(maxStep, d)
	}
	// README: steps 0.29 to 0.38 eV (two digits quoted, so 0.01 eV slack).
	if minStep < 0.28 || maxStep > 0.39 {
		t.Errorf("steps %v..%v eV, README says 0.29..0.38", minStep, maxStep)
	}
	if s.Meta.Source != realFile {
		t.Errorf("Meta.Source %q", s.Meta.Source)
	}

	// Write and read back: exact text of the shortest round-tripping form.
	var buf bytes.Buffer
	if err := Write(&buf, s, WriteOptions{Separator: '\t'}); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf, "back", Options{})
	if err != nil {
		t.Fatal(err)
	}
	sameSpectrum(t, back, s, 0)
}

// sameSpectrum compares mode, energies and values; tol is relative. A
// shortest-form float round trip is exact, so callers pass 0 for values
// written by this package; energies get 1e-12 relative because
// lineshape.New recomputes the step of a uniform axis.
func sameSpectrum(t *testing.T, got, want *lineshape.Spectrum, tol float64) {
	t.Helper()
	if got.Mode != want.Mode {
		t.Errorf("mode %v, want %v", got.Mode, want.Mode)
	}
	if got.Len() != want.Len() {
		t.Fatalf("%d channels, want %d", got.Len(), want.Len())
	}
	for i := range want.Y {
		if !scalar.EqualWithinAbsOrRel(got.Energy(i), want.Energy(i), 0, math.Max(tol, 1e-12)) {
			t.Fatalf("channel %d: energy %v, want %v", i, got.Energy(i), want.Energy(i))
		}
		if !scalar.EqualWithinAbsOrRel(got.Y[i], want.Y[i], 0, tol) {
			t.Fatalf("channel %d: value %v, want %v", i, got.Y[i], want.Y[i])
		}
	}
}

func TestLayouts(t *testing.T) {
	cases := []struct {
		name   string
		text   string
		opts   Options
		e, y   []float64 // expected ascending energies and values
		mode   lineshape.Mode
		counts bool
		timesE bool
		blocks int // ReadAll count
	}{
		{name: "csv header counts", text: "Energy (eV),Counts\n100,5\n101,6\n102,7\n",
			e: []float64{100, 101, 102}, y: []float64{5, 6, 7}, mode: lineshape.Direct, counts: true, blocks: 1},
		{name: "tsv dNdE header crlf", text: "KE\tdN/dE\r\n100\t-1\r\n100.5\t2\r\n",
			e: []float64{100, 100.5}, y: []float64{-1, 2}, mode: lineshape.Derivative, blocks: 1},
		{name: "whitespace header with spaced units", text: "  Energy (eV)   N(E) (a.u.)\n  10   1e3\n  12   2E+03\n",
			e: []float64{10, 12}, y: []float64{1000, 2000}, mode: lineshape.Direct, blocks: 1},
		{name: "comments and blank lines", text: "# measured 2024\n\n# second comment\n1 2 # inline\n\n2 3\n#end\n",
			e: []float64{1, 2}, y: []float64{2, 3}, mode: lineshape.Derivative, blocks: 1},
		{name: "commented header", text: "# energy_ev counts\n1 2\n2 3\n",
			e: []float64{1, 2}, y: []float64{2, 3}, mode: lineshape.Direct, counts: true, blocks: 1},
		{name: "descending uneven", text: "300,3\n200,2\n150,1.5\n",
			e: []float64{150, 200, 300}, y: []float64{1.5, 2, 3}, mode: lineshape.Derivative, blocks: 1},
		{name: "semicolon trailing separator quoted", text: "\"energy\";\"E*N(E)\";\n1;2;\n3;4;\n",
			e: []float64{1, 3}, y: []float64{2, 4}, mode: lineshape.Direct, timesE: true, blocks: 1},
		{name: "mode override", text: "energy,counts\n1,2\n2,3\n", opts: Options{Mode: modePtr(lineshape.Derivative)},
			e: []float64{1, 2}, y: []float64{2, 3}, mode: lineshape.Derivative, blocks: 1},
		{name: "third column", text: "e,a,b\n1,2,7\n2,3,8\n", opts: Options{ValueColumn: 3},
			e: []float64{1, 2}, y: []float64{7, 8}, mode: lineshape.Derivative, blocks: 2},
		{name: "energy in column 2", text: "v,energy\n9,1\n8,2\n", opts: Options{EnergyColumn: 2},
			e: []float64{1, 2}, y: []float64{9, 8}, mode: lineshape.Derivative, blocks: 1},
		// 1486.6 eV is Al K-alpha (common practice); KE = hv - BE.
		{name: "binding axis", text: "BE,cps\n1400,1\n1386.6,2\n", opts: Options{ExcitationEV: 1486.6},
			e: []float64{86.6, 100}, y: []float64{1, 2}, mode: lineshape.Direct, blocks: 1},
		{name: "forced binding", text: "1400 1\n1386.6 2\n", opts: Options{Axis: AxisBinding, ExcitationEV: 1486.6},
			e: []float64{86.6, 100}, y: []float64{1, 2}, mode: lineshape.Derivative, blocks: 1},
		{name: "lone CR line ends", text: "energy\tcounts\r1\t2\r\r2\t3\r",
			e: []float64{1, 2}, y: []float64{2, 3}, mode: lineshape.Direct, counts: true, blocks: 1},
		{name: "bom", text: "\ufeff1,2\n2,3\n", e: []float64{1, 2}, y: []float64{2, 3}, mode: lineshape.Derivative, blocks: 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := Read(strings.NewReader(c.text), "t.csv", c.opts)
			if err != nil {
				t.Fatal(err)
			}
			if s.Mode != c.mode || s.Meta.Counts != c.counts || s.Meta.TimesEnergy != c.timesE {
				t.Errorf("mode %v counts %v timesE %v, want %v %v %v", s.Mode, s.Meta.Counts, s.Meta.TimesEnergy, c.mode, c.counts, c.timesE)
			}
			if s.Len() != len(c.e) {
				t.Fatalf("%d channels, want %d", s.Len(), len(c.e))
			}
			for i := range c.e {
				// Decimal text parsed exactly, or one subtraction (binding): 1e-12.
				if !scalar.EqualWithinAbsOrRel(s.Energy(i), c.e[i], 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(s.Y[i], c.y[i], 0, 1e-15) {
					t.Errorf("channel %d: (%v, %v), want (%v, %v)", i, s.Energy(i), s.Y[i], c.e[i], c.y[i])
				}
			}
			all, err := ReadAll(strings.NewReader(c.text), "t.csv", c.opts)
			if err != nil {
				t.Fatal(err)
			}
			if len(all) != c.blocks {
				t.Errorf("ReadAll: %d spectra, want %d", len(all), c.blocks)
			}
			for i, a := range all {
				if a.Meta.Block != i || a.Meta.BlockID == "" {
					t.Errorf("ReadAll spectrum %d: block %d id %q", i, a.Meta.Block, a.Meta.BlockID)
				}
			}
		})
	}
}

func TestComments(t *testing.T) {
	s, err := Read(strings.NewReader("# one\n#two\nenergy,dN/dE\n# not kept\n1,2\n2,3\n"), "c", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Meta.Comments) != 2 || s.Meta.Comments[0] != "one" || s.Meta.Comments[1] != "two" {
		t.Errorf("comments %q", s.Meta.Comments)
	}
}

func TestErrors(t *testing.T) {
	cases := []struct {
		name string
		text string
		opts Options
		line int    // 1-based line the error must name; 0 for none
		want string // part of the message
	}{
		{"not a number", "1,2\n2,3\n3,x\n", Options{}, 3, `"x" is not a number`},
		{"decimal comma", "1\t2\n1,5\t3,5\n", Options{}, 2, "decimal commas are not supported"},
		{"decimal comma header first", "97,76\t-0,01\n98,1\t-0,02\n", Options{}, 2, "decimal commas"},
		// The first row does not parse, so it is taken as a header; line 2 fails.
		{"decimal comma as space column", "97,76 -0,01\n98,1 -0,02\n", Options{}, 2, "decimal commas"},
		{"ragged", "1 2\n2 3\n3 4 5\n", Options{}, 3, "3 columns, but line 1 has 2"},
		{"duplicate energy", "1 2\n2 3\n1 4\n", Options{}, 3, "already on line 1"},
		{"nan", "1 2\n2 nan\n", Options{}, 2, "not a finite number"},
		{"inf", "1 2\ninf 3\n", Options{}, 2, "not a finite number"},
		{"overflow", "1 2\n2 1e999\n", Options{}, 2, "out of the float64 range"},
		{"one row", "# c\n1 2\n", Options{}, 2, "only one data row"},
		{"empty", "# nothing\n\n", Options{}, 0, "no data rows"},
		{"header only", "energy,counts\n", Options{}, 0, "no data rows"},
		{"empty field", "1,2,3\n2,,4\n3,4,5\n", Options{}, 2, "empty field"},
		{"binding without hv", "be,counts\n1,2\n2,3\n", Options{}, 1, "no excitation energy"},
		{"value column missing", "1 2\n2 3\n", Options{ValueColumn: 4}, 1, "value column 4"},
		{"two header rows", "energy,counts\nfoo,bar\n1,2\n", Options{}, 2, "not a number"},
		{"long line", strings.Repeat("1", maxLine+10) + "\n", Options{}, 1, "longer than"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(c.text), "bad.csv", c.opts)
			if err == nil {
				t.Fatal("no error")
			}
			var ie *lineshape.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v (%T) is not a *lineshape.InputError", err, err)
			}
			if ie.Line != c.line || ie.File != "bad.csv" {
				t.Errorf("error %q names file %q line %d, want line %d", err, ie.File, ie.Line, c.line)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %q does not say %q", err, c.want)
			}
		})
	}
}

func TestWriteRoundTrip(t *testing.T) {
	e := []float64{100, 100.1, 100.30000000000001, 101, 105.5}
	y := []float64{math.Pi, -1e-300, 6.02214076e23, 0, -math.SmallestNonzeroFloat64}
	for _, sep := range []rune{0, ',', ';', '\t', ' '} {
		for _, mode := range []lineshape.Mode{lineshape.Direct, lineshape.Derivative} {
			s, err := lineshape.New(e, y, mode)
			if err != nil {
				t.Fatal(err)
			}
			s.Meta.Comments = []string{"first", "two\nlines"}
			var buf bytes.Buffer
			if err := Write(&buf, s, WriteOptions{Separator: sep}); err != nil {
				t.Fatal(err)
			}
			back, err := Read(bytes.NewReader(buf.Bytes()), "rt", Options{})
			if err != nil {
				t.Fatalf("sep %q: %v\n%s", sep, err, buf.String())
			}
			// Shortest-form formatting round-trips float64 exactly (strconv docs).
			sameSpectrum(t, back, s, 0)
			if len(back.Meta.Comments) != 2 || back.Meta.Comments[1] != "two lines" {
				t.Errorf("comments %q", back.Meta.Comments)
			}
		}
	}
	// A uniform axis.
	u, err := lineshape.NewUniform(50, 0.25, []float64{1, 2, 3, 4}, lineshape.Direct)
	if err != nil {
		t.Fatal(err)
	}
	u.Meta.Counts = true
	var buf bytes.Buffer
	if err := Write(&buf, u, WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf, "u", Options{})
	if err != nil {
		t.Fatal(err)
	}
	sameSpectrum(t, back, u, 0)
	if !back.Axis.Uniform() || !back.Meta.Counts {
		t.Errorf("uniform %v counts %v", back.Axis.Uniform(), back.Meta.Counts)
	}
}

func TestWriteTable(t *testing.T) {
	a, _ := lineshape.NewUniform(10, 1, []float64{1, 2, 3}, lineshape.Derivative)
	b, _ := lineshape.NewUniform(10, 1, []float64{4, 5, 6}, lineshape.Direct)
	var buf bytes.Buffer
	if err := WriteTable(&buf, []*lineshape.Spectrum{a, b}, WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	all, err := ReadAll(&buf, "tab", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(all) != 2 {
		t.Fatalf("%d spectra", len(all))
	}
	sameSpectrum(t, all[0], a, 0)
	sameSpectrum(t, all[1], b, 0)
	c, _ := lineshape.NewUniform(11, 1, []float64{4, 5, 6}, lineshape.Direct)
	if err := WriteTable(&buf, []*lineshape.Spectrum{a, c}, WriteOptions{}); err == nil {
		t.Error("different axes accepted")
	}
}

func TestClassify(t *testing.T) {
	// The names the package documents (doc.go), with units and case.
	cases := map[string]kind{
		"Energy (eV)": kindKinetic, "energy/eV": kindKinetic, "energy_ev": kindKinetic, "KE": kindKinetic,
		"Kinetic Energy [eV]": kindKinetic, "BE": kindBinding, "Binding Energy (eV)": kindBinding,
		"dN/dE": kindDerivative, "dN/dE (a.u.)": kindDerivative, "N(E)": kindDirect, "counts": kindCounts,
		"Counts/s": kindDirect, "E*N(E)": kindDirectTimesE, "intensity [arb. units]": kindDirect,
		"foo": kindUnknown, "": kindUnknown, "(": kindUnknown, "/ev": kindUnknown,
	}
	for name, want := range cases {
		if got := classify(name); got != want {
			t.Errorf("classify(%q) = %v, want %v", name, got, want)
		}
	}
}
