package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"statemix/library"
)

// newLibraryCmd builds "statemix library" and its subcommands.
func newLibraryCmd(app *App) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "library",
		Short: "Keep the lab's collection of reference spectra",
		Long: `library manages the folder of reference spectra that fits are made from:
plain JSON files (library.json, refs/<id>.json, runs/<id>.json) that are
written atomically, checked on every read, and shared as bundles.

The folder is --library, else $STATEMIX_LIBRARY, else
$XDG_DATA_HOME/statemix, else ~/.local/share/statemix. An entry is named by
its 12-character id, a unique id prefix of at least 4 characters, or its
unique name.`,
		Example: `  statemix library init
  statemix library add ti-foil.vms --element Ti --transition L3M23M23 --state metal
  statemix library list --element Ti
  statemix library verify`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return cmd.Help()
		},
	}
	cmd.AddCommand(
		newLibraryInitCmd(app),
		newLibraryAddCmd(app),
		newLibraryListCmd(app),
		newLibraryShowCmd(app),
		newLibraryEditCmd(app),
		newLibraryRemoveCmd(app),
		newLibraryExportCmd(app),
		newLibraryImportCmd(app),
		newLibraryVerifyCmd(app),
	)
	return cmd
}

// refJSON names an entry in JSON outputs.
type refJSON struct {
	Ref  string `json:"ref"`
	Name string `json:"name"`
}

func refsOf(es []*library.Entry) []refJSON {
	out := make([]refJSON, 0, len(es))
	for _, e := range es {
		out = append(out, refJSON{Ref: e.ID, Name: e.Name})
	}
	return out
}

// warningJSON is a warning in JSON outputs.
type warningJSON struct {
	Ref     string `json:"ref,omitempty"`
	Name    string `json:"name,omitempty"`
	Code    string `json:"code"`
	Message string `json:"message"`
}

func warningsOf(ws []library.Warning) []warningJSON {
	out := make([]warningJSON, 0, len(ws))
	for _, w := range ws {
		out = append(out, warningJSON(w))
	}
	return out
}

// printWarnings shows warnings on stderr.
func printWarnings(app *App, ws []library.Warning) {
	for _, w := range ws {
		app.Warn(w.String())
	}
}

// writeJSON writes one JSON document, indented.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// newTable returns a tab writer for a human table.
func newTable(w io.Writer) *tabwriter.Writer {
	return tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
}

// energyRange formats an entry's energy range.
func energyRange(e *library.Entry) string {
	lo, hi := e.EnergyRange()
	return fmt.Sprintf("%.1f-%.1f", lo, hi)
}

// completeRefs completes REF arguments with the names of the library's
// entries (the id, element and state as description).
func completeRefs(app *App) func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
	return func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
		if len(args) > 0 {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		st, err := app.openLibrary(false)
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp | cobra.ShellCompDirectiveError
		}
		es, _ := st.Entries()
		var out []string
		for _, e := range es {
			desc := strings.TrimSpace(fmt.Sprintf("%s %s %s %s", e.ID, e.Element, e.Transition, e.State))
			if strings.HasPrefix(e.Name, toComplete) {
				out = append(out, e.Name+"\t"+desc)
			} else if strings.HasPrefix(e.ID, toComplete) && toComplete != "" {
				out = append(out, e.ID+"\t"+e.Name)
			}
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}

// completeRefList completes the comma-separated --refs of fit, profile
// and map: whatever the positional arguments, the part after the last
// comma, with the names of the library's references (archived
// measurements cannot be references) not already listed.
func completeRefList(app *App) func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
	return func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
		st, err := app.openLibrary(false)
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp | cobra.ShellCompDirectiveError
		}
		head, last := "", toComplete
		if i := strings.LastIndex(toComplete, ","); i >= 0 {
			head, last = toComplete[:i+1], toComplete[i+1:]
		}
		listed := map[string]bool{}
		for _, r := range strings.Split(head, ",") {
			listed[strings.TrimSpace(r)] = true
		}
		es, _ := st.Entries()
		var out []string
		for _, e := range es {
			if e.Kind == library.KindMeasurement || listed[e.Name] || listed[e.ID] {
				continue
			}
			desc := strings.TrimSpace(fmt.Sprintf("%s %s %s %s", e.ID, e.Element, e.Transition, e.State))
			if strings.HasPrefix(e.Name, last) {
				out = append(out, head+e.Name+"\t"+desc)
			} else if last != "" && strings.HasPrefix(e.ID, last) {
				out = append(out, head+e.ID+"\t"+e.Name)
			}
		}
		return out, cobra.ShellCompDirectiveNoFileComp | cobra.ShellCompDirectiveNoSpace
	}
}

// completeStates completes --state values.
func completeStates(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
	return append(append([]string(nil), library.States...), "other:"), cobra.ShellCompDirectiveNoFileComp | cobra.ShellCompDirectiveNoSpace
}

// completeElements completes --element with the elements in the library.
func completeElements(app *App) func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
	return func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
		st, err := app.openLibrary(false)
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		es, _ := st.Entries()
		seen := map[string]bool{}
		var out []string
		for _, e := range es {
			if e.Element != "" && !seen[e.Element] {
				seen[e.Element] = true
				out = append(out, e.Element)
			}
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}
