package vamas

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"statemix/lineshape"
)

// fullFile returns an invented experiment of the given modes with three
// blocks whose items all differ, techniques "AES diff", "XPS" and "SIMS" so
// that the differential-width and sputtering-source conditions switch, and
// two corresponding variables (three in IRREGULAR mode, the first the
// abscissa). Fields a block's conditions leave out stay zero, as Read
// leaves them.
func fullFile(mode, scan string) *File {
	f := &File{
		Institution:        "Example Institute (invented)",
		InstrumentModel:    "model X",
		Operator:           "",
		Experiment:         "round trip " + mode + " " + scan,
		Comment:            []string{"invented test data", "", "third comment line"},
		ExperimentMode:     mode,
		ScanMode:           scan,
		Variables:          []Variable{{"Sputter Time", "min"}, {"Temperature", "K"}},
		ManualItems:        []int{2, 11},
		FutureExperiment:   []string{"future A", ""},
		FutureBlockEntries: 2,
	}
	if hasSpectralRegions(mode) {
		f.SpectralRegions = 3
	}
	if hasMapXY(mode) {
		f.AnalysisPositions, f.MapX, f.MapY = 3, 2, 2
	}
	techs := []string{"AES diff", "XPS", "SIMS"}
	for i := 0; i < 3; i++ {
		k := float64(i)
		b := &Block{
			ID: fmt.Sprintf("region %d", i+1), Sample: "sample " + string(rune('A'+i)),
			Year: 2026, Month: 11, Day: 30 - i, Hour: 13, Minute: 5 + i, Second: 59,
			GMTOffsetHours: 1, Comment: []string{fmt.Sprintf("block %d", i), ""},
			Technique: techs[i], VariableValues: []float64{1.5 * k, NotGiven},
			SourceLabel: "electron gun", SourceEnergy: 3000 + k, SourceStrength: 10.25,
			SourceWidthX: 1e-3, SourceWidthY: 2.5e-3, SourcePolar: 30, SourceAzimuth: 0,
			AnalyserMode: "FRR", PassEnergy: 4, Magnification: 1, WorkFunction: 4.5,
			TargetBias: -0.1, AnalysisWidthX: 100, AnalysisWidthY: NotGiven,
			TakeOffPolar: 42.3, TakeOffAzimuth: 180, Species: "Ti", Transition: "LMM",
			ParticleCharge: -1, SignalMode: "pulse counting", CollectionTime: 0.05,
			Scans: 3 + i, TimeCorrection: 2e-8, TiltPolar: 0.1 * k, TiltAzimuth: 90, Rotation: 0,
			Params: []Param{{"lens", "V", 12.5}, {"slit", "", -k}},
			Future: []string{"fa" + fmt.Sprint(i), ""},
		}
		if hasMapXY(mode) {
			b.X, b.Y = 1+i%2, 1+i/2
		}
		if depthProfile(mode) {
			b.SputterZ, b.SputterAtoms, b.SputterCharge = 18, 1, 1
		}
		if hasFieldOfView(mode) {
			b.FieldOfViewX, b.FieldOfViewY = 200, 150
		}
		if hasLinescan(mode) {
			b.Linescan = [6]int{1, 1, 64, 1, 64, 64}
		}
		if isAESDiff(b.Technique) {
			b.DifferentialWidth = 2.5
		}
		if depthProfile(mode) && sputterSourceTechnique(b.Technique) {
			b.SputterEnergy, b.SputterCurrent = 3000, 1.5
			b.SputterWidthX, b.SputterWidthY = 1000, 1000
			b.SputterPolar, b.SputterAzimuth, b.SputterMode = 45, 90, "cyclic"
		}
		n := 5 + i
		sig := make([]float64, n)
		bg := make([]float64, n)
		for j := range sig {
			sig[j] = math.Sin(float64(j)*0.7+k) * 1e4 / 3
			bg[j] = 1.0 / float64(j+3)
		}
		if scan == ScanRegular {
			b.AbscissaLabel, b.AbscissaUnit = "Kinetic Energy", "eV"
			b.AbscissaStart, b.AbscissaStep = 300.1+k, 0.1*(1-2*k) // block 2: negative step
		}
		b.Variables = []Variable{{"Intensity", "c/s"}, {"Background", "d"}}
		b.Data = [][]float64{sig, bg}
		if scan == ScanIrregular {
			e := make([]float64, n)
			for j := range e {
				e[j] = 100 + float64(j*j)/7
			}
			b.Variables = append([]Variable{{"Kinetic Energy", "eV"}}, b.Variables...)
			b.Data = append([][]float64{e}, b.Data...)
		}
		setMinMax(b)
		f.Blocks = append(f.Blocks, b)
	}
	return f
}

func setMinMax(b *Block) {
	b.Min, b.Max = nil, nil
	for _, d := range b.Data {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range d {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		b.Min, b.Max = append(b.Min, lo), append(b.Max, hi)
	}
}

// sameFile reports the first difference between two files, ignoring what
// Read adds (file name, block lines). Floats are compared exactly: Write
// prints the shortest decimal that strconv parses back to the same
// float64, so a round trip must be bit-exact.
func sameFile(t *testing.T, want, got *File) {
	t.Helper()
	w, g := *want, *got
	w.name, g.name = "", ""
	w.Blocks, g.Blocks = nil, nil
	if !reflect.DeepEqual(w, g) {
		t.Fatalf("header differs:\nwant %+v\n got %+v", w, g)
	}
	if len(want.Blocks) != len(got.Blocks) {
		t.Fatalf("%d blocks, want %d", len(got.Blocks), len(want.Blocks))
	}
	for i := range want.Blocks {
		wb, gb := *want.Blocks[i], *got.Blocks[i]
		wb.line, gb.line = 0, 0
		if !reflect.DeepEqual(wb, gb) {
			t.Fatalf("block %d differs:\nwant %+v\n got %+v", i, wb, gb)
		}
	}
}

func roundTrip(t *testing.T, f *File) (*File, []byte) {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, f); err != nil {
		t.Fatalf("Write: %v", err)
	}
	g, err := Read(bytes.NewReader(buf.Bytes()), "rt.vms")
	if err != nil {
		t.Fatalf("Read of written file: %v\n%s", err, numbered(buf.String()))
	}
	return g, buf.Bytes()
}

func numbered(s string) string {
	var b strings.Builder
	for i, l := range strings.Split(s, "\n") {
		fmt.Fprintf(&b, "%4d %s\n", i+1, strings.TrimRight(l, "\r"))
	}
	return b.String()
}

func TestRoundTripEveryMode(t *testing.T) {
	modes := []string{ModeNORM, ModeSDP, ModeSDPSV, ModeMAP, ModeMAPDP, ModeMAPSV, ModeMAPSVDP, ModeSEM}
	for _, mode := range modes {
		for _, scan := range []string{ScanRegular, ScanIrregular, ScanMapping} {
			t.Run(mode+"/"+scan, func(t *testing.T) {
				f := fullFile(mode, scan)
				g, out := roundTrip(t, f)
				sameFile(t, f, g)
				// Every line ends in CRLF, the last one included.
				if bytes.Count(out, []byte("\n")) != bytes.Count(out, []byte("\r\n")) || !bytes.HasSuffix(out, []byte("end of experiment\r\n")) {
					t.Fatalf("output is not CRLF throughout")
				}
				// Writing again gives the same bytes.
				var again bytes.Buffer
				if err := Write(&again, g); err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(again.Bytes(), out) {
					t.Fatalf("second write differs")
				}
			})
		}
	}
}

// TestConditionalLines counts the lines each mode adds, against the
// grammar as the standard lists it (ISO 14976:1998 clause 2.4, from memory
// of its line order): this fails if a condition is attached to the wrong
// mode even when reader and writer agree.
func TestConditionalLines(t *testing.T) {
	lines := func(mode, scan string) int {
		var buf bytes.Buffer
		if err := Write(&buf, fullFile(mode, scan)); err != nil {
			t.Fatal(err)
		}
		return bytes.Count(buf.Bytes(), []byte("\n"))
	}
	base := lines(ModeNORM, ScanRegular)
	// Per file: NORM has spectral regions; 3 blocks; block 0 AES diff, 1
	// XPS, 2 SIMS.
	cases := []struct {
		mode, scan string
		delta      int
		why        string
	}{
		{ModeSDP, ScanRegular, 3*3 + 2*7, "sputtering ion 3 lines per block; sputtering source 7 lines in the AES and XPS blocks"},
		{ModeSDPSV, ScanRegular, -1 + 3*3 + 2*7, "no spectral regions; as SDP"},
		{ModeMAP, ScanRegular, 3 + 3*(2+2), "map sizes; x,y and field of view per block"},
		{ModeMAPDP, ScanRegular, 3 + 3*(2+2+3) + 2*7, "as MAP plus depth-profile lines"},
		{ModeMAPSV, ScanRegular, -1 + 3*(2+6), "field of view and linescan per block"},
		{ModeMAPSVDP, ScanRegular, -1 + 3*(2+6+3) + 2*7, "as MAPSV plus depth-profile lines"},
		{ModeSEM, ScanRegular, -1 + 3*(2+6), "as MAPSV"},
		// IRREGULAR: no abscissa lines (4 per block), one more
		// corresponding variable (2 label lines + 2 min/max + one value
		// per point: 5+6+7 points).
		{ModeNORM, ScanIrregular, 3*(-4+2+2) + 18, "abscissa as a corresponding variable"},
	}
	for _, c := range cases {
		if got := lines(c.mode, c.scan) - base; got != c.delta {
			t.Errorf("%s/%s: %d lines more than NORM/REGULAR, want %d (%s)", c.mode, c.scan, got, c.delta, c.why)
		}
	}
}

// inclusionFile is an invented NORM file whose inclusion list (items 1, 13,
// 24, 33, 35) leaves technique (11) and abscissa (32) out of block 2: its
// technique "AES diff" comes from block 1 and with it the
// differential-width line, and its abscissa start and increment too.
const inclusionFile = `VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4
inst
model
op
exp
1
invented file for the inclusion-list test
NORM
REGULAR
2
1
Etch Time
s
5
1
13
24
33
35
0
0
0
2
first
sampleA
2026
1
2
3
4
5
0
1
first block comment
AES diff
12
electron gun
3000
10
1E37
1E37
30
0
FRR
4
2.5
1
4.5
0
1E37
1E37
42
0
Cu
LMM
-1
Kinetic Energy
eV
900
-0.5
1
Intensity
c/s
analogue
0.1
2
0
0
0
0
0
3
1
3
1
2
3
second
24
3.75
2
dN/dE
d
Background
d
0.2
6
-2
2
-2
1
-2
1
2
-2
1
0.5
end of experiment
`

func TestInclusionList(t *testing.T) {
	f, err := Read(strings.NewReader(inclusionFile), "incl.vms")
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Blocks) != 2 || f.ParamListExcludes || len(f.ParamList) != 5 {
		t.Fatalf("read %d blocks, list %v excl %v", len(f.Blocks), f.ParamList, f.ParamListExcludes)
	}
	b := f.Blocks[1]
	if b.ID != "second" || b.Sample != "sampleA" || b.Technique != "AES diff" || b.Year != 2026 || len(b.Comment) != 1 {
		t.Errorf("block 2 identifier/inherited items: %+v", b)
	}
	// Its own differential width, read because the inherited technique is
	// AES diff; its own experimental variable value and signal time.
	if b.DifferentialWidth != 3.75 || b.VariableValues[0] != 24 || b.CollectionTime != 0.2 {
		t.Errorf("block 2 own items: width %v, etch %v, time %v", b.DifferentialWidth, b.VariableValues[0], b.CollectionTime)
	}
	// Inherited abscissa, own corresponding variables.
	if b.AbscissaStart != 900 || b.AbscissaStep != -0.5 || len(b.Variables) != 2 || b.Variables[0].Label != "dN/dE" {
		t.Errorf("block 2 abscissa %v %v, variables %v", b.AbscissaStart, b.AbscissaStep, b.Variables)
	}
	wantData := [][]float64{{-2, 2, 1}, {1, -2, 0.5}}
	if !reflect.DeepEqual(b.Data, wantData) {
		t.Errorf("block 2 data %v, want %v", b.Data, wantData)
	}
	// Writing it again reproduces the file, CRLF aside.
	var buf bytes.Buffer
	if err := Write(&buf, f); err != nil {
		t.Fatal(err)
	}
	if got := strings.ReplaceAll(buf.String(), "\r\n", "\n"); got != inclusionFile {
		t.Errorf("rewritten file differs:\n%s", numbered(got))
	}
	// Spectra: block 2 descends from 900 eV with step 0.5 eV.
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	s := specs[1]
	if s.Mode != lineshape.Derivative || s.Axis.Start != 899 || s.Axis.Step != 0.5 || !reflect.DeepEqual(s.Y, []float64{1, 2, -2}) {
		t.Errorf("block 2 spectrum %+v", s)
	}
	if *s.Meta.SputterTimeS != 24 || s.Meta.ModulationEV != 3.75 {
		t.Errorf("block 2 meta %+v", s.Meta)
	}
	// The second corresponding variable.
	bg, err := f.Spectrum(1, 1)
	if err != nil || !reflect.DeepEqual(bg.Y, []float64{0.5, -2, 1}) || bg.Meta.Extra["ordinate_label"] != "Background" {
		t.Errorf("block 2 background: %v %+v", err, bg)
	}
	// A later block that differs in an omitted item cannot be written.
	f.Blocks[1].Technique = "AES dir"
	if err := Write(&bytes.Buffer{}, f); err == nil || !strings.Contains(err.Error(), "item 11") {
		t.Errorf("Write of a block differing in an omitted item: %v", err)
	}
}

func TestExclusionList(t *testing.T) {
	f := fullFile(ModeSDP, ScanRegular)
	// Exclude technique, abscissa and the sputtering ion from later blocks:
	// make them equal to the first block's.
	f.ParamList, f.ParamListExcludes = []int{ItemTechnique, ItemAbscissa, ItemSputterIon}, true
	for _, b := range f.Blocks[1:] {
		b.Technique = f.Blocks[0].Technique
		b.DifferentialWidth = 1 + float64(len(b.Data[0]))
		b.SputterEnergy, b.SputterCurrent = 3000, 1.5
		b.SputterWidthX, b.SputterWidthY = 1000, 1000
		b.SputterPolar, b.SputterAzimuth, b.SputterMode = 45, 90, "cyclic"
		b.AbscissaStart, b.AbscissaStep = f.Blocks[0].AbscissaStart, f.Blocks[0].AbscissaStep
	}
	g, out := roundTrip(t, f)
	sameFile(t, f, g)
	var all bytes.Buffer
	f2 := *f
	f2.ParamList = nil
	if err := Write(&all, &f2); err != nil {
		t.Fatal(err)
	}
	// 2 later blocks x (technique 1 + abscissa 4 + sputtering ion 3) lines
	// fewer, 3 more for the list itself.
	if d := bytes.Count(all.Bytes(), []byte("\n")) - bytes.Count(out, []byte("\n")); d != 2*8-3 {
		t.Errorf("exclusion list saves %d lines, want %d", d, 2*8-3)
	}
}

// twoVariables is an invented NORM file with two corresponding variables
// interleaved point by point, written with LF, a blank sample identifier
// and operator, and a 1E37 ("not given") analysis source strength.
const twoVariables = `VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4
inst
model

exp
0
NORM
REGULAR
1
0
0
0
0
0
1
b1

2026
12
1
22
30
0
0
0
AES dir
gun
5000
1E37
1E37
1E37
30
0
FAT
50
1
4.5
0
1E37
1E37
60
0
Ni
LMM
-1
Kinetic Energy
eV
840
1
2
N(E)
counts
Background
counts
pulse counting
0.5
1
0
0
1E37
1E37
0
8
1000
1030
900
905
1000
900
1010
901
1030
903
1020
905
end of experiment
`

func TestTwoInterleavedVariables(t *testing.T) {
	f, err := Read(strings.NewReader(twoVariables), "two.vms")
	if err != nil {
		t.Fatal(err)
	}
	b := f.Blocks[0]
	want := [][]float64{{1000, 1010, 1030, 1020}, {900, 901, 903, 905}}
	if !reflect.DeepEqual(b.Data, want) {
		t.Fatalf("data %v, want %v", b.Data, want)
	}
	if b.Sample != "" || f.Operator != "" {
		t.Errorf("blank lines not read as empty values: sample %q operator %q", b.Sample, f.Operator)
	}
	if Given(b.SourceStrength) || b.SourceStrength != NotGiven {
		t.Errorf("1E37 read as %v", b.SourceStrength)
	}
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	s := specs[0]
	if !reflect.DeepEqual(s.Y, want[0]) || s.Axis.Start != 840 || s.Axis.Step != 1 || s.Mode != lineshape.Direct {
		t.Errorf("spectrum %+v", s)
	}
	m := s.Meta
	// 1E37 strength: no beam current; take-off 90-60 = 30 degrees from the surface.
	if m.BeamCurrentNA != 0 || m.BeamEnergyKeV != 5 || m.ExcitationEV != 5000 || !m.Counts || m.DwellS != 0.5 || m.Scans != 1 || m.TakeOffDeg != 30 {
		t.Errorf("meta %+v", m)
	}
	if m.Extra["corresponding_variables"] != "N(E) [counts]; Background [counts]" {
		t.Errorf("corresponding_variables %q", m.Extra["corresponding_variables"])
	}
	s2, err := f.Spectrum(0, 1)
	if err != nil || !reflect.DeepEqual(s2.Y, want[1]) {
		t.Errorf("second variable: %v %v", err, s2)
	}
	// 1E37 is written back as the standard writes it, and the file comes back
	// byte for byte (LF here, CRLF from Write).
	var buf bytes.Buffer
	if err := Write(&buf, f); err != nil {
		t.Fatal(err)
	}
	if got := strings.ReplaceAll(buf.String(), "\r\n", "\n"); got != twoVariables {
		t.Errorf("rewritten file differs:\n%s", numbered(got))
	}
}

func TestLineEndings(t *testing.T) {
	lf, err := Read(strings.NewReader(twoVariables), "lf.vms")
	if err != nil {
		t.Fatal(err)
	}
	for name, text := range map[string]string{
		"CRLF":            strings.ReplaceAll(twoVariables, "\n", "\r\n"),
		"CR":              strings.ReplaceAll(twoVariables, "\n", "\r"),
		"no final EOL":    strings.TrimSuffix(twoVariables, "\n"),
		"CRLF + trailing": strings.ReplaceAll(twoVariables, "\n", "\r\n") + "\r\n\r\n",
	} {
		g, err := Read(strings.NewReader(text), "x.vms")
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		sameFile(t, lf, g)
	}
	// A blank line inside the CRLF file is still a value: dropping the blank
	// operator line shifts everything and must fail.
	broken := strings.Replace(strings.ReplaceAll(twoVariables, "\n", "\r\n"), "model\r\n\r\n", "model\r\n", 1)
	if _, err := Read(strings.NewReader(broken), "x.vms"); err == nil {
		t.Errorf("file without its blank operator line was accepted")
	}
}

func TestNegativeIncrement(t *testing.T) {
	f := fullFile(ModeNORM, ScanRegular)
	b := f.Blocks[2] // start 302.1 eV, step -0.3 eV
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	s := specs[2]
	n := b.Points()
	if s.Axis.Step <= 0 || math.Abs(s.Axis.Start-(b.AbscissaStart+float64(n-1)*b.AbscissaStep)) > 1e-12 {
		t.Errorf("axis %+v from start %v step %v", s.Axis, b.AbscissaStart, b.AbscissaStep)
	}
	for i := 0; i < n; i++ {
		if s.Y[i] != b.Data[0][n-1-i] {
			t.Fatalf("values not reversed at %d", i)
		}
	}
}

func TestBindingEnergy(t *testing.T) {
	f := fullFile(ModeNORM, ScanRegular)
	b := f.Blocks[1] // XPS, source energy 3001 eV
	b.AbscissaLabel = "Binding Energy"
	s, err := f.Spectrum(1, -1)
	if err != nil {
		t.Fatal(err)
	}
	// KE = hv - BE: the first binding energy 301.1 eV (the highest, the
	// step being -0.1 eV) maps to the lowest kinetic energy, 3001-301.1 eV.
	if math.Abs(s.Axis.Lo()-(3001-301.1)) > 1e-9 || s.Meta.EnergyReference != "fermi" || s.Meta.ExcitationEV != 3001 || s.Meta.BeamEnergyKeV != 0 {
		t.Errorf("binding axis: %+v %+v", s.Axis, s.Meta)
	}
	b.SourceEnergy = NotGiven
	_, err = f.Spectrum(1, -1)
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || ie.Block != 1 || !strings.Contains(err.Error(), "excitation energy") {
		t.Errorf("binding axis without excitation energy: %v", err)
	}
}

func TestTakeOffTilted(t *testing.T) {
	b := &Block{TakeOffPolar: 30, TakeOffAzimuth: 0, TiltPolar: 30, TiltAzimuth: 0}
	// Analyser and sample normal in the same azimuth, both 30 degrees from
	// the reference axis: the analyser looks along the normal, take-off 90.
	if got := takeOff(b); math.Abs(got-90) > 1e-9 {
		t.Errorf("take-off %v, want 90", got)
	}
	b.TiltAzimuth = 180 // tilted away: 60 degrees between them, take-off 30
	if got := takeOff(b); math.Abs(got-30) > 1e-9 {
		t.Errorf("take-off %v, want 30", got)
	}
}

func TestMetaBridge(t *testing.T) {
	f := fullFile(ModeMAPDP, ScanRegular)
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	s := specs[1] // block 2: sputter time 1.5 min, x=2, y=1
	m := s.Meta
	if m.SputterTimeS == nil || *m.SputterTimeS != 90 {
		t.Errorf("sputter time %v, want 90 s from 1.5 min", m.SputterTimeS)
	}
	if *m.PixelX != 1 || *m.PixelY != 0 {
		t.Errorf("pixel (%d, %d), want (1, 0): 1-based coordinates (2, 1)", *m.PixelX, *m.PixelY)
	}
	if m.Counts || m.Extra["ordinate_unit"] != "c/s" || m.Technique != "XPS" {
		t.Errorf("meta %+v", m)
	}
	if specs[0].Mode != lineshape.Derivative || specs[0].Meta.ModulationEV != 2.5 || specs[0].Meta.BeamEnergyKeV != 3 || specs[0].Meta.BeamCurrentNA != 10.25 {
		t.Errorf("AES diff block meta %+v", specs[0].Meta)
	}
	if specs[1].Mode != lineshape.Direct || specs[1].Meta.BeamCurrentNA != 0 {
		t.Errorf("XPS block %v %+v", specs[1].Mode, specs[1].Meta)
	}
	if m.Extra["experimental_variable:Temperature"] != "" {
		t.Errorf("1E37 experimental variable recorded: %q", m.Extra["experimental_variable:Temperature"])
	}
	if m.Extra["parameter:lens"] != "12.5 V" || m.Extra["species"] != "Ti" || m.Extra["transition"] != "LMM" {
		t.Errorf("extra %v", m.Extra)
	}
}

// TestOmittedInapplicable: an omitted item that a later block's own
// conditions leave out anyway (the differential width of an XPS block)
// does not stop Write, and the file reads back the same.
func TestOmittedInapplicable(t *testing.T) {
	f := fullFile(ModeNORM, ScanRegular)
	f.ParamList, f.ParamListExcludes = []int{ItemDiffWidth}, true
	// Block 1 is AES diff (width 2.5); blocks 2 and 3 are XPS and SIMS.
	g, _ := roundTrip(t, f)
	sameFile(t, f, g)
	// An AES diff block with its own width cannot omit the width.
	f.Blocks[2].Technique, f.Blocks[2].DifferentialWidth = "AES diff", 4
	err := Write(&bytes.Buffer{}, f)
	if err == nil || !strings.Contains(err.Error(), "block 3: item 24") {
		t.Errorf("Write: %v, want an error naming block 3 and item 24", err)
	}
	f.Blocks[2].DifferentialWidth = 2.5 // the first block's: fine
	g, _ = roundTrip(t, f)
	sameFile(t, f, g)
}
