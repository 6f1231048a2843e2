package series

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/lineshape/format"
)

// erfProfile returns steps of an oxide layer over metal: the oxide
// fraction is erfc((t - t0)/(s sqrt 2))/2 (an erf-shaped interface at t0
// of 16-84 % width 2 s), on 0..tmax s in steps of dt, with noise sigma.
func erfProfile(t0, s, dt, tmax, sigma float64, seed uint64) []Step {
	rng := rand.New(rand.NewPCG(seed, 2))
	var steps []Step
	for i := 0; float64(i)*dt <= tmax+1e-9; i++ {
		t := float64(i) * dt
		fox := 0.5 * math.Erfc((t-t0)/(s*math.Sqrt2))
		y := make([]float64, 300)
		// metal is state 0, oxide state 1 (testStates).
		mixture(y, 320, 0.5, []float64{2 * (1 - fox), 2 * fox}, 0.3*math.Sin(t/100), 0.3, 0.002, sigma, rng)
		sp, err := lineshape.NewUniform(320, 0.5, y, lineshape.Direct)
		if err != nil {
			panic(err)
		}
		tt := t
		sp.Meta.SputterTimeS = &tt
		sp.Meta.Source = "synthetic"
		steps = append(steps, Step{Index: i, SputterTimeS: t, Spectrum: sp, Source: fmt.Sprintf("synthetic step %d", i)})
	}
	return steps
}

func TestProfileErfInterface(t *testing.T) {
	const t0, s = 300.0, 40.0 // s: true position 300 s, 16-84 % width 80 s
	steps := erfProfile(t0, s, 10, 600, 0.01, 1)
	res, err := Profile(context.Background(), steps, testRefs(2), ProfileOptions{SputterRate: 1.5, Fit: fit.Options{MaxShift: 1}})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Steps) != len(steps) {
		t.Fatalf("%d step results for %d steps", len(res.Steps), len(steps))
	}
	if got := res.Steps[0].Result.Uncertainty; got != fit.Covariance {
		t.Errorf("default uncertainty %v, want covariance", got)
	}
	found := map[string]Interface{}
	for _, x := range res.Interfaces {
		if _, dup := found[x.State]; dup {
			t.Errorf("state %s has more than one interface: %+v", x.State, res.Interfaces)
		}
		found[x.State] = x
	}
	for _, c := range []struct {
		state  string
		rising bool
	}{{"metal", true}, {"oxide", false}} {
		x, ok := found[c.state]
		if !ok {
			t.Fatalf("no interface for %s: %+v", c.state, res.Interfaces)
		}
		t.Logf("%s: position %.2f s (%.3f nm), width %.2f s (%.3f nm)", c.state, x.PositionS, x.DepthNM, x.WidthS, x.WidthNM)
		if x.Rising != c.rising {
			t.Errorf("%s rising = %v", c.state, x.Rising)
		}
		// Tolerances from the issue: position within 3 %, width within 15 %.
		if !scalar.EqualWithinRel(x.PositionS, t0, 0.03) {
			t.Errorf("%s: position %.2f s, want %.0f s +/- 3 %%", c.state, x.PositionS, t0)
		}
		if !scalar.EqualWithinRel(x.WidthS, 2*s, 0.15) {
			t.Errorf("%s: width %.2f s, want %.0f s +/- 15 %%", c.state, x.WidthS, 2*s)
		}
		// Depth is time x rate / 60 exactly.
		if !scalar.EqualWithinAbsOrRel(x.DepthNM, x.PositionS*1.5/60, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(x.WidthNM, x.WidthS*1.5/60, 1e-12, 1e-12) {
			t.Errorf("%s: depth %v nm width %v nm do not follow from the rate", c.state, x.DepthNM, x.WidthNM)
		}
	}
	for _, st := range res.Steps {
		var sum float64
		for _, c := range st.Result.Components {
			sum += c.Fraction
		}
		if !scalar.EqualWithinAbs(sum, 1, 1e-9) {
			t.Fatalf("step %d: fractions sum to %v", st.Index, sum)
		}
		// With both components present the fraction has a positive SD (with
		// one at its bound the other's fraction is exactly 1).
		if c, o := st.Result.Components[1], st.Result.Components[0]; c.FractionSD <= 0 && !c.AtBound && !o.AtBound {
			t.Errorf("step %d: oxide fraction SD %v", st.Index, c.FractionSD)
		}
	}
}

func TestProfileDeterministic(t *testing.T) {
	steps := erfProfile(100, 20, 10, 200, 0.01, 3)
	var base *ProfileResult
	for _, w := range []int{1, 2, 3} {
		res, err := Profile(context.Background(), steps, testRefs(2), ProfileOptions{Workers: w, Bootstrap: true, Fit: fit.Options{MaxShift: 1, Samples: 20}})
		if err != nil {
			t.Fatal(err)
		}
		if base == nil {
			base = res
			continue
		}
		for i := range res.Steps {
			for c := range res.Steps[i].Result.Components {
				a, b := base.Steps[i].Result.Components[c], res.Steps[i].Result.Components[c]
				if a.Fraction != b.Fraction || a.FractionSD != b.FractionSD || a.FractionCI95 != b.FractionCI95 {
					t.Fatalf("workers=%d step %d component %d: %+v, workers=1 %+v", w, i, c, b, a)
				}
			}
		}
	}
	if base.Steps[0].Result.Uncertainty != fit.Bootstrap {
		t.Errorf("uncertainty %v, want bootstrap", base.Steps[0].Result.Uncertainty)
	}
}

func TestCrossingsExact(t *testing.T) {
	// A falling erf sampled every 1 s: linear interpolation is good to
	// about 0.1 s here (second derivative times step^2 / 8).
	var tt, f []float64
	for i := 0; i <= 400; i++ {
		tt = append(tt, float64(i))
		f = append(f, 0.5*math.Erfc((float64(i)-150)/(10*math.Sqrt2)))
	}
	x := Crossings(tt, f)
	if len(x) != 1 || x[0].Rising {
		t.Fatalf("crossings %+v, want one falling", x)
	}
	if !scalar.EqualWithinAbs(x[0].PositionS, 150, 0.05) || !scalar.EqualWithinAbs(x[0].WidthS, 20, 0.2) {
		t.Errorf("position %v s width %v s, want 150 s and 20 s", x[0].PositionS, x[0].WidthS)
	}
	// A buried layer: rises then falls, two interfaces.
	f2 := make([]float64, len(tt))
	for i, v := range tt {
		f2[i] = 0.5*math.Erfc((v-300)/(10*math.Sqrt2)) - 0.5*math.Erfc((v-100)/(10*math.Sqrt2))
	}
	x = Crossings(tt, f2)
	if len(x) != 2 || !x[0].Rising || x[1].Rising || !scalar.EqualWithinAbs(x[0].PositionS, 100, 0.05) || !scalar.EqualWithinAbs(x[1].PositionS, 300, 0.05) {
		t.Errorf("buried layer crossings %+v, want rising at 100 s and falling at 300 s", x)
	}
	// Never reaching 50 %: no interface.
	if x := Crossings([]float64{0, 1, 2}, []float64{0.1, 0.45, 0.2}); len(x) != 0 {
		t.Errorf("crossings %+v, want none", x)
	}
}

// writeProfileDir writes steps as CSV files with a manifest whose lines
// are given (use %s for the file of step i in order).
func writeProfileDir(t *testing.T, steps []Step, manifest string) string {
	t.Helper()
	dir := t.TempDir()
	for i, s := range steps {
		if err := format.WriteFile(filepath.Join(dir, fmt.Sprintf("step%02d.csv", i)), []*lineshape.Spectrum{s.Spectrum}, format.FormatCSV); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, ManifestName), []byte(manifest), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestReadManifest(t *testing.T) {
	steps := erfProfile(20, 5, 10, 30, 0.01, 4)
	dir := writeProfileDir(t, steps, "file,sputter_time_s\n# comment\nstep00.csv,0\n\nstep01.csv, 10\nstep02.csv,20,1\nstep03.csv,30\n")
	got, warn, err := ReadSteps(dir)
	if err != nil || len(warn) != 0 {
		t.Fatal(err, warn)
	}
	if len(got) != 4 || got[2].SputterTimeS != 20 || !strings.Contains(got[2].Source, "line 6") {
		t.Fatalf("steps %+v", got)
	}
	for j, v := range got[1].Spectrum.Y {
		if !scalar.EqualWithinAbsOrRel(v, steps[1].Spectrum.Y[j], 1e-9, 1e-9) {
			t.Fatalf("channel %d: %v, written %v", j, v, steps[1].Spectrum.Y[j])
		}
	}
	res, err := Profile(context.Background(), got, testRefs(2), ProfileOptions{Fit: fit.Options{MaxShift: 1}})
	if err != nil || len(res.Steps) != 4 {
		t.Fatal(err)
	}
}

func TestReadStepsBadInput(t *testing.T) {
	steps := erfProfile(20, 5, 10, 30, 0.01, 4)
	for _, c := range []struct {
		name, manifest, want string
	}{
		{"missing file", "step00.csv,0\nstep01.csv,10\nnothere.csv,20\n", "manifest.csv: line 3: file nothere.csv does not exist"},
		{"not monotonic", "step00.csv,0\nstep01.csv,10\nstep02.csv,5\n", "manifest.csv: line 3: sputter time 5 s does not increase"},
		{"repeated time", "step00.csv,0\nstep01.csv,0\n", "line 2: sputter time 0 s does not increase"},
		{"bad number", "step00.csv,0\nstep01.csv,ten\n", "line 2: sputter time \"ten\" is not a number"},
		{"bad block", "step00.csv,0\nstep01.csv,10,0\n", "line 2: block \"0\""},
		{"no block", "step00.csv,0\nstep01.csv,10,2\n", "line 2"},
		{"fields", "step00.csv\n", "line 1: want file,sputter_time_s"},
		{"one step", "step00.csv,0\n", "at least 2 steps"},
	} {
		dir := writeProfileDir(t, steps, c.manifest)
		_, _, err := ReadSteps(dir)
		var ie *lineshape.InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err = %v, want an InputError containing %q", c.name, err, c.want)
		}
	}
	_, _, err := ReadSteps(t.TempDir())
	if err == nil || !strings.Contains(err.Error(), ManifestName) {
		t.Errorf("no manifest: err = %v", err)
	}
}

func TestReadStepsVAMAS(t *testing.T) {
	steps := erfProfile(20, 5, 10, 40, 0.01, 4)
	specs := make([]*lineshape.Spectrum, len(steps))
	for i, s := range steps {
		specs[i] = s.Spectrum
	}
	p := filepath.Join(t.TempDir(), "profile.vms")
	if err := format.WriteFile(p, specs, format.FormatVAMAS); err != nil {
		t.Fatal(err)
	}
	got, warn, err := ReadSteps(p)
	if err != nil || len(warn) != 0 {
		t.Fatal(err, warn)
	}
	if len(got) != 5 || got[3].SputterTimeS != 30 {
		t.Fatalf("steps %+v", got)
	}
	// Non-monotonic sputter times name the block.
	t2 := 5.0
	specs[2].Meta.SputterTimeS = &t2
	if err := format.WriteFile(p, specs, format.FormatVAMAS); err != nil {
		t.Fatal(err)
	}
	_, _, err = ReadSteps(p)
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || ie.Block != 2 || !strings.Contains(err.Error(), "block 3: sputter time 5 s does not increase") {
		t.Errorf("err = %v, want block 3 named", err)
	}
	// No sputter times at all: numbered steps and a warning (NORM file).
	for _, s := range specs {
		s.Meta.SputterTimeS = nil
	}
	if err := format.WriteFile(p, specs, format.FormatVAMAS); err != nil {
		t.Fatal(err)
	}
	got, warn, err = ReadSteps(p)
	if err != nil || len(warn) != 1 || got[4].SputterTimeS != 4 {
		t.Errorf("NORM file: %v, warnings %v", err, warn)
	}
}

func TestProfileStepOutsideWindow(t *testing.T) {
	steps := erfProfile(50, 10, 10, 100, 0.01, 6)
	short, err := steps[3].Spectrum.Window(380, 420)
	if err != nil {
		t.Fatal(err)
	}
	steps[3].Spectrum = short
	_, err = Profile(context.Background(), steps, testRefs(2), ProfileOptions{Fit: fit.Options{MaxShift: 1}})
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "step 3 (synthetic step 3)") || !strings.Contains(err.Error(), "shorter than the fit window") {
		t.Errorf("err = %v, want an InputError naming step 3", err)
	}
}
