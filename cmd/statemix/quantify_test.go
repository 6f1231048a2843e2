package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/lineshape/format"
	"statemix/lineshape/quant"
	"statemix/lineshape/series"
)

// quantProfileFixture writes an invented oxide-on-metal profile of 9 steps
// (10 s apart, the oxide fraction falling as an erf around 40 s) and the
// two references as statemix JSON files naming element (Al), state and
// compound (Al, Al2O3). Step 0 is oxide minus a little metal, so the fit
// pins the metal (substrate) coefficient at zero: no substrate signal.
func quantProfileFixture(t *testing.T) (dir string, refArgs []string) {
	t.Helper()
	dir = t.TempDir()
	refDir := t.TempDir()
	for _, r := range []struct {
		state, compound string
		f               func(float64) float64
	}{{"metal", "Al", seriesMetal}, {"oxide", "Al2O3", seriesOxide}} {
		s := seriesSpectrum(300, 0.25, 801, r.f, 0, 0)
		s.Meta.Extra = map[string]string{"element": "Al", "state": r.state, "compound": r.compound}
		p := filepath.Join(refDir, r.state+".json")
		if err := format.WriteFile(p, []*lineshape.Spectrum{s}, format.FormatJSON); err != nil {
			t.Fatal(err)
		}
		refArgs = append(refArgs, "--ref-file", p)
	}
	var m strings.Builder
	m.WriteString("file,sputter_time_s\n")
	for i := range 9 {
		ts := 10 * float64(i)
		fox := 0.5 * math.Erfc((ts-40)/(12*math.Sqrt2))
		fm := 1 - fox
		if i == 0 {
			fox, fm = 1, -0.05
		}
		f := func(e float64) float64 { return 2*fm*seriesMetal(e) + 2*fox*seriesOxide(e) + 0.3 }
		name := fmt.Sprintf("s%02d.csv", i)
		if err := format.WriteFile(filepath.Join(dir, name), []*lineshape.Spectrum{seriesSpectrum(320, 0.5, 300, f, 0.005, i+1)}, format.FormatCSV); err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(&m, "%s,%g\n", name, ts)
	}
	if err := os.WriteFile(filepath.Join(dir, "manifest.csv"), []byte(m.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, refArgs
}

// directProfile fits the fixture in-process with the options profile
// uses for "--max-shift 1" (everything else at its default), without the
// command's quantification code.
func directProfile(t *testing.T, dir string, refArgs []string) *series.ProfileResult {
	t.Helper()
	opts := &fitOptions{Shift: "common", MaxShift: 1, Background: 1, Normalize: "none", Uncertainty: "covariance", Samples: 300, Seed: 1}
	if err := parseFitFlags(opts); err != nil {
		t.Fatal(err)
	}
	steps, _, err := series.ReadSteps(dir)
	if err != nil {
		t.Fatal(err)
	}
	var refs []fit.Reference
	for i := 1; i < len(refArgs); i += 2 {
		r, _, err := readRefFile(refArgs[i])
		if err != nil {
			t.Fatal(err)
		}
		refs = append(refs, r)
	}
	res, err := series.Profile(context.Background(), steps, refs, series.ProfileOptions{Fit: opts.fit})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// TestProfileQuantMatchesQuant: profile --atomic --overlayer gives, for
// every step, the atomic fractions and the thickness that package quant
// computes from that step's coefficients and covariance directly
// (StandardFactor, AtomicFractions, AtomicDensity, TPP2M,
// Overlayer.ThicknessFromCoefficients; the thickness also against
// L_ox sin(theta) ln(1 + c_ox/c_m) written out, the Strohmeier equation with
// k = 1). The fits are the same deterministic computations and JSON
// round-trips float64 exactly, so the tolerance is 1e-9 relative (room for
// summation order only). Step 0 has no substrate signal: null thickness and
// the model's warning instead of a number.
func TestProfileQuantMatchesQuant(t *testing.T) {
	dir, refArgs := quantProfileFixture(t)
	out := t.TempDir()
	csvPath := filepath.Join(out, "p.csv")
	args := append([]string{"--json", "profile", dir, "--max-shift", "1", "--atomic", "--overlayer", "oxide:metal", "--take-off", "60", "--csv", csvPath}, refArgs...)
	code, stdout, stderr := runApp(t, nil, args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		WindowEV [2]float64 `json:"window_ev"`
		Steps    []struct {
			Index      int `json:"index"`
			Components []struct {
				State       string  `json:"state"`
				Coefficient float64 `json:"coefficient"`
			} `json:"components"`
			Atomic []struct {
				State    string  `json:"state"`
				Compound string  `json:"compound"`
				Fraction float64 `json:"atomic_fraction"`
				SD       float64 `json:"atomic_fraction_sd"`
			} `json:"atomic"`
			Overlayer *struct {
				ThicknessNM *float64 `json:"thickness_nm"`
				SDNM        *float64 `json:"thickness_sd_nm"`
				TakeOffDeg  float64  `json:"take_off_deg"`
				Warnings    []string `json:"warnings"`
			} `json:"overlayer"`
		} `json:"steps"`
		Assumptions []string `json:"assumptions"`
		Warnings    []string `json:"warnings"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	if len(doc.Steps) != 9 || len(doc.Assumptions) != 2 {
		t.Fatalf("%d steps, assumptions %q", len(doc.Steps), doc.Assumptions)
	}
	res := directProfile(t, dir, refArgs)
	energy := (res.Steps[0].Result.Window[0] + res.Steps[0].Result.Window[1]) / 2
	if !scalar.EqualWithinAbsOrRel(energy, (doc.WindowEV[0]+doc.WindowEV[1])/2, 1e-12, 1e-12) {
		t.Fatalf("window %v, direct fit's %v", doc.WindowEV, res.Steps[0].Result.Window)
	}
	al, _ := quant.LookupMaterial("Al")
	ox, _ := quant.LookupMaterial("Al2O3")
	mats := []quant.Material{al, ox} // component order: metal, oxide
	factors := make([]float64, 2)
	for i, m := range mats {
		f, _, err := quant.StandardFactor(m, "Al", energy, 0)
		if err != nil {
			t.Fatal(err)
		}
		factors[i] = f
	}
	nm, _ := quant.AtomicDensity(al, "Al")
	no, _ := quant.AtomicDensity(ox, "Al")
	lm, _ := quant.TPP2M(al, energy)
	lo, _ := quant.TPP2M(ox, energy)
	model := quant.Overlayer{NOverlayer: no, NSubstrate: nm, LambdaOverlayer: lo.IMFP, LambdaSubstrate: lm.IMFP, TakeOffDeg: 60, SensitivityRatio: 1}
	const tol = 1e-9
	close := func(a, b float64) bool { return scalar.EqualWithinAbsOrRel(a, b, tol, tol) }
	for i, st := range doc.Steps {
		r := res.Steps[i].Result
		if r.Components[0].State != "metal" || st.Components[1].State != "oxide" {
			t.Fatalf("step %d: component order %+v", i, st.Components)
		}
		c := []float64{r.Components[0].Coefficient, r.Components[1].Coefficient}
		if !close(c[0], st.Components[0].Coefficient) || !close(c[1], st.Components[1].Coefficient) {
			t.Fatalf("step %d: coefficients %v, direct %v", i, st.Components, c)
		}
		cov := r.CoefficientCovariance()
		x, sd, err := quant.AtomicFractions(c, cov, factors)
		if err != nil {
			t.Fatal(err)
		}
		if len(st.Atomic) != 2 || st.Atomic[1].Compound != "Al2O3" {
			t.Fatalf("step %d: atomic %+v", i, st.Atomic)
		}
		for k := range 2 {
			if !close(st.Atomic[k].Fraction, x[k]) || !close(st.Atomic[k].SD, sd[k]) {
				t.Errorf("step %d %s: atomic %g ± %g, quant %g ± %g", i, st.Atomic[k].State, st.Atomic[k].Fraction, st.Atomic[k].SD, x[k], sd[k])
			}
		}
		ov := st.Overlayer
		if ov == nil || ov.TakeOffDeg != 60 {
			t.Fatalf("step %d: overlayer %+v", i, ov)
		}
		if i == 0 {
			if !r.Components[0].AtBound {
				t.Fatalf("step 0: the metal coefficient %g is not at its bound; the fixture should pin it", c[0])
			}
			if ov.ThicknessNM != nil || len(ov.Warnings) != 1 || !strings.Contains(ov.Warnings[0], "overlayer-only") {
				t.Errorf("step 0: thickness %v, warnings %q; want null and the no-substrate warning", ov.ThicknessNM, ov.Warnings)
			}
			continue
		}
		th, err := model.ThicknessFromCoefficients(quant.Coefficients{Overlayer: c[1], Substrate: c[0],
			VarOverlayer: cov.At(1, 1), VarSubstrate: cov.At(0, 0), Covariance: cov.At(0, 1),
			OverlayerAtBound: r.Components[1].AtBound})
		if err != nil {
			t.Fatalf("step %d: %v", i, err)
		}
		byHand := lo.IMFP * math.Sin(math.Pi/3) * math.Log1p(c[1]/c[0])
		if r.Components[1].AtBound {
			// Substrate only: thickness 0, no symmetric SD (null), and
			// the model's substrate-only warning.
			if ov.ThicknessNM == nil || *ov.ThicknessNM != 0 || ov.SDNM != nil || !math.IsNaN(th.SD) || len(ov.Warnings) != 1 || !strings.Contains(ov.Warnings[0], "substrate-only") {
				t.Errorf("step %d (oxide at bound): thickness %v ± %v, warnings %q", i, ov.ThicknessNM, ov.SDNM, ov.Warnings)
			}
			continue
		}
		if ov.ThicknessNM == nil || ov.SDNM == nil || !close(*ov.ThicknessNM, th.Thickness) || !close(th.Thickness, byHand) || !close(*ov.SDNM, th.SD) {
			t.Errorf("step %d: thickness %v ± %v, quant %g ± %g, by hand %g", i, ov.ThicknessNM, ov.SDNM, th.Thickness, th.SD, byHand)
		}
	}
	if len(doc.Warnings) == 0 || !strings.Contains(strings.Join(doc.Warnings, "\n"), "step 0 (") {
		t.Errorf("warnings %q lack step 0's", doc.Warnings)
	}
	b, err := os.ReadFile(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if !strings.HasSuffix(lines[0], ",chi2_reduced,metal_atomic_fraction,metal_atomic_fraction_sd,oxide_atomic_fraction,oxide_atomic_fraction_sd,thickness_nm,thickness_sd_nm") {
		t.Errorf("csv header %q", lines[0])
	}
	if !strings.HasSuffix(lines[1], ",,") || strings.HasSuffix(lines[2], ",") {
		t.Errorf("csv thickness cells: step 0 %q (want empty), step 1 %q (want numbers)", lines[1], lines[2])
	}
}

// TestProfileQuantHuman: the table gains the atomic and thickness
// columns, the assumptions are printed once, and step 0 shows "-".
func TestProfileQuantHuman(t *testing.T) {
	dir, refArgs := quantProfileFixture(t)
	report := filepath.Join(t.TempDir(), "p.html")
	code, stdout, stderr := runApp(t, nil, append([]string{"profile", dir, "--max-shift", "1", "--atomic", "--overlayer", "oxide:metal", "--report", report}, refArgs...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, s := range []string{"metal at. (%)", "oxide at. (%)", "thickness (nm)"} {
		if !strings.Contains(stdout, s) {
			t.Errorf("table lacks %q:\n%s", s, stdout)
		}
	}
	if n := strings.Count(stdout, "homogeneous within the analysed depth"); n != 1 {
		t.Errorf("atomic assumptions printed %d times, want once:\n%s", n, stdout)
	}
	if n := strings.Count(stdout, "flat uniform overlayer"); n != 1 {
		t.Errorf("overlayer assumptions printed %d times, want once", n)
	}
	var row0 string
	for _, l := range strings.Split(stdout, "\n") {
		if strings.HasPrefix(l, "0 ") {
			row0 = l
		}
	}
	if !strings.HasSuffix(strings.TrimSpace(row0), " -") {
		t.Errorf("step 0 row %q: want - for the thickness", row0)
	}
	if !strings.Contains(stderr, "overlayer-only") {
		t.Errorf("stderr lacks step 0's warning: %s", stderr)
	}
	b, _ := os.ReadFile(report)
	if !strings.Contains(string(b), "Quantification") || !strings.Contains(string(b), "thickness (nm)") {
		t.Errorf("report lacks the quantification section or the thickness column")
	}
	// --take-off alone is a usage error, as in fit; so is a state no
	// reference has.
	for _, extra := range [][]string{{"--take-off", "45"}, {"--overlayer", "nitride:metal"}} {
		if code, _, errs := runApp(t, nil, append(append([]string{"profile", dir}, refArgs...), extra...)...); code != exitUsage {
			t.Errorf("%v: exit %d (%s), want 2", extra, code, errs)
		}
	}
}
