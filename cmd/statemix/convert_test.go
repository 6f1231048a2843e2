package main

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/format"
	"statemix/lineshape/format/delimited"
)

const convertRealFile = "../../../shared/realdata/derivative-aes-metal-crystal.dat"

// runConvertCLI runs the command tree in-process and returns the exit
// status, stdout and stderr.
func runConvertCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	app := &App{Out: &out, Err: &errb, Getenv: func(string) string { return "" }}
	code := app.Execute(args)
	return code, out.String(), errb.String()
}

// convSame compares spectra channel by channel to relative tolerance tol.
func convSame(t *testing.T, got, want []*lineshape.Spectrum, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d spectra, want %d", len(got), len(want))
	}
	for k := range want {
		g, w := got[k], want[k]
		if g.Mode != w.Mode || g.Len() != w.Len() {
			t.Fatalf("spectrum %d: mode %v, %d channels; want %v, %d", k, g.Mode, g.Len(), w.Mode, w.Len())
		}
		for i := range w.Y {
			if !scalar.EqualWithinAbsOrRel(g.Energy(i), w.Energy(i), 0, tol) || !scalar.EqualWithinAbsOrRel(g.Y[i], w.Y[i], 0, tol) {
				t.Fatalf("spectrum %d channel %d: (%v, %v), want (%v, %v)", k, i, g.Energy(i), g.Y[i], w.Energy(i), w.Y[i])
			}
		}
	}
}

// TestConvertRealFileThroughVAMAS is the "done when": statemix
// convert turns the real file into ISO 14976 and back with values equal to
// 1e-9 relative (the tolerance), back both to JSON and to CSV.
func TestConvertRealFileThroughVAMAS(t *testing.T) {
	if _, err := os.Stat(convertRealFile); err != nil {
		t.Skipf("real data not present (%v): this check needs ../shared/realdata beside the repository", err)
	}
	orig, err := delimited.ReadFile(convertRealFile, delimited.Options{})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	vms := filepath.Join(dir, "real.vms")
	code, _, stderr := runConvertCLI(t, "convert", convertRealFile, "-o", vms)
	if code != 0 {
		t.Fatalf("to ISO 14976: exit %d: %s", code, stderr)
	}
	head, _ := os.ReadFile(vms)
	if !bytes.HasPrefix(head, []byte("VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4\r\n")) {
		t.Fatalf("output is not ISO 14976: %q", head[:min(len(head), 80)])
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d files after an atomic write, want 1", len(ents))
	}

	// Back to JSON in a file, and to CSV on stdout.
	js := filepath.Join(dir, "back.json")
	if code, _, stderr := runConvertCLI(t, "convert", vms, "-o", js); code != 0 {
		t.Fatalf("to JSON: exit %d: %s", code, stderr)
	}
	back, err := format.ReadFile(js, format.Options{})
	if err != nil {
		t.Fatal(err)
	}
	convSame(t, back, []*lineshape.Spectrum{orig}, 1e-9)

	code, stdout, stderr := runConvertCLI(t, "convert", vms, "--format", "csv")
	if code != 0 {
		t.Fatalf("to CSV: exit %d: %s", code, stderr)
	}
	csv, err := delimited.Read(strings.NewReader(stdout), "stdout", delimited.Options{})
	if err != nil {
		t.Fatal(err)
	}
	convSame(t, []*lineshape.Spectrum{csv}, []*lineshape.Spectrum{orig}, 1e-9)
}

// TestConvertBadFiles checks the contract: bad input data gives
// "statemix: FILE: line N: ..." on stderr and exit status 3.
func TestConvertBadFiles(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.dat")
	os.WriteFile(bad, []byte("100\t1\n101\t2\n102\tx\n"), 0o644)
	code, stdout, stderr := runConvertCLI(t, "convert", bad)
	if code != exitBadInput || stdout != "" {
		t.Errorf("exit %d, stdout %q; want 3 and nothing", code, stdout)
	}
	if want := "statemix: " + bad + ": line 3: column 2: \"x\" is not a number\n"; stderr != want {
		t.Errorf("stderr %q, want %q", stderr, want)
	}

	if _, err := os.Stat(convertRealFile); err != nil {
		t.Skipf("real data not present (%v)", err)
	}
	// An ISO 14976 file with one ordinate spoiled.
	vms := filepath.Join(dir, "real.vms")
	if code, _, stderr := runConvertCLI(t, "convert", convertRealFile, "-o", vms); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	b, _ := os.ReadFile(vms)
	lines := strings.Split(string(b), "\r\n")
	n := len(lines) - 10 // an ordinate near the end (0-based index)
	lines[n] = "abc"
	spoiled := filepath.Join(dir, "spoiled.vms")
	os.WriteFile(spoiled, []byte(strings.Join(lines, "\r\n")), 0o644)
	code, _, stderr = runConvertCLI(t, "convert", spoiled)
	if code != exitBadInput || !strings.HasPrefix(stderr, "statemix: "+spoiled+": line "+fmt.Sprint(n+1)+": ") {
		t.Errorf("exit %d, stderr %q; want 3 and line %d", code, stderr, n+1)
	}
}

// gaussianCSV writes a direct spectrum: a unit Gaussian of sigma 1 eV at
// 300 eV on 280..320 eV, on a uniform grid of step 0.05 eV or, if uneven,
// with alternating steps of 0.04 and 0.06 eV.
func gaussianCSV(t *testing.T, path string, uneven bool) {
	t.Helper()
	var b strings.Builder
	b.WriteString("energy_ev,N(E)\n")
	e := 280.0
	for i := 0; e <= 320+1e-9; i++ {
		fmt.Fprintf(&b, "%.10g,%.17g\n", e, math.Exp(-(e-300)*(e-300)/2))
		step := 0.05
		if uneven {
			step = 0.04 + 0.02*float64(i%2)
		}
		e = 280 + float64(i+1)*0.05
		if uneven && i%2 == 0 {
			e = 280 + float64(i)*0.05 + step
		}
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestConvertToDerivativeAndBack(t *testing.T) {
	dir := t.TempDir()
	direct := filepath.Join(dir, "direct.csv")
	gaussianCSV(t, direct, false)

	// No modulation in the file and none given: a usage error naming the flag.
	code, _, stderr := runConvertCLI(t, "convert", direct, "--to", "derivative")
	if code != exitUsage || !strings.Contains(stderr, "--modulation") {
		t.Errorf("no modulation: exit %d, %q", code, stderr)
	}

	deriv := filepath.Join(dir, "deriv.json")
	code, _, stderr = runConvertCLI(t, "convert", direct, "--to", "derivative", "--modulation", "0.2", "-o", deriv)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	ds, err := format.ReadFile(deriv, format.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d := ds[0]
	if d.Mode != lineshape.Derivative || d.Meta.ModulationEV != 0.2 || d.Len() != 801 {
		t.Fatalf("mode %v modulation %v len %d", d.Mode, d.Meta.ModulationEV, d.Len())
	}
	// Against the analytic derivative -(E-300) exp(-(E-300)^2/2): a
	// modulation of 0.2 eV peak to peak convolves with a semicircle of
	// variance (0.1 eV)^2/4, which changes the derivative by about
	// var/2 * max|f'''| = 0.00125 * 1.38 (Taylor expansion), so 5e-3 absolute
	// away from the ends (1 eV) where the modulation runs off the data.
	for i := range d.Y {
		e := d.Energy(i)
		if e < 281 || e > 319 {
			continue
		}
		want := -(e - 300) * math.Exp(-(e-300)*(e-300)/2)
		if math.Abs(d.Y[i]-want) > 5e-3 {
			t.Fatalf("%.2f eV: %v, want %v", e, d.Y[i], want)
		}
	}

	// And back to direct: integration with a straight baseline through both
	// ends; the Gaussian is 0 (to 1e-87) at both ends of the window, so the
	// result is the Gaussian again, up to the smoothing of the lock-in
	// (variance 0.0025 eV^2: 0.00125 * max|f''| = 1.3e-3) and the trapezoid
	// error; 3e-3 absolute.
	code, stdout, stderr := runConvertCLI(t, "convert", deriv, "--to", "direct", "--format", "csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	g, err := delimited.Read(strings.NewReader(stdout), "stdout", delimited.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if g.Mode != lineshape.Direct {
		t.Errorf("mode %v", g.Mode)
	}
	for i := range g.Y {
		e := g.Energy(i)
		want := math.Exp(-(e - 300) * (e - 300) / 2)
		if math.Abs(g.Y[i]-want) > 3e-3 {
			t.Fatalf("%.2f eV: %v, want %v", e, g.Y[i], want)
		}
	}

	// A spectrum already in the mode asked for is left alone, modulation
	// from the file is used when --modulation is not given.
	code, stdout, _ = runConvertCLI(t, "convert", deriv, "--to", "derivative", "--format", "json")
	if code != 0 || !strings.Contains(stdout, `"modulation_ev": 0.2`) {
		t.Errorf("derivative to derivative: exit %d", code)
	}
}

func TestConvertUnevenGridIsResampled(t *testing.T) {
	dir := t.TempDir()
	direct := filepath.Join(dir, "uneven.csv")
	gaussianCSV(t, direct, true)
	in, err := delimited.ReadFile(direct, delimited.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if in.Axis.Uniform() {
		t.Fatal("test grid is uniform")
	}
	code, stdout, stderr := runConvertCLI(t, "--json", "convert", direct, "--to", "derivative", "--modulation", "1")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "resampled onto a uniform grid") {
		t.Errorf("no resampling note on stderr: %q", stderr)
	}
	p := filepath.Join(dir, "out.json")
	os.WriteFile(p, []byte(stdout), 0o644)
	out, err := format.ReadFile(p, format.Options{})
	if err != nil {
		t.Fatal(err)
	}
	o := out[0]
	if !o.Axis.Uniform() || o.Len() != in.Len() || o.Mode != lineshape.Derivative {
		t.Errorf("uniform %v len %d mode %v, want uniform, %d, derivative", o.Axis.Uniform(), o.Len(), o.Mode, in.Len())
	}
	if !scalar.EqualWithinAbsOrRel(o.Axis.Lo(), in.Axis.Lo(), 1e-9, 0) || !scalar.EqualWithinAbsOrRel(o.Axis.Hi(), in.Axis.Hi(), 1e-9, 0) {
		t.Errorf("range %v..%v, want %v..%v", o.Axis.Lo(), o.Axis.Hi(), in.Axis.Lo(), in.Axis.Hi())
	}
}

func TestConvertUsage(t *testing.T) {
	dir := t.TempDir()
	one := filepath.Join(dir, "one.csv")
	os.WriteFile(one, []byte("1,2\n2,3\n3,4\n"), 0o644)
	two := filepath.Join(dir, "two.json")
	a, _ := lineshape.NewUniform(10, 1, []float64{1, 2, 3}, lineshape.Direct)
	b, _ := lineshape.NewUniform(11, 1, []float64{1, 2, 3}, lineshape.Direct)
	if err := format.WriteFile(two, []*lineshape.Spectrum{a, b}, format.FormatJSON); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"convert", one, "--block", "2"}, exitUsage, "block 2 asked for, but the file has 1"},
		{[]string{"convert", one, "--block", "-1"}, exitUsage, "count from 1"},
		{[]string{"convert", one, "--to", "sideways"}, exitUsage, `--to "sideways"`},
		{[]string{"convert", one, "--format", "xml"}, exitUsage, `--format "xml"`},
		{[]string{"convert", one, "--modulation", "2"}, exitUsage, "only with --to derivative"},
		{[]string{"convert", one, "--to", "derivative", "--modulation", "-1"}, exitUsage, "0 eV or more"},
		{[]string{"convert", two, "--format", "csv"}, exitUsage, "different energy axes"},
		{[]string{"convert"}, exitUsage, "accepts 1 arg"},
		{[]string{"convert", filepath.Join(dir, "missing.csv")}, exitFailure, "no such file"},
	}
	for _, c := range cases {
		code, stdout, stderr := runConvertCLI(t, c.args...)
		if code != c.code || !strings.HasPrefix(stderr, "statemix: ") || !strings.Contains(stderr, c.want) || stdout != "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want %d saying %q", c.args, code, stdout, stderr, c.code, c.want)
		}
	}
	// The two spectra are fine in JSON and ISO 14976, and --block picks one.
	for _, f := range []string{"json", "vamas"} {
		if code, _, stderr := runConvertCLI(t, "convert", two, "--format", f); code != 0 {
			t.Errorf("%s: exit %d: %s", f, code, stderr)
		}
	}
	code, stdout, _ := runConvertCLI(t, "convert", two, "--block", "2")
	if code != 0 || !strings.HasPrefix(stdout, "energy_ev,N(E)\n11,1\n") {
		t.Errorf("--block 2: exit %d, %q", code, stdout)
	}
}

func TestConvertHelp(t *testing.T) {
	code, stdout, _ := runConvertCLI(t, "convert", "--help")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"Convert spectra between file formats", "Examples:", "--modulation EV", "-o, --output FILE"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("help lacks %q", want)
		}
	}
}

// TestConvertDepthProfileAndMap round-trips a sputter depth profile (SDP)
// and a depth-profiled map (MAPDP) of our own through ISO 14976 with
// statemix convert: JSON -> ISO 14976 -> JSON, values to 1e-9 relative,
// sputter times and pixel positions kept.
func TestConvertDepthProfileAndMap(t *testing.T) {
	dir := t.TempDir()
	for _, mode := range []string{"SDP", "MAPDP"} {
		var specs []*lineshape.Spectrum
		for k := range 6 {
			y := make([]float64, 121)
			for i := range y {
				e := 30 + 0.5*float64(i)
				// Invented lineshapes: a derivative Gaussian that shifts and
				// shrinks with depth.
				c := 60 + 0.3*float64(k)
				y[i] = -(e - c) * math.Exp(-(e-c)*(e-c)/8) / (1 + float64(k))
			}
			s, err := lineshape.NewUniform(30, 0.5, y, lineshape.Derivative)
			if err != nil {
				t.Fatal(err)
			}
			st := 12.5 * float64(k)
			s.Meta.SputterTimeS = &st
			s.Meta.ModulationEV = 2
			if mode == "MAPDP" {
				x, yy := k%3, k/3
				s.Meta.PixelX, s.Meta.PixelY = &x, &yy
			}
			specs = append(specs, s)
		}
		in := filepath.Join(dir, mode+".json")
		if err := format.WriteFile(in, specs, format.FormatJSON); err != nil {
			t.Fatal(err)
		}
		vms := filepath.Join(dir, mode+".vms")
		if code, _, stderr := runConvertCLI(t, "convert", in, "-o", vms); code != 0 {
			t.Fatalf("%s: exit %d: %s", mode, code, stderr)
		}
		b, _ := os.ReadFile(vms)
		if lines := strings.Split(string(b), "\r\n"); !slices.Contains(lines, mode) {
			t.Errorf("%s: experiment mode line missing", mode)
		}
		out := filepath.Join(dir, mode+"-back.json")
		if code, _, stderr := runConvertCLI(t, "convert", vms, "-o", out); code != 0 {
			t.Fatalf("%s: exit %d: %s", mode, code, stderr)
		}
		back, err := format.ReadFile(out, format.Options{})
		if err != nil {
			t.Fatal(err)
		}
		convSame(t, back, specs, 1e-9)
		for k, s := range back {
			if s.Meta.SputterTimeS == nil || !scalar.EqualWithinAbsOrRel(*s.Meta.SputterTimeS, *specs[k].Meta.SputterTimeS, 1e-9, 1e-9) {
				t.Errorf("%s spectrum %d: sputter time %v", mode, k, s.Meta.SputterTimeS)
			}
			if mode == "MAPDP" && (s.Meta.PixelX == nil || *s.Meta.PixelX != k%3 || *s.Meta.PixelY != k/3) {
				t.Errorf("%s spectrum %d: pixel lost", mode, k)
			}
		}
	}
}
