package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newSearchCmd is a placeholder until the search command lands; its owner
// replaces this file.
func newSearchCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "search",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("search: not yet available in this build")
		},
	}
}
