package main

import (
	"bytes"
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// convertOptions holds the flag values of statemix convert.
type convertOptions struct {
	File          string
	Block         int     // 1-based; 0 for every spectrum
	To            string  // "", "derivative" or "direct"
	Modulation    float64 // peak-to-peak modulation, eV
	ModulationSet bool    // --modulation was given
	Format        string  // "", "csv", "vamas" or "json"
	Output        string  // output file; "" or "-" for stdout
}

func newConvertCmd(app *App) *cobra.Command {
	opts := &convertOptions{}
	cmd := &cobra.Command{
		Use:   "convert FILE",
		Short: "Convert spectra between file formats and between direct and derivative",
		Long: `Convert spectra between file formats and between direct and derivative.

Convert reads the spectra in FILE (ISO 14976, statemix JSON, a .npy cube with
its sidecar, or CSV/TSV/whitespace columns; the kind is told from the content)
and writes them as CSV, ISO 14976 or statemix JSON, optionally turned into
derivative spectra by lock-in emulation (--to derivative, with a sinusoidal
modulation of --modulation eV peak to peak, else the modulation the file
records) or into direct spectra by integration with a straight baseline
through both ends (--to direct). Both need a uniform energy axis: a spectrum
on an uneven grid is first resampled, without overshoot, onto a uniform grid
with the same number of channels over the same range. The output format is
--format, else the one the -o file name suggests (.csv .txt .dat, .vms
.vamas, .json), else JSON with --json, else CSV. Output goes to -o
atomically (temporary file, then rename), or to stdout. --block N keeps only
the N-th spectrum (block, JSON spectrum, value column or cube pixel),
counting from 1.`,
		Example: `  # ISO 14976 to CSV on stdout
  statemix convert sample.vms --format csv

  # The third block of a depth profile, as statemix JSON
  statemix convert profile.vms --block 3 -o step3.json

  # A direct spectrum to the derivative a 2 eV peak-to-peak lock-in gives
  statemix convert direct.csv --to derivative --modulation 2 -o deriv.vms

  # A derivative spectrum integrated back to N(E)
  statemix convert deriv.dat --to direct --format csv -o direct.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.ModulationSet = cmd.Flags().Changed("modulation")
			return runConvert(app, opts)
		},
	}
	f := cmd.Flags()
	f.IntVar(&opts.Block, "block", 0, "convert only the `N`-th spectrum, counting from 1 (default every spectrum)")
	f.StringVar(&opts.To, "to", "", "turn spectra into `mode` derivative or direct (default keep each spectrum's mode)")
	f.Float64Var(&opts.Modulation, "modulation", 0, "modulation peak-to-peak `EV` for --to derivative (default the file's; 0 = plain derivative)")
	f.StringVar(&opts.Format, "format", "", "output `format`: csv, vamas or json (default from the -o name, else csv)")
	f.StringVarP(&opts.Output, "output", "o", "", "write to `FILE` (atomically) instead of stdout")
	_ = cmd.RegisterFlagCompletionFunc("to", cobra.FixedCompletions([]string{"derivative", "direct"}, cobra.ShellCompDirectiveNoFileComp))
	_ = cmd.RegisterFlagCompletionFunc("format", cobra.FixedCompletions([]string{"csv", "vamas", "json"}, cobra.ShellCompDirectiveNoFileComp))
	_ = cmd.RegisterFlagCompletionFunc("block", cobra.NoFileCompletions)
	_ = cmd.RegisterFlagCompletionFunc("modulation", cobra.NoFileCompletions)
	return cmd
}

// runConvert reads, converts and writes the spectra opts describes.
func runConvert(app *App, opts *convertOptions) error {
	switch opts.To {
	case "", "derivative", "direct":
	default:
		return usageErrorf("--to %q: want derivative or direct", opts.To)
	}
	if opts.ModulationSet && opts.To != "derivative" {
		return usageErrorf("--modulation applies only with --to derivative")
	}
	if opts.Modulation < 0 {
		return usageErrorf("--modulation %v: want a peak-to-peak amplitude of 0 eV or more", opts.Modulation)
	}
	if opts.Block < 0 {
		return usageErrorf("--block %d: blocks count from 1", opts.Block)
	}
	toFile := opts.Output != "" && opts.Output != "-"
	outFormat := opts.Format
	switch outFormat {
	case "":
		if f, ok := format.FormatFromPath(opts.Output); ok && toFile {
			outFormat = f
		} else if app.JSON {
			outFormat = format.FormatJSON
		} else {
			outFormat = format.FormatCSV
		}
	case format.FormatCSV, format.FormatVAMAS, format.FormatJSON:
	default:
		return usageErrorf("--format %q: want csv, vamas or json", opts.Format)
	}

	specs, err := format.ReadFile(opts.File, format.Options{Block: opts.Block})
	if err != nil {
		if errors.Is(err, format.ErrNoBlock) {
			return usageErrorf("--block: %v", err)
		}
		return err
	}
	for i, s := range specs {
		c, err := convertMode(app, opts, s)
		if err != nil {
			return err
		}
		specs[i] = c
	}
	if outFormat == format.FormatCSV && len(specs) > 1 && !shareAxis(specs) {
		return usageErrorf("%s: the %d spectra lie on different energy axes, which one CSV table cannot hold: pick one with --block or write --format json or vamas",
			opts.File, len(specs))
	}

	if toFile {
		if err := format.WriteFile(opts.Output, specs, outFormat); err != nil {
			return fmt.Errorf("%s: %w", opts.Output, err)
		}
		app.Infof("wrote %d %s to %s (%s)\n", len(specs), plural(len(specs), "spectrum", "spectra"), opts.Output, outFormat)
		return nil
	}
	// Whole output first, so that a failure leaves stdout empty.
	var buf bytes.Buffer
	if err := format.Write(&buf, specs, outFormat); err != nil {
		return err
	}
	_, err = app.Out.Write(buf.Bytes())
	return err
}

// convertMode turns s into the mode --to asks for, resampling an uneven
// axis first.
func convertMode(app *App, opts *convertOptions, s *lineshape.Spectrum) (*lineshape.Spectrum, error) {
	want := map[string]lineshape.Mode{"derivative": lineshape.Derivative, "direct": lineshape.Direct}
	target, ok := want[opts.To]
	if !ok {
		return s, nil
	}
	if s.Mode == target {
		app.Infof("%s: block %d is already %s: written unchanged\n", opts.File, s.Meta.Block+1, target)
		return s, nil
	}
	bad := func(err error) error {
		return &lineshape.InputError{File: opts.File, Block: s.Meta.Block, Err: err}
	}
	k := opts.Modulation
	if target == lineshape.Derivative && !opts.ModulationSet {
		k = s.Meta.ModulationEV
		if !(k > 0) {
			return nil, usageErrorf("%s: block %d: the file gives no modulation amplitude: give --modulation EV (peak to peak; 0 for the plain derivative)",
				opts.File, s.Meta.Block+1)
		}
	}
	u := s
	if !s.Axis.Uniform() {
		n := s.Len()
		step := (s.Axis.Hi() - s.Axis.Lo()) / float64(n-1)
		r, err := s.Resample(s.Axis.Lo(), step, n)
		if err != nil {
			return nil, bad(err)
		}
		app.Infof("%s: block %d: resampled onto a uniform grid of %d channels, %.6g eV apart\n", opts.File, s.Meta.Block+1, n, step)
		u = r
	}
	var (
		out *lineshape.Spectrum
		err error
	)
	if target == lineshape.Derivative {
		out, err = u.LockIn(k)
	} else {
		out, err = u.Integrate()
	}
	if err != nil {
		return nil, bad(err)
	}
	return out, nil
}

// shareAxis reports whether all spectra have the same channels.
func shareAxis(specs []*lineshape.Spectrum) bool {
	a := specs[0].Axis
	for _, s := range specs[1:] {
		b := s.Axis
		if a.Len() != b.Len() {
			return false
		}
		for i := 0; i < a.Len(); i++ {
			if a.At(i) != b.At(i) {
				return false
			}
		}
	}
	return true
}
