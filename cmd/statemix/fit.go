package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newFitCmd is a placeholder until the fit command lands; its owner
// replaces this file.
func newFitCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "fit",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("fit: not yet available in this build")
		},
	}
}
