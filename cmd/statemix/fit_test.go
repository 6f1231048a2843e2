package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// Invented test spectra: derivative-of-Gaussian lineshapes of a "metal"
// and an "oxide" state near the Ti LMM energies, 0.5 eV steps, with a
// deterministic ripple standing in for noise.
func dgauss(e, e0, s float64) float64 { x := (e - e0) / s; return -x * math.Exp(-0.5*x*x) }
func metalShape(e float64) float64    { return dgauss(e, 418, 2) + 0.4*dgauss(e, 383, 2.5) }
func oxideShape(e float64) float64    { return 0.8*dgauss(e, 412, 2.5) + 0.5*dgauss(e, 378, 2) }

func writeSpectrumJSON(t *testing.T, path string, lo, hi float64, f func(float64) float64, extra map[string]string) {
	t.Helper()
	n := int((hi-lo)/0.5) + 1
	y := make([]float64, n)
	for i := range y {
		y[i] = f(lo + 0.5*float64(i))
	}
	s, err := lineshape.NewUniform(lo, 0.5, y, lineshape.Derivative)
	if err != nil {
		t.Fatal(err)
	}
	s.Meta.ModulationEV = 2
	s.Meta.Extra = extra
	if err := format.WriteFile(path, []*lineshape.Spectrum{s}, format.FormatJSON); err != nil {
		t.Fatal(err)
	}
}

// fitFixture writes a metal and an oxide reference and an unknown of
// 0.7 metal + 0.3 oxide shifted by +0.8 eV, and returns their paths.
func fitFixture(t *testing.T) (dir, metal, oxide, unknown string) {
	dir = t.TempDir()
	metal = filepath.Join(dir, "metal.json")
	oxide = filepath.Join(dir, "oxide.json")
	unknown = filepath.Join(dir, "unknown.json")
	writeSpectrumJSON(t, metal, 350, 450, metalShape, map[string]string{"element": "Ti", "state": "metal", "compound": "Ti"})
	writeSpectrumJSON(t, oxide, 350, 450, oxideShape, map[string]string{"element": "Ti", "compound": "TiO2"})
	writeSpectrumJSON(t, unknown, 360, 440, func(e float64) float64 {
		return 0.7*metalShape(e-0.8) + 0.3*oxideShape(e-0.8) + 0.004*math.Sin(2.1*e) + 0.001
	}, nil)
	return
}

func TestFitRefFilesJSON(t *testing.T) {
	dir, metal, oxide, unknown := fitFixture(t)
	plot := filepath.Join(dir, "fit.svg")
	report := filepath.Join(dir, "fit.html")
	code, out, errs := runApp(t, nil, "--json", "fit", unknown, "--ref-file", metal, "--ref-file", oxide+":oxide",
		"--uncertainty", "covariance", "--plot", plot, "--report", report, "--atomic")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	for _, k := range []string{"schema", "input", "window_ev", "settings", "components", "quality", "library", "warnings"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	if doc["schema"] != "statemix.fit/v1" {
		t.Errorf("schema %v", doc["schema"])
	}
	if _, ok := doc["warnings"].([]any); !ok {
		t.Errorf("warnings is %T, want an array", doc["warnings"])
	}
	raw, _ := os.ReadFile(unknown)
	sum := sha256.Sum256(raw)
	if in := doc["input"].(map[string]any); in["sha256"] != hex.EncodeToString(sum[:]) || in["mode"] != "derivative" {
		t.Errorf("input %v", in)
	}
	var typed struct {
		Components []struct {
			Ref, State   string
			Fraction     float64
			FractionCI95 [2]float64 `json:"fraction_ci95"`
			Shift        float64    `json:"shift_ev"`
			AtBound      bool       `json:"at_bound"`
		}
		Settings struct {
			Shift       string
			MaxShift    float64 `json:"max_shift_ev"`
			Background  int     `json:"background_degree"`
			Uncertainty string
		}
		Quality struct {
			Points int
			DOF    int
			Chi2   float64 `json:"chi2_reduced"`
			R      float64 `json:"r_factor"`
		}
		Atomic []struct {
			State    string
			Fraction float64 `json:"atomic_fraction"`
		}
	}
	_ = json.Unmarshal([]byte(out), &typed)
	// Invented data, exact model up to the ripple: fractions within 0.01,
	// shift within 0.05 eV.
	want := map[string]float64{"metal": 0.7, "oxide": 0.3}
	total := 0.0
	for _, c := range typed.Components {
		total += c.Fraction
		if math.Abs(c.Fraction-want[c.State]) > 0.01 || math.Abs(c.Shift-0.8) > 0.05 {
			t.Errorf("%s: fraction %.4f shift %.3f", c.State, c.Fraction, c.Shift)
		}
	}
	if math.Abs(total-1) > 1e-9 {
		t.Errorf("fractions sum to %v", total)
	}
	if typed.Settings.Shift != "common" || typed.Settings.MaxShift != 3 || typed.Settings.Background != 1 || typed.Settings.Uncertainty != "covariance" {
		t.Errorf("settings %+v", typed.Settings)
	}
	if len(typed.Atomic) != 2 {
		t.Errorf("atomic fractions %+v", typed.Atomic)
	}
	for _, p := range []string{plot, report} {
		if st, err := os.Stat(p); err != nil || st.Size() < 1000 {
			t.Errorf("%s: %v", p, err)
		}
	}
	html, _ := os.ReadFile(report)
	if !strings.Contains(string(html), hex.EncodeToString(sum[:])) || !strings.Contains(string(html), "--ref-file") {
		t.Error("report lacks the input hash or the command line")
	}
}

func TestFitHumanTable(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	code, out, errs := runApp(t, nil, "fit", unknown, "--ref-file", metal, "--ref-file", oxide+":oxide", "--samples", "40", "--shift", "each")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	t.Logf("stdout:\n%s\nstderr:\n%s", out, errs)
	for _, want := range []string{"state", "fraction", "95 % interval", "shift (eV)", "metal", "oxide", "reduced chi-square", "bootstrap"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestFitBadInputExit3(t *testing.T) {
	dir, metal, oxide, unknown := fitFixture(t)
	zero := filepath.Join(dir, "zero.json")
	writeSpectrumJSON(t, zero, 360, 440, func(float64) float64 { return 0 }, nil)
	far := filepath.Join(dir, "far.json")
	writeSpectrumJSON(t, far, 900, 950, func(e float64) float64 { return metalShape(e - 500) }, map[string]string{"state": "metal"})
	short := filepath.Join(dir, "short.json")
	writeSpectrumJSON(t, short, 400, 405, metalShape, nil)
	nan := filepath.Join(dir, "nan.csv")
	var csv strings.Builder
	for i := 0; i < 161; i++ {
		v := "0.01"
		if i == 50 {
			v = "NaN"
		}
		csv.WriteString(strconv.FormatFloat(360+0.5*float64(i), 'f', 1, 64) + "," + v + "\n")
	}
	if err := os.WriteFile(nan, []byte(csv.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	nostate := filepath.Join(dir, "nostate.json")
	writeSpectrumJSON(t, nostate, 350, 450, oxideShape, nil)
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"no-references", []string{"fit", unknown}, "no references"},
		{"unknown-all-zero", []string{"fit", zero, "--ref-file", metal, "--ref-file", oxide + ":oxide"}, "zero in every channel"},
		{"unknown-nan", []string{"fit", nan, "--ref-file", metal, "--ref-file", oxide + ":oxide"}, "not a finite number"},
		{"reference-twice", []string{"fit", unknown, "--ref-file", metal, "--ref-file", metal}, "given twice"},
		{"other-energy-range", []string{"fit", unknown, "--ref-file", metal, "--ref-file", far}, "does not overlap"},
		{"unknown-shorter-than-window", []string{"fit", short, "--ref-file", metal, "--ref-file", oxide + ":oxide"}, "need at least 20"},
		{"other-element", []string{"fit", unknown, "--ref-file", metal, "--ref-file", oxide + ":oxide", "--element", "Cu"}, "element"},
		{"ref-file-without-state", []string{"fit", unknown, "--ref-file", metal, "--ref-file", nostate}, "no chemical state"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runApp(t, nil, append(tc.args, "--uncertainty", "covariance")...)
			if code != exitBadInput {
				t.Errorf("exit %d, want 3: %s", code, errs)
			}
			if !strings.Contains(errs, tc.want) || !strings.HasPrefix(errs, "statemix: ") {
				t.Errorf("stderr %q lacks %q", errs, tc.want)
			}
		})
	}
}

func TestFitUsageExit2(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	base := []string{"fit", unknown, "--ref-file", metal, "--ref-file", oxide + ":oxide"}
	for _, extra := range [][]string{
		{"--shift", "sideways"}, {"--window", "430"}, {"--window", "440:400"}, {"--plot", "x.pdf"},
		{"--uncertainty", "guess"}, {"--normalize", "max"}, {"--samples", "3"}, {"--background", "9"},
		{"--take-off", "45"}, {"--overlayer", "oxide"},
	} {
		code, _, errs := runApp(t, nil, append(append([]string{}, base...), extra...)...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want 2: %s", extra, code, errs)
		}
	}
}

func TestFitSuggestAndSaveHooks(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	empty := t.TempDir()
	// --suggest takes an optional K; without a library it fails, naming the flag.
	code, _, errs := runApp(t, nil, "--library", empty, "fit", unknown, "--ref-file", metal, "--suggest", "--uncertainty", "covariance")
	if code == 0 || code == exitUsage || !strings.Contains(errs, "--suggest") {
		t.Errorf("--suggest: exit %d: %s", code, errs)
	}
	dir := t.TempDir()
	if code, _, errs := runApp(t, nil, "--library", dir, "library", "init"); code != 0 {
		t.Fatal(errs)
	}
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "fit", unknown, "--ref-file", metal, "--ref-file", oxide+":oxide", "--save", "--uncertainty", "covariance")
	if code != 0 {
		t.Fatalf("--save: exit %d: %s", code, errs)
	}
	var doc struct{ Saved string }
	if err := json.Unmarshal([]byte(out), &doc); err != nil || doc.Saved == "" {
		t.Errorf("--save: saved id %q (%v)", doc.Saved, err)
	}
}

func TestFitLibraryRefs(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil", "--compound", "Ti")
	mustCLI(t, dir, "library", "add", oxide, "--element", "Ti", "--transition", "L3M23M23", "--state", "oxide", "--name", "TiO2 film", "--compound", "TiO2")
	out := mustCLI(t, dir, "--json", "fit", unknown, "--refs", "Ti foil,TiO2 film", "--uncertainty", "covariance", "--overlayer", "oxide:metal")
	var doc struct {
		Library    struct{ Revision int }
		Components []struct {
			Ref      string
			Name     string
			Fraction float64
		}
		Overlayer *struct {
			Thickness float64 `json:"thickness_nm"`
		}
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Library.Revision < 2 || len(doc.Components) != 2 || len(doc.Components[0].Ref) != 12 {
		t.Errorf("library refs: %+v", doc)
	}
	if doc.Overlayer == nil || !(doc.Overlayer.Thickness > 0) {
		t.Errorf("overlayer %+v", doc.Overlayer)
	}
	// --element takes every reference of the element.
	out = mustCLI(t, dir, "--json", "fit", unknown, "--element", "Ti", "--uncertainty", "covariance")
	if !strings.Contains(out, "TiO2 film") {
		t.Errorf("--element Ti did not use the oxide:\n%s", out)
	}
	// An unknown reference name is a usage error.
	if code, _, _ := libCLI(t, dir, "fit", unknown, "--refs", "nonesuch"); code != exitUsage {
		t.Errorf("unknown ref: exit %d", code)
	}
}

func TestFitCompletion(t *testing.T) {
	for flag, want := range map[string][]string{
		"--shift":       {"none", "common", "each"},
		"--uncertainty": {"covariance", "bootstrap"},
		"--normalize":   {"none", "peak-to-peak", "area"},
	} {
		code, out, errs := runApp(t, nil, "__complete", "fit", "x.vms", flag, "")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", flag, code, errs)
		}
		for _, w := range want {
			if !strings.Contains(out, w+"\n") {
				t.Errorf("%s completion lacks %q:\n%s", flag, w, out)
			}
		}
	}
	// --suggest=K sets K; --suggest alone means 4 (NoOptDefVal).
	_, metal, _, unknown := fitFixture(t)
	for _, args := range [][]string{{"--suggest"}, {"--suggest=2"}} {
		code, _, errs := runApp(t, nil, append([]string{"fit", unknown, "--ref-file", metal, "--uncertainty", "covariance"}, args...)...)
		if code == exitUsage || !strings.Contains(errs, "--suggest") {
			t.Errorf("%v: exit %d: %s", args, code, errs)
		}
	}
}

func FuzzParseWindow(f *testing.F) {
	for _, s := range []string{"370:430", " 370 : 430 ", "430:370", "1e3:2e3", ":", "370", "a:b", "NaN:1", "-Inf:0", "0:+Inf", "1:1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		w, err := parseWindow(s)
		if err != nil {
			return
		}
		if !(w[0] < w[1]) || math.IsInf(w[0], 0) || math.IsInf(w[1], 0) || math.IsNaN(w[0]) || math.IsNaN(w[1]) {
			t.Fatalf("parseWindow(%q) = %v", s, w)
		}
	})
}

func TestSplitRefFile(t *testing.T) {
	dir := t.TempDir()
	odd := filepath.Join(dir, "a:b")
	ref := filepath.Join(dir, "ref.json")
	for _, p := range []string{odd, ref} {
		if err := os.WriteFile(p, nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct{ arg, path, state string }{
		{"metal.csv", "metal.csv", ""},
		{"metal.csv:metal", "metal.csv", "metal"},
		{"dir:x/metal.csv", "dir:x/metal.csv", ""},
		{ref + ":other:hydrated", ref, "other:hydrated"},
		{ref + ":oxide", ref, "oxide"},
		{odd, odd, ""},
		{odd + ":metal", odd, "metal"},
	} {
		p, s := splitRefFile(c.arg)
		if p != c.path || s != c.state {
			t.Errorf("splitRefFile(%q) = %q, %q; want %q, %q", c.arg, p, s, c.path, c.state)
		}
	}
}
