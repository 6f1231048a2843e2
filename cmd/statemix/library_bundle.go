package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"statemix/internal/atomicfile"
	"statemix/library"
)

// libraryExportOptions holds the flag values of library export.
type libraryExportOptions struct {
	File  string
	Query string
}

func newLibraryExportCmd(app *App) *cobra.Command {
	o := &libraryExportOptions{}
	cmd := &cobra.Command{
		Use:   "export FILE.tar.gz [--query Q]",
		Short: "Write entries into a bundle to share with another library",
		Long: `export writes a bundle: a .tar.gz holding statemix-bundle.json (the list
of entries with their sizes and SHA-256 checksums) and each entry's file,
refs/<id>.json or runs/<id>.json, exactly as the library stores it.
Another lab imports it with statemix library import.

--query selects entries with space-separated field:value terms that must
all match: kind, element (exact symbol), transition, state, compound
(case-insensitive), name (a substring, case-insensitive) and tag.<key>.
Quote values with spaces: name:"Ti foil". The bundle file is written
atomically; an entry file that cannot be read is left out with a warning.`,
		Example: `  statemix library export all-refs.tar.gz
  statemix library export ti-nitrides.tar.gz --query "element:Ti state:nitride"
  statemix library export north.tar.gz --query "kind:reference tag.lab:north"`,
		Args: cobra.ExactArgs(1),
		ValidArgsFunction: func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
			return []string{"tar.gz", "tgz"}, cobra.ShellCompDirectiveFilterFileExt
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.File = args[0]
			return runLibraryExport(app, o)
		},
	}
	cmd.Flags().StringVar(&o.Query, "query", "", "export only entries matching `Q`, e.g. \"element:Ti state:nitride\"")
	return cmd
}

// exportedJSON is the statemix.exported/v1 document.
type exportedJSON struct {
	Schema   string    `json:"schema"`
	File     string    `json:"file"`
	Entries  []refJSON `json:"entries"`
	Problems []string  `json:"problems"` // entry files left out
}

func runLibraryExport(app *App, o *libraryExportOptions) error {
	if l := strings.ToLower(o.File); !strings.HasSuffix(l, ".tar.gz") && !strings.HasSuffix(l, ".tgz") {
		// A bundle is a gzipped tar whatever its name; a name that says
		// otherwise (x.zip, x.json) misleads whoever receives it.
		return usageErrorf("library export %s: want a .tar.gz (or .tgz) file name: a bundle is a gzipped tar archive", o.File)
	}
	f, err := library.ParseFilter(o.Query)
	if err != nil {
		return usageErrorf("library export: --query: %v", err)
	}
	st, err := app.openLibrary(false)
	if err != nil {
		return err
	}
	var res *library.ExportResult
	err = atomicfile.WriteFile(o.File, func(w io.Writer) error {
		var err error
		res, err = st.Export(w, library.ExportOptions{Match: f.Match, Query: o.Query})
		return err
	})
	if err != nil {
		return fmt.Errorf("library export: %w", err)
	}
	problems := []string{}
	for _, e := range res.Skipped {
		problems = append(problems, e.Error())
		app.Warn(fmt.Sprintf("left out of the bundle: %v", e))
	}
	if len(res.Entries) == 0 {
		app.Warn("the bundle is empty: no entry matched")
	}
	if app.JSON {
		return writeJSON(app.Out, exportedJSON{Schema: "statemix.exported/v1", File: o.File, Entries: refsOf(res.Entries), Problems: problems})
	}
	fmt.Fprintf(app.Out, "exported %d %s to %s\n", len(res.Entries), plural(len(res.Entries), "entry", "entries"), o.File)
	return nil
}

// libraryImportOptions holds the flag values of library import.
type libraryImportOptions struct {
	File   string
	Rename bool
}

func newLibraryImportCmd(app *App) *cobra.Command {
	o := &libraryImportOptions{}
	cmd := &cobra.Command{
		Use:   "import FILE.tar.gz [--rename]",
		Short: "Add the entries of a bundle to the library",
		Long: `import reads a bundle written by statemix library export, checks it
completely (every checksum and size against its manifest, every entry's
content against its id, every label), and then adds its entries in one
operation. Entries already in the library and identical are skipped. An
entry whose name another entry already has refuses the whole import,
unless --rename gives it a new name, "NAME (2)". An entry with the same id
but different labels always refuses it. A truncated or damaged bundle, or
one with a wrong checksum, changes nothing.`,
		Example: `  statemix library import other-lab.tar.gz
  statemix library import other-lab.tar.gz --rename --json`,
		Args: cobra.ExactArgs(1),
		ValidArgsFunction: func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
			return []string{"tar.gz", "tgz"}, cobra.ShellCompDirectiveFilterFileExt
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.File = args[0]
			return runLibraryImport(app, o)
		},
	}
	cmd.Flags().BoolVar(&o.Rename, "rename", false, "give entries whose names are taken a new name instead of refusing")
	return cmd
}

// importedJSON is the statemix.imported/v1 document.
type importedJSON struct {
	Schema   string        `json:"schema"`
	Added    []refJSON     `json:"added"`
	Skipped  []refJSON     `json:"skipped"`
	Renamed  []refJSON     `json:"renamed"` // new names
	Revision int           `json:"revision"`
	Warnings []warningJSON `json:"warnings"`
}

func runLibraryImport(app *App, o *libraryImportOptions) error {
	f, err := os.Open(o.File)
	if err != nil {
		return fmt.Errorf("library import: %w", err)
	}
	defer f.Close()
	st, err := app.openLibrary(true)
	if err != nil {
		return err
	}
	res, err := st.Import(bufio.NewReader(f), library.ImportOptions{Rename: o.Rename, Bundle: o.File})
	if err != nil {
		return libraryError(fmt.Errorf("library import: %w", err))
	}
	if len(res.Added) > 0 {
		app.afterLibraryWrite(st)
	}
	printWarnings(app, res.Warnings)
	renamed := []refJSON{}
	for _, e := range res.Added {
		if n, ok := res.Renamed[e.ID]; ok {
			renamed = append(renamed, refJSON{Ref: e.ID, Name: n})
		}
	}
	if app.JSON {
		return writeJSON(app.Out, importedJSON{Schema: "statemix.imported/v1", Added: refsOf(res.Added), Skipped: refsOf(res.Skipped),
			Renamed: renamed, Revision: res.Revision, Warnings: warningsOf(res.Warnings)})
	}
	fmt.Fprintf(app.Out, "imported %d %s from %s", len(res.Added), plural(len(res.Added), "entry", "entries"), o.File)
	var notes []string
	if n := len(res.Skipped); n > 0 {
		notes = append(notes, fmt.Sprintf("%d already present", n))
	}
	if n := len(renamed); n > 0 {
		notes = append(notes, fmt.Sprintf("%d renamed", n))
	}
	if len(notes) > 0 {
		fmt.Fprintf(app.Out, " (%s)", strings.Join(notes, ", "))
	}
	fmt.Fprintln(app.Out)
	for _, r := range renamed {
		fmt.Fprintf(app.Out, "  %s renamed to %q\n", r.Ref, r.Name)
	}
	return nil
}
