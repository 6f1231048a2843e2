package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"statemix/index"
	"statemix/library"
)

// libraryVerifyOptions holds the flag values of library verify.
type libraryVerifyOptions struct {
	Repair bool
}

func newLibraryVerifyCmd(app *App) *cobra.Command {
	o := &libraryVerifyOptions{}
	cmd := &cobra.Command{
		Use:   "verify [--repair]",
		Short: "Check every library file, and repair what can be repaired safely",
		Long: `verify reads every file of the library: the manifest, each entry's schema
and content hash (its id recomputed), unique names, the manifest revision
against the entries', leftover temporary files of interrupted writes, and
the index against the entries.

--repair removes leftover temporary files, raises a revision an
interrupted write left behind, rebuilds an unreadable manifest from the
entries, and rebuilds the index. It never changes or removes an entry
file: corrupt or altered entries are reported for you to restore (from a
backup or a bundle) or remove. The exit status is 1 while any problem is
left.`,
		Example: `  statemix library verify
  statemix library verify --repair --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLibraryVerify(app, o)
		},
	}
	cmd.Flags().BoolVar(&o.Repair, "repair", false, "fix what can be fixed without guessing")
	return cmd
}

// verifyJSON is the statemix.verify/v1 document.
type verifyJSON struct {
	Schema   string            `json:"schema"`
	Library  string            `json:"library"`
	Revision int               `json:"revision"`
	Entries  int               `json:"entries"`
	OK       bool              `json:"ok"`
	Problems []library.Problem `json:"problems"`
}

func runLibraryVerify(app *App, o *libraryVerifyOptions) error {
	dir, err := app.LibraryDir()
	if err != nil {
		return err
	}
	rep, err := library.VerifyDir(dir, library.VerifyOptions{Repair: o.Repair, CheckIndex: index.Checker(dir)})
	if errors.Is(err, library.ErrNotLibrary) {
		return fmt.Errorf("library verify: %s is not a statemix library folder", dir)
	}
	if err != nil {
		return fmt.Errorf("library verify: %w", err)
	}
	left := 0
	for _, p := range rep.Problems {
		if !p.Repaired {
			left++
		}
	}
	if app.JSON {
		if err := writeJSON(app.Out, verifyJSON{Schema: "statemix.verify/v1", Library: dir, Revision: rep.Revision,
			Entries: rep.Entries, OK: rep.OK(), Problems: rep.Problems}); err != nil {
			return err
		}
	} else {
		if len(rep.Problems) > 0 {
			tw := newTable(app.Out)
			fmt.Fprintln(tw, "STATUS\tCODE\tFILE\tPROBLEM")
			for _, p := range rep.Problems {
				status := "problem"
				if p.Repaired {
					status = "repaired"
				}
				fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", status, p.Code, p.Path, p.Message)
			}
			if err := tw.Flush(); err != nil {
				return err
			}
		}
		fmt.Fprintf(app.Out, "%d %s at revision %d: ", rep.Entries, plural(rep.Entries, "entry", "entries"), rep.Revision)
		switch {
		case len(rep.Problems) == 0:
			fmt.Fprintln(app.Out, "all files check out")
		case left == 0:
			fmt.Fprintf(app.Out, "%d %s repaired\n", len(rep.Problems), plural(len(rep.Problems), "problem", "problems"))
		default:
			fmt.Fprintf(app.Out, "%d %s left\n", left, plural(left, "problem", "problems"))
		}
	}
	if left > 0 {
		hint := ""
		if !o.Repair {
			hint = " (statemix library verify --repair fixes what it safely can)"
		}
		return fmt.Errorf("library verify: %d %s left%s", left, plural(left, "problem", "problems"), hint)
	}
	return nil
}
