package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/spf13/cobra"
)

// rootWithDocs returns the command tree with "docs" in it (added here if
// root.go does not register it yet).
func rootWithDocs(app *App) *cobra.Command {
	root := newRootCmd(app)
	for _, c := range root.Commands() {
		if c.Name() == "docs" {
			return root
		}
	}
	root.AddCommand(newDocsCmd(app))
	return root
}

// TestDocsMan writes the man pages and checks that every command of the
// tree has one, in man(7) format, with its summary and examples.
func TestDocsMan(t *testing.T) {
	var out, errb bytes.Buffer
	fixed := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	app := &App{In: strings.NewReader(""), Out: &out, Err: &errb,
		Getenv: func(string) string { return "" }, Now: func() time.Time { return fixed }}
	app.Ctx = t.Context()
	root := rootWithDocs(app)
	dir := filepath.Join(t.TempDir(), "man")
	root.SetArgs([]string{"docs", "man", dir})
	root.SetOut(&out)
	root.SetErr(&errb)
	if err := root.Execute(); err != nil {
		t.Fatalf("docs man: %v (stderr %q)", err, errb.String())
	}
	var walk func(c *cobra.Command)
	count := 0
	walk = func(c *cobra.Command) {
		if !c.IsAvailableCommand() || c.IsAdditionalHelpTopicCommand() {
			return
		}
		name := strings.ReplaceAll(c.CommandPath(), " ", "-") + ".1"
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Errorf("no man page for %q: %v", c.CommandPath(), err)
		} else {
			count++
			s := string(b)
			if !strings.Contains(s, ".TH \"STATEMIX\" \"1\"") {
				t.Errorf("%s: no .TH header line:\n%.300s", name, s)
			}
			if c.Short != "" && !strings.Contains(s, c.Short) && !strings.Contains(s, manEscape(c.Short)) {
				t.Errorf("%s: the summary %q is missing:\n%.400s", name, c.Short, s)
			}
			if c.Example != "" && !strings.Contains(s, ".SH EXAMPLE") {
				t.Errorf("%s: the examples are missing", name)
			}
			if strings.Contains(s, "Auto generated") {
				t.Errorf("%s: carries the generator footer", name)
			}
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(root)
	for _, want := range []string{"statemix.1", "statemix-fit.1", "statemix-library-add.1", "statemix-demo.1", "statemix-docs-man.1"} {
		if _, err := os.Stat(filepath.Join(dir, want)); err != nil {
			t.Errorf("%s missing: %v", want, err)
		}
	}
	if count < 15 {
		t.Errorf("only %d man pages, want one per command (15 or more)", count)
	}
	if !strings.Contains(errb.String(), "man pages to") {
		t.Errorf("no message on stderr: %q", errb.String())
	}
}

// manEscape mimics what go-md2man does to a summary in running text: a
// dash becomes "\-" (the NAME line keeps it as it is).
func manEscape(s string) string {
	return strings.ReplaceAll(s, "-", `\-`)
}

// TestHelpTexts checks that every command of ours has a one-line summary,
// a paragraph and examples in its --help (cobra's own help and completion
// commands are cobra's).
func TestHelpTexts(t *testing.T) {
	app := &App{In: strings.NewReader(""), Out: &bytes.Buffer{}, Err: &bytes.Buffer{}, Getenv: func(string) string { return "" }}
	root := rootWithDocs(app)
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		if !c.IsAvailableCommand() || c.Name() == "help" || c.Name() == "completion" || (c.Parent() != nil && c.Parent().Name() == "completion") {
			return
		}
		p := c.CommandPath()
		switch {
		case c.Short == "" || strings.Contains(c.Short, "\n"):
			t.Errorf("%s: no one-line summary (Short %q)", p, c.Short)
		case strings.HasSuffix(c.Short, "."):
			t.Errorf("%s: the summary %q ends in a period", p, c.Short)
		}
		if len(strings.Fields(c.Long)) < 15 {
			t.Errorf("%s: no paragraph (Long %q)", p, c.Long)
		}
		if !strings.Contains(c.Example, "statemix ") {
			t.Errorf("%s: no examples", p)
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(root)
}
