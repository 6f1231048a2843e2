package fit

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

// TestSciPyFixedShift checks that with no shift the coefficients and the
// background equal SciPy's NNLS on the same matrix (testdata/gen_scipy.py,
// "SciPy 1.10.1 scipy.optimize.nnls"). Tolerance 1e-8 absolute or relative:
// both solve a problem with condition number below 100 to near machine
// precision; the Gram reduction used here loses at most cond^2 * eps.
func TestSciPyFixedShift(t *testing.T) {
	raw, err := os.ReadFile("testdata/scipy_nnls.json")
	if err != nil {
		t.Fatal(err)
	}
	var g struct {
		Source string
		Cases  []struct {
			Name       string
			Start      float64     `json:"start_ev"`
			Step       float64     `json:"step_ev"`
			Refs       [][]float64 `json:"refs"`
			Y          []float64   `json:"y"`
			Deg        int         `json:"background_degree"`
			Coef       []float64   `json:"coef"`
			Background []float64   `json:"background"`
		}
	}
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(g.Source, "SciPy 1.10.1") {
		t.Fatalf("golden file from %q", g.Source)
	}
	for _, c := range g.Cases {
		t.Run(c.Name, func(t *testing.T) {
			var refs []Reference
			for i, y := range c.Refs {
				s, _ := lineshape.NewUniform(c.Start, c.Step, y, lineshape.Derivative)
				refs = append(refs, Reference{ID: string(rune('a' + i)), Spectrum: s})
			}
			u, _ := lineshape.NewUniform(c.Start, c.Step, c.Y, lineshape.Derivative)
			bg := c.Deg
			if bg == 0 {
				bg = BackgroundConstant
			}
			m, err := Prepare(u, refs, Options{Shift: ShiftNone, Background: bg, Uncertainty: Covariance})
			if err != nil {
				t.Fatal(err)
			}
			if m.Points() != len(c.Y) {
				t.Fatalf("window holds %d channels, want all %d", m.Points(), len(c.Y))
			}
			res, err := m.Fit(context.Background(), u)
			if err != nil {
				t.Fatal(err)
			}
			for i, comp := range res.Components {
				if !scalar.EqualWithinAbsOrRel(comp.Coefficient, c.Coef[i], 1e-8, 1e-8) {
					t.Errorf("coefficient %d = %.12g, SciPy %.12g", i, comp.Coefficient, c.Coef[i])
				}
				if (c.Coef[i] == 0) != comp.AtBound {
					t.Errorf("coefficient %d at bound %v, SciPy %v", i, comp.AtBound, c.Coef[i])
				}
			}
			for j, b := range res.Background {
				if !scalar.EqualWithinAbsOrRel(b, c.Background[j], 1e-8, 1e-8) {
					t.Errorf("background %d = %.12g, SciPy %.12g", j, b, c.Background[j])
				}
			}
		})
	}
}

func TestBadInput(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states, coef: []float64{0.5, 0.5}, shift: 0.5, extra: 1}
	_, d, _ := mx.clean(320, 470, 0.5)
	u := unknownSpectrum(320, 0.5, d)
	far := refSpectrum(stMetal, 850, 950, 0.5, testModulation)
	scaled := refs[0].Spectrum.Clone()
	for i := range scaled.Y {
		scaled.Y[i] *= 2
	}
	nan := u.Clone()
	nan.Y[40] = math.NaN()
	zero := u.Clone()
	for i := range zero.Y {
		zero.Y[i] = 0
	}
	mod4 := refs[1].Spectrum.Clone()
	mod4.Meta.ModulationEV = 4
	cases := []struct {
		name    string
		u       *lineshape.Spectrum
		refs    []Reference
		opts    Options
		want    string // substring of the error
		inInput bool   // a *lineshape.InputError
	}{
		{"no-references", u, nil, Options{}, "no references", true},
		{"other-element", u, []Reference{refs[0], {ID: "cu", Element: "Cu", Spectrum: refs[1].Spectrum}}, Options{Element: "X"}, "element Cu", true},
		{"other-energy-range", u, []Reference{refs[0], {ID: "far", Spectrum: far}}, Options{}, "does not overlap", true},
		{"same-id-twice", u, []Reference{refs[0], refs[0]}, Options{}, "given twice", true},
		{"same-spectrum-twice", u, []Reference{refs[0], {ID: "copy", Spectrum: refs[0].Spectrum.Clone()}}, Options{}, "identical spectra", true},
		{"collinear", u, []Reference{refs[0], {ID: "double", Spectrum: scaled}}, Options{}, "collinear", false},
		{"unknown-all-zero", zero, refs, Options{}, "zero in every channel", true},
		{"unknown-nan", nan, refs, Options{}, "NaN", true},
		{"window-mostly-outside", u, refs, Options{Window: [2]float64{100, 480}}, "less than half", true},
		{"window-too-few-channels", u, refs, Options{Window: [2]float64{400, 405}}, "need at least 20", true},
		{"modulation-mismatch", u, []Reference{refs[0], {ID: "m4", Spectrum: mod4}}, Options{}, "modulation", true},
		{"direct-unknown-modulation-from-reference", directOf(u), []Reference{refs[0], {ID: "nomod", Spectrum: withoutModulation(refs[1].Spectrum)}}, Options{}, "", false},
		{"direct-unknown-no-modulation", directOf(u), []Reference{{ID: "a", Spectrum: withoutModulation(refs[0].Spectrum)}, {ID: "b", Spectrum: withoutModulation(refs[1].Spectrum)}}, Options{}, "none of them records", true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Prepare(tc.u, tc.refs, tc.opts)
			if err == nil && tc.want == "" {
				return
			}
			if err == nil {
				_, err = m.Fit(context.Background(), tc.u)
			}
			if err == nil {
				t.Fatalf("no error, want one containing %q", tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q does not contain %q", err, tc.want)
			}
			var ie *lineshape.InputError
			if tc.inInput && !errors.As(err, &ie) {
				t.Errorf("error %q (%T) is not a *lineshape.InputError", err, err)
			}
			var ce *CollinearError
			if tc.name == "collinear" && !errors.As(err, &ce) {
				t.Errorf("error %q is not a *CollinearError", err)
			}
			t.Log(err)
		})
	}

	// A window partly outside the data is truncated with a warning.
	m, err := Prepare(u, refs, Options{Window: [2]float64{310, 440}})
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(m.Warnings(), "; "); !strings.Contains(w, "window truncated") {
		t.Errorf("warnings %q lack the truncation", w)
	}
	// A spectrum shorter than the prepared window (a series member).
	m, err = Prepare(u, refs, Options{Uncertainty: Covariance})
	if err != nil {
		t.Fatal(err)
	}
	short, _ := u.Window(360, 420)
	if _, err := m.Fit(context.Background(), short); err == nil || !strings.Contains(err.Error(), "shorter than the fit window") {
		t.Errorf("short unknown: error %v", err)
	}
}

func directOf(u *lineshape.Spectrum) *lineshape.Spectrum {
	c := u.Clone()
	c.Mode = lineshape.Direct
	c.Meta.ModulationEV = 0
	return c
}

func withoutModulation(s *lineshape.Spectrum) *lineshape.Spectrum {
	c := s.Clone()
	c.Meta.ModulationEV = 0
	return c
}

// TestComponentAtZero: a state absent from the unknown gets fraction 0, is
// at its bound, and has a one-sided interval [0, upper] with upper > 0.
func TestComponentAtZero(t *testing.T) {
	states := []state{stMetal, stOxide, stNitride}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states[:2], coef: []float64{0.7, 0.3}, shift: -0.6, extra: 1}
	_, d, dir := mx.clean(320, 470, 0.5)
	y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(3, 3)))
	u := unknownSpectrum(320, 0.5, y)
	for _, method := range []Uncertainty{Covariance, Bootstrap} {
		t.Run("method="+method.String(), func(t *testing.T) {
			m, err := Prepare(u, refs, Options{Uncertainty: method, Samples: 100, Seed: 5})
			if err != nil {
				t.Fatal(err)
			}
			res, err := m.Fit(context.Background(), u)
			if err != nil {
				t.Fatal(err)
			}
			c := res.Components[2]
			if c.Fraction > 0.02 {
				t.Fatalf("absent nitride got fraction %.4f", c.Fraction)
			}
			if c.Fraction == 0 && (!c.AtBound || c.FractionCI95[0] != 0 || !(c.FractionCI95[1] > 0) || c.FractionCI95[1] > 0.1) {
				t.Errorf("component at zero: %+v", c)
			}
			for _, c := range res.Components {
				if c.FractionCI95[0] < 0 || c.FractionCI95[1] > 1 || c.FractionCI95[0] > c.Fraction+1e-12 || c.FractionCI95[1] < c.Fraction-1e-12 {
					t.Errorf("%s: interval %v around %.4f", c.State, c.FractionCI95, c.Fraction)
				}
			}
			t.Logf("%s: fraction %.4f ci %v at bound %v", c.State, c.Fraction, c.FractionCI95, c.AtBound)
		})
	}
}

// TestDirectUnknown fits a direct unknown against derivative references:
// Prepare converts it by lineshape's lock-in emulation at the references'
// modulation. Noise-free data; fractions within 0.01 (the lock-in
// emulations here and in lineshape are independent quadratures).
func TestDirectUnknown(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states, coef: []float64{0.35, 0.65}, shift: 1.2, extra: 2}
	e, _, dir := mx.clean(320, 470, 0.5)
	u, _ := lineshape.NewUniform(e[0], 0.5, dir, lineshape.Direct)
	m, err := Prepare(u, refs, Options{Uncertainty: Covariance})
	if err != nil {
		t.Fatal(err)
	}
	if m.Mode() != lineshape.Derivative || m.Modulation() != testModulation {
		t.Fatalf("mode %v modulation %v", m.Mode(), m.Modulation())
	}
	res, err := m.Fit(context.Background(), u)
	if err != nil {
		t.Fatal(err)
	}
	want := mx.fractions()
	for i, c := range res.Components {
		if math.Abs(c.Fraction-want[i]) > 0.01 || math.Abs(c.Shift-1.2) > 0.05 {
			t.Errorf("%s: fraction %.4f shift %.3f, want %.4f, 1.2", c.State, c.Fraction, c.Shift, want[i])
		}
	}
}

// TestPoissonCounts: a direct spectrum of counts against direct references
// takes the Poisson Monte Carlo; its SD agrees with the covariance SD
// within 30 % (two estimates of one quantity; 200 samples give about 5 %
// Monte Carlo error).
func TestPoissonCounts(t *testing.T) {
	states := []state{stMetal, stOxide}
	var refs []Reference
	for _, st := range states {
		y := make([]float64, 401)
		for i := range y {
			y[i] = 1000 * st.direct(300+0.5*float64(i))
		}
		s, _ := lineshape.NewUniform(300, 0.5, y, lineshape.Direct)
		refs = append(refs, Reference{ID: st.name, State: st.name, Spectrum: s})
	}
	mx := mixture{states: states, coef: []float64{0.6, 0.4}, shift: 0.7}
	rng := rand.New(rand.NewPCG(9, 9))
	y := make([]float64, 301)
	for i := range y {
		lam := 1000 * mx.direct(320+0.5*float64(i))
		y[i] = math.Round(lam + math.Sqrt(lam)*rng.NormFloat64())
	}
	u, _ := lineshape.NewUniform(320, 0.5, y, lineshape.Direct)
	u.Meta.Counts = true
	var sds [2]float64
	for k, method := range []Uncertainty{Covariance, Bootstrap} {
		m, err := Prepare(u, refs, Options{Uncertainty: method, Samples: 200})
		if err != nil {
			t.Fatal(err)
		}
		res, err := m.Fit(context.Background(), u)
		if err != nil {
			t.Fatal(err)
		}
		if method == Bootstrap && res.Samples.Method != "poisson" {
			t.Errorf("bootstrap method %q, want poisson", res.Samples.Method)
		}
		sds[k] = res.Components[0].FractionSD
		if math.Abs(res.Components[0].Fraction-0.6) > 0.02 {
			t.Errorf("fraction %.4f, want 0.6", res.Components[0].Fraction)
		}
	}
	if r := sds[1] / sds[0]; r < 0.7 || r > 1.3 {
		t.Errorf("Poisson SD %.5f vs covariance SD %.5f", sds[1], sds[0])
	}
}

// TestBootstrapDeterministic: the same seed gives the same intervals with
// any number of workers.
func TestBootstrapDeterministic(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 340, 460, 0.5)
	mx := mixture{states: states, coef: []float64{0.6, 0.4}, shift: 0.3, extra: 1}
	_, d, dir := mx.clean(370, 430, 0.5)
	y, _ := noisy(d, dir, 50, true, rand.New(rand.NewPCG(1, 2)))
	u := unknownSpectrum(370, 0.5, y)
	var got [][2]float64
	for _, w := range []int{1, 3} {
		m, err := Prepare(u, refs, Options{MaxShift: 1, Samples: 60, Seed: 42, Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		res, err := m.Fit(context.Background(), u)
		if err != nil {
			t.Fatal(err)
		}
		got = append(got, res.Components[0].FractionCI95)
	}
	if got[0] != got[1] {
		t.Errorf("intervals differ with workers: %v vs %v", got[0], got[1])
	}
}

func BenchmarkFit(b *testing.B) {
	states := []state{stMetal, stOxide, stNitride}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states, coef: []float64{0.5, 0.3, 0.2}, shift: 1.5, extra: 2}
	_, d, dir := mx.clean(320, 469.5, 0.5) // 300 channels
	y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(1, 1)))
	u := unknownSpectrum(320, 0.5, y)
	for _, bc := range []struct {
		name string
		opts Options
	}{
		{"n=300/refs=3/shift=common/uncertainty=covariance", Options{Uncertainty: Covariance}},
		{"n=300/refs=3/shift=each/uncertainty=covariance", Options{Shift: ShiftEach, Uncertainty: Covariance}},
		{"n=300/refs=3/shift=common/uncertainty=bootstrap/samples=300", Options{Uncertainty: Bootstrap, Samples: 300}},
	} {
		b.Run(bc.name, func(b *testing.B) {
			m, err := Prepare(u, refs, bc.opts)
			if err != nil {
				b.Fatal(err)
			}
			if m.Points() != 300 {
				b.Fatalf("%d points", m.Points())
			}
			for b.Loop() {
				if _, err := m.Fit(context.Background(), u); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	b.Run("n=300/refs=3/prepare", func(b *testing.B) {
		for b.Loop() {
			if _, err := Prepare(u, refs, Options{}); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// TestWarnings: a missing state leaves structure in the residual, a shift
// beyond the bound is reported at the bound, normalisation warns.
func TestWarnings(t *testing.T) {
	all := []state{stMetal, stOxide, stNitride}
	refs := refsFor(all, 300, 500, 0.5)
	mx := mixture{states: all, coef: []float64{0.4, 0.3, 0.3}, shift: 2.5, extra: 1}
	_, d, dir := mx.clean(320, 470, 0.5)
	y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(4, 4)))
	u := unknownSpectrum(320, 0.5, y)
	cases := []struct {
		name string
		refs []Reference
		opts Options
		want string
	}{
		{"missing-state", refs[:2], Options{Uncertainty: Covariance}, "structure left in the residual"},
		{"shift-at-bound", refs, Options{Uncertainty: Covariance, MaxShift: 1}, "at its bound"},
		{"normalised", refs, Options{Uncertainty: Covariance, Normalize: lineshape.NormPeakToPeak}, "normalised"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Prepare(u, tc.refs, tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			res, err := m.Fit(context.Background(), u)
			if err != nil {
				t.Fatal(err)
			}
			if w := strings.Join(res.Warnings, "; "); !strings.Contains(w, tc.want) {
				t.Errorf("warnings %q lack %q (chi2 %.3g, lags %d)", w, tc.want, res.Quality.Chi2Reduced, res.Quality.CorrelationLags)
			}
		})
	}
	// A good fit of white noise does not warn about structure.
	m, _ := Prepare(u, refs, Options{Uncertainty: Covariance})
	res, err := m.Fit(context.Background(), u)
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(res.Warnings, "; "); strings.Contains(w, "structure") || strings.Contains(w, "bound") {
		t.Errorf("good fit warns: %q", w)
	}
}

// TestConcurrentFits: one Model fits many spectra at once (as a depth
// profile or map does) with the same results as one at a time.
func TestConcurrentFits(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 300, 500, 0.5)
	var us []*lineshape.Spectrum
	for i := 0; i < 8; i++ {
		mx := mixture{states: states, coef: []float64{0.1 * float64(i+1), 1 - 0.1*float64(i+1)}, shift: 0.2 * float64(i-4), extra: 1}
		_, d, dir := mx.clean(320, 470, 0.5)
		y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(uint64(i), 1)))
		us = append(us, unknownSpectrum(320, 0.5, y))
	}
	m, err := Prepare(us[0], refs, Options{Uncertainty: Covariance})
	if err != nil {
		t.Fatal(err)
	}
	want := make([]float64, len(us))
	for i, u := range us {
		r, err := m.Fit(context.Background(), u)
		if err != nil {
			t.Fatal(err)
		}
		want[i] = r.Components[0].Fraction
	}
	got := make([]float64, len(us))
	done := make(chan error, len(us))
	for i, u := range us {
		go func() {
			r, err := m.Fit(context.Background(), u)
			if err == nil {
				got[i] = r.Components[0].Fraction
			}
			done <- err
		}()
	}
	for range us {
		if err := <-done; err != nil {
			t.Fatal(err)
		}
	}
	for i := range us {
		if got[i] != want[i] {
			t.Errorf("spectrum %d: concurrent fraction %v, sequential %v", i, got[i], want[i])
		}
	}
}
