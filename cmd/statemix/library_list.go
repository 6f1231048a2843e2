package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"gonum.org/v1/plot/vg"

	"statemix/cmd/statemix/render"
	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/quant"
)

// libraryListOptions holds the flag values of library list.
type libraryListOptions struct {
	Element string
	State   string
}

func newLibraryListCmd(app *App) *cobra.Command {
	o := &libraryListOptions{}
	cmd := &cobra.Command{
		Use:   "list [--element EL] [--state S]",
		Short: "List the library's entries",
		Long: `list prints one line per entry: id, name, element, transition, state,
compound, kind and energy range, references first. --element (exact
symbol) and --state narrow the list. Entry files that cannot be read are
named in warnings; the rest are listed.`,
		Example: `  statemix library list
  statemix library list --element Ti --state nitride
  statemix library list --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if o.State != "" {
				s, err := library.ParseState(o.State)
				if err != nil {
					return usageErrorf("library list: --state: %v", err)
				}
				o.State = s
			}
			if o.Element != "" {
				// Symbols match as IUPAC spells them; take "ti" as "Ti", as
				// fit --element does, and say so when there is no such element.
				o.Element = canonicalSymbol(o.Element)
				if err := quant.CheckAugerElement(o.Element); err != nil {
					return usageErrorf("library list: --element: %v", err)
				}
			}
			return runLibraryList(app, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Element, "element", "", "only entries of element `SYMBOL`")
	f.StringVar(&o.State, "state", "", "only entries in chemical `STATE`")
	_ = cmd.RegisterFlagCompletionFunc("state", completeStates)
	_ = cmd.RegisterFlagCompletionFunc("element", completeElements(app))
	return cmd
}

// listJSON is the statemix.list/v1 document.
type listJSON struct {
	Schema   string          `json:"schema"`
	Entries  []listEntryJSON `json:"entries"`
	Revision int             `json:"revision"`
	Problems []string        `json:"problems"` // entry files that could not be read
}

type listEntryJSON struct {
	Ref        string     `json:"ref"`
	Name       string     `json:"name"`
	Element    string     `json:"element"`
	Transition string     `json:"transition"`
	State      string     `json:"state"`
	Compound   string     `json:"compound"`
	Kind       string     `json:"kind"`
	EnergyEV   [2]float64 `json:"energy_ev"`
}

func runLibraryList(app *App, o *libraryListOptions) error {
	st, err := app.openLibrary(false)
	if err != nil {
		return err
	}
	all, errs := st.Entries()
	f := library.Filter{Element: o.Element, State: o.State}
	var es []*library.Entry
	for _, e := range all {
		if f.Match(e) {
			es = append(es, e)
		}
	}
	problems := []string{}
	for _, err := range errs {
		problems = append(problems, err.Error())
		app.Warn(fmt.Sprintf("%v (run statemix library verify)", err))
	}
	if app.JSON {
		doc := listJSON{Schema: "statemix.list/v1", Entries: []listEntryJSON{}, Revision: st.Revision(), Problems: problems}
		for _, e := range es {
			lo, hi := e.EnergyRange()
			doc.Entries = append(doc.Entries, listEntryJSON{Ref: e.ID, Name: e.Name, Element: e.Element,
				Transition: e.Transition, State: e.State, Compound: e.Compound, Kind: string(e.Kind), EnergyEV: [2]float64{lo, hi}})
		}
		return writeJSON(app.Out, doc)
	}
	if len(es) == 0 {
		app.Infof("no entries (library revision %d)\n", st.Revision())
		return nil
	}
	tw := newTable(app.Out)
	fmt.Fprintln(tw, "REF\tNAME\tELEMENT\tTRANSITION\tSTATE\tCOMPOUND\tKIND\tENERGY (eV)")
	for _, e := range es {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", e.ID, e.Name, orDash(e.Element), orDash(e.Transition),
			orDash(e.State), orDash(e.Compound), e.Kind, energyRange(e))
	}
	return tw.Flush()
}

// libraryShowOptions holds the flag values of library show.
type libraryShowOptions struct {
	Ref  string
	Plot string
}

func newLibraryShowCmd(app *App) *cobra.Command {
	o := &libraryShowOptions{}
	cmd := &cobra.Command{
		Use:   "show REF [--plot FILE]",
		Short: "Show one entry: labels, provenance, acquisition and spectrum",
		Long: `show prints everything the library holds about one entry. REF is an id, a
unique id prefix of at least 4 characters, or a name. With --json it
prints the entry as stored, spectrum included (schema statemix.entry/v1).
--plot draws the spectrum as recorded, its main feature marked, into an
SVG or PNG file.`,
		Example: `  statemix library show "Ti nitride L3M23M23"
  statemix library show 3f9a --plot tin.svg
  statemix library show 3f9a --json > tin.json`,
		Args:              cobra.ExactArgs(1),
		ValidArgsFunction: completeRefs(app),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Ref = args[0]
			return runLibraryShow(app, o)
		},
	}
	cmd.Flags().StringVar(&o.Plot, "plot", "", "draw the spectrum into `FILE` (.svg or .png)")
	_ = cmd.MarkFlagFilename("plot", "svg", "png")
	return cmd
}

// entryJSON is the statemix.entry/v1 document.
type entryJSON struct {
	Schema string          `json:"schema"`
	Entry  json.RawMessage `json:"entry"`
}

func runLibraryShow(app *App, o *libraryShowOptions) error {
	if o.Plot != "" {
		switch strings.ToLower(filepath.Ext(o.Plot)) {
		case ".svg", ".png":
		default:
			return usageErrorf("library show: --plot %s: want a .svg or .png file", o.Plot)
		}
	}
	st, err := app.openLibrary(false)
	if err != nil {
		return err
	}
	e, err := st.Resolve(o.Ref)
	if err != nil {
		return fmt.Errorf("library show: %w", err)
	}
	if o.Plot != "" {
		if err := plotEntry(e, o.Plot); err != nil {
			return fmt.Errorf("library show: %w", err)
		}
		app.Infof("wrote %s\n", o.Plot)
	}
	if app.JSON {
		b, err := json.Marshal(e)
		if err != nil {
			return err
		}
		return writeJSON(app.Out, entryJSON{Schema: "statemix.entry/v1", Entry: b})
	}
	var buf bytes.Buffer
	tw := newTable(&buf)
	row := func(k, v string) {
		if v != "" {
			fmt.Fprintf(tw, "%s:\t%s\n", k, v)
		}
	}
	num := func(k string, v float64, unit string) {
		if v != 0 {
			row(k, strings.TrimSpace(sigNum(v, 4)+" "+unit))
		}
	}
	row("id", e.ID)
	row("name", e.Name)
	row("kind", string(e.Kind))
	row("element", e.Element)
	row("transition", e.Transition)
	row("state", e.State)
	row("compound", e.Compound)
	for _, k := range sortedKeys(e.Tags) {
		row("tag "+k, e.Tags[k])
	}
	row("note", e.Note)
	num("density", e.Density, "g/cm3")
	num("valence", e.Valence, "")
	num("band gap", e.BandGap, "eV")
	p := e.Provenance
	row("source", p.SourceFile)
	if p.SourceFile != "" {
		row("block", fmt.Sprint(p.Block+1))
	}
	row("block id", p.BlockID)
	row("source sha256", p.SourceSHA256)
	if !p.ImportedAt.IsZero() {
		row("added", p.ImportedAt.Format("2006-01-02 15:04:05 MST"))
	}
	if !e.ModifiedAt.IsZero() {
		row("edited", e.ModifiedAt.Format("2006-01-02 15:04:05 MST"))
	}
	row("added by", p.ToolVersion)
	a := e.Acquisition
	row("technique", a.Technique)
	num("beam energy", a.BeamEnergyKeV, "keV")
	num("beam current", a.BeamCurrentNA, "nA")
	num("modulation", a.ModulationEV, "eV")
	num("dwell", a.DwellS, "s")
	if a.Scans != 0 {
		row("scans", fmt.Sprint(a.Scans))
	}
	row("analyser mode", a.AnalyserMode)
	row("energy reference", a.EnergyReference)
	num("take-off angle", a.TakeOffDeg, "deg")
	if s := e.Spectrum; s != nil {
		step := "explicit axis"
		if s.Axis.Uniform() {
			step = fmt.Sprintf("step %g eV", s.Axis.Step)
		}
		row("spectrum", fmt.Sprintf("%s, %d channels, %s eV, %s", s.Mode, s.Len(), energyRange(e), step))
		if fe, ok := library.MainFeature(s); ok {
			row("main feature", fmt.Sprintf("%.1f eV (peak-to-peak %s in the file's units)", fe, sigNum(s.Features(0).PeakToPeak, 4)))
		}
	}
	if len(e.Fit) > 0 {
		row("fit", fmt.Sprintf("%d bytes of fit result (see --json)", len(e.Fit)))
	}
	row("revision", fmt.Sprint(e.Revision))
	if err := tw.Flush(); err != nil {
		return err
	}
	_, err = app.Out.Write(buf.Bytes())
	return err
}

func sortedKeys(m map[string]string) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}

// orDash returns s, or "-" for an empty field in a table.
func orDash(s string) string {
	if strings.TrimSpace(s) == "" {
		return "-"
	}
	return s
}

// plotEntry draws an entry's spectrum with its main feature marked.
func plotEntry(e *library.Entry, path string) error {
	s := e.Spectrum
	ylabel := "N(E) (as recorded)"
	if s.Mode == lineshape.Derivative {
		ylabel = "dN/dE (as recorded)"
	}
	p := render.NewPlot("Kinetic energy (eV)", ylabel)
	p.Title.Text = fmt.Sprintf("%s  (%s %s %s)", e.Name, e.Element, e.Transition, e.State)
	p.Add(render.Line(s.Axis.Energies(), s.Y, render.Palette[0], vg.Points(1), nil))
	if fe, ok := library.MainFeature(s); ok {
		lo, hi := s.Y[0], s.Y[0]
		for _, v := range s.Y {
			lo, hi = min(lo, v), max(hi, v)
		}
		mark := render.Line([]float64{fe, fe}, []float64{lo, hi}, render.Palette[1], vg.Points(0.8), []vg.Length{vg.Points(3), vg.Points(3)})
		p.Add(mark)
		p.Legend.Add(fmt.Sprintf("main feature %.1f eV", fe), mark)
	}
	fig := &render.Figure{Panels: []render.Panel{{Plot: p}}}
	return fig.WriteFile(path)
}

// sigNum prints v with n significant digits and no exponent while that
// stays readable (1e-4 <= |v| < 1e9): 13900 rather than 1.39e+04, 0.02234
// rather than 2.234e-02.
func sigNum(v float64, n int) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	e := int(math.Floor(math.Log10(math.Abs(v))))
	if e < -4 || e >= 9 {
		return strconv.FormatFloat(v, 'g', n, 64)
	}
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', n, 64), 64) // round to n digits
	return strconv.FormatFloat(r, 'f', -1, 64)
}
