package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newCalcCmd is a placeholder until the calc command lands; its owner
// replaces this file.
func newCalcCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "calc",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("calc: not yet available in this build")
		},
	}
}
