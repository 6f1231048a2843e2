package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape/format/npy"
)

// runDemoIn runs the demo in-process in dir and returns its summary and
// what it printed on stdout and stderr.
func runDemoIn(t *testing.T, dir string) (*demoSummary, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	app := &App{In: strings.NewReader(""), Out: &out, Err: &errb, Getenv: func(string) string { return "" }}
	app.Ctx = t.Context()
	sum, err := runDemo(app, &demoOptions{Dir: dir})
	if err != nil {
		t.Fatalf("demo: %v\nstdout:\n%s\nstderr:\n%s", err, out.String(), errb.String())
	}
	return sum, out.String(), errb.String()
}

// printedResult is one "found ... planted ..." line of the demo's summary.
type printedResult struct {
	sample, state string
	found, sd     float64 // NaN when not printed
	planted       float64
}

// parsePrinted reads the result lines of the demo's closing summary:
// "  SAMPLE STATE found F [± SD] [nm] ... planted T [nm] ...".
func parsePrinted(t *testing.T, out string) []printedResult {
	t.Helper()
	i := strings.Index(out, "== What statemix found")
	if i < 0 {
		t.Fatal("the demo printed no summary")
	}
	var res []printedResult
	sc := bufio.NewScanner(strings.NewReader(out[i:]))
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		fi, pi := -1, -1
		for k, w := range f {
			switch w {
			case "found":
				fi = k
			case "planted":
				pi = k
			}
		}
		if fi < 2 || pi < 0 || pi+1 >= len(f) {
			continue
		}
		num := func(s string) float64 {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("summary line %q: %q is not a number", sc.Text(), s)
			}
			return v
		}
		r := printedResult{sample: f[0], state: f[1], found: num(f[fi+1]), sd: math.NaN(), planted: num(f[pi+1])}
		if fi+3 < len(f) && f[fi+2] == "±" {
			r.sd = num(f[fi+3])
		}
		res = append(res, r)
	}
	return res
}

// TestDemo runs the whole demo in a temporary folder and checks that what
// statemix found is within the demo's own stated truth, both in the summary
// the demo returns and in the text it prints.
//
// Tolerances (all against values the demo planted itself):
//   - fractions 0.05 absolute: the fitted SDs are 0.004-0.02 here, so 0.05
//     is 2.5 or more SDs, and 5 % is the accuracy expected of fitting with
//     same-instrument standards (DOMAIN.md, from memory);
//   - oxide thickness 15 %: the planted attenuation uses the TPP-2M IMFP at
//     1380 eV while the fit evaluates it at the centre of its window (a
//     fraction of a percent), plus the noise of the coefficient ratio;
//   - interface depth 15 %, 16-84 % width 30 %: the profile steps are
//     0.48 nm apart, and the crossings are interpolated linearly between
//     noisy steps, which matters more for the width than for the 50 % point;
//   - map mean fractions 0.05, and the RMS error per pixel 0.1: each pixel
//     has 1/20 of a standard's dwell, so single pixels scatter by a few
//     hundredths.
func TestDemo(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "demo")
	sum, out, stderr := runDemoIn(t, dir)
	tr := sum.Truth

	if !strings.Contains(out, "SYNTHETIC") || !strings.Contains(out, "planted") {
		t.Errorf("the demo does not say its data are synthetic and planted:\n%s", out)
	}
	// The invented standards must pass library add's plausibility checks:
	// no duplicate-state and no transition-energy warnings.
	for _, bad := range []string{"mislabelled", "Chung-Jenkins"} {
		if strings.Contains(stderr, bad) {
			t.Errorf("library add warns about the demo's standards (%s):\n%s", bad, stderr)
		}
	}

	checkFractions := func(what string, fs []demoFraction, truth map[string]float64) {
		t.Helper()
		if len(fs) == 0 {
			t.Errorf("%s: no fractions", what)
		}
		for _, f := range fs {
			want, ok := truth[f.State]
			if !ok {
				t.Errorf("%s: state %q was not planted", what, f.State)
				continue
			}
			if !scalar.EqualWithinAbs(f.Fraction, want, 0.05) {
				t.Errorf("%s %s: fraction %.3f ± %.3f, planted %.3f (tolerance 0.05)", what, f.State, f.Fraction, f.SD, want)
			}
		}
		for st, want := range truth {
			found := false
			for _, f := range fs {
				found = found || f.State == st
			}
			if !found && want > 0.05 {
				t.Errorf("%s: planted state %s (%.3f) is missing from the fit", what, st, want)
			}
		}
	}
	checkFractions("barrier", sum.Barrier, tr.Barrier)
	checkFractions("pad", sum.Pad, tr.Pad)
	if !scalar.EqualWithinRel(sum.PadThicknessNM, tr.PadOxideNM, 0.15) {
		t.Errorf("pad oxide %.3f ± %.3f nm, planted %.3f nm (tolerance 15 %%)", sum.PadThicknessNM, sum.PadThicknessSDNM, tr.PadOxideNM)
	}
	if len(sum.Interfaces) == 0 {
		t.Error("the profile found no interface")
	}
	for _, x := range sum.Interfaces {
		if !scalar.EqualWithinRel(x.DepthNM, tr.InterfaceNM, 0.15) {
			t.Errorf("interface of %s at %.3f nm, planted %.3f nm (tolerance 15 %%)", x.State, x.DepthNM, tr.InterfaceNM)
		}
		if !scalar.EqualWithinRel(x.WidthNM, tr.InterfaceWidthNM, 0.30) {
			t.Errorf("interface of %s %.3f nm wide, planted %.3f nm (tolerance 30 %%)", x.State, x.WidthNM, tr.InterfaceWidthNM)
		}
	}
	for st, want := range tr.MapMean {
		if got, ok := sum.MapMean[st]; !ok || !scalar.EqualWithinAbs(got, want, 0.05) {
			t.Errorf("map mean %s fraction %.3f (present %v), planted %.3f (tolerance 0.05)", st, got, ok, want)
		}
	}

	// The oxide map pixel by pixel.
	arr, err := npy.ReadFile(filepath.Join(dir, "map", "pad-P7-maps", "fraction-oxide.npy"))
	if err != nil {
		t.Fatal(err)
	}
	if len(arr.Data) != len(tr.MapOxide) {
		t.Fatalf("fraction-oxide.npy holds %d pixels, want %d", len(arr.Data), len(tr.MapOxide))
	}
	var ss float64
	for i, v := range arr.Data {
		ss += (v - tr.MapOxide[i]) * (v - tr.MapOxide[i])
	}
	if rms := math.Sqrt(ss / float64(len(arr.Data))); rms > 0.1 {
		t.Errorf("oxide map: RMS error per pixel %.3f, want at most 0.1", rms)
	}

	// The printed summary says the same as the returned one.
	printed := parsePrinted(t, out)
	byKey := map[string]printedResult{}
	for _, p := range printed {
		byKey[p.sample+" "+p.state] = p
	}
	same := func(key string, got, planted float64) {
		t.Helper()
		p, ok := byKey[key]
		if !ok {
			t.Errorf("no printed result for %s in:\n%s", key, out)
			return
		}
		// The text rounds to 3 decimals (2 for nm).
		if !scalar.EqualWithinAbs(p.found, got, 0.006) || !scalar.EqualWithinAbs(p.planted, planted, 0.006) {
			t.Errorf("%s printed found %v planted %v, summary %v and %v", key, p.found, p.planted, got, planted)
		}
	}
	for _, f := range sum.Barrier {
		same("barrier-B2 "+f.State, f.Fraction, f.Truth)
	}
	for _, f := range sum.Pad {
		same("pad-P3 "+f.State, f.Fraction, f.Truth)
	}
	same("pad-P3 thickness", sum.PadThicknessNM, tr.PadOxideNM)
	for _, x := range sum.Interfaces {
		same("profile "+x.State, x.DepthNM, tr.InterfaceNM)
	}
	for st, v := range sum.MapMean {
		same("map "+st, v, tr.MapMean[st])
	}

	// Figures and reports exist; the HTML report carries its figure inline.
	for _, o := range sum.Outputs {
		st, err := os.Stat(filepath.Join(dir, o))
		if err != nil || st.Size() < 1000 {
			t.Errorf("output %s: %v (size %v)", o, err, st)
		}
		if !strings.Contains(out, filepath.Join(dir, o)) {
			t.Errorf("the demo does not print the path of %s", o)
		}
	}
	html, err := os.ReadFile(filepath.Join(dir, "reports", "pad-P3.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(html, []byte("<svg")) || !bytes.Contains(html, []byte("Al2O3 film")) {
		t.Error("pad-P3.html has no inline SVG figure or no reference names")
	}

	// Same seeds, same results: a second run in another folder, through the
	// command line with --json (the statemix.demo/v1 summary alone).
	code, jout, jerr := runApp(t, nil, "--json", "demo", "--dir", filepath.Join(t.TempDir(), "again"))
	if code != exitOK {
		t.Fatalf("demo --json: exit %d: %s", code, jerr)
	}
	var sum2 demoSummary
	if err := json.Unmarshal([]byte(jout), &sum2); err != nil {
		t.Fatalf("demo --json: %v\n%s", err, jout)
	}
	if sum2.Schema != "statemix.demo/v1" || sum2.Truth == nil || sum2.Truth.PadOxideNM != tr.PadOxideNM {
		t.Errorf("demo --json: schema %q, truth %+v", sum2.Schema, sum2.Truth)
	}
	if len(sum2.Barrier) != len(sum.Barrier) {
		t.Fatalf("second run: %d barrier components, first %d", len(sum2.Barrier), len(sum.Barrier))
	}
	for i := range sum.Barrier {
		if sum.Barrier[i] != sum2.Barrier[i] {
			t.Errorf("second run: barrier %+v, first %+v", sum2.Barrier[i], sum.Barrier[i])
		}
	}
	if sum.PadThicknessNM != sum2.PadThicknessNM || sum.MapMean["oxide"] != sum2.MapMean["oxide"] {
		t.Errorf("second run: pad oxide %v nm, map oxide %v; first %v nm, %v", sum2.PadThicknessNM, sum2.MapMean["oxide"], sum.PadThicknessNM, sum.MapMean["oxide"])
	}
}

// TestDemoRefusesUsedFolder checks that --dir does not overwrite an earlier
// demo's library (exit status 2).
func TestDemoRefusesUsedFolder(t *testing.T) {
	dir := t.TempDir()
	if err := os.Mkdir(filepath.Join(dir, "library"), 0o755); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runApp(t, nil, "demo", "--dir", dir)
	if code != exitUsage || !strings.Contains(stderr, "already holds a demo library") {
		t.Errorf("demo --dir on a used folder: exit %d, stderr %q; want exit %d and a message", code, stderr, exitUsage)
	}
}

// TestDemoPadFractions checks the attenuation model the pad is planted
// with against the Strohmeier equation it must invert:
// d = L sin(theta) ln(1 + c_ox / c_m) for coefficients against pure
// standards (k = 1).
func TestDemoPadFractions(t *testing.T) {
	for _, c := range []struct{ d, l, theta float64 }{{3, 3.2, 45}, {0.5, 2.5, 90}, {6, 3.0, 30}} {
		ox, me := demoPadFractions(c.d, c.l, c.theta)
		if !scalar.EqualWithinAbs(ox+me, 1, 1e-12) {
			t.Errorf("%+v: coefficients sum to %v, want 1", c, ox+me)
		}
		back := c.l * math.Sin(c.theta*math.Pi/180) * math.Log1p(ox/me)
		if !scalar.EqualWithinAbsOrRel(back, c.d, 1e-12, 1e-12) {
			t.Errorf("%+v: Strohmeier gives %v nm back", c, back)
		}
	}
}

// TestEMGUnitArea checks that the asymmetric line shape has unit area and
// its tail on the low-energy side, far from the centre too (no overflow).
func TestEMGUnitArea(t *testing.T) {
	for _, c := range []struct{ sigma, tau float64 }{{2, 3}, {0.5, 5}, {3, 0.2}} {
		var area, lo, hi float64
		const h = 0.01
		for e := -200.0; e <= 200; e += h {
			v := emgLow(e, 0, c.sigma, c.tau)
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Fatalf("%+v: emgLow(%v) = %v", c, e, v)
			}
			area += v * h
			if e < 0 {
				lo += v * h
			} else {
				hi += v * h
			}
		}
		// Riemann sum of a smooth density at 0.01 eV: better than 1e-6.
		if !scalar.EqualWithinAbs(area, 1, 1e-6) {
			t.Errorf("%+v: area %v, want 1", c, area)
		}
		if !(lo > hi) {
			t.Errorf("%+v: %v below the centre, %v above: the tail must be on the low-energy side", c, lo, hi)
		}
	}
}
