package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newMapCmd is a placeholder until the map command lands; its owner
// replaces this file.
func newMapCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "map",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("map: not yet available in this build")
		},
	}
}
