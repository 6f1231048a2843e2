package main

// The --atomic and --overlayer glue shared by statemix fit and statemix
// profile: it gathers each reference's material (compound, density and
// other overrides from the library entry or the reference file) and hands
// the fitted coefficients to package quant, which does the numbers.

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/spf13/cobra"

	"statemix/cmd/statemix/render"
	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/lineshape/quant"
	"statemix/lineshape/series"
)

// registerQuantFlags registers --atomic, --overlayer and --take-off on
// cmd, for fit and profile alike.
func registerQuantFlags(cmd *cobra.Command, opts *fitOptions) {
	f := cmd.Flags()
	f.BoolVar(&opts.Atomic, "atomic", false, "also report atomic fractions (matrix-corrected with the references' compounds)")
	f.StringVar(&opts.Overlayer, "overlayer", "", "overlayer thickness from the fit, `OXIDE_STATE:SUBSTRATE_STATE`")
	f.Float64Var(&opts.TakeOff, "take-off", 0, "analyser take-off angle in `DEG` from the surface for --overlayer (default the file's, else 90)")
	_ = cmd.RegisterFlagCompletionFunc("overlayer", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return []string{"oxide:metal", "nitride:metal", "carbide:metal", "silicide:metal"}, cobra.ShellCompDirectiveNoFileComp
	})
	_ = cmd.RegisterFlagCompletionFunc("take-off", cobra.NoFileCompletions)
}

// atomicFraction is one state's matrix-corrected atomic fraction.
type atomicFraction struct {
	Ref      string  `json:"ref"`
	State    string  `json:"state"`
	Compound string  `json:"compound"`
	Factor   float64 `json:"factor"` // N L (1 + r), atoms/cm3 x nm
	Fraction float64 `json:"atomic_fraction"`
	SD       float64 `json:"atomic_fraction_sd"`
}

// quantifier converts the coefficients of fits with one set of references
// (one fit, or every step of a profile) to atomic fractions and an
// overlayer thickness. newQuantifier resolves the materials once.
type quantifier struct {
	energy float64 // transition energy used for the IMFPs, eV: the window centre

	atomic  bool
	factors []float64 // N L of each reference, with --atomic
	formula []string  // compound of each reference, with --atomic

	overlayer    bool
	oxState      string
	subState     string
	ox, sub      int             // component indexes of the two states
	model        quant.Overlayer // without the take-off angle
	takeOff      float64         // --take-off, 0 when not given
	takeOffGiven bool
}

// newQuantifier prepares --atomic and --overlayer for fits whose
// components are comps over window, or returns nil when neither is asked
// for.
func newQuantifier(opts *fitOptions, comps []fit.Component, window [2]float64) (*quantifier, error) {
	if !opts.Atomic && opts.Overlayer == "" {
		return nil, nil
	}
	q := &quantifier{energy: (window[0] + window[1]) / 2, takeOff: opts.TakeOff, takeOffGiven: opts.TakeOffSet}
	if opts.Atomic {
		q.atomic = true
		els := make([]string, len(comps))
		mats := make([]quant.Material, len(comps))
		q.formula = make([]string, len(comps))
		for i, c := range comps {
			if c.Element == "" {
				return nil, badInputf("--atomic: reference %s names no element%s", label(c), fromFileAdvice(opts, c))
			}
			m, err := compoundOf(opts, c)
			if err != nil {
				return nil, err
			}
			els[i], mats[i], q.formula[i] = c.Element, m, m.Formula
		}
		f, err := quant.StandardFactors(els, mats, q.energy)
		if err != nil {
			var se *quant.StandardError
			if errors.As(err, &se) {
				return nil, badInputf("--atomic: reference %s: %v", label(comps[se.Index]), se.Err)
			}
			return nil, badInputf("--atomic: %v", err)
		}
		q.factors = f
	}
	if opts.Overlayer != "" {
		if err := q.prepareOverlayer(opts, comps); err != nil {
			return nil, err
		}
	}
	return q, nil
}

// prepareOverlayer finds the two states of --overlayer among comps and
// builds the model from their materials.
func (q *quantifier) prepareOverlayer(opts *fitOptions, comps []fit.Component) error {
	ox, sub, ok := strings.Cut(opts.Overlayer, ":")
	if !ok || ox == "" || sub == "" || ox == sub {
		return usageErrorf("--overlayer %q: want OXIDE_STATE:SUBSTRATE_STATE, e.g. oxide:metal", opts.Overlayer)
	}
	find := func(state string) (int, error) {
		idx := -1
		for i, c := range comps {
			if c.State == state {
				if idx >= 0 {
					return 0, usageErrorf("--overlayer: two references have state %s", state)
				}
				idx = i
			}
		}
		if idx < 0 {
			return 0, usageErrorf("--overlayer: no reference has state %s", state)
		}
		return idx, nil
	}
	var err error
	if q.ox, err = find(ox); err != nil {
		return err
	}
	if q.sub, err = find(sub); err != nil {
		return err
	}
	co, cs := comps[q.ox], comps[q.sub]
	mo, err := compoundOf(opts, co)
	if err != nil {
		return err
	}
	ms, err := compoundOf(opts, cs)
	if err != nil {
		return err
	}
	el := co.Element
	if el == "" {
		el = cs.Element
	}
	if q.model, err = quant.StandardsOverlayer(el, mo, ms, q.energy, 0); err != nil {
		return badInputf("--overlayer: %v", err)
	}
	q.overlayer, q.oxState, q.subState = true, ox, sub
	return nil
}

// compoundOf returns the material of a component's reference: its
// compound with the library entry's density, valence electrons and band
// gap where given, else the compound a reference file names, else the
// element itself for a metal.
func compoundOf(opts *fitOptions, c fit.Component) (quant.Material, error) {
	var formula string
	var ov quant.Override
	if e, ok := opts.entries[c.Ref]; ok {
		formula = e.Compound
		if e.Density > 0 {
			ov.Density = &e.Density
		}
		if e.Valence > 0 {
			ov.ValenceElectrons = &e.Valence
		}
		if e.BandGap > 0 {
			ov.BandGap = &e.BandGap
		}
	} else if ex, ok := opts.refExtra[c.Ref]; ok {
		formula = ex["compound"]
	}
	if formula == "" {
		if c.State == "metal" && c.Element != "" {
			formula = c.Element
		} else if advice := fromFileAdvice(opts, c); advice != "" {
			return quant.Material{}, badInputf("reference %s (%s) has no compound%s", label(c), c.State, advice)
		} else {
			return quant.Material{}, badInputf("reference %s (%s) has no compound: set it (statemix library edit REF --set compound=FORMULA)", label(c), c.State)
		}
	}
	m, err := quant.ResolveMaterial(formula, ov)
	if err != nil {
		return m, badInputf("reference %s: %v", label(c), err)
	}
	return m, nil
}

// fromFileAdvice says, for a reference read with --ref-file, where its
// element and compound come from (library edit cannot change a file), and
// is "" for a library reference.
func fromFileAdvice(opts *fitOptions, c fit.Component) string {
	if _, ok := opts.refExtra[c.Ref]; !ok {
		return ""
	}
	return ": a --ref-file reference takes them from the file (a library entry file or statemix spectrum JSON with element and compound); " +
		"or add it to the library with statemix library add FILE --element EL --compound FORMULA ... and fit with --refs"
}

func label(c fit.Component) string {
	if c.Name != "" {
		return c.Name
	}
	return c.Ref
}

// fitCoefficients returns the coefficients of res with their covariance
// and, for a bootstrap, their samples.
func fitCoefficients(res *fit.Result) quant.FitCoefficients {
	fc := quant.FitCoefficients{Values: make([]float64, len(res.Components)), AtBound: make([]bool, len(res.Components))}
	for i, c := range res.Components {
		fc.Values[i], fc.AtBound[i] = c.Coefficient, c.AtBound
	}
	if cov := res.CoefficientCovariance(); cov != nil {
		fc.Covariance = cov
	}
	if res.Uncertainty == fit.Bootstrap && res.Samples != nil && len(res.Samples.Coefficients) > 1 {
		fc.Samples = res.Samples.Coefficients
	}
	return fc
}

// atomicFractions converts the coefficients of res to atomic fractions.
func (q *quantifier) atomicFractions(res *fit.Result) ([]atomicFraction, error) {
	x, sd, err := fitCoefficients(res).AtomicFractions(q.factors)
	if err != nil {
		return nil, badInputf("--atomic: %v", err)
	}
	out := make([]atomicFraction, len(res.Components))
	for i, c := range res.Components {
		out[i] = atomicFraction{Ref: c.Ref, State: c.State, Compound: q.formula[i], Factor: q.factors[i], Fraction: x[i]}
		if sd != nil && !math.IsNaN(sd[i]) {
			out[i].SD = sd[i]
		}
	}
	return out, nil
}

// takeOffFor returns the take-off angle for a spectrum: --take-off, else
// the file's, else 0 (which the model takes as 90).
func (q *quantifier) takeOffFor(s *lineshape.Spectrum) float64 {
	switch {
	case q.takeOffGiven:
		return q.takeOff
	case s != nil && s.Meta.TakeOffDeg > 0:
		return s.Meta.TakeOffDeg
	}
	return 0
}

// thickness returns the overlayer thickness from the coefficients of res
// at the take-off angle theta (degrees from the surface, 0 for 90). An
// *quant.OverlayerError (no substrate signal, a negative ratio) is
// returned as it is for the caller to report.
func (q *quantifier) thickness(res *fit.Result, theta float64) (quant.Thickness, error) {
	o := q.model
	o.TakeOffDeg = theta
	return o.ThicknessFromCoefficients(fitCoefficients(res).Pair(q.ox, q.sub))
}

// assumptions says, once, what the conversions assume.
func (q *quantifier) assumptions() []string {
	var out []string
	if q.atomic {
		out = append(out, fmt.Sprintf("atomic fractions are matrix-corrected with N L of each reference's compound (TPP-2M IMFP at %.4g eV, the window centre); "+
			"they assume a sample homogeneous within the analysed depth, references and unknown recorded under the same conditions, and equal backscattering", q.energy))
	}
	if q.overlayer {
		out = append(out, fmt.Sprintf("%s thickness on %s by %s with pure-standard coefficients (k = 1), TPP-2M IMFPs at %.4g eV; "+
			"it assumes a flat uniform overlayer on the substrate, no contamination layer and no elastic scattering", q.oxState, q.subState, quant.StrohmeierMethod, q.energy))
	}
	return out
}

func atomicTable(at []atomicFraction) *render.Table {
	t := &render.Table{Header: []string{"state", "compound", "atomic fraction"}, Right: []bool{false, false, true}}
	for _, a := range at {
		t.Rows = append(t.Rows, []string{a.State, a.Compound, fmt.Sprintf("%.3f ± %.3f", a.Fraction, a.SD)})
	}
	return t
}

func atomicSection(at []atomicFraction) render.Section {
	return render.Section{Heading: "Atomic fractions", Blocks: []render.Block{
		render.TableBlock(atomicTable(at)),
		render.Paragraph("Matrix-corrected with N L of each reference's compound (TPP-2M IMFP at the window centre, equal backscattering); valid for a sample homogeneous within the analysed depth."),
	}}
}

// overlayerResult is the --overlayer thickness.
type overlayerResult struct {
	Overlayer   string   `json:"overlayer_state"`
	Substrate   string   `json:"substrate_state"`
	ThicknessNM float64  `json:"thickness_nm"`
	SDNM        float64  `json:"thickness_sd_nm"`
	Ratio       float64  `json:"ratio"`
	TakeOffDeg  float64  `json:"take_off_deg"`
	Method      string   `json:"method"`
	Warnings    []string `json:"-"`
}

// fitOverlayer is statemix fit's --overlayer: the thickness at the
// unknown's take-off angle; no thickness (an *quant.OverlayerError) is bad
// input.
func fitOverlayer(q *quantifier, unknown *lineshape.Spectrum, res *fit.Result) (*overlayerResult, error) {
	t, err := q.thickness(res, q.takeOffFor(unknown))
	if err != nil {
		var oe *quant.OverlayerError
		if errors.As(err, &oe) {
			return nil, badInput(err)
		}
		return nil, err
	}
	sd := t.SD
	if math.IsNaN(sd) {
		sd = 0
	}
	return &overlayerResult{Overlayer: q.oxState, Substrate: q.subState, ThicknessNM: t.Thickness, SDNM: sd, Ratio: t.Ratio,
		TakeOffDeg: t.TakeOff, Method: t.Method, Warnings: t.Warnings}, nil
}

// thicknessText prints a thickness and its standard deviation in nm with
// the same number of decimals, set by two significant digits of the SD
// (common practice, as the GUM recommends), between 0 and 3 decimals:
// "3.040 ± 0.033 nm", "25.0 ± 3.1 nm"; "3.04 nm" without an SD.
func thicknessText(nm, sd float64) string {
	if !(sd > 0) || math.IsInf(sd, 0) {
		return fmt.Sprintf("%.2f nm", nm)
	}
	d := 1 - int(math.Floor(math.Log10(sd)))
	d = max(0, min(3, d))
	return fmt.Sprintf("%.*f ± %.*f nm", d, nm, d, sd)
}

func overlayerSection(ov *overlayerResult) render.Section {
	return render.Section{Heading: "Overlayer thickness", Blocks: []render.Block{
		render.KeyValues([][2]string{
			{"overlayer / substrate", ov.Overlayer + " on " + ov.Substrate},
			{"thickness", thicknessText(ov.ThicknessNM, ov.SDNM)},
			{"coefficient ratio", fmt.Sprintf("%.4g", ov.Ratio)},
			{"take-off angle", fmt.Sprintf("%.3g° from the surface", ov.TakeOffDeg)},
			{"model", ov.Method},
		}),
		render.Warnings(ov.Warnings),
	}}
}

// stepOverlayer is a profile step's --overlayer result: thickness_nm is
// null when the model gives no thickness for the step (no substrate
// signal), and warnings say why.
type stepOverlayer struct {
	Overlayer   string   `json:"overlayer_state"`
	Substrate   string   `json:"substrate_state"`
	ThicknessNM *float64 `json:"thickness_nm"`
	SDNM        *float64 `json:"thickness_sd_nm"`
	Ratio       *float64 `json:"ratio"`
	TakeOffDeg  float64  `json:"take_off_deg"`
	Method      string   `json:"method"`
	Warnings    []string `json:"warnings,omitempty"`
}

// profileQuant holds the --atomic and --overlayer results of every step
// of a profile, in the order of the steps.
type profileQuant struct {
	q         *quantifier
	Atomic    [][]atomicFraction // nil for a step without fractions
	Overlayer []*stepOverlayer   // nil without --overlayer
	// Warnings are the steps' quantification warnings, prefixed by the
	// step.
	Warnings []string
}

// quantifySteps converts each step's coefficients as statemix fit does
// one spectrum's, with the take-off angle of each step's spectrum unless
// --take-off is given. A step the model gives no thickness or fractions
// for gets a warning instead of a number. It returns nil when neither
// --atomic nor --overlayer is given.
func quantifySteps(opts *fitOptions, steps []series.Step, res *series.ProfileResult) (*profileQuant, error) {
	r0 := res.Steps[0].Result
	q, err := newQuantifier(opts, r0.Components, r0.Window)
	if err != nil || q == nil {
		return nil, err
	}
	spec := map[int]*lineshape.Spectrum{}
	for _, s := range steps {
		spec[s.Index] = s.Spectrum
	}
	pq := &profileQuant{q: q, Atomic: make([][]atomicFraction, len(res.Steps))}
	if q.overlayer {
		pq.Overlayer = make([]*stepOverlayer, len(res.Steps))
	}
	warn := func(s series.StepResult, w string) {
		pq.Warnings = append(pq.Warnings, fmt.Sprintf("step %d (%s): %s", s.Index, s.Source, w))
	}
	for i, s := range res.Steps {
		if q.atomic {
			at, err := q.atomicFractions(s.Result)
			if err != nil {
				warn(s, err.Error())
			} else {
				pq.Atomic[i] = at
			}
		}
		if !q.overlayer {
			continue
		}
		theta := q.takeOffFor(spec[s.Index])
		t, err := q.thickness(s.Result, theta)
		var oe *quant.OverlayerError
		switch {
		case errors.As(err, &oe):
			if theta == 0 {
				theta = 90
			}
			pq.Overlayer[i] = &stepOverlayer{Overlayer: q.oxState, Substrate: q.subState, TakeOffDeg: theta,
				Method: quant.StrohmeierMethod, Warnings: []string{err.Error()}}
			warn(s, err.Error())
			continue
		case err != nil:
			return nil, fmt.Errorf("step %d (%s): --overlayer: %w", s.Index, s.Source, err)
		}
		pq.Overlayer[i] = &stepOverlayer{Overlayer: q.oxState, Substrate: q.subState, ThicknessNM: finite(t.Thickness),
			SDNM: finite(t.SD), Ratio: finite(t.Ratio), TakeOffDeg: t.TakeOff, Method: t.Method, Warnings: t.Warnings}
		for _, w := range t.Warnings {
			warn(s, w)
		}
	}
	return pq, nil
}
