package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newDemoCmd is a placeholder until the demo command lands; its owner
// replaces this file.
func newDemoCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "demo",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("demo: not yet available in this build")
		},
	}
}
