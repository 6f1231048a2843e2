package vamas

import (
	"bufio"
	"bytes"
	"errors"
	"flag"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

var update = flag.Bool("update", false, "rewrite the example files in testdata")

// gaussDeriv is the derivative of a unit-height Gaussian at e.
func gaussDeriv(e, centre, sigma float64) float64 {
	d := (e - centre) / sigma
	return -d / sigma * math.Exp(-d*d/2)
}

// sdpSpectra invents an AES sputter depth profile: derivative spectra of
// two states (a "metal" line at 418 eV and an "oxide" line at 413 eV, both
// invented) whose mix changes with sputter time, 201 channels of 0.5 eV.
func sdpSpectra(t *testing.T) []*lineshape.Spectrum {
	var out []*lineshape.Spectrum
	for k := 0; k < 6; k++ {
		ts := float64(k) * 120
		ox := math.Exp(-ts / 250) // oxide fraction falls with depth
		y := make([]float64, 201)
		for i := range y {
			e := 380 + 0.5*float64(i)
			v := (1-ox)*gaussDeriv(e, 418, 2.2) + ox*0.8*gaussDeriv(e, 413, 2.6)
			y[i] = math.Round(v*1e6) / 1e6 // six decimals, as an instrument export would
		}
		s, err := lineshape.NewUniform(380, 0.5, y, lineshape.Derivative)
		if err != nil {
			t.Fatal(err)
		}
		s.Meta = lineshape.Meta{
			BlockID: "profile step " + strconv.Itoa(k+1), Sample: "invented oxide on metal",
			Technique: "AES diff", Comments: []string{"INVENTED EXAMPLE: not a measurement"},
			BeamEnergyKeV: 5, ExcitationEV: 5000, BeamCurrentNA: 20, DwellS: 0.1, Scans: 4,
			ModulationEV: 2, AnalyserMode: "FRR", TakeOffDeg: 48, EnergyReference: "vacuum",
			SputterTimeS: &ts,
			Extra:        map[string]string{"species": "M", "transition": "LMM", "ordinate_label": "dN/dE", "ordinate_unit": "d"},
		}
		out = append(out, s)
	}
	return out
}

// mapdpSpectra invents a 3 x 2 spectrum image at two depths: direct
// spectra in counts (one peak on a sloping background, its height varying
// across the map), 101 channels of 1 eV.
func mapdpSpectra(t *testing.T) []*lineshape.Spectrum {
	var out []*lineshape.Spectrum
	for d := 0; d < 2; d++ {
		ts := float64(d) * 300
		for py := 0; py < 2; py++ {
			for px := 0; px < 3; px++ {
				h := 500 + 200*float64(px) - 150*float64(py) + 100*float64(d)
				y := make([]float64, 101)
				for i := range y {
					e := 350 + float64(i)
					g := (e - 400) / 4
					y[i] = math.Round(2000 - 5*float64(i) + h*math.Exp(-g*g/2))
				}
				s, err := lineshape.NewUniform(350, 1, y, lineshape.Direct)
				if err != nil {
					t.Fatal(err)
				}
				x, yy := px, py
				s.Meta = lineshape.Meta{
					Sample: "invented patterned film", Technique: "AES dir",
					Comments:      []string{"INVENTED EXAMPLE: not a measurement"},
					BeamEnergyKeV: 10, ExcitationEV: 10000, BeamCurrentNA: 5, DwellS: 0.02, Scans: 1,
					Counts: true, TakeOffDeg: 30, SputterTimeS: &ts, PixelX: &x, PixelY: &yy,
				}
				out = append(out, s)
			}
		}
	}
	return out
}

// sameSpectra compares spectra: values exactly (the writer prints every
// float64 so that it reads back bit for bit), energies within 1e-12
// relative (a descending or binding axis is recomputed), and the Meta
// fields the bridge carries.
func sameSpectra(t *testing.T, want, got []*lineshape.Spectrum) {
	t.Helper()
	if len(want) != len(got) {
		t.Fatalf("%d spectra, want %d", len(got), len(want))
	}
	for i := range want {
		w, g := want[i], got[i]
		if w.Len() != g.Len() || w.Mode != g.Mode || w.Axis.Uniform() != g.Axis.Uniform() {
			t.Fatalf("spectrum %d: %d channels %v uniform %v, want %d %v %v", i, g.Len(), g.Mode, g.Axis.Uniform(), w.Len(), w.Mode, w.Axis.Uniform())
		}
		for j := range w.Y {
			if w.Y[j] != g.Y[j] {
				t.Fatalf("spectrum %d channel %d: value %v, want %v", i, j, g.Y[j], w.Y[j])
			}
			if !scalar.EqualWithinAbsOrRel(w.Energy(j), g.Energy(j), 0, 1e-12) {
				t.Fatalf("spectrum %d channel %d: energy %v, want %v", i, j, g.Energy(j), w.Energy(j))
			}
		}
		wm, gm := w.Meta, g.Meta
		if !scalar.EqualWithinAbsOrRel(wm.TakeOffDeg, gm.TakeOffDeg, 1e-12, 1e-12) {
			t.Errorf("spectrum %d: take-off %v, want %v", i, gm.TakeOffDeg, wm.TakeOffDeg)
		}
		wm.TakeOffDeg, gm.TakeOffDeg = 0, 0
		wm.Source, gm.Source = "", ""
		if !reflect.DeepEqual(wm, gm) {
			t.Errorf("spectrum %d: meta\n got %+v\nwant %+v", i, gm, wm)
		}
	}
}

// spectraRoundTrip writes specs in mode and reads them back.
func spectraRoundTrip(t *testing.T, specs []*lineshape.Spectrum, mode string) (*File, []*lineshape.Spectrum) {
	t.Helper()
	f, err := FromSpectra(specs, mode)
	if err != nil {
		t.Fatal(err)
	}
	g, _ := roundTrip(t, f)
	out, err := g.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	return g, out
}

func TestFromSpectraEveryMode(t *testing.T) {
	base := mapdpSpectra(t)
	for _, mode := range []string{ModeNORM, ModeSDP, ModeSDPSV, ModeMAP, ModeMAPDP, ModeMAPSV, ModeMAPSVDP, ModeSEM} {
		t.Run(mode, func(t *testing.T) {
			_, first := spectraRoundTrip(t, base, mode)
			// A second pass must be the identity on everything: the first one
			// adds what the file always states (block identifiers, the
			// experimental variable in Extra, the default ordinate label).
			g, second := spectraRoundTrip(t, first, mode)
			sameSpectra(t, first, second)
			if g.ExperimentMode != mode || g.ScanMode != ScanRegular {
				t.Errorf("modes %s %s", g.ExperimentMode, g.ScanMode)
			}
			for i, s := range first {
				if s.Meta.BeamEnergyKeV != 10 || s.Meta.BeamCurrentNA != 5 || !s.Meta.Counts || math.Abs(s.Meta.TakeOffDeg-30) > 1e-12 ||
					*s.Meta.SputterTimeS != *base[i].Meta.SputterTimeS || s.Meta.DwellS != 0.02 {
					t.Fatalf("spectrum %d meta %+v", i, s.Meta)
				}
				if hasMapXY(mode) && (*s.Meta.PixelX != *base[i].Meta.PixelX || *s.Meta.PixelY != *base[i].Meta.PixelY) {
					t.Fatalf("spectrum %d pixel (%d,%d), want (%d,%d)", i, *s.Meta.PixelX, *s.Meta.PixelY, *base[i].Meta.PixelX, *base[i].Meta.PixelY)
				}
			}
		})
	}
}

func TestFromSpectraRefuses(t *testing.T) {
	s := sdpSpectra(t)[:1]
	if _, err := FromSpectra(s, "MAP"); err == nil || !strings.Contains(err.Error(), "pixel") {
		t.Errorf("MAP without pixels: %v", err)
	}
	m := mapdpSpectra(t)[:2]
	m[0].Meta.SputterTimeS = nil
	// A depth profile step without a sputter time is written as 1E37 and
	// comes back without one.
	_, back := spectraRoundTrip(t, m, ModeSDP)
	if back[0].Meta.SputterTimeS != nil || back[1].Meta.SputterTimeS == nil || *back[1].Meta.SputterTimeS != 0 {
		t.Errorf("SDP sputter times %v %v", back[0].Meta.SputterTimeS, back[1].Meta.SputterTimeS)
	}
	if _, err := FromSpectra(m, "DEPTH"); err == nil {
		t.Errorf("unknown mode accepted")
	}
	if _, err := FromSpectra(nil, ""); err == nil {
		t.Errorf("no spectra accepted")
	}
	x := sdpSpectra(t)[:1]
	x[0].Meta.Technique = "XPS"
	if _, err := FromSpectra(x, ""); err == nil || !strings.Contains(err.Error(), "AES diff") {
		t.Errorf("derivative XPS accepted: %v", err)
	}
}

// TestExamples checks the two invented example files in testdata: they are
// what FromSpectra makes of the invented spectra (rewritten with -update),
// Write reproduces them byte for byte, and their spectra survive a second
// conversion.
func TestExamples(t *testing.T) {
	cases := []struct {
		file  string
		mode  string
		specs []*lineshape.Spectrum
	}{
		{"sdp-example.vms", ModeSDP, sdpSpectra(t)},
		{"mapdp-example.vms", ModeMAPDP, mapdpSpectra(t)},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			path := filepath.Join("testdata", c.file)
			f, err := FromSpectra(c.specs, c.mode)
			if err != nil {
				t.Fatal(err)
			}
			f.Institution = "statemix test suite"
			f.Experiment = "INVENTED EXAMPLE (" + c.mode + ")"
			f.Comment = []string{
				"INVENTED EXAMPLE for the statemix tests: computed line shapes, not a measurement.",
				"Generated by TestExamples in lineshape/format/vamas (go test -update).",
			}
			if *update {
				if err := WriteFile(path, f); err != nil {
					t.Fatal(err)
				}
			}
			raw, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			g, err := ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			sameFile(t, f, g)
			var buf bytes.Buffer
			if err := Write(&buf, g); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(buf.Bytes(), raw) {
				t.Errorf("Write(Read(%s)) differs from the file", c.file)
			}
			specs, err := g.Spectra()
			if err != nil {
				t.Fatal(err)
			}
			if len(specs) != len(c.specs) {
				t.Fatalf("%d spectra", len(specs))
			}
			for i, s := range specs {
				for j := range s.Y {
					if s.Y[j] != c.specs[i].Y[j] {
						t.Fatalf("spectrum %d channel %d: %v, want %v", i, j, s.Y[j], c.specs[i].Y[j])
					}
				}
				if *s.Meta.SputterTimeS != *c.specs[i].Meta.SputterTimeS {
					t.Errorf("spectrum %d: sputter time %v", i, *s.Meta.SputterTimeS)
				}
			}
			_, again := spectraRoundTrip(t, specs, c.mode)
			sameSpectra(t, specs, again)
		})
	}
}

// readTwoColumns is a small local parser for the real-data file: two
// whitespace-separated columns, no header.
func readTwoColumns(t *testing.T, path string) (e, y []float64) {
	fh, err := os.Open(path)
	if err != nil {
		t.Skipf("real data not available: %v", err)
	}
	defer fh.Close()
	sc := bufio.NewScanner(fh)
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 {
			continue
		}
		if len(fs) != 2 {
			t.Fatalf("%s: line %q: want two columns", path, sc.Text())
		}
		a, err1 := strconv.ParseFloat(fs[0], 64)
		b, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: line %q: not numbers", path, sc.Text())
		}
		e, y = append(e, a), append(y, b)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return e, y
}

// TestRealDerivativeSpectrum writes the measured derivative spectrum (see
// ../shared/realdata/README.md: 1151 points on an uneven grid, so IRREGULAR
// scan mode) to ISO 14976 and back. The issue asks for 1e-9 relative; the
// writer's shortest round-trip formatting makes it exact, which is checked
// too.
func TestRealDerivativeSpectrum(t *testing.T) {
	e, y := readTwoColumns(t, filepath.Join("..", "..", "..", "..", "shared", "realdata", "derivative-aes-metal-crystal.dat"))
	if len(e) != 1151 {
		t.Fatalf("%d points, the README says 1151", len(e))
	}
	s, err := lineshape.New(e, y, lineshape.Derivative)
	if err != nil {
		t.Fatal(err)
	}
	if s.Axis.Uniform() {
		t.Fatalf("axis read as uniform; the README says uneven")
	}
	s.Meta.Technique = "AES diff"
	f, err := FromSpectra([]*lineshape.Spectrum{s}, ModeNORM)
	if err != nil {
		t.Fatal(err)
	}
	if f.ScanMode != ScanIrregular {
		t.Fatalf("scan mode %s, want IRREGULAR for an uneven axis", f.ScanMode)
	}
	g, _ := roundTrip(t, f)
	out, err := g.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	r := out[0]
	if r.Len() != len(e) || r.Mode != lineshape.Derivative {
		t.Fatalf("%d channels, mode %v", r.Len(), r.Mode)
	}
	exact := true
	for i := range e {
		if !scalar.EqualWithinAbsOrRel(r.Energy(i), e[i], 0, 1e-9) || !scalar.EqualWithinAbsOrRel(r.Y[i], y[i], 0, 1e-9) {
			t.Fatalf("point %d: (%v, %v), want (%v, %v) within 1e-9 relative", i, r.Energy(i), r.Y[i], e[i], y[i])
		}
		exact = exact && r.Energy(i) == e[i] && r.Y[i] == y[i]
	}
	if !exact {
		t.Errorf("round trip within 1e-9 but not exact")
	}
}

func TestPixelsCountedFromZero(t *testing.T) {
	f := fullFile(ModeMAP, ScanRegular)
	for i, b := range f.Blocks {
		b.X, b.Y = i%2, i/2 // a file that counts from 0
	}
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	for i, s := range specs {
		if *s.Meta.PixelX != i%2 || *s.Meta.PixelY != i/2 {
			t.Errorf("block %d: pixel (%d,%d), want (%d,%d)", i, *s.Meta.PixelX, *s.Meta.PixelY, i%2, i/2)
		}
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.vms")
	f := fullFile(ModeSDP, ScanIrregular)
	if err := WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(path)
	if err != nil || fi.Mode().Perm() != 0o644 {
		t.Fatalf("stat %v, mode %v", err, fi.Mode())
	}
	g, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sameFile(t, f, g)
	before, _ := os.ReadFile(path)
	// A failing write leaves the old file and no temporary file behind.
	f.Blocks[1].Sample = "line\nbreak"
	if err := WriteFile(path, f); err == nil {
		t.Fatal("WriteFile of an unwritable File succeeded")
	}
	after, _ := os.ReadFile(path)
	if !bytes.Equal(before, after) {
		t.Errorf("failed WriteFile changed the file")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("%d entries in the folder after a failed write, want 1", len(ents))
	}
}

func TestLabelsAndUnits(t *testing.T) {
	// Label and unit spellings the bridge recognises (common practice in
	// exported files; the standard fixes none of them beyond "eV" and "s").
	for _, c := range []struct {
		label, unit string
		sputter     bool
		seconds     float64 // factor to s; 0 when the unit is not a time
	}{
		{"Etch Time", "s", true, 1},
		{"sputter time", "min", true, 60},
		{"Sputtering time", "h", true, 3600},
		{"Etch time", "ms", true, 1e-3},
		{"Sputter depth", "nm", false, 0},
		{"Sputter rate", "nm/min", false, 0},
		{"Temperature", "K", false, 0},
	} {
		if got := isSputterTime(c.label); got != c.sputter {
			t.Errorf("isSputterTime(%q) = %v", c.label, got)
		}
		k, ok := timeUnit(c.unit)
		if ok != (c.seconds != 0) || k != c.seconds {
			t.Errorf("timeUnit(%q) = %v, %v", c.unit, k, ok)
		}
	}
	for label, want := range map[string]string{"Etch Time (min)": "min", "sputter time [s]": "s", "Etch Time": "", "(": "", "": ""} {
		if got := labelUnit(label); got != want {
			t.Errorf("labelUnit(%q) = %q, want %q", label, got, want)
		}
	}
	for _, l := range []string{"E*N(E)", "EN(E)", "E x N(E)", "E·N(E) counts"} {
		if !isTimesEnergy(l) {
			t.Errorf("isTimesEnergy(%q) false", l)
		}
	}
	for _, l := range []string{"N(E)", "Intensity", "dN/dE"} {
		if isTimesEnergy(l) {
			t.Errorf("isTimesEnergy(%q) true", l)
		}
	}
	// A keV abscissa is scaled to eV.
	f := fullFile(ModeNORM, ScanRegular)
	b := f.Blocks[0]
	b.AbscissaUnit, b.AbscissaStart, b.AbscissaStep = "keV", 0.3, 0.0005
	s, err := f.Spectrum(0, -1)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Axis.Lo()-300) > 1e-9 || math.Abs(s.Axis.Hi()-302) > 1e-9 {
		t.Errorf("keV axis %v-%v eV, want 300-302", s.Axis.Lo(), s.Axis.Hi())
	}
	// A non-energy abscissa is refused with the block's line.
	b.AbscissaLabel, b.AbscissaUnit = "Time", "s"
	g, _ := roundTrip(t, f)
	_, err = g.Spectrum(0, -1)
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || ie.Line == 0 || ie.Block != 0 || !strings.Contains(err.Error(), "not an energy") {
		t.Errorf("time abscissa: %v", err)
	}
}
