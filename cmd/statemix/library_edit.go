package main

import (
	"encoding/json"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"statemix/library"
)

// libraryEditOptions holds the flag values of library edit.
type libraryEditOptions struct {
	Ref string
	Set []string // key=value
}

func newLibraryEditCmd(app *App) *cobra.Command {
	o := &libraryEditOptions{}
	cmd := &cobra.Command{
		Use:   "edit REF --set key=value...",
		Short: "Change an entry's labels",
		Long: `edit changes labels of one entry; the spectrum and its provenance never
change, so the id stays the same. Keys: ` + strings.Join(library.EditKeys, ", ") + `.
An empty value clears an optional field or deletes a tag. All changes are
checked first and written together.`,
		Example: `  statemix library edit 3f9a --set state=oxide --set compound=TiO2
  statemix library edit "Ti metal" --set name="Ti foil (sputtered)" --set tag.lab=north
  statemix library edit 3f9a --set tag.lab=`,
		Args:              cobra.ExactArgs(1),
		ValidArgsFunction: completeRefs(app),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Ref = args[0]
			if len(o.Set) == 0 {
				return usageErrorf("library edit: nothing to change: give --set key=value")
			}
			return runLibraryEdit(app, o)
		},
	}
	cmd.Flags().StringArrayVar(&o.Set, "set", nil, "set `KEY=VALUE` (repeatable)")
	_ = cmd.RegisterFlagCompletionFunc("set", func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
		var out []string
		for _, k := range library.EditKeys {
			if !strings.Contains(k, "<") {
				out = append(out, k+"=")
			}
		}
		return append(out, "tag."), cobra.ShellCompDirectiveNoSpace | cobra.ShellCompDirectiveNoFileComp
	})
	return cmd
}

// parseSets parses --set key=value pairs, checking the keys.
func parseSets(kvs []string) (map[string]string, error) {
	set := map[string]string{}
	for _, kv := range kvs {
		k, v, ok := strings.Cut(kv, "=")
		k = strings.TrimSpace(k)
		if !ok || k == "" {
			return nil, fmt.Errorf("--set %q: want KEY=VALUE", kv)
		}
		if !editable(k) {
			return nil, fmt.Errorf("--set %q: unknown key %q (editable: %s)", kv, k, strings.Join(library.EditKeys, ", "))
		}
		if _, dup := set[k]; dup {
			return nil, fmt.Errorf("--set: key %q given twice", k)
		}
		set[k] = v
	}
	return set, nil
}

func editable(k string) bool {
	if strings.HasPrefix(k, "tag.") && len(k) > len("tag.") {
		return true
	}
	for _, e := range library.EditKeys {
		if e == k {
			return true
		}
	}
	return false
}

// changedJSON is the statemix.edited/v1 and statemix.removed/v1 document.
type changedJSON struct {
	Schema   string        `json:"schema"`
	Ref      string        `json:"ref"`
	Name     string        `json:"name"`
	Revision int           `json:"revision"`
	Warnings []warningJSON `json:"warnings,omitempty"`
}

func runLibraryEdit(app *App, o *libraryEditOptions) error {
	set, err := parseSets(o.Set)
	if err != nil {
		return usageErrorf("library edit: %v", err)
	}
	st, err := app.openLibrary(true)
	if err != nil {
		return err
	}
	e, warns, err := st.Edit(o.Ref, set)
	if err != nil {
		return libraryError(fmt.Errorf("library edit: %w", err))
	}
	app.afterLibraryWrite(st)
	printWarnings(app, warns)
	if app.JSON {
		return writeJSON(app.Out, changedJSON{Schema: "statemix.edited/v1", Ref: e.ID, Name: e.Name, Revision: st.Revision(), Warnings: warningsOf(warns)})
	}
	fmt.Fprintf(app.Out, "edited %s (%s)\n", e.ID, e.Name)
	return nil
}

// libraryRemoveOptions holds the argument of library remove.
type libraryRemoveOptions struct {
	Ref string
}

func newLibraryRemoveCmd(app *App) *cobra.Command {
	o := &libraryRemoveOptions{}
	return &cobra.Command{
		Use:   "remove REF",
		Short: "Remove an entry from the library",
		Long: `remove deletes one entry's file. REF is an id, a unique id prefix of at
least 4 characters, or a name. Export the entry first if you may want it
back: statemix library export keep.tar.gz --query name:...`,
		Example: `  statemix library remove 3f9a0c1d22e4
  statemix library remove "Ti oxide (old)"`,
		Args:              cobra.ExactArgs(1),
		ValidArgsFunction: completeRefs(app),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Ref = args[0]
			return runLibraryRemove(app, o)
		},
	}
}

func runLibraryRemove(app *App, o *libraryRemoveOptions) error {
	st, err := app.openLibrary(true)
	if err != nil {
		return err
	}
	e, err := st.Remove(o.Ref)
	if err != nil {
		return libraryError(fmt.Errorf("library remove: %w", err))
	}
	app.afterLibraryWrite(st)
	if runs := runsFittedWith(st, e.ID); len(runs) > 0 {
		app.Warn(fmt.Sprintf("%d archived %s fitted with %s (%s): %s %s, which is no longer in the library",
			len(runs), plural(len(runs), "measurement was", "measurements were"), e.Name, strings.Join(runs, ", "),
			plural(len(runs), "its stored fit still names", "their stored fits still name"), e.ID))
	}
	if app.JSON {
		return writeJSON(app.Out, changedJSON{Schema: "statemix.removed/v1", Ref: e.ID, Name: e.Name, Revision: st.Revision()})
	}
	fmt.Fprintf(app.Out, "removed %s (%s)\n", e.ID, e.Name)
	return nil
}

// runsFittedWith returns the ids of the archived measurements (fit --save)
// whose stored fit has a component of reference id.
func runsFittedWith(st *library.Store, id string) []string {
	es, err := st.Entries()
	if err != nil {
		return nil
	}
	var out []string
	for _, m := range es {
		if m.Kind != library.KindMeasurement || len(m.Fit) == 0 {
			continue
		}
		var f struct {
			Components []struct {
				Ref string `json:"ref"`
			} `json:"components"`
		}
		if json.Unmarshal(m.Fit, &f) != nil {
			continue
		}
		for _, c := range f.Components {
			if c.Ref == id {
				out = append(out, m.ID)
				break
			}
		}
	}
	return out
}
