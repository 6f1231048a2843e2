package render

import (
	"bytes"
	"context"
	"encoding/xml"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// sampleResult fits an invented two-state derivative mixture (Gaussian
// derivative lineshapes) so the renderers have a real Result to draw.
func sampleResult(t *testing.T) *fit.Result {
	t.Helper()
	dg := func(e, e0, s float64) float64 { x := (e - e0) / s; return -x * math.Exp(-0.5*x*x) }
	mk := func(f func(float64) float64, lo, hi float64) *lineshape.Spectrum {
		n := int((hi-lo)/0.5) + 1
		y := make([]float64, n)
		for i := range y {
			y[i] = f(lo + 0.5*float64(i))
		}
		s, err := lineshape.NewUniform(lo, 0.5, y, lineshape.Derivative)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	a := func(e float64) float64 { return dg(e, 400, 2) + 0.3*dg(e, 385, 3) }
	b := func(e float64) float64 { return 0.8*dg(e, 394, 2.5) + 0.4*dg(e, 381, 2) }
	refs := []fit.Reference{
		{ID: "a1b2c3d4e5f6", Name: "Ti foil", Element: "Ti", State: "metal", Spectrum: mk(a, 340, 460)},
		{ID: "0f9e8d7c6b5a", Name: "TiO2 <film>", Element: "Ti", State: "oxide", Spectrum: mk(b, 340, 460)},
	}
	u := mk(func(e float64) float64 {
		return 0.6*a(e-0.7) + 0.4*b(e-0.7) + 0.01*math.Sin(e*7)
	}, 360, 440)
	m, err := fit.Prepare(u, refs, fit.Options{Uncertainty: fit.Covariance})
	if err != nil {
		t.Fatal(err)
	}
	res, err := m.Fit(context.Background(), u)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestFitFigureFiles(t *testing.T) {
	res := sampleResult(t)
	dir := t.TempDir()
	f := FitFigure(res, "sample")
	svgPath := filepath.Join(dir, "fit.svg")
	pngPath := filepath.Join(dir, "fit.png")
	for _, p := range []string{svgPath, pngPath} {
		if err := f.WriteFile(p); err != nil {
			t.Fatal(err)
		}
	}
	raw, _ := os.ReadFile(svgPath)
	if err := xml.Unmarshal(raw, new(struct{ XMLName xml.Name })); err != nil {
		t.Errorf("SVG is not well-formed XML: %v", err)
	}
	fh, _ := os.Open(pngPath)
	defer fh.Close()
	img, err := png.Decode(fh)
	if err != nil {
		t.Fatalf("PNG: %v", err)
	}
	if b := img.Bounds(); b.Dx() < 500 || b.Dy() < 400 {
		t.Errorf("PNG is %v", b)
	}
	if err := f.WriteFile(filepath.Join(dir, "fit.pdf")); err == nil {
		t.Error("no error for .pdf")
	}
}

func TestFitTableText(t *testing.T) {
	res := sampleResult(t)
	var buf bytes.Buffer
	if err := WriteFitText(&buf, res); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	lines := strings.Split(out, "\n")
	if !strings.HasPrefix(lines[0], "state") || !strings.HasPrefix(lines[1], "-----") {
		t.Errorf("header:\n%s", out)
	}
	// Right-aligned columns end at the same rune column.
	if w0, w2 := len([]rune(lines[2])), len([]rune(lines[3])); w0 != w2 {
		t.Errorf("rows of different width %d, %d:\n%s", w0, w2, out)
	}
	for _, want := range []string{"metal", "oxide", "±", "reduced chi-square", "R-factor"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestFitReportHTML(t *testing.T) {
	res := sampleResult(t)
	var buf bytes.Buffer
	info := ReportInfo{InputFile: "data/spot 1.vms", InputSHA256: strings.Repeat("ab", 32), Block: 0,
		Settings: [][2]string{{"shift", "common"}}, LibraryDir: "/lib", LibraryRevision: 7, Version: "test",
		Command: "statemix fit 'data/spot 1.vms' --refs a1b2,0f9e"}
	if err := FitReport(&buf, res, info); err != nil {
		t.Fatal(err)
	}
	h := buf.String()
	for _, want := range []string{`<meta name="viewport"`, "<svg", "a1b2c3d4e5f6", strings.Repeat("ab", 32), "revision 7", "TiO2 &lt;film&gt;", "@media print"} {
		if !strings.Contains(h, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(h, "<film>") {
		t.Error("unescaped name in the report")
	}
	if strings.Contains(h, "http://") && strings.Contains(h, "<link") {
		t.Error("report links external resources")
	}
}

func TestFractionText(t *testing.T) {
	cases := []struct {
		c       fit.Component
		percent bool
		want    string
	}{
		{fit.Component{Fraction: 0.6234, FractionSD: 0.0123, FractionCI95: [2]float64{0.6, 0.65}}, false, "0.623 ± 0.012"},
		{fit.Component{AtBound: true, FractionSD: 0.018, FractionCI95: [2]float64{0, 0.0297}}, true, "0 (< 3.0)"},
		{fit.Component{Fraction: 1, FractionSD: 0.018, FractionCI95: [2]float64{0.9703, 1}}, true, "100.0 (> 97.0)"},
		{fit.Component{Fraction: 1, FractionSD: 0.018, FractionCI95: [2]float64{0.9703, 1}}, false, "1.000 (> 0.970)"},
		// A certain 1 (no other component) keeps the plain form.
		{fit.Component{Fraction: 1, FractionCI95: [2]float64{1, 1}}, true, "100.0 ± 0.0"},
	}
	for _, tc := range cases {
		if got := FractionText(tc.c, tc.percent); got != tc.want {
			t.Errorf("FractionText(%+v, %v) = %q, want %q", tc.c, tc.percent, got, tc.want)
		}
	}
	res := sampleResult(t)
	res.Components[0] = fit.Component{State: "metal", Fraction: 1, FractionSD: 0.018, FractionCI95: [2]float64{0.9703, 1}}
	res.Components[1] = fit.Component{State: "oxide", AtBound: true, FractionSD: 0.018, FractionCI95: [2]float64{0, 0.0297}}
	var buf bytes.Buffer
	if err := FitTable(res).WriteText(&buf); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"1.000 (> 0.970)", "> 0.970", "0 (at bound)", "< 0.030"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("table lacks %q:\n%s", want, buf.String())
		}
	}
}

func TestSymmetricTicks(t *testing.T) {
	cases := []struct {
		m      float64
		lim    float64
		labels string
	}{
		// The residual of the demo's pad fit reached about 170 (noise SD 44).
		{170, 200, "-200 -100 0 100 200"},
		{780, 1000, "-1000 -500 0 500 1000"},
		{0.034, 0.04, "-0.04 -0.02 0 0.02 0.04"},
		{2.4, 3, "-3 -2 -1 0 1 2 3"},
		{1, 1, "-1 -0.5 0 0.5 1"},
	}
	for _, tc := range cases {
		lim, ticks := SymmetricTicks(tc.m)
		var labels []string
		for _, tk := range ticks {
			labels = append(labels, tk.Label)
		}
		if math.Abs(lim-tc.lim) > 1e-12*tc.lim || strings.Join(labels, " ") != tc.labels {
			t.Errorf("SymmetricTicks(%v) = %v, %q; want %v, %q", tc.m, lim, labels, tc.lim, tc.labels)
		}
		if lim < tc.m {
			t.Errorf("SymmetricTicks(%v): limit %v below the data", tc.m, lim)
		}
	}
}
