package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/spf13/cobra"

	"statemix/lineshape/quant"
)

// calcSchema is the schema id of every calc --json output.
const calcSchema = "statemix.calc/v1"

func newCalcCmd(app *App) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "calc",
		Short: "Quick numbers: inelastic mean free path and overlayer thickness",
		Long: `calc computes the numbers that turn signal fractions into atomic fractions
and thicknesses, one at a time, for checking by hand or for scripts:

  imfp       inelastic mean free path by TPP-2M (or the Seah-Dench
             attenuation length) from formula, density, valence electrons
             and band gap
  overlayer  oxide-on-metal thickness from an intensity ratio by the
             Strohmeier equation

With --json each prints one object of schema statemix.calc/v1.`,
		Example: `  statemix calc imfp --formula Al --density 2.70 --valence 3 --gap 0 --energy 1000
  statemix calc imfp --formula SiO2 --energy 1619 --json
  statemix calc overlayer --ratio 1 --n-overlayer 4.690e22 --n-substrate 6.026e22 \
      --lambda-overlayer 3.210 --lambda-substrate 3.072 --take-off 90`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return cmd.Help()
		},
	}
	cmd.AddCommand(newCalcImfpCmd(app), newCalcOverlayerCmd(app))
	return cmd
}

// calcImfpOptions holds the flag values of statemix calc imfp.
type calcImfpOptions struct {
	// Formula is the material's chemical formula (required).
	Formula string
	// Density, Valence and Gap override the built-in table when their Set
	// flag is true; a formula outside the table needs all three.
	Density, Valence, Gap          float64
	DensitySet, ValenceSet, GapSet bool
	// Energy is the electron kinetic energy in eV (required).
	Energy float64
	// Method is "tpp2m" (the default when empty) or "seah-dench".
	Method string
	// Element, if not empty, also reports the atomic density of that
	// element in the material.
	Element string
}

func newCalcImfpCmd(app *App) *cobra.Command {
	o := &calcImfpOptions{}
	cmd := &cobra.Command{
		Use:   "imfp --formula F [--density G_CM3 --valence N --gap EV] --energy EV",
		Short: "Inelastic mean free path of electrons in a material (TPP-2M)",
		Long: `imfp prints the inelastic mean free path in nm of electrons of the given
kinetic energy in a material, by the TPP-2M formula (Tanuma, Powell & Penn,
Surf. Interface Anal. 21 (1994) 165). The material is a chemical formula;
its density (g/cm3), valence electrons per formula unit (TPP-2M convention:
Cu 11, SiO2 16, Al2O3 24) and band gap (eV) come from the built-in table of
common standards unless given. TPP-2M was fitted from 50 eV to 2000 eV;
outside that range the result is an extrapolation and a warning says so.

With --method seah-dench it prints the Seah & Dench (1979) attenuation
length instead (element or inorganic-compound fit; only the density is
needed), as attenuation_length_nm in JSON. With --element EL it also prints
the atomic density of EL in the material (atoms/cm3), the N of the
atomic-fraction and overlayer formulas.`,
		Example: `  statemix calc imfp --formula Al --density 2.70 --valence 3 --gap 0 --energy 1000
  statemix calc imfp --formula Al2O3 --energy 1393 --element Al
  statemix calc imfp --formula SiO2 --energy 1619 --method seah-dench --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			f := cmd.Flags()
			o.DensitySet, o.ValenceSet, o.GapSet = f.Changed("density"), f.Changed("valence"), f.Changed("gap")
			if !f.Changed("formula") {
				return usageErrorf("calc imfp: --formula is required")
			}
			if !f.Changed("energy") {
				return usageErrorf("calc imfp: --energy is required (electron kinetic energy in eV)")
			}
			return runCalcImfp(app, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Formula, "formula", "", "chemical formula `F` of the material (Al, SiO2, Al2O3, TiN, ...)")
	f.Float64Var(&o.Density, "density", 0, "density `G_CM3` in g/cm3 (default from the built-in table)")
	f.Float64Var(&o.Valence, "valence", 0, "`N` valence electrons per formula unit, TPP-2M convention (default from the built-in table)")
	f.Float64Var(&o.Gap, "gap", 0, "band gap `EV` in eV, 0 for metals (default from the built-in table)")
	f.Float64Var(&o.Energy, "energy", 0, "electron kinetic energy `EV` in eV")
	f.StringVar(&o.Method, "method", "tpp2m", "`METHOD`: tpp2m (IMFP) or seah-dench (attenuation length)")
	f.StringVar(&o.Element, "element", "", "also report the atomic density of element `EL` in the material")
	_ = cmd.RegisterFlagCompletionFunc("method", cobra.FixedCompletions([]string{"tpp2m", "seah-dench"}, cobra.ShellCompDirectiveNoFileComp))
	_ = cmd.RegisterFlagCompletionFunc("formula", cobra.FixedCompletions(quant.BuiltinFormulas(), cobra.ShellCompDirectiveNoFileComp))
	return cmd
}

// calcImfpJSON is the statemix.calc/v1 object of calc imfp.
type calcImfpJSON struct {
	Schema              string   `json:"schema"`
	Calculation         string   `json:"calculation"`
	Method              string   `json:"method"`
	Formula             string   `json:"formula"`
	EnergyEV            float64  `json:"energy_ev"`
	IMFPNM              *float64 `json:"imfp_nm,omitempty"`
	AttenuationLengthNM *float64 `json:"attenuation_length_nm,omitempty"`
	DensityGCM3         float64  `json:"density_g_cm3"`
	ValenceElectrons    float64  `json:"valence_electrons"`
	BandGapEV           float64  `json:"band_gap_ev"`
	MolarMassGMol       float64  `json:"molar_mass_g_mol"`
	MaterialSource      string   `json:"material_source"`
	// TPP-2M intermediate quantities.
	PlasmonEnergyEV *float64 `json:"plasmon_energy_ev,omitempty"`
	Beta            *float64 `json:"beta,omitempty"`
	Gamma           *float64 `json:"gamma,omitempty"`
	C               *float64 `json:"c,omitempty"`
	D               *float64 `json:"d,omitempty"`
	U               *float64 `json:"u,omitempty"`
	// Seah-Dench monolayer thickness.
	MonolayerNM *float64 `json:"monolayer_nm,omitempty"`
	// Atomic density of --element.
	Element            string    `json:"element,omitempty"`
	AtomicDensityPerCM *float64  `json:"atomic_density_cm3,omitempty"`
	ValidRangeEV       []float64 `json:"valid_range_ev,omitempty"`
	Warnings           []string  `json:"warnings"`
}

func runCalcImfp(app *App, o *calcImfpOptions) error {
	if o.Method == "" {
		o.Method = "tpp2m"
	}
	if o.Method != "tpp2m" && o.Method != "seah-dench" {
		return usageErrorf("calc imfp: --method %q: want tpp2m or seah-dench", o.Method)
	}
	if !(o.Energy > 0) || math.IsInf(o.Energy, 0) {
		return usageErrorf("calc imfp: --energy %g: need a positive kinetic energy in eV", o.Energy)
	}
	if o.Element != "" {
		if _, err := quant.Element(o.Element); err != nil {
			return usageErrorf("calc imfp: --element: %v", err)
		}
	}
	var ov quant.Override
	if o.DensitySet {
		ov.Density = &o.Density
	}
	if o.ValenceSet {
		ov.ValenceElectrons = &o.Valence
	}
	if o.GapSet {
		ov.BandGap = &o.Gap
	}
	var m quant.Material
	var err error
	if o.Method == "seah-dench" && !o.ValenceSet && !o.GapSet {
		// Seah-Dench needs only the density: do not ask for the rest.
		m, err = quant.LookupMaterial(o.Formula)
		if err != nil && o.DensitySet {
			m, err = quant.Material{Formula: o.Formula, Source: "user-given"}, nil
		}
		if err == nil && o.DensitySet {
			m.Density = o.Density
			m.Source = "user-given density"
		}
		if err == nil && !(m.Density > 0 && m.Density <= 30) {
			err = fmt.Errorf("material %s: density %g g/cm3 outside (0, 30]", m.Formula, m.Density)
		}
	} else {
		m, err = quant.ResolveMaterial(o.Formula, ov)
	}
	if err != nil {
		return usageErrorf("calc imfp: %v", err)
	}
	formula, _ := quant.ParseFormula(m.Formula)
	out := calcImfpJSON{
		Schema: calcSchema, Calculation: "imfp", Formula: m.Formula, EnergyEV: o.Energy,
		DensityGCM3: m.Density, ValenceElectrons: m.ValenceElectrons, BandGapEV: m.BandGap,
		MolarMassGMol: formula.MolarMass(), MaterialSource: m.Source, Warnings: []string{},
	}
	if o.Element != "" {
		n, err := quant.AtomicDensity(m, o.Element)
		if err != nil {
			return usageErrorf("calc imfp: --element: %v", err)
		}
		out.Element, out.AtomicDensityPerCM = o.Element, &n
	}
	if o.Method == "tpp2m" {
		r, err := quant.TPP2M(m, o.Energy)
		if err != nil {
			return badInput(fmt.Errorf("calc imfp: %w", err))
		}
		out.Method = quant.TPP2MMethod
		out.IMFPNM = &r.IMFP
		out.PlasmonEnergyEV, out.Beta, out.Gamma, out.C, out.D, out.U = &r.Ep, &r.Beta, &r.Gamma, &r.C, &r.D, &r.U
		out.ValidRangeEV = []float64{quant.TPP2MMinEV, quant.TPP2MMaxEV}
		out.Warnings = append(out.Warnings, r.Warnings...)
	} else {
		r, err := quant.SeahDench(m, o.Energy)
		if err != nil {
			return badInput(fmt.Errorf("calc imfp: %w", err))
		}
		out.Method = quant.SeahDenchMethod
		if r.Compound {
			out.Method += ", inorganic-compound fit"
		} else {
			out.Method += ", element fit"
		}
		out.AttenuationLengthNM = &r.Length
		out.MonolayerNM = &r.MonolayerNM
		out.ValenceElectrons, out.BandGapEV = 0, 0 // not used
	}
	for _, w := range out.Warnings {
		app.Warn(w)
	}
	if app.JSON {
		return encodeCalc(app.Out, out)
	}
	if out.IMFPNM != nil {
		fmt.Fprintf(app.Out, "IMFP %.3f nm  (%s, %s eV electrons; %s rho %s g/cm3, Nv %s, Eg %s eV)\n",
			*out.IMFPNM, "TPP-2M", plainNum(o.Energy), m.Formula, plainNum(m.Density), plainNum(m.ValenceElectrons), plainNum(m.BandGap))
	} else {
		fmt.Fprintf(app.Out, "attenuation length %.3f nm  (Seah-Dench 1979, %s eV electrons; %s rho %s g/cm3, monolayer %.4f nm)\n",
			*out.AttenuationLengthNM, plainNum(o.Energy), m.Formula, plainNum(m.Density), *out.MonolayerNM)
	}
	if out.AtomicDensityPerCM != nil {
		fmt.Fprintf(app.Out, "N(%s) %.4e atoms/cm3 in %s\n", o.Element, *out.AtomicDensityPerCM, m.Formula)
	}
	app.Infof("material values: %s\n", m.Source)
	return nil
}

// calcOverlayerOptions holds the flag values of statemix calc overlayer.
type calcOverlayerOptions struct {
	// Ratio is I_overlayer / I_substrate (required); RatioSD its standard
	// deviation (0: unknown).
	Ratio, RatioSD float64
	// NOverlayer and NSubstrate are atoms of the element per cm3 (required).
	NOverlayer, NSubstrate float64
	// LambdaOverlayer and LambdaSubstrate are IMFPs in nm (required).
	LambdaOverlayer, LambdaSubstrate float64
	// TakeOff is the take-off angle in degrees from the surface; 0 means 90.
	TakeOff float64
}

func newCalcOverlayerCmd(app *App) *cobra.Command {
	o := &calcOverlayerOptions{}
	cmd := &cobra.Command{
		Use:   "overlayer --ratio R --n-overlayer N --n-substrate N --lambda-overlayer NM --lambda-substrate NM [--take-off DEG]",
		Short: "Overlayer (oxide) thickness from an intensity ratio (Strohmeier)",
		Long: `overlayer prints the thickness in nm of a flat, uniform overlayer (an oxide on
its metal) from the ratio R = I_overlayer / I_substrate of the element's
signals, by the Strohmeier equation (Surf. Interface Anal. 15 (1990) 51):

  d = L_ov sin(theta) ln[1 + R (N_sub L_sub) / (N_ov L_ov)]

N are atoms of the element per cm3 in each layer (calc imfp --element gives
them), L the IMFPs in nm at the transition energy (calc imfp), theta the
analyser take-off angle in degrees from the surface (default 90). Elastic
scattering and contamination are neglected. With --ratio-sd the thickness
gets a first-order standard deviation.`,
		Example: `  statemix calc overlayer --ratio 1 --n-overlayer 4.690e22 --n-substrate 6.026e22 \
      --lambda-overlayer 3.210 --lambda-substrate 3.072 --take-off 90
  statemix calc overlayer --ratio 0.8 --ratio-sd 0.05 --n-overlayer 2.195e22 \
      --n-substrate 4.996e22 --lambda-overlayer 3.5 --lambda-substrate 3.0 --take-off 45 --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			for _, name := range []string{"ratio", "n-overlayer", "n-substrate", "lambda-overlayer", "lambda-substrate"} {
				if !cmd.Flags().Changed(name) {
					return usageErrorf("calc overlayer: --%s is required", name)
				}
			}
			return runCalcOverlayer(app, o)
		},
	}
	f := cmd.Flags()
	f.Float64Var(&o.Ratio, "ratio", 0, "intensity ratio `R` = I_overlayer / I_substrate")
	f.Float64Var(&o.RatioSD, "ratio-sd", 0, "standard deviation `SD` of the ratio (default 0: unknown)")
	f.Float64Var(&o.NOverlayer, "n-overlayer", 0, "`N` atoms of the element per cm3 in the overlayer")
	f.Float64Var(&o.NSubstrate, "n-substrate", 0, "`N` atoms of the element per cm3 in the substrate")
	f.Float64Var(&o.LambdaOverlayer, "lambda-overlayer", 0, "IMFP `NM` in the overlayer, nm")
	f.Float64Var(&o.LambdaSubstrate, "lambda-substrate", 0, "IMFP `NM` in the substrate, nm")
	f.Float64Var(&o.TakeOff, "take-off", 90, "take-off angle `DEG` in degrees from the surface")
	return cmd
}

// calcOverlayerJSON is the statemix.calc/v1 object of calc overlayer.
type calcOverlayerJSON struct {
	Schema             string   `json:"schema"`
	Calculation        string   `json:"calculation"`
	Method             string   `json:"method"`
	ThicknessNM        float64  `json:"thickness_nm"`
	ThicknessSDNM      *float64 `json:"thickness_sd_nm,omitempty"`
	Ratio              float64  `json:"ratio"`
	RatioSD            float64  `json:"ratio_sd"`
	NOverlayer         float64  `json:"n_overlayer_cm3"`
	NSubstrate         float64  `json:"n_substrate_cm3"`
	LambdaOverlayerNM  float64  `json:"lambda_overlayer_nm"`
	LambdaSubstrateNM  float64  `json:"lambda_substrate_nm"`
	TakeOffDeg         float64  `json:"take_off_deg"`
	SensitivityRatio   float64  `json:"sensitivity_ratio"`
	InformationDepthNM float64  `json:"information_depth_nm"`
	Warnings           []string `json:"warnings"`
}

func runCalcOverlayer(app *App, o *calcOverlayerOptions) error {
	for _, v := range []struct {
		name string
		val  float64
	}{{"n-overlayer", o.NOverlayer}, {"n-substrate", o.NSubstrate}, {"lambda-overlayer", o.LambdaOverlayer}, {"lambda-substrate", o.LambdaSubstrate}} {
		if !(v.val > 0) || math.IsInf(v.val, 0) {
			return usageErrorf("calc overlayer: --%s %g: need a positive number", v.name, v.val)
		}
	}
	if math.IsNaN(o.Ratio) || o.Ratio < 0 {
		return usageErrorf("calc overlayer: --ratio %g: need a nonnegative intensity ratio", o.Ratio)
	}
	if math.IsNaN(o.RatioSD) || o.RatioSD < 0 || math.IsInf(o.RatioSD, 0) {
		return usageErrorf("calc overlayer: --ratio-sd %g: need a nonnegative number", o.RatioSD)
	}
	if !(o.TakeOff > 0 && o.TakeOff <= 90) {
		return usageErrorf("calc overlayer: --take-off %g: need an angle in (0, 90] degrees from the surface", o.TakeOff)
	}
	ov := quant.Overlayer{
		NOverlayer: o.NOverlayer, NSubstrate: o.NSubstrate,
		LambdaOverlayer: o.LambdaOverlayer, LambdaSubstrate: o.LambdaSubstrate,
		TakeOffDeg: o.TakeOff,
	}
	th, err := ov.Thickness(o.Ratio, o.RatioSD)
	if err != nil {
		var oe *quant.OverlayerError
		if errors.As(err, &oe) {
			return badInput(fmt.Errorf("calc overlayer: %w", err))
		}
		return usageErrorf("calc overlayer: %v", err)
	}
	out := calcOverlayerJSON{
		Schema: calcSchema, Calculation: "overlayer", Method: quant.StrohmeierMethod,
		ThicknessNM: th.Thickness, Ratio: th.Ratio, RatioSD: th.RatioSD,
		NOverlayer: o.NOverlayer, NSubstrate: o.NSubstrate,
		LambdaOverlayerNM: o.LambdaOverlayer, LambdaSubstrateNM: o.LambdaSubstrate,
		TakeOffDeg: th.TakeOff, SensitivityRatio: th.K, InformationDepthNM: th.InformationDepth,
		Warnings: append([]string{}, th.Warnings...),
	}
	if o.RatioSD > 0 {
		out.ThicknessSDNM = &th.SD
	}
	for _, w := range out.Warnings {
		app.Warn(w)
	}
	if app.JSON {
		return encodeCalc(app.Out, out)
	}
	sd := ""
	if out.ThicknessSDNM != nil {
		sd = fmt.Sprintf(" +/- %.3f", th.SD)
	}
	fmt.Fprintf(app.Out, "overlayer thickness %.3f%s nm  (Strohmeier 1990, take-off %s°, ratio %s, k = N_ov L_ov / N_sub L_sub = %.4f)\n",
		th.Thickness, sd, plainNum(th.TakeOff), plainNum(th.Ratio), th.K)
	return nil
}

// encodeCalc writes one statemix.calc/v1 object.
func encodeCalc(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

// plainNum prints a number as given, without an exponent (1000000, not
// 1e+06; 2.19, not 2.190).
func plainNum(v float64) string {
	return strconv.FormatFloat(v, 'f', -1, 64)
}
