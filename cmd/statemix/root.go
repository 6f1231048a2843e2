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
spectrum image.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetFlagErrorFunc(flagUsage)
	pf := root.PersistentFlags()
	pf.StringVar(&app.LibraryFlag, "library", "", "library folder (default $STATEMIX_LIBRARY, $XDG_DATA_HOME/statemix or ~/.local/share/statemix)")
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
		newVersionCmd(app),
	)
	// Cobra adds "completion" (bash, zsh, fish, powershell) by itself.
	root.CompletionOptions.HiddenDefaultCmd = false
	return root
}
