package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"statemix/cmd/statemix/render"
	"statemix/internal/atomicfile"
	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/lineshape/format"
	"statemix/lineshape/quant"
)

// fitOptions holds the flag values of statemix fit and what runFit derives
// from them.
type fitOptions struct {
	File        string
	Block       int      // 1-based; 0 when not given
	Refs        []string // --refs, split at commas
	RefFiles    []string // --ref-file FILE[:state]
	Suggest     int      // --suggest K; 0 when not given
	Element     string
	Modulation  float64
	Window      string // "LO:HI"
	Shift       string
	MaxShift    float64
	Background  int
	Normalize   string
	Uncertainty string
	Samples     int
	Seed        uint64
	Plot        string
	Report      string
	Save        bool
	Atomic      bool
	Overlayer   string // OXIDE_STATE:SUBSTRATE_STATE
	TakeOff     float64
	TakeOffSet  bool

	// Derived by runFit.
	fit         fit.Options
	inputSHA256 string
	libRevision int
	libDir      string
	entries     map[string]*library.Entry // library entries of the references, by id
	refExtra    map[string]map[string]string
	command     string       // the command line that reproduces the run
	doc         *fitDocument // the statemix.fit/v1 document
}

func newFitCmd(app *App) *cobra.Command {
	opts := &fitOptions{}
	cmd := &cobra.Command{
		Use:   "fit FILE",
		Short: "Decompose a spectrum into chemical-state fractions with its references",
		Long: `Decompose a spectrum into chemical-state fractions with its references.

Fit models the unknown spectrum in FILE as a nonnegative combination of
reference spectra of known chemical states, each shifted in energy, plus a
polynomial background of free sign, and reports each state's fraction (its
coefficient over the sum of all coefficients, against references kept at the
intensity they were recorded with), its uncertainty and 95 % interval, the
shift each reference needed, and how good the fit is. References come from
the library (--refs by id, id prefix or name; --element for all of an
element's references) or from files (--ref-file FILE, with the state read
from the file or given as FILE:state). A direct unknown is compared with
derivative references by lock-in emulation at their modulation. Uncertainties
come from a block bootstrap of the residuals that refits the shifts too (a
Poisson resampling for direct spectra of counts), or from the parameter
covariance corrected for correlated noise (--uncertainty covariance, fast).
--plot draws the fit, --report writes a self-contained HTML page with the
figure, the table, the settings and the provenance (file hash, reference ids,
library revision) needed to reproduce the result.`,
		Example: `  # Two library references by name, common shift, bootstrap uncertainty
  statemix fit spot1.vms --refs "Ti foil","TiO2 film"

  # Every titanium reference in the library, a shift per reference
  statemix fit spot1.vms --element Ti --shift each --plot spot1.svg

  # No library: references from files, state given after the colon
  statemix fit unknown.csv --ref-file metal.csv:metal --ref-file oxide.csv:oxide

  # Fast covariance uncertainty, a fixed window, JSON for a script
  statemix fit spot1.vms --refs 3f2a,9c1d --window 370:430 --uncertainty covariance --json

  # Oxide thickness on the metal from the fitted coefficients
  statemix fit spot1.vms --element Al --overlayer oxide:metal --take-off 42`,
		Args: oneFileArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.TakeOffSet = cmd.Flags().Changed("take-off")
			opts.command = reproduceCommand(cmd, args)
			return runFit(app, opts)
		},
	}
	registerModelFlags(app, cmd, opts, modelFlags{Uncertainty: "bootstrap", Like: "the unknown", Overlap: "unknown"})
	registerQuantFlags(cmd, opts)
	f := cmd.Flags()
	f.IntVar(&opts.Block, "block", 0, "fit the `N`-th spectrum of FILE, counting from 1 (needed when FILE holds several)")
	f.StringVar(&opts.Plot, "plot", "", "draw the fit to `FILE.svg|.png`")
	f.StringVar(&opts.Report, "report", "", "write a self-contained HTML report to `FILE.html`")
	f.BoolVar(&opts.Save, "save", false, "archive the measurement and its fit in the library")
	_ = cmd.MarkFlagFilename("plot", "svg", "png")
	_ = cmd.MarkFlagFilename("report", "html")
	_ = cmd.RegisterFlagCompletionFunc("block", cobra.NoFileCompletions)
	return cmd
}

// oneFileArgs accepts exactly one FILE argument. A second argument that is
// a number right after --suggest is the K of "--suggest K", which the flag
// cannot take (its K is optional): it says to write --suggest=K.
func oneFileArgs(cmd *cobra.Command, args []string) error {
	if len(args) == 2 && cmd.Flags().Changed("suggest") {
		if _, err := strconv.Atoi(args[1]); err == nil {
			return usageErrorf("--suggest %s: the number of references goes after an equals sign: write --suggest=%s", args[1], args[1])
		}
	}
	return cobra.ExactArgs(1)(cmd, args)
}

// modelFlags says how registerModelFlags words and sets up the model flags
// of one command.
type modelFlags struct {
	// Uncertainty is the default of --uncertainty; if it is "", the command
	// has no --uncertainty, --samples or --seed and fits with the
	// covariance.
	Uncertainty string
	// Like is what --suggest compares the library with ("the unknown",
	// "the first spectrum").
	Like string
	// Overlap is what the default window overlaps with the references
	// ("unknown", "spectra").
	Overlap string
	// PerSpectrum says that --samples counts per spectrum.
	PerSpectrum bool
}

// registerModelFlags registers on cmd the flags of the fit model that
// statemix fit, profile and map share: the references (--refs, --ref-file,
// --suggest, --element), the model (--modulation, --window, --shift,
// --max-shift, --background, --normalize) and, when m.Uncertainty is set,
// the uncertainty (--uncertainty, --samples, --seed), with their
// completions. parseFitFlags reads them; each command adds its own.
func registerModelFlags(app *App, cmd *cobra.Command, opts *fitOptions, m modelFlags) {
	f := cmd.Flags()
	f.StringSliceVar(&opts.Refs, "refs", nil, "library references by id, id prefix or name, comma-separated (`REF,REF,...`)")
	f.StringArrayVar(&opts.RefFiles, "ref-file", nil, "a reference spectrum from `FILE[:state]` (repeatable)")
	f.IntVar(&opts.Suggest, "suggest", 0, "add the `K` library references most like "+m.Like+" (--suggest alone: 4; write --suggest=K)")
	f.Lookup("suggest").NoOptDefVal = "4"
	f.StringVar(&opts.Element, "element", "", "use every library reference of element `EL` (with --refs: check they are of EL)")
	f.Float64Var(&opts.Modulation, "modulation", 0, "peak-to-peak modulation in `EV` for lock-in emulation (default the recorded one)")
	f.StringVar(&opts.Window, "window", "", "fit window `LO:HI` in eV (default the overlap of "+m.Overlap+" and references less the maximum shift)")
	f.StringVar(&opts.Shift, "shift", "common", "energy shifts `MODE`: none, common or each")
	f.Float64Var(&opts.MaxShift, "max-shift", 3, "largest shift in `EV`")
	f.IntVar(&opts.Background, "background", 1, "degree `DEG` of the polynomial background (-1 for none)")
	f.StringVar(&opts.Normalize, "normalize", "none", "scale references first by `MODE`: none, peak-to-peak or area (changes what a fraction means)")
	opts.Uncertainty, opts.Samples, opts.Seed = "covariance", 300, 1
	enum := func(name string, vals ...string) {
		_ = cmd.RegisterFlagCompletionFunc(name, cobra.FixedCompletions(vals, cobra.ShellCompDirectiveNoFileComp))
	}
	if m.Uncertainty != "" {
		samples := "bootstrap samples `N`"
		if m.PerSpectrum {
			samples += " per spectrum"
		}
		f.StringVar(&opts.Uncertainty, "uncertainty", m.Uncertainty, "uncertainty `METHOD`: covariance or bootstrap")
		f.IntVar(&opts.Samples, "samples", 300, samples)
		f.Uint64Var(&opts.Seed, "seed", 1, "bootstrap seed `N` (same seed, same result)")
		enum("uncertainty", "covariance", "bootstrap")
	}
	enum("shift", "none", "common", "each")
	enum("normalize", "none", "peak-to-peak", "area")
	_ = cmd.RegisterFlagCompletionFunc("refs", completeRefList(app))
	_ = cmd.RegisterFlagCompletionFunc("element", completeElements(app))
	for _, n := range []string{"suggest", "modulation", "window", "max-shift", "background", "samples", "seed"} {
		if f.Lookup(n) != nil {
			_ = cmd.RegisterFlagCompletionFunc(n, cobra.NoFileCompletions)
		}
	}
}

// reproduceCommand returns the command line with every flag that was set.
func reproduceCommand(cmd *cobra.Command, args []string) string {
	parts := []string{cmd.CommandPath()}
	for _, a := range args {
		parts = append(parts, shellQuote(a))
	}
	cmd.Flags().Visit(func(f *pflag.Flag) {
		if f.Name == "json" || f.Name == "quiet" || f.Name == "no-progress" || f.Name == "plot" || f.Name == "report" || f.Name == "save" {
			return
		}
		if sv, ok := f.Value.(pflag.SliceValue); ok {
			for _, v := range sv.GetSlice() {
				parts = append(parts, "--"+f.Name, shellQuote(v))
			}
			return
		}
		if f.Value.Type() == "bool" {
			parts = append(parts, "--"+f.Name)
			return
		}
		parts = append(parts, "--"+f.Name, shellQuote(f.Value.String()))
	})
	return strings.Join(parts, " ")
}

func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r == '-' || r == '_' || r == '.' || r == '/' || r == ':' || r == ',' || r == '=' || r == '+' ||
			(r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z'))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// parseFitFlags turns the flag values into fit.Options.
func parseFitFlags(opts *fitOptions) error {
	var o fit.Options
	var err error
	if o.Shift, err = fit.ParseShiftMode(opts.Shift); err != nil {
		return usageErrorf("--shift: %v", err)
	}
	if o.Uncertainty, err = fit.ParseUncertainty(opts.Uncertainty); err != nil {
		return usageErrorf("--uncertainty: %v", err)
	}
	switch opts.Normalize {
	case "none", "peak-to-peak", "area":
		n, err := lineshape.ParseNormalization(opts.Normalize)
		if err != nil {
			return usageErrorf("--normalize: %v", err)
		}
		o.Normalize = n
	default:
		return usageErrorf("--normalize %q: want none, peak-to-peak or area", opts.Normalize)
	}
	if !(opts.MaxShift > 0) || math.IsInf(opts.MaxShift, 0) {
		if !(opts.MaxShift == 0 && o.Shift == fit.ShiftNone) {
			return usageErrorf("--max-shift %v: want a positive number of eV", opts.MaxShift)
		}
	}
	if opts.MaxShift > fit.MaxShiftLimit && o.Shift != fit.ShiftNone {
		return usageErrorf("--max-shift %s: at most %v eV (chemical shifts are a few eV; charging rarely moves a line by tens)",
			strconv.FormatFloat(opts.MaxShift, 'f', -1, 64), fit.MaxShiftLimit)
	}
	o.MaxShift = opts.MaxShift
	switch {
	case opts.Background == 0:
		o.Background = fit.BackgroundConstant
	case opts.Background == -1:
		o.Background = fit.BackgroundNone
	case opts.Background > 0 && opts.Background <= 6:
		o.Background = opts.Background
	default:
		return usageErrorf("--background %d: want a degree from 0 to 6, or -1 for none", opts.Background)
	}
	if opts.Samples < 20 {
		return usageErrorf("--samples %d: want at least 20", opts.Samples)
	}
	o.Samples = opts.Samples
	o.Seed = opts.Seed
	if opts.Modulation < 0 || math.IsNaN(opts.Modulation) {
		return usageErrorf("--modulation %v: want a peak-to-peak amplitude in eV", opts.Modulation)
	}
	o.Modulation = opts.Modulation
	if opts.Element != "" {
		// Validate the symbol the way library add does, so that --element He
		// or a typing slip says so instead of "no references of element".
		if err := quant.CheckAugerElement(canonicalSymbol(opts.Element)); err != nil {
			return usageErrorf("--element %s: %v", opts.Element, err)
		}
	}
	o.Element = opts.Element
	if opts.Window != "" {
		w, err := parseWindow(opts.Window)
		if err != nil {
			return usageErrorf("--window %q: %v", opts.Window, err)
		}
		o.Window = w
	}
	if opts.Block < 0 {
		return usageErrorf("--block %d: blocks count from 1", opts.Block)
	}
	if opts.Suggest < 0 {
		return usageErrorf("--suggest %d: want a number of references", opts.Suggest)
	}
	if opts.TakeOffSet && (!(opts.TakeOff > 0) || opts.TakeOff > 90) {
		return usageErrorf("--take-off %v: want an angle in (0, 90] degrees from the surface", opts.TakeOff)
	}
	if opts.TakeOffSet && opts.Overlayer == "" {
		return usageErrorf("--take-off applies only with --overlayer")
	}
	if opts.Plot != "" {
		if e := strings.ToLower(filepath.Ext(opts.Plot)); e != ".svg" && e != ".png" {
			return usageErrorf("--plot %s: want a .svg or .png file name", opts.Plot)
		}
	}
	opts.fit = o
	return nil
}

// canonicalSymbol spells an element symbol as IUPAC writes it ("ti" and
// "TI" become "Ti"); --element matches references case-insensitively.
func canonicalSymbol(s string) string {
	s = strings.TrimSpace(s)
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + strings.ToLower(s[1:])
}

// parseWindow parses --window LO:HI (eV, LO < HI, both finite).
func parseWindow(s string) ([2]float64, error) {
	lo, hi, ok := strings.Cut(s, ":")
	a, err1 := strconv.ParseFloat(strings.TrimSpace(lo), 64)
	b, err2 := strconv.ParseFloat(strings.TrimSpace(hi), 64)
	if !ok || err1 != nil || err2 != nil || !(a < b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
		return [2]float64{}, errors.New("want LO:HI in eV with LO < HI")
	}
	return [2]float64{a, b}, nil
}

// splitRefFile splits --ref-file FILE[:state]. A whole argument naming an
// existing file is a path; otherwise the first colon after which the part
// before it names an existing file separates the state (so states such as
// "other:hydrated" survive); failing both, the last colon does.
func splitRefFile(arg string) (path, state string) {
	if _, err := os.Stat(arg); err == nil {
		return arg, ""
	}
	for i := 1; i < len(arg); i++ {
		if arg[i] != ':' {
			continue
		}
		if st, err := os.Stat(arg[:i]); err == nil && !st.IsDir() {
			return arg[:i], arg[i+1:]
		}
	}
	if i := strings.LastIndex(arg, ":"); i > 0 && !strings.ContainsAny(arg[i+1:], `/\`) {
		return arg[:i], arg[i+1:]
	}
	return arg, ""
}

// runFit reads the unknown and the references, fits, and writes the results.
func runFit(app *App, opts *fitOptions) error {
	if err := parseFitFlags(opts); err != nil {
		return err
	}
	raw, err := os.ReadFile(opts.File)
	if err != nil {
		return err
	}
	sum := sha256.Sum256(raw)
	opts.inputSHA256 = hex.EncodeToString(sum[:])
	specs, err := format.ReadFile(opts.File, format.Options{Block: opts.Block})
	if err != nil {
		if errors.Is(err, format.ErrNoBlock) {
			return usageErrorf("--block: %v", err)
		}
		return err
	}
	if len(specs) > 1 {
		return usageErrorf("%s holds %d spectra: choose one with --block N (or fit them all with statemix profile)", opts.File, len(specs))
	}
	unknown := specs[0]
	if unknown.Meta.Source == "" {
		unknown.Meta.Source = opts.File
	}
	if opts.Block == 0 {
		opts.Block = 1
	}

	refs, err := gatherReferences(app, unknown, opts)
	if err != nil {
		return err
	}
	var bar *progress
	if opts.fit.Uncertainty == fit.Bootstrap {
		bar = newProgress(app, opts.fit.Samples, "bootstrap")
		opts.fit.Progress = bar.Func()
	}
	m, err := fit.Prepare(unknown, refs, opts.fit)
	if err != nil {
		return fitError(err)
	}
	res, err := m.Fit(app.Ctx, unknown)
	bar.Finish()
	if err != nil {
		return fitError(err)
	}

	doc := buildFitDocument(opts, unknown, res)
	opts.doc = doc
	var extra []render.Section
	q, err := newQuantifier(opts, res.Components, res.Window)
	if err != nil {
		return err
	}
	if q != nil && q.atomic {
		at, err := q.atomicFractions(res)
		if err != nil {
			return err
		}
		doc.Atomic = at
		extra = append(extra, atomicSection(at))
	}
	if q != nil && q.overlayer {
		ov, err := fitOverlayer(q, unknown, res)
		if err != nil {
			return err
		}
		doc.Overlayer = ov
		doc.Warnings = append(doc.Warnings, ov.Warnings...)
		extra = append(extra, overlayerSection(ov))
	}
	if opts.Save {
		id, err := saveRun(app, unknown, res, opts)
		if err != nil {
			return fmt.Errorf("fit: --save: %w", err)
		}
		doc.Saved = id
	}
	if opts.Plot != "" {
		if err := render.FitFigure(res, filepath.Base(opts.File)).WriteFile(opts.Plot); err != nil {
			return err
		}
	}
	if opts.Report != "" {
		if err := writeReport(app, opts, res, extra); err != nil {
			return err
		}
	}
	if app.JSON {
		return writeFitJSON(app.Out, doc)
	}
	return writeFitHuman(app, opts, res, doc)
}

// fitError maps fit errors to exit statuses: collinear references are bad
// input (exit 3), like *lineshape.InputError already is.
func fitError(err error) error {
	var ce *fit.CollinearError
	if errors.As(err, &ce) {
		return badInput(err)
	}
	return err
}

// gatherReferences collects the references of --refs, --element,
// --ref-file and --suggest.
func gatherReferences(app *App, unknown *lineshape.Spectrum, opts *fitOptions) ([]fit.Reference, error) {
	var refs []fit.Reference
	opts.entries = map[string]*library.Entry{}
	opts.refExtra = map[string]map[string]string{}
	useLibrary := len(opts.Refs) > 0 || (opts.Element != "" && len(opts.RefFiles) == 0) || opts.Save
	var st *library.Store
	if useLibrary {
		s, err := app.openLibrary(false)
		if err != nil {
			if len(opts.RefFiles) == 0 && !opts.Save {
				return nil, fmt.Errorf("%w; without a library, give the references as --ref-file FILE:STATE", err)
			}
			return nil, err
		}
		st = s
		opts.libRevision = st.Revision()
		opts.libDir = st.Dir()
	}
	addEntry := func(e *library.Entry) error {
		if e.Kind == library.KindMeasurement {
			return usageErrorf("--refs: %s (%s) is an archived measurement, not a reference", e.Name, e.ID)
		}
		if e.Spectrum == nil {
			return badInputf("reference %s (%s) has no spectrum", e.Name, e.ID)
		}
		opts.entries[e.ID] = e
		refs = append(refs, fit.Reference{ID: e.ID, Name: e.Name, Element: e.Element, State: e.State, Spectrum: e.Spectrum})
		return nil
	}
	for _, r := range opts.Refs {
		r = strings.TrimSpace(r)
		if r == "" {
			continue
		}
		e, err := st.Resolve(r)
		if err != nil {
			var nf *library.NotFoundError
			var am *library.AmbiguousError
			if errors.As(err, &nf) || errors.As(err, &am) {
				return nil, usageErrorf("--refs: %v", err)
			}
			return nil, err
		}
		if err := addEntry(e); err != nil {
			return nil, err
		}
	}
	// --element alone fits with every reference of the element; with
	// --suggest it only narrows the candidates the suggestion picks from.
	if opts.Element != "" && len(opts.Refs) == 0 && len(opts.RefFiles) == 0 && opts.Suggest == 0 {
		es, _ := st.Entries()
		n := 0
		for _, e := range es {
			if e.Kind != library.KindMeasurement && strings.EqualFold(e.Element, opts.Element) {
				if err := addEntry(e); err != nil {
					return nil, err
				}
				n++
			}
		}
		if n == 0 {
			return nil, badInputf("the library %s has no references of element %s", st.Dir(), opts.Element)
		}
	}
	for _, rf := range opts.RefFiles {
		r, extra, err := readRefFile(rf)
		if err != nil {
			return nil, err
		}
		opts.refExtra[r.ID] = extra
		refs = append(refs, r)
	}
	if opts.Suggest > 0 {
		sug, err := suggestReferences(app, unknown, opts, opts.Suggest)
		if err != nil {
			return nil, fmt.Errorf("fit: --suggest: %w", err)
		}
		have := map[string]bool{}
		for _, r := range refs {
			have[r.ID] = true
		}
		for _, r := range sug {
			if !have[r.ID] {
				refs = append(refs, r)
				have[r.ID] = true
			}
		}
	}
	if len(refs) == 0 {
		return nil, badInputf("%s: no references: give library references with --refs, --element or --suggest, or files with --ref-file FILE:STATE", opts.File)
	}
	return refs, nil
}

// readRefFile reads --ref-file FILE[:state]. A statemix library entry file
// gives its labels; otherwise the spectrum's Meta.Extra "element", "state"
// (or the VAMAS "species") and "compound" do, and a :state suffix wins.
func readRefFile(arg string) (fit.Reference, map[string]string, error) {
	path, state := splitRefFile(arg)
	if e, err := library.ReadEntryFile(path); err == nil && e.Spectrum != nil {
		if state == "" {
			state = e.State
		}
		id := e.ID
		if id == "" {
			id = filepath.Base(path)
		}
		return fit.Reference{ID: id, Name: e.Name, Element: e.Element, State: state, Spectrum: e.Spectrum},
			map[string]string{"compound": e.Compound}, nil
	}
	specs, err := format.ReadFile(path, format.Options{})
	if err != nil {
		return fit.Reference{}, nil, err
	}
	if len(specs) != 1 {
		return fit.Reference{}, nil, badInputf("--ref-file %s: holds %d spectra, want one reference", path, len(specs))
	}
	s := specs[0]
	ex := s.Meta.Extra
	if state == "" {
		state = ex["state"]
	}
	if state == "" {
		return fit.Reference{}, nil, badInputf("--ref-file %s: the file names no chemical state: give it as %s:STATE", path, path)
	}
	if _, err := library.ParseState(state); err != nil {
		return fit.Reference{}, nil, usageErrorf("--ref-file %s: %v", arg, err)
	}
	el := ex["element"]
	if el == "" {
		el = ex["species"]
	}
	name := ex["name"]
	if name == "" {
		name = strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	}
	return fit.Reference{ID: "file:" + path, Name: name, Element: el, State: state, Spectrum: s},
		map[string]string{"compound": ex["compound"]}, nil
}

// fitDocument is the statemix.fit/v1 JSON document.
type fitDocument struct {
	Schema     string          `json:"schema"`
	Input      fitInput        `json:"input"`
	WindowEV   [2]float64      `json:"window_ev"`
	Settings   fitSettings     `json:"settings"`
	Components []fit.Component `json:"components"`
	Quality    fit.Quality     `json:"quality"`
	Library    fitLibrary      `json:"library"`
	Warnings   []string        `json:"warnings"`
	// Added fields (the schema allows additions).
	Atomic    []atomicFraction `json:"atomic,omitempty"`
	Overlayer *overlayerResult `json:"overlayer,omitempty"`
	Saved     string           `json:"saved,omitempty"`
}

type fitInput struct {
	File   string `json:"file"`
	Block  int    `json:"block"`
	Mode   string `json:"mode"`
	SHA256 string `json:"sha256"`
}

type fitSettings struct {
	Shift        string  `json:"shift"`
	MaxShiftEV   float64 `json:"max_shift_ev"`
	Background   int     `json:"background_degree"`
	Normalize    string  `json:"normalize"`
	Uncertainty  string  `json:"uncertainty"`
	Samples      int     `json:"samples"`
	Seed         uint64  `json:"seed"`
	ModulationEV float64 `json:"modulation_ev,omitempty"`
	FitMode      string  `json:"fit_mode"`
}

type fitLibrary struct {
	Revision int    `json:"revision"`
	Dir      string `json:"dir,omitempty"`
}

func buildFitDocument(opts *fitOptions, unknown *lineshape.Spectrum, res *fit.Result) *fitDocument {
	o := res.Options
	d := &fitDocument{
		Schema:   "statemix.fit/v1",
		Input:    fitInput{File: opts.File, Block: opts.Block, Mode: unknown.Mode.String(), SHA256: opts.inputSHA256},
		WindowEV: res.Window,
		Settings: fitSettings{Shift: o.Shift.String(), MaxShiftEV: o.MaxShift, Background: o.BackgroundDegree(),
			Normalize: opts.Normalize, Uncertainty: res.Uncertainty.String(), Samples: o.Samples, Seed: o.Seed,
			ModulationEV: res.Modulation, FitMode: res.Mode.String()},
		Components: res.Components,
		Quality:    res.Quality,
		Library:    fitLibrary{Revision: opts.libRevision, Dir: opts.libDir},
		Warnings:   append([]string{}, res.Warnings...),
	}
	if res.Uncertainty == fit.Covariance {
		d.Settings.Samples = 0
	}
	return d
}

// writeFitJSON is the one encoder of statemix.fit/v1.
func writeFitJSON(w io.Writer, d *fitDocument) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(d)
}

func writeFitHuman(app *App, opts *fitOptions, res *fit.Result, doc *fitDocument) error {
	w := app.Out
	if !app.Quiet {
		fmt.Fprintf(w, "%s", opts.File)
		if opts.Block > 1 {
			fmt.Fprintf(w, " block %d", opts.Block)
		}
		fmt.Fprintf(w, ": %d references\n\n", len(res.Components))
	}
	if err := render.FitTable(res).WriteText(w); err != nil {
		return err
	}
	fmt.Fprintf(w, "\nwindow %.5g-%.5g eV, %s fit", res.Window[0], res.Window[1], res.Mode)
	if res.Modulation > 0 {
		fmt.Fprintf(w, ", modulation %.3g eV", res.Modulation)
	}
	fmt.Fprintf(w, ", shift %s, uncertainty by %s", res.Options.Shift, res.Uncertainty)
	if res.Uncertainty == fit.Bootstrap && res.Samples != nil {
		fmt.Fprintf(w, " (%d samples, %s)", len(res.Samples.Fractions), res.Samples.Method)
	}
	fmt.Fprintf(w, "\n%s\n", render.QualityText(res.Quality))
	if len(doc.Atomic) > 0 {
		fmt.Fprintln(w, "\natomic fractions (matrix-corrected):")
		_ = atomicTable(doc.Atomic).WriteText(w)
	}
	if ov := doc.Overlayer; ov != nil {
		fmt.Fprintf(w, "\n%s thickness on %s: %s (take-off %.3g°, %s)\n", ov.Overlayer, ov.Substrate, thicknessText(ov.ThicknessNM, ov.SDNM), ov.TakeOffDeg, ov.Method)
	}
	if doc.Saved != "" {
		fmt.Fprintf(w, "saved as %s\n", doc.Saved)
	}
	for _, s := range doc.Warnings {
		app.Warn(s)
	}
	return nil
}

func writeReport(app *App, opts *fitOptions, res *fit.Result, extra []render.Section) error {
	settings := [][2]string{
		{"shift", res.Options.Shift.String()},
		{"maximum shift", fmt.Sprintf("%.3g eV", res.Options.MaxShift)},
		{"background degree", fmt.Sprint(res.Options.BackgroundDegree())},
		{"normalisation", opts.Normalize},
		{"uncertainty", res.Uncertainty.String()},
		{"window", fmt.Sprintf("%.5g–%.5g eV", res.Window[0], res.Window[1])},
		{"fit mode", res.Mode.String()},
	}
	if res.Modulation > 0 {
		settings = append(settings, [2]string{"modulation", fmt.Sprintf("%.3g eV peak to peak", res.Modulation)})
	}
	if res.Uncertainty == fit.Bootstrap {
		settings = append(settings, [2]string{"samples / seed", fmt.Sprintf("%d / %d", res.Options.Samples, res.Options.Seed)})
	}
	info := render.ReportInfo{InputFile: opts.File, InputSHA256: opts.inputSHA256, Block: opts.Block - 1,
		Settings: settings, LibraryDir: opts.libDir, LibraryRevision: int64(opts.libRevision),
		Version: Version, Generated: app.Now(), Command: opts.command, Extra: extra}
	err := atomicfile.WriteFile(opts.Report, func(w io.Writer) error { return render.FitReport(w, res, info) })
	if err != nil {
		return fmt.Errorf("--report %s: %w", opts.Report, err)
	}
	return nil
}
