package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"statemix/cmd/statemix/render"
	"statemix/internal/atomicfile"
	"statemix/lineshape/fit"
	"statemix/lineshape/series"
)

// profileOptions holds the flag values of statemix profile.
type profileOptions struct {
	fitOptions
	SputterRate float64
	CSV         string
}

func newProfileCmd(app *App) *cobra.Command {
	opts := &profileOptions{}
	cmd := &cobra.Command{
		Use:   "profile FILE|DIR",
		Short: "Fit every step of a sputter depth profile and find the interfaces",
		Long: `Fit every step of a sputter depth profile and find the interfaces.

The steps come from a multi-block ISO 14976 file (SDP or NORM; each block's
sputter time from its experimental variable, or the block number when no block
has one) or from a folder DIR holding manifest.csv with one line
"file,sputter_time_s" per step (an optional third field picks the block of the
file, from 1). Sputter times must increase. Every step is fitted exactly as
statemix fit fits one spectrum, with the same flags; uncertainties come from
the covariance by default (--uncertainty bootstrap is available). For each
state, an interface is where its fraction crosses 50 % (interpolated between
steps), with the 16-84 % width; --sputter-rate (nm/min) gives them in nm.
--atomic and --overlayer convert every step's coefficients as statemix fit
does one spectrum's (atomic fractions; the overlayer thickness at --take-off,
else each file's take-off angle, else 90 degrees) and print the assumptions
once; a step with no substrate signal gets a warning instead of a thickness.`,
		Example: `  # A depth profile in one file, two library references, depths in nm
  statemix profile depth.vms --refs "Ti foil","TiO2 film" --sputter-rate 2.5

  # A folder of spectra with manifest.csv, CSV and figure out
  statemix profile run42/ --ref-file metal.csv:metal --ref-file oxide.csv:oxide --csv run42.csv --plot run42.svg

  # Oxide thickness and atomic fractions at every step
  statemix profile depth.vms --element Al --atomic --overlayer oxide:metal --take-off 42`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.TakeOffSet = cmd.Flags().Changed("take-off")
			opts.command = reproduceCommand(cmd, args)
			return runProfile(app, opts)
		},
	}
	registerModelFlags(app, cmd, &opts.fitOptions, modelFlags{Uncertainty: "covariance", Like: "the first spectrum", Overlap: "spectra", PerSpectrum: true})
	registerQuantFlags(cmd, &opts.fitOptions)
	f := cmd.Flags()
	f.Float64Var(&opts.SputterRate, "sputter-rate", 0, "sputter rate in `NM_PER_MIN` to give depths in nm")
	f.StringVar(&opts.CSV, "csv", "", "write the fractions per step to `FILE.csv`")
	f.StringVar(&opts.Plot, "plot", "", "draw the fractions against depth or time to `FILE.svg|.png`")
	f.StringVar(&opts.Report, "report", "", "write a self-contained HTML report to `FILE.html`")
	_ = cmd.MarkFlagFilename("plot", "svg", "png")
	_ = cmd.MarkFlagFilename("report", "html")
	_ = cmd.MarkFlagFilename("csv", "csv")
	_ = cmd.RegisterFlagCompletionFunc("sputter-rate", cobra.NoFileCompletions)
	return cmd
}

func runProfile(app *App, opts *profileOptions) error {
	if err := parseFitFlags(&opts.fitOptions); err != nil {
		return err
	}
	if opts.SputterRate < 0 || math.IsNaN(opts.SputterRate) || math.IsInf(opts.SputterRate, 0) {
		return usageErrorf("--sputter-rate %v: want a rate in nm/min", opts.SputterRate)
	}
	if opts.Report != "" && !strings.EqualFold(filepath.Ext(opts.Report), ".html") {
		return usageErrorf("--report %s: want a .html file name", opts.Report)
	}
	steps, warnings, err := series.ReadSteps(opts.File)
	if err != nil {
		return err
	}
	refs, err := gatherReferences(app, steps[0].Spectrum, &opts.fitOptions)
	if err != nil {
		return err
	}
	bar := newProgress(app, len(steps), "profile")
	res, err := series.Profile(app.Ctx, steps, refs, series.ProfileOptions{
		Fit: opts.fit, Bootstrap: opts.fit.Uncertainty == fit.Bootstrap,
		SputterRate: opts.SputterRate, Progress: bar.Func()})
	bar.Finish()
	if err != nil {
		if errors.Is(err, context.Canceled) {
			return errors.New("profile: interrupted: nothing written")
		}
		return fitError(err)
	}
	res.Warnings = append(warnings, res.Warnings...)
	pq, err := quantifySteps(&opts.fitOptions, steps, res)
	if err != nil {
		return err
	}
	if pq != nil {
		res.Warnings = append(res.Warnings, pq.Warnings...)
	}
	doc := buildProfileDocument(opts, res, pq)
	if opts.CSV != "" {
		if err := atomicfile.WriteFile(opts.CSV, func(w io.Writer) error { return writeProfileCSV(w, res, pq) }); err != nil {
			return fmt.Errorf("--csv %s: %w", opts.CSV, err)
		}
	}
	if opts.Plot != "" {
		if err := profileFigure(res, opts.SputterRate > 0, filepath.Base(opts.File)).WriteFile(opts.Plot); err != nil {
			return err
		}
	}
	if opts.Report != "" {
		if err := atomicfile.WriteFile(opts.Report, func(w io.Writer) error { return profilePage(app, opts, res, pq).Write(w) }); err != nil {
			return fmt.Errorf("--report %s: %w", opts.Report, err)
		}
	}
	if app.JSON {
		enc := json.NewEncoder(app.Out)
		enc.SetIndent("", "  ")
		return enc.Encode(doc)
	}
	return writeProfileHuman(app, opts, res, pq)
}

// profileDocument is the statemix.profile/v1 JSON document.
type profileDocument struct {
	Schema     string             `json:"schema"`
	Steps      []profileStep      `json:"steps"`
	Interfaces []profileInterface `json:"interfaces"`
	// Added fields.
	Input    profileInput `json:"input"`
	WindowEV [2]float64   `json:"window_ev"`
	Settings fitSettings  `json:"settings"`
	RateNM   *float64     `json:"sputter_rate_nm_per_min"`
	Library  fitLibrary   `json:"library"`
	Warnings []string     `json:"warnings"`
	// Assumptions of --atomic and --overlayer, once for all steps.
	Assumptions []string `json:"assumptions,omitempty"`
}

type profileInput struct {
	Path string `json:"path"`
}

type profileStep struct {
	Index        int             `json:"index"`
	SputterTimeS float64         `json:"sputter_time_s"`
	DepthNM      *float64        `json:"depth_nm"`
	Components   []fit.Component `json:"components"`
	Quality      fit.Quality     `json:"quality"`
	Source       string          `json:"source"`
	// Added with --atomic and --overlayer.
	Atomic    []atomicFraction `json:"atomic,omitempty"`
	Overlayer *stepOverlayer   `json:"overlayer,omitempty"`
}

type profileInterface struct {
	State     string   `json:"state"`
	PositionS float64  `json:"position_s"`
	DepthNM   *float64 `json:"depth_nm"`
	WidthNM   *float64 `json:"width_nm"`
	WidthS    *float64 `json:"width_s"`
	Rising    bool     `json:"rising"`
}

// finite returns &v, or nil for NaN (JSON null).
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func buildProfileDocument(opts *profileOptions, res *series.ProfileResult, pq *profileQuant) *profileDocument {
	r0 := res.Steps[0].Result
	o := r0.Options
	d := &profileDocument{
		Schema:   "statemix.profile/v1",
		Input:    profileInput{Path: opts.File},
		WindowEV: r0.Window,
		Settings: fitSettings{Shift: o.Shift.String(), MaxShiftEV: o.MaxShift, Background: o.BackgroundDegree(),
			Normalize: opts.Normalize, Uncertainty: r0.Uncertainty.String(), Samples: o.Samples, Seed: o.Seed,
			ModulationEV: r0.Modulation, FitMode: r0.Mode.String()},
		RateNM:     finite(opts.SputterRate),
		Library:    fitLibrary{Revision: opts.libRevision, Dir: opts.libDir},
		Warnings:   append([]string{}, res.Warnings...),
		Interfaces: []profileInterface{},
	}
	if opts.SputterRate == 0 {
		d.RateNM = nil
	}
	if r0.Uncertainty == fit.Covariance {
		d.Settings.Samples = 0
	}
	for i, s := range res.Steps {
		st := profileStep{Index: s.Index, SputterTimeS: s.SputterTimeS, DepthNM: finite(s.DepthNM),
			Components: s.Result.Components, Quality: s.Result.Quality, Source: s.Source}
		if pq != nil {
			st.Atomic = pq.Atomic[i]
			if pq.Overlayer != nil {
				st.Overlayer = pq.Overlayer[i]
			}
		}
		d.Steps = append(d.Steps, st)
	}
	if pq != nil {
		d.Assumptions = pq.q.assumptions()
	}
	for _, x := range res.Interfaces {
		d.Interfaces = append(d.Interfaces, profileInterface{State: x.State, PositionS: x.PositionS,
			DepthNM: finite(x.DepthNM), WidthNM: finite(x.WidthNM), WidthS: finite(x.WidthS), Rising: x.Rising})
	}
	return d
}

// componentNames returns the label of each component of the profile.
func componentNames(res *series.ProfileResult) []string {
	var names []string
	for _, c := range res.Steps[0].Result.Components {
		names = append(names, render.ComponentLabel(c))
	}
	return names
}

func fmtNum(v float64, format string) string {
	if math.IsNaN(v) {
		return "-"
	}
	return fmt.Sprintf(format, v)
}

// profileTable is one row per step: time, depth, each state's fraction
// with its SD, the common shift and the reduced chi-square, then with
// --atomic each state's atomic fraction and with --overlayer the
// thickness.
func profileTable(res *series.ProfileResult, depth bool, pq *profileQuant) *render.Table {
	t := &render.Table{Header: []string{"step", "time (s)"}}
	if depth {
		t.Header = append(t.Header, "depth (nm)")
	}
	for _, n := range componentNames(res) {
		t.Header = append(t.Header, n+" (%)")
	}
	t.Header = append(t.Header, "shift (eV)", "chi2 red.")
	if pq != nil && pq.q.atomic {
		for _, n := range componentNames(res) {
			t.Header = append(t.Header, n+" at. (%)")
		}
	}
	if pq != nil && pq.q.overlayer {
		t.Header = append(t.Header, "thickness (nm)")
	}
	for i := range t.Header {
		t.Right = append(t.Right, i != 0)
	}
	for i, s := range res.Steps {
		row := []string{strconv.Itoa(s.Index), fmtNum(s.SputterTimeS, "%.4g")}
		if depth {
			row = append(row, fmtNum(s.DepthNM, "%.2f"))
		}
		for _, c := range s.Result.Components {
			row = append(row, render.FractionText(c, true))
		}
		row = append(row, fmtNum(s.Result.Components[0].Shift, "%+.2f"), fmtNum(s.Result.Quality.Chi2Reduced, "%.2f"))
		if pq != nil {
			row = append(row, quantCells(pq, i, len(s.Result.Components))...)
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}

// quantCells returns step i's atomic-fraction and thickness cells of
// profileTable; "-" where the step has no number.
func quantCells(pq *profileQuant, i, k int) []string {
	var row []string
	if pq.q.atomic {
		for c := range k {
			if at := pq.Atomic[i]; at != nil {
				row = append(row, fmt.Sprintf("%.1f ± %.1f", 100*at[c].Fraction, 100*at[c].SD))
			} else {
				row = append(row, "-")
			}
		}
	}
	if pq.q.overlayer {
		ov := pq.Overlayer[i]
		switch {
		case ov.ThicknessNM == nil:
			row = append(row, "-")
		case ov.SDNM == nil:
			row = append(row, strings.TrimSuffix(thicknessText(*ov.ThicknessNM, 0), " nm"))
		default:
			row = append(row, strings.TrimSuffix(thicknessText(*ov.ThicknessNM, *ov.SDNM), " nm"))
		}
	}
	return row
}

func interfaceTable(res *series.ProfileResult, depth bool) *render.Table {
	t := &render.Table{Header: []string{"state", "direction", "position (s)", "width 16-84 % (s)"}, Right: []bool{false, false, true, true}}
	if depth {
		t.Header = append(t.Header, "depth (nm)", "width (nm)")
		t.Right = append(t.Right, true, true)
	}
	for _, x := range res.Interfaces {
		dir := "falls"
		if x.Rising {
			dir = "rises"
		}
		row := []string{x.State, dir, fmtNum(x.PositionS, "%.1f"), fmtNum(x.WidthS, "%.1f")}
		if depth {
			row = append(row, fmtNum(x.DepthNM, "%.2f"), fmtNum(x.WidthNM, "%.2f"))
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}

func writeProfileHuman(app *App, opts *profileOptions, res *series.ProfileResult, pq *profileQuant) error {
	w := app.Out
	depth := opts.SputterRate > 0
	r0 := res.Steps[0].Result
	if !app.Quiet {
		fmt.Fprintf(w, "%s: %d steps, %d references, window %.5g-%.5g eV, %s fit, uncertainty by %s\n\n",
			opts.File, len(res.Steps), len(r0.Components), r0.Window[0], r0.Window[1], r0.Mode, r0.Uncertainty)
	}
	if err := profileTable(res, depth, pq).WriteText(w); err != nil {
		return err
	}
	fmt.Fprintln(w)
	if pq != nil {
		for _, a := range pq.q.assumptions() {
			fmt.Fprintf(w, "%s\n", a)
		}
		fmt.Fprintln(w)
	}
	if len(res.Interfaces) == 0 {
		fmt.Fprintln(w, "no interfaces: no state's fraction passes from below 40 % to above 60 % or back")
	} else {
		fmt.Fprintln(w, "interfaces (50 % crossing, 16-84 % width):")
		if err := interfaceTable(res, depth).WriteText(w); err != nil {
			return err
		}
	}
	for _, s := range res.Warnings {
		app.Warn(s)
	}
	return nil
}

// writeProfileCSV writes one row per step: index, time, depth, then per
// component fraction, SD and the 95 % interval, then shift and reduced
// chi-square; with --atomic then per component the atomic fraction and its
// SD, with --overlayer the thickness and its SD in nm (empty where the
// step has none).
func writeProfileCSV(w io.Writer, res *series.ProfileResult, pq *profileQuant) error {
	cw := csv.NewWriter(w)
	head := []string{"index", "sputter_time_s", "depth_nm"}
	for _, c := range res.Steps[0].Result.Components {
		n := c.State
		if n == "" {
			n = c.Name
		}
		head = append(head, n+"_fraction", n+"_fraction_sd", n+"_ci95_lo", n+"_ci95_hi")
	}
	head = append(head, "shift_ev", "chi2_reduced")
	if pq != nil && pq.q.atomic {
		for _, c := range res.Steps[0].Result.Components {
			n := c.State
			if n == "" {
				n = c.Name
			}
			head = append(head, n+"_atomic_fraction", n+"_atomic_fraction_sd")
		}
	}
	if pq != nil && pq.q.overlayer {
		head = append(head, "thickness_nm", "thickness_sd_nm")
	}
	if err := cw.Write(head); err != nil {
		return err
	}
	g := func(v float64) string {
		if math.IsNaN(v) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	gp := func(v *float64) string {
		if v == nil {
			return ""
		}
		return g(*v)
	}
	for i, s := range res.Steps {
		row := []string{strconv.Itoa(s.Index), g(s.SputterTimeS), g(s.DepthNM)}
		for _, c := range s.Result.Components {
			row = append(row, g(c.Fraction), g(c.FractionSD), g(c.FractionCI95[0]), g(c.FractionCI95[1]))
		}
		row = append(row, g(s.Result.Components[0].Shift), g(s.Result.Quality.Chi2Reduced))
		if pq != nil && pq.q.atomic {
			for c := range s.Result.Components {
				if at := pq.Atomic[i]; at != nil {
					row = append(row, g(at[c].Fraction), g(at[c].SD))
				} else {
					row = append(row, "", "")
				}
			}
		}
		if pq != nil && pq.q.overlayer {
			row = append(row, gp(pq.Overlayer[i].ThicknessNM), gp(pq.Overlayer[i].SDNM))
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// profileFigure draws each state's fraction with its SD as error bars
// against depth (with a sputter rate) or sputter time, and dotted lines at
// the interfaces.
func profileFigure(res *series.ProfileResult, depth bool, title string) *render.Figure {
	xl := "sputter time (s)"
	if depth {
		xl = "depth (nm)"
	}
	p := render.NewPlot(xl, "fraction")
	p.Title.Text = title
	x := make([]float64, len(res.Steps))
	for i, s := range res.Steps {
		x[i] = s.SputterTimeS
		if depth {
			x[i] = s.DepthNM
		}
	}
	for c, name := range componentNames(res) {
		col := render.Palette[c%len(render.Palette)]
		y := make([]float64, len(x))
		pts := make(plotter.XYs, len(x))
		errs := make(plotter.YErrors, len(x))
		for i, s := range res.Steps {
			comp := s.Result.Components[c]
			y[i] = comp.Fraction
			pts[i] = plotter.XY{X: x[i], Y: comp.Fraction}
			errs[i].Low, errs[i].High = comp.FractionSD, comp.FractionSD
		}
		l := render.Line(x, y, col, 1.2, nil)
		p.Add(l)
		p.Legend.Add(name, l)
		if eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{pts, errs}); err == nil {
			eb.Color = col
			eb.CapWidth = 2
			p.Add(eb)
		}
		if sc, err := plotter.NewScatter(pts); err == nil {
			sc.GlyphStyle.Color = col
			sc.GlyphStyle.Radius = 1.3
			sc.GlyphStyle.Shape = draw.CircleGlyph{}
			p.Add(sc)
		}
	}
	for _, it := range res.Interfaces {
		xv := it.PositionS
		if depth {
			xv = it.DepthNM
		}
		p.Add(render.Line([]float64{xv, xv}, []float64{0, 1}, render.Palette[it.Component%len(render.Palette)], 0.6, []vg.Length{1, 2}))
	}
	// Headroom above 1 for the legend (top right), which otherwise covers
	// the fraction curves that reach 1 at either end: about 0.06 per
	// legend row; ticks only from 0 to 1.
	p.Y.Min, p.Y.Max = -0.05, 1.07+0.06*float64(len(componentNames(res)))
	var ticks plot.ConstantTicks
	for v := 0; v <= 10; v += 2 {
		ticks = append(ticks, plot.Tick{Value: float64(v) / 10, Label: strconv.FormatFloat(float64(v)/10, 'g', -1, 64)})
	}
	p.Y.Tick.Marker = ticks
	return &render.Figure{Panels: []render.Panel{{Plot: p}}}
}

func profilePage(app *App, opts *profileOptions, res *series.ProfileResult, pq *profileQuant) *render.Page {
	depth := opts.SputterRate > 0
	r0 := res.Steps[0].Result
	settings := [][2]string{
		{"input", opts.File},
		{"steps", strconv.Itoa(len(res.Steps))},
		{"window", fmt.Sprintf("%.5g–%.5g eV", r0.Window[0], r0.Window[1])},
		{"fit mode", r0.Mode.String()},
		{"shift", fmt.Sprintf("%s, at most %.3g eV", r0.Options.Shift, r0.Options.MaxShift)},
		{"background degree", fmt.Sprint(r0.Options.BackgroundDegree())},
		{"normalisation", opts.Normalize},
		{"uncertainty", r0.Uncertainty.String()},
		{"command", opts.command},
		{"statemix", Version},
		{"generated", app.Now().UTC().Format("2006-01-02 15:04:05 UTC")},
	}
	if depth {
		settings = append(settings, [2]string{"sputter rate", fmt.Sprintf("%.4g nm/min", opts.SputterRate)})
	}
	if opts.libDir != "" {
		settings = append(settings, [2]string{"library", fmt.Sprintf("%s (revision %d)", opts.libDir, opts.libRevision)})
	}
	pg := &render.Page{Title: "Depth profile: " + filepath.Base(opts.File), Subtitle: "chemical-state fractions against " + map[bool]string{true: "depth", false: "sputter time"}[depth]}
	pg.Sections = append(pg.Sections,
		render.Section{Heading: "Fractions", Blocks: []render.Block{render.FigureBlock(profileFigure(res, depth, ""), "fraction of each state with ± 1 SD; dotted lines at the interfaces")}},
		render.Section{Heading: "Interfaces", Blocks: []render.Block{render.TableBlock(interfaceTable(res, depth))}},
		render.Section{Heading: "Steps", Blocks: []render.Block{render.TableBlock(profileTable(res, depth, pq))}},
	)
	if pq != nil {
		var blocks []render.Block
		for _, a := range pq.q.assumptions() {
			blocks = append(blocks, render.Paragraph(a))
		}
		pg.Sections = append(pg.Sections, render.Section{Heading: "Quantification", Blocks: blocks})
	}
	pg.Sections = append(pg.Sections, render.Section{Heading: "Settings", Blocks: []render.Block{render.KeyValues(settings)}})
	if len(res.Warnings) > 0 {
		pg.Sections = append(pg.Sections, render.Section{Heading: "Warnings", Blocks: []render.Block{render.Warnings(res.Warnings)}})
	}
	return pg
}
