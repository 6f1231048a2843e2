package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newProfileCmd is a placeholder until the profile command lands; its owner
// replaces this file.
func newProfileCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "profile",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("profile: not yet available in this build")
		},
	}
}
