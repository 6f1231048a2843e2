package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"statemix/library"
)

func newLibraryInitCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:   "init",
		Short: "Create an empty library",
		Long: `init creates an empty library in the library folder (--library,
$STATEMIX_LIBRARY, $XDG_DATA_HOME/statemix or ~/.local/share/statemix),
making the folder if needed: library.json at revision 0 and the empty
refs/ and runs/ folders. It refuses a folder that already holds a library.`,
		Example: `  statemix library init
  statemix --library ./lab-refs library init`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLibraryInit(app)
		},
	}
}

func runLibraryInit(app *App) error {
	dir, err := app.LibraryDir()
	if err != nil {
		return err
	}
	st, err := library.Create(dir)
	if errors.Is(err, library.ErrLibraryExists) {
		return fmt.Errorf("library init: %s already holds a library", dir)
	}
	if err != nil {
		return fmt.Errorf("library init: %w", err)
	}
	app.afterLibraryWrite(st) // an empty index, so verify finds it
	if app.JSON {
		return writeJSON(app.Out, map[string]any{"schema": "statemix.library-init/v1", "library": st.Dir(), "revision": st.Revision()})
	}
	fmt.Fprintf(app.Out, "created an empty library in %s\n", st.Dir())
	return nil
}
