package main

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"
	"github.com/spf13/cobra/doc"
)

// newDocsCmd builds "statemix docs", which generates documentation from the
// command tree itself, so the man pages always match the --help texts.
func newDocsCmd(app *App) *cobra.Command {
	docs := &cobra.Command{
		Use:   "docs",
		Short: "Generate documentation (man pages) from the command tree",
		Long: `Generate documentation from the command tree.

The pages are made from the same summaries, descriptions, examples and flag
lists that --help prints, so they never disagree with the program.`,
		Example: `  statemix docs man man/`,
		Args:    cobra.NoArgs,
	}
	man := &cobra.Command{
		Use:   "man DIR",
		Short: "Write a man page for every statemix command into DIR",
		Long: `Write a man page for every statemix command into DIR (created if needed):
statemix.1, statemix-fit.1, statemix-library-add.1 and so on, in section 1.

Install them where man looks (for example ~/.local/share/man/man1) or read
one directly with man -l.`,
		Example: `  statemix docs man man/
  man -l man/statemix-fit.1

  # For your user only
  statemix docs man ~/.local/share/man/man1`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runDocsMan(app, cmd.Root(), args[0])
		},
	}
	man.ValidArgsFunction = func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return nil, cobra.ShellCompDirectiveFilterDirs
	}
	docs.AddCommand(man)
	return docs
}

// runDocsMan writes the man pages of the tree under root into dir.
func runDocsMan(app *App, root *cobra.Command, dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("docs man: %w", err)
	}
	root.DisableAutoGenTag = true // no generator footer: pages differ only when the program does
	now := app.Now()
	header := &doc.GenManHeader{
		Title:   "STATEMIX",
		Section: "1",
		Source:  "statemix " + Version,
		Manual:  "statemix manual",
		Date:    &now,
	}
	if err := doc.GenManTree(root, header, dir); err != nil {
		return fmt.Errorf("docs man: %s: %w", dir, err)
	}
	n := 0
	if es, err := os.ReadDir(dir); err == nil {
		for _, e := range es {
			if filepath.Ext(e.Name()) == ".1" {
				n++
			}
		}
	}
	app.Infof("wrote %d man pages to %s\n", n, dir)
	return nil
}
