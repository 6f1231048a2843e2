package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// Invented direct-mode test lineshapes (not measurements).
func seriesGauss(e, e0, s float64) float64 { x := (e - e0) / s; return math.Exp(-0.5 * x * x) }
func seriesMetal(e float64) float64        { return seriesGauss(e, 380, 2) + 0.35*seriesGauss(e, 395, 3) }
func seriesOxide(e float64) float64 {
	return 0.9*seriesGauss(e, 386, 2.5) + 0.3*seriesGauss(e, 372, 3.5)
}

// seriesSpectrum returns a uniform direct spectrum of f on [lo, lo+step*(n-1)]
// with Gaussian noise of SD sigma from a generator seeded with seed.
func seriesSpectrum(lo, step float64, n int, f func(float64) float64, sigma float64, seed int) *lineshape.Spectrum {
	rng := rand.New(rand.NewPCG(uint64(seed), 3))
	y := make([]float64, n)
	for i := range y {
		y[i] = f(lo+step*float64(i)) + sigma*rng.NormFloat64()
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Direct)
	if err != nil {
		panic(err)
	}
	return s
}

// seriesRefFiles writes metal.csv and oxide.csv references into dir.
func seriesRefFiles(t *testing.T, dir string) []string {
	t.Helper()
	var args []string
	for _, r := range []struct {
		name string
		f    func(float64) float64
	}{{"metal", seriesMetal}, {"oxide", seriesOxide}} {
		p := filepath.Join(dir, r.name+".csv")
		if err := format.WriteFile(p, []*lineshape.Spectrum{seriesSpectrum(300, 0.25, 801, r.f, 0, 0)}, format.FormatCSV); err != nil {
			t.Fatal(err)
		}
		args = append(args, "--ref-file", p+":"+r.name)
	}
	return args
}

// profileFixture writes a 13-step oxide-over-metal profile (interface at
// 60 s, erf SD 15 s) as CSV files with a manifest and returns the folder
// and the --ref-file arguments.
func profileFixture(t *testing.T, manifest func(i int, file string, t float64) string) (string, []string) {
	t.Helper()
	dir := t.TempDir()
	var m strings.Builder
	m.WriteString("file,sputter_time_s\n")
	for i := 0; i <= 12; i++ {
		ts := 10 * float64(i)
		fox := 0.5 * math.Erfc((ts-60)/(15*math.Sqrt2))
		f := func(e float64) float64 { return 2*(1-fox)*seriesMetal(e) + 2*fox*seriesOxide(e) + 0.3 }
		name := fmt.Sprintf("s%02d.csv", i)
		if err := format.WriteFile(filepath.Join(dir, name), []*lineshape.Spectrum{seriesSpectrum(320, 0.5, 300, f, 0.005, i+1)}, format.FormatCSV); err != nil {
			t.Fatal(err)
		}
		line := fmt.Sprintf("%s,%g\n", name, ts)
		if manifest != nil {
			line = manifest(i, name, ts)
		}
		m.WriteString(line)
	}
	if err := os.WriteFile(filepath.Join(dir, "manifest.csv"), []byte(m.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	refDir := t.TempDir()
	return dir, seriesRefFiles(t, refDir)
}

func TestProfileCLIJSON(t *testing.T) {
	dir, refArgs := profileFixture(t, nil)
	out := t.TempDir()
	csvPath, plotPath, reportPath := filepath.Join(out, "p.csv"), filepath.Join(out, "p.svg"), filepath.Join(out, "p.html")
	args := append([]string{"profile", dir, "--json", "--sputter-rate", "3", "--max-shift", "1", "--csv", csvPath, "--plot", plotPath, "--report", reportPath}, refArgs...)
	code, stdout, stderr := runApp(t, nil, args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Schema string `json:"schema"`
		Steps  []struct {
			Index        int      `json:"index"`
			SputterTimeS float64  `json:"sputter_time_s"`
			DepthNM      *float64 `json:"depth_nm"`
			Components   []struct {
				State      string  `json:"state"`
				Fraction   float64 `json:"fraction"`
				FractionSD float64 `json:"fraction_sd"`
			} `json:"components"`
			Quality struct {
				Points int `json:"points"`
			} `json:"quality"`
		} `json:"steps"`
		Interfaces []struct {
			State     string   `json:"state"`
			PositionS float64  `json:"position_s"`
			DepthNM   *float64 `json:"depth_nm"`
			WidthNM   *float64 `json:"width_nm"`
			WidthS    *float64 `json:"width_s"`
		} `json:"interfaces"`
		Settings struct {
			Uncertainty string `json:"uncertainty"`
		} `json:"settings"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	if doc.Schema != "statemix.profile/v1" || len(doc.Steps) != 13 || doc.Settings.Uncertainty != "covariance" {
		t.Fatalf("schema %q, %d steps, uncertainty %q", doc.Schema, len(doc.Steps), doc.Settings.Uncertainty)
	}
	s5 := doc.Steps[5]
	if s5.DepthNM == nil || !scalar.EqualWithinAbsOrRel(*s5.DepthNM, 50*3.0/60, 1e-12, 1e-12) || s5.Quality.Points == 0 {
		t.Errorf("step 5: depth %v, points %d", s5.DepthNM, s5.Quality.Points)
	}
	if len(doc.Interfaces) != 2 {
		t.Fatalf("interfaces %+v, want metal and oxide", doc.Interfaces)
	}
	for _, x := range doc.Interfaces {
		// 10 s steps over an interface of 16-84 % width 30 s: linear
		// interpolation puts the 50 % point within 3 % of 60 s and the
		// width within 15 % of 30 s (the tolerances).
		if !scalar.EqualWithinRel(x.PositionS, 60, 0.03) || x.WidthS == nil || !scalar.EqualWithinRel(*x.WidthS, 30, 0.15) {
			t.Errorf("%s: position %v s, width %v s", x.State, x.PositionS, x.WidthS)
		}
		if x.DepthNM == nil || x.WidthNM == nil || !scalar.EqualWithinAbsOrRel(*x.DepthNM, x.PositionS*3/60, 1e-12, 1e-12) {
			t.Errorf("%s: depth %v nm, width %v nm", x.State, x.DepthNM, x.WidthNM)
		}
	}
	b, err := os.ReadFile(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) != 14 || !strings.HasPrefix(lines[0], "index,sputter_time_s,depth_nm,metal_fraction,metal_fraction_sd") {
		t.Errorf("csv has %d lines, header %q", len(lines), lines[0])
	}
	for _, p := range []string{plotPath, reportPath} {
		b, err := os.ReadFile(p)
		if err != nil || !strings.Contains(string(b), "<svg") {
			t.Errorf("%s: %v, %d bytes without <svg", p, err, len(b))
		}
	}
	if b, _ := os.ReadFile(reportPath); !strings.Contains(string(b), "Interfaces") {
		t.Errorf("report lacks the interfaces section")
	}
}

func TestProfileCLIHuman(t *testing.T) {
	dir, refArgs := profileFixture(t, nil)
	code, stdout, stderr := runApp(t, nil, append([]string{"profile", dir, "--max-shift", "1"}, refArgs...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, s := range []string{"13 steps", "metal (%)", "oxide (%)", "interfaces (50 % crossing", "falls", "rises"} {
		if !strings.Contains(stdout, s) {
			t.Errorf("output lacks %q:\n%s", s, stdout)
		}
	}
	if strings.Contains(stdout, "depth (nm)") {
		t.Errorf("depth column without --sputter-rate:\n%s", stdout)
	}
}

func TestProfileCLIBadInput(t *testing.T) {
	for _, c := range []struct {
		name     string
		manifest func(i int, file string, t float64) string
		want     string
	}{
		{"missing file", func(i int, f string, t float64) string {
			if i == 4 {
				f = "gone.csv"
			}
			return fmt.Sprintf("%s,%g\n", f, t)
		}, "manifest.csv: line 6: file gone.csv does not exist"},
		{"not monotonic", func(i int, f string, t float64) string {
			if i == 7 {
				t = 5
			}
			return fmt.Sprintf("%s,%g\n", f, t)
		}, "manifest.csv: line 9: sputter time 5 s does not increase"},
	} {
		dir, refArgs := profileFixture(t, c.manifest)
		code, _, stderr := runApp(t, nil, append([]string{"profile", dir}, refArgs...)...)
		if code != exitBadInput || !strings.Contains(stderr, c.want) {
			t.Errorf("%s: exit %d, stderr %q, want 3 and %q", c.name, code, stderr, c.want)
		}
	}
	dir, refArgs := profileFixture(t, nil)
	code, _, stderr := runApp(t, nil, append([]string{"profile", dir, "--sputter-rate", "-1"}, refArgs...)...)
	if code != exitUsage {
		t.Errorf("negative rate: exit %d (%s), want 2", code, stderr)
	}
}

func TestProfileCLIInterrupted(t *testing.T) {
	dir, refArgs := profileFixture(t, nil)
	csvPath := filepath.Join(t.TempDir(), "p.csv")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	var so, se bytes.Buffer
	app := &App{In: strings.NewReader(""), Out: &so, Err: &se, Getenv: func(string) string { return "" }, Ctx: ctx}
	code := app.Execute(append([]string{"profile", dir, "--csv", csvPath}, refArgs...))
	if code != exitFailure || !strings.Contains(se.String(), "interrupted: nothing written") {
		t.Errorf("exit %d, stderr %q", code, se.String())
	}
	if _, err := os.Stat(csvPath); !os.IsNotExist(err) {
		t.Errorf("csv written by an interrupted run")
	}
}
