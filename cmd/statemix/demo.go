package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"statemix/lineshape/fit"
)

// demoOptions holds the flag values of statemix demo.
type demoOptions struct {
	Dir string
}

func newDemoCmd(app *App) *cobra.Command {
	opts := &demoOptions{}
	cmd := &cobra.Command{
		Use:   "demo [--dir DIR]",
		Short: "Run the whole workflow on an invented, fully synthetic scenario",
		Long: `Run the whole workflow on an invented, fully synthetic scenario.

demo makes up a process lab that asks whether the titanium nitride diffusion
barrier of an annealed wafer oxidised, and how thick the native oxide on an
aluminium bond pad is. It synthesises the lab's reference standards (Ti foil,
TiN and TiO2 films, Al foil, an Al2O3 film) and its unknowns from model
lineshapes (asymmetric Auger lines with plasmon and loss structure on a
power-law secondary-electron background, counting noise, lock-in detection),
writes them as ISO 14976 and CSV files into DIR, and then runs the same
statemix commands a user would type: library init and add, search --like,
fit --suggest, fit --overlayer with an HTML report and a figure, a depth
profile and a fraction map. It prints each command with its output, then
what statemix found next to the truth the demo planted.

DIR defaults to a new temporary folder, whose name is printed; a given DIR
must not already hold a demo library. All data are synthetic; the same seeds
give the same files and results on every run.`,
		Example: `  # Run the demo in a new temporary folder
  statemix demo

  # Keep the files in ./demo to open the reports and figures afterwards
  statemix demo --dir demo`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			_, err := runDemo(app, opts)
			return err
		},
	}
	cmd.Flags().StringVar(&opts.Dir, "dir", "", "write the demo's files into `DIR` (default a new temporary folder)")
	_ = cmd.MarkFlagDirname("dir")
	return cmd
}

// demoFraction is one state's fraction found by a fit, next to the
// planted one.
type demoFraction struct {
	State    string     `json:"state"`
	Name     string     `json:"name"`
	Fraction float64    `json:"fraction"`
	SD       float64    `json:"fraction_sd"`
	CI95     [2]float64 `json:"fraction_ci95"`
	AtBound  bool       `json:"at_bound"`
	Truth    float64    `json:"truth"`
}

// demoInterface is an interface found in the depth profile.
type demoInterface struct {
	State   string  `json:"state"`
	Rising  bool    `json:"rising"`
	DepthNM float64 `json:"depth_nm"`
	WidthNM float64 `json:"width_nm"`
}

// demoSummary is what the demo found, built from the commands' JSON
// documents; the closing text of the demo is printed from it.
type demoSummary struct {
	Schema  string         `json:"schema"` // statemix.demo/v1
	Dir     string         `json:"dir"`
	Library string         `json:"library"`
	Barrier []demoFraction `json:"barrier"`
	Pad     []demoFraction `json:"pad"`
	// PadThicknessNM is the oxide thickness on pad P3 from fit --overlayer.
	PadThicknessNM   float64            `json:"pad_thickness_nm"`
	PadThicknessSDNM float64            `json:"pad_thickness_sd_nm"`
	Interfaces       []demoInterface    `json:"interfaces"`
	MapMean          map[string]float64 `json:"map_mean"`
	Outputs          []string           `json:"outputs"` // figures, reports, maps (relative to Dir)
	Seconds          float64            `json:"seconds"`
	Truth            *demoTruth         `json:"truth"`
}

// demoRun runs statemix commands for the demo, in-process, against the
// demo's library.
type demoRun struct {
	app   *App
	dir   string
	lib   string
	extra []string  // --quiet / --no-progress passed on
	out   io.Writer // where the narrative goes
}

// exec runs the command line args (paths relative to the demo folder are
// made absolute by abs) and returns its stdout. With show, it first prints
// the command as a user would type it in the demo folder and then the
// command's output, indented, with the demo folder's prefix removed so that
// it reads as it would when run there.
func (d *demoRun) exec(show bool, args ...string) (string, error) {
	var out, errb bytes.Buffer
	env := func(k string) string {
		if k == "STATEMIX_LIBRARY" {
			return d.lib
		}
		return d.app.Getenv(k)
	}
	sub := &App{In: d.app.In, Out: &out, Err: &errb, Getenv: env, Now: d.app.Now, Ctx: d.app.Ctx}
	full := make([]string, 0, len(args)+len(d.extra))
	for _, a := range args {
		full = append(full, d.abs(a))
	}
	full = append(full, d.extra...)
	w := d.out
	if show {
		q := make([]string, len(args))
		for i, a := range args {
			q[i] = shellQuote(a)
		}
		fmt.Fprintf(w, "\n$ statemix %s\n", strings.Join(q, " "))
	}
	code := sub.Execute(full)
	text := d.relative(out.String())
	if show {
		// Messages and warnings first (the commands write them to stderr
		// before their results), then the results.
		indent(d.app.Err, d.relative(errb.String()))
		indent(w, text)
	}
	if code != exitOK {
		if !show {
			indent(d.app.Err, d.relative(errb.String()))
		}
		return text, fmt.Errorf("demo: statemix %s failed (exit status %d)", strings.Join(args, " "), code)
	}
	return text, nil
}

// relative removes the demo folder's prefix from paths in text.
func (d *demoRun) relative(text string) string {
	return strings.ReplaceAll(text, d.dir+string(os.PathSeparator), "")
}

// indent writes text to w with every non-blank line indented by two spaces.
func indent(w io.Writer, text string) {
	for _, line := range strings.SplitAfter(text, "\n") {
		switch {
		case line == "":
		case strings.TrimSpace(line) == "":
			fmt.Fprint(w, "\n")
		default:
			fmt.Fprint(w, "  "+line)
		}
	}
}

// abs makes a demo-relative file argument absolute; flags and other values
// pass unchanged. A relative argument is a file of the demo when its first
// element is one of the demo's folders.
func (d *demoRun) abs(a string) string {
	for _, sub := range []string{"standards/", "unknowns/", "profile/", "map/", "reports/"} {
		if strings.HasPrefix(a, sub) {
			return filepath.Join(d.dir, a)
		}
	}
	return a
}

// jsonOf runs args with --json, unseen, and decodes the document into v.
func (d *demoRun) jsonOf(v any, args ...string) error {
	out, err := d.exec(false, append(args, "--json")...)
	if err != nil {
		return err
	}
	if err := json.Unmarshal([]byte(out), v); err != nil {
		return fmt.Errorf("demo: statemix %s --json: %w", args[0], err)
	}
	return nil
}

// runDemo synthesises the scenario and runs the workflow on it, printing
// what a user would read. It returns the summary the closing text is made
// from.
func runDemo(app *App, opts *demoOptions) (*demoSummary, error) {
	start := time.Now()
	dir := opts.Dir
	if dir == "" {
		d, err := os.MkdirTemp("", "statemix-demo-")
		if err != nil {
			return nil, fmt.Errorf("demo: %w", err)
		}
		dir = d
	} else {
		if _, err := os.Stat(filepath.Join(dir, "library")); err == nil {
			return nil, usageErrorf("demo: %s already holds a demo library: give a new or empty folder with --dir", dir)
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("demo: %w", err)
		}
	}
	dir, err := filepath.Abs(dir)
	if err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	d := &demoRun{app: app, dir: dir, lib: filepath.Join(dir, "library")}
	if app.Quiet {
		d.extra = append(d.extra, "--quiet")
	}
	if app.NoProgress {
		d.extra = append(d.extra, "--no-progress")
	}
	// With --json the narrative is left out and the summary is printed as
	// a statemix.demo/v1 document at the end.
	w := app.Out
	if app.JSON {
		w = io.Discard
	}
	d.out = w
	fmt.Fprint(w, demoIntro)
	fmt.Fprintf(w, "\nWorking folder: %s\n", dir)

	bar := newProgress(app, 1, "synthesising spectra")
	truth, files, err := synthesizeDemo(dir, func(done, total int) {
		if bar != nil {
			bar.bar.ChangeMax(total)
		}
		bar.Set(done, total)
	})
	bar.Finish()
	if err != nil {
		return nil, err
	}
	if err := os.MkdirAll(filepath.Join(dir, "reports"), 0o755); err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	fmt.Fprintln(w, "Synthetic files written there:")
	for _, l := range [][2]string{
		{files.TiFoil + ", " + files.TiN + ",", ""},
		{files.TiO2, "Ti LMM standards (ISO 14976, derivative)"},
		{files.AlFoil + ", " + files.Al2O3, "Al KLL standards (CSV, direct)"},
		{files.Barrier + ", " + files.Pad, "the barrier and pad spots (ISO 14976)"},
		{files.Profile, fmt.Sprintf("a %d-step depth profile (ISO 14976)", truth.ProfileSteps)},
		{files.Map, fmt.Sprintf("a %d x %d spectrum image (.npy and .json sidecar)", truth.MapW, truth.MapH)},
	} {
		fmt.Fprintf(w, "  %-48s %s\n", l[0], l[1])
	}
	fmt.Fprintf(w, "\nThe commands below run in that folder with STATEMIX_LIBRARY=%s:\n", d.lib)

	sum := &demoSummary{Schema: "statemix.demo/v1", Dir: dir, Library: d.lib, Truth: truth}

	// 1. The library of standards.
	if _, err := d.exec(true, "library", "init"); err != nil {
		return nil, err
	}
	adds := [][]string{
		{files.TiFoil, "--element", "Ti", "--transition", "L3M23M45", "--state", "metal", "--name", "Ti foil", "--compound", "Ti", "--tag", "lab=northgate"},
		{files.TiN, "--element", "Ti", "--transition", "L3M23M45", "--state", "nitride", "--name", "TiN film", "--compound", "TiN", "--tag", "lab=northgate", "--note", "diffusion barrier standard, 100 nm sputtered film"},
		{files.TiO2, "--element", "Ti", "--transition", "L3M23M45", "--state", "oxide", "--name", "TiO2 film", "--compound", "TiO2", "--tag", "lab=northgate"},
		{files.AlFoil, "--mode", "direct", "--element", "Al", "--transition", "KL23L23", "--state", "metal", "--name", "Al foil", "--compound", "Al", "--tag", "lab=northgate"},
		{files.Al2O3, "--mode", "direct", "--element", "Al", "--transition", "KL23L23", "--state", "oxide", "--name", "Al2O3 film", "--compound", "Al2O3", "--tag", "lab=northgate"},
	}
	for _, a := range adds {
		if _, err := d.exec(true, append([]string{"library", "add"}, a...)...); err != nil {
			return nil, err
		}
	}
	if _, err := d.exec(true, "library", "list"); err != nil {
		return nil, err
	}

	// 2. Which standards is the barrier spot like?
	if _, err := d.exec(true, "search", "--like", files.Barrier, "--top", "5"); err != nil {
		return nil, err
	}

	// 3. Fit the barrier with the references statemix suggests.
	barrierArgs := []string{"fit", files.Barrier, "--suggest=3"}
	var bdoc fitDocument
	if _, err := d.exec(true, barrierArgs...); err != nil {
		return nil, err
	}
	if err := d.jsonOf(&bdoc, barrierArgs...); err != nil {
		return nil, err
	}
	sum.Barrier = demoFractions(bdoc.Components, truth.Barrier)

	// 4. The pad: fractions and the oxide thickness, with a report.
	padArgs := []string{"fit", files.Pad, "--refs", "Al foil,Al2O3 film", "--overlayer", "oxide:metal",
		"--plot", "reports/pad-P3.svg", "--report", "reports/pad-P3.html"}
	if _, err := d.exec(true, padArgs...); err != nil {
		return nil, err
	}
	var pdoc fitDocument
	if err := d.jsonOf(&pdoc, padArgs[:6]...); err != nil {
		return nil, err
	}
	sum.Pad = demoFractions(pdoc.Components, truth.Pad)
	if pdoc.Overlayer == nil {
		return nil, errors.New("demo: fit --overlayer gave no thickness")
	}
	sum.PadThicknessNM, sum.PadThicknessSDNM = pdoc.Overlayer.ThicknessNM, pdoc.Overlayer.SDNM
	sum.Outputs = append(sum.Outputs, "reports/pad-P3.html", "reports/pad-P3.svg")

	// 5. The depth profile through the oxidised barrier.
	rate := fmt.Sprint(truth.SputterRateNMPerMin)
	profArgs := []string{"profile", files.Profile, "--refs", "TiN film,TiO2 film", "--sputter-rate", rate,
		"--csv", "reports/barrier-depth.csv", "--plot", "reports/barrier-depth.svg", "--report", "reports/barrier-depth.html"}
	if _, err := d.exec(true, profArgs...); err != nil {
		return nil, err
	}
	var prof profileDocument
	if err := d.jsonOf(&prof, profArgs[:6]...); err != nil {
		return nil, err
	}
	for _, x := range prof.Interfaces {
		it := demoInterface{State: x.State, Rising: x.Rising}
		if x.DepthNM != nil {
			it.DepthNM = *x.DepthNM
		}
		if x.WidthNM != nil {
			it.WidthNM = *x.WidthNM
		}
		sum.Interfaces = append(sum.Interfaces, it)
	}
	sum.Outputs = append(sum.Outputs, "reports/barrier-depth.html", "reports/barrier-depth.svg", "reports/barrier-depth.csv")

	// 6. The fraction map of the pad.
	mapOut := "map/pad-P7-maps"
	if _, err := d.exec(true, "map", files.Map, "--refs", "Al foil,Al2O3 film", "--modulation", fmt.Sprint(demoAlModEV), "--out", mapOut); err != nil {
		return nil, err
	}
	var mdoc struct {
		Components []struct {
			State        string  `json:"state"`
			MeanFraction float64 `json:"mean_fraction"`
			File         string  `json:"file"`
		} `json:"components"`
	}
	b, err := os.ReadFile(filepath.Join(dir, mapOut, "map.json"))
	if err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	if err := json.Unmarshal(b, &mdoc); err != nil {
		return nil, fmt.Errorf("demo: %s/map.json: %w", mapOut, err)
	}
	sum.MapMean = map[string]float64{}
	for _, c := range mdoc.Components {
		sum.MapMean[c.State] = c.MeanFraction
		sum.Outputs = append(sum.Outputs, filepath.Join(mapOut, strings.TrimSuffix(c.File, ".npy")+".png"))
	}

	sum.Seconds = time.Since(start).Seconds()
	if app.JSON {
		return sum, writeJSON(app.Out, sum)
	}
	writeDemoSummary(w, sum)
	return sum, nil
}

// demoFractions pairs fitted components with the planted fractions.
func demoFractions(cs []fit.Component, truth map[string]float64) []demoFraction {
	out := make([]demoFraction, 0, len(cs))
	for _, c := range cs {
		out = append(out, demoFraction{State: c.State, Name: c.Name, Fraction: c.Fraction, SD: c.FractionSD,
			CI95: c.FractionCI95, AtBound: c.AtBound, Truth: truth[c.State]})
	}
	return out
}

const demoIntro = `statemix demo: a worked example on INVENTED, FULLY SYNTHETIC data.

The Northgate process lab (invented) annealed wafer NG-0412 at 450 °C and asks:
  1. Did the TiN diffusion barrier on die 7 oxidise, and how deep does the oxide go?
  2. How thick is the native oxide on aluminium bond pad P3, and where has the
     cleaned pad P7 corroded?
The demo makes up the lab's standards and measurements from model lineshapes
(asymmetric Auger lines with plasmon and loss structure, a power-law
secondary-electron background, counting noise, lock-in detection) with fixed
seeds, then runs statemix on them exactly as you would on your own files.
`

// writeDemoSummary prints the closing comparison of what statemix found
// with what the demo planted, and where the figures and reports are. Lines
// of results have the form "  SAMPLE STATE found F ± SD  planted T".
func writeDemoSummary(w io.Writer, s *demoSummary) {
	t := s.Truth
	fmt.Fprint(w, "\n== What statemix found, next to the truth the demo planted ==\n")
	fmt.Fprint(w, "\nBarrier spot B2 (references chosen by fit --suggest), fraction of pure-standard signal:\n")
	writeDemoFractions(w, "barrier-B2", s.Barrier, t.Barrier)
	fmt.Fprintln(w, "\nBond pad P3, fraction of pure-standard signal and oxide thickness:")
	writeDemoFractions(w, "pad-P3", s.Pad, t.Pad)
	fmt.Fprintf(w, "  pad-P3 thickness found %.2f ± %.2f nm  planted %.2f nm\n", s.PadThicknessNM, s.PadThicknessSDNM, t.PadOxideNM)
	fmt.Fprintln(w, "\nDepth profile of die 7 (50 % crossing, 16-84 % width):")
	for _, x := range s.Interfaces {
		dir := "falls"
		if x.Rising {
			dir = "rises"
		}
		fmt.Fprintf(w, "  profile %s %s found %.2f nm width %.2f nm  planted %.2f nm width %.2f nm\n",
			x.State, dir, x.DepthNM, x.WidthNM, t.InterfaceNM, t.InterfaceWidthNM)
	}
	fmt.Fprintf(w, "\nMap of the cleaned pad P7 (%d x %d pixels), mean fraction over the image:\n", t.MapW, t.MapH)
	for _, st := range demoKeys(s.MapMean) {
		fmt.Fprintf(w, "  map %s found %.3f  planted %.3f\n", st, s.MapMean[st], t.MapMean[st])
	}
	writeDemoAnswers(w, s)
	fmt.Fprint(w, `
Reading the fits: a reduced chi-square near 2 is expected here. Lock-in
detection correlates the noise over the modulation width, so the noise
estimated from second differences is low; the uncertainties above allow for
that correlation (block bootstrap for fit, corrected covariance for profile).
`)
	fmt.Fprintf(w, "\nFigures and reports (open the .html files in a browser):\n")
	for _, o := range s.Outputs {
		fmt.Fprintf(w, "  %s\n", filepath.Join(s.Dir, o))
	}
	fmt.Fprint(w, `
With your own data: add your standards to a library (statemix library add FILE
--element EL --transition T --state S --name NAME), then statemix fit FILE
--suggest, statemix profile and statemix map as above; statemix help COMMAND
explains every flag.
`)
	fmt.Fprintf(w, "\nAll data above are synthetic. Demo finished in %.1f s; its files stay in %s.\n", s.Seconds, s.Dir)
}

// writeDemoAnswers answers the invented lab's two questions from what
// statemix found.
func writeDemoAnswers(w io.Writer, s *demoSummary) {
	find := func(fs []demoFraction, state string) (demoFraction, bool) {
		for _, f := range fs {
			if f.State == state {
				return f, true
			}
		}
		return demoFraction{}, false
	}
	fmt.Fprintln(w, "\nAnswers for the (invented) lab:")
	if ox, ok := find(s.Barrier, "oxide"); ok && !ox.AtBound {
		fmt.Fprintf(w, "  1. The barrier oxidised: at spot B2, %.1f ± %.1f %% of the Ti signal is TiO2", 100*ox.Fraction, 100*ox.SD)
	} else {
		fmt.Fprint(w, "  1. No TiO2 signal at spot B2")
	}
	for _, x := range s.Interfaces {
		if x.State == "oxide" && !x.Rising {
			fmt.Fprintf(w, ";\n     the depth profile puts the TiO2/TiN interface at %.2f nm", x.DepthNM)
		}
	}
	fmt.Fprintln(w, ".")
	fmt.Fprintf(w, "  2. Pad P3 carries %.2f ± %.2f nm of native oxide", s.PadThicknessNM, s.PadThicknessSDNM)
	fmt.Fprintln(w, ".")
	if v, ok := s.MapMean["oxide"]; ok {
		fmt.Fprintf(w, "     On the cleaned pad P7 the oxide averages %.1f %% of the Al signal, and\n", 100*v)
		fmt.Fprintln(w, "     fraction-oxide.png shows where it corroded.")
	}
}

func writeDemoFractions(w io.Writer, sample string, fs []demoFraction, truth map[string]float64) {
	for _, f := range fs {
		if f.AtBound {
			fmt.Fprintf(w, "  %s %s found 0 (95 %% upper limit %.3f)  planted %.3f\n", sample, f.State, f.CI95[1], f.Truth)
			continue
		}
		fmt.Fprintf(w, "  %s %s found %.3f ± %.3f  planted %.3f\n", sample, f.State, f.Fraction, f.SD, f.Truth)
	}
	for _, st := range demoKeys(truth) {
		found := false
		for _, f := range fs {
			found = found || f.State == st
		}
		if !found {
			fmt.Fprintf(w, "  %s %s not chosen  planted %.3f\n", sample, st, truth[st])
		}
	}
}

func demoKeys(m map[string]float64) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
