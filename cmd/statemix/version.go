package main

import (
	"encoding/json"
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// Version is the release version; builds from a checkout report "devel".
var Version = "0.1.0-devel"

func newVersionCmd(app *App) *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print the statemix version",
		Long: `Print the statemix version, the Go version it was built with and the
source revision (the git commit) when the binary was built from a checkout.
Quote it when you report a problem or archive a result.`,
		Example: `  statemix version
  statemix version --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runVersion(app)
		},
	}
}

func runVersion(app *App) error {
	rev := ""
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "vcs.revision" {
				rev = s.Value
			}
		}
	}
	if app.JSON {
		return json.NewEncoder(app.Out).Encode(map[string]string{
			"schema": "statemix.version/v1", "version": Version, "go": runtime.Version(), "revision": rev,
		})
	}
	fmt.Fprintf(app.Out, "statemix %s (%s", Version, runtime.Version())
	if rev != "" {
		fmt.Fprintf(app.Out, ", %s", rev)
	}
	fmt.Fprintln(app.Out, ")")
	return nil
}
