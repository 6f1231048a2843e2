package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newLibraryCmd is a placeholder until the library command lands; its owner
// replaces this file.
func newLibraryCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "library",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("library: not yet available in this build")
		},
	}
}
