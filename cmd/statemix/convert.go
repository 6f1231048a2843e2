package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// newConvertCmd is a placeholder until the convert command lands; its owner
// replaces this file.
func newConvertCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:    "convert",
		Short:  "(not yet available)",
		Hidden: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return errors.New("convert: not yet available in this build")
		},
	}
}
