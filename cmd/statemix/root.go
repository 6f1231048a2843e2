package main

import (
	"github.com/spf13/cobra"
)

// newRootCmd builds the whole command tree around app.
func newRootCmd(app *App) *cobra.Command {
	root := &cobra.Command{
		Use:   "statemix",
		Short: "Chemical-state fractions from Auger spectra, fitted with your own references",
		Long: `statemix keeps a lab's library of reference Auger lineshapes, decomposes
unknown spectra into nonnegative combinations of them (NNLS with energy-shift
alignment), reports each chemical state's fraction with an uncertainty, and does
the same for every step of a sputter depth profile and every pixel of a
spectrum image.

Start with statemix demo, which runs the whole workflow on invented data.`,
		Example: `  # The whole workflow on invented, synthetic data
  statemix demo

  # Build a library from your standards
  statemix library init
  statemix library add ti-foil.vms --element Ti --transition L3M23M45 --state metal --name "Ti foil"
  statemix library add tin-film.vms --element Ti --transition L3M23M45 --state nitride --name "TiN film"

  # Fit an unknown, then a depth profile and a spectrum image
  statemix fit spot1.vms --refs "Ti foil","TiN film" --report spot1.html
  statemix profile depth.vms --refs "Ti foil","TiN film" --sputter-rate 2.5
  statemix map area7.npy --refs "Ti foil","TiN film" --out area7-maps`,
		SilenceUsage:  true,
		SilenceErrors: true,
		// Every --block counts from 1; 0 is the flag's "not given", so an
		// explicit --block 0 would otherwise mean "the only block".
		PersistentPreRunE: func(cmd *cobra.Command, args []string) error {
			if f := cmd.Flags().Lookup("block"); f != nil && f.Changed && f.Value.String() == "0" {
				return usageErrorf("--block 0: blocks count from 1")
			}
			return nil
		},
	}
	root.SetFlagErrorFunc(flagUsage)
	pf := root.PersistentFlags()
	pf.StringVar(&app.LibraryFlag, "library", "", "library folder `DIR` (default $STATEMIX_LIBRARY, $XDG_DATA_HOME/statemix or ~/.local/share/statemix)")
	pf.BoolVar(&app.JSON, "json", false, "machine-readable JSON on stdout")
	pf.BoolVar(&app.Quiet, "quiet", false, "print only results and warnings")
	pf.BoolVar(&app.NoProgress, "no-progress", false, "never show progress bars")
	_ = root.MarkPersistentFlagDirname("library")

	root.AddCommand(
		newLibraryCmd(app),
		newSearchCmd(app),
		newFitCmd(app),
		newProfileCmd(app),
		newMapCmd(app),
		newConvertCmd(app),
		newCalcCmd(app),
		newDemoCmd(app),
		newDocsCmd(app),
		newVersionCmd(app),
	)
	// Cobra adds "completion" (bash, zsh, fish, powershell) by itself.
	root.CompletionOptions.HiddenDefaultCmd = false
	return root
}
