package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"regexp"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"statemix/lineshape"
)

// Exit statuses of the contract.
const (
	exitOK       = 0
	exitFailure  = 1
	exitUsage    = 2
	exitBadInput = 3
)

// App carries what commands need from the outside world: streams, the
// environment, the clock and the global flags. Commands get everything from
// it, so tests run the whole command tree in-process with buffers.
type App struct {
	In  io.Reader
	Out io.Writer
	Err io.Writer

	// Getenv reads the environment; tests replace it.
	Getenv func(string) string
	// Now is the clock; tests replace it.
	Now func() time.Time
	// Ctx is cancelled on interrupt.
	Ctx context.Context

	// Global flags.
	LibraryFlag string
	JSON        bool
	Quiet       bool
	NoProgress  bool
}

// LibraryDir resolves the library folder: --library, else
// $STATEMIX_LIBRARY, else $XDG_DATA_HOME/statemix, else
// ~/.local/share/statemix.
func (a *App) LibraryDir() (string, error) {
	if a.LibraryFlag != "" {
		return a.LibraryFlag, nil
	}
	if d := a.Getenv("STATEMIX_LIBRARY"); d != "" {
		return d, nil
	}
	if d := a.Getenv("XDG_DATA_HOME"); d != "" {
		return filepath.Join(d, "statemix"), nil
	}
	home := a.Getenv("HOME")
	if home == "" {
		h, err := os.UserHomeDir()
		if err != nil {
			return "", fmt.Errorf("no library folder: give --library or set STATEMIX_LIBRARY")
		}
		home = h
	}
	return filepath.Join(home, ".local", "share", "statemix"), nil
}

// Infof prints a human message on stderr unless --quiet.
func (a *App) Infof(format string, args ...any) {
	if a.Quiet {
		return
	}
	fmt.Fprintf(a.Err, format, args...)
}

// Warn prints a warning on stderr (even with --quiet: warnings change what
// a result means).
func (a *App) Warn(msg string) {
	fmt.Fprintln(a.Err, "statemix: warning:", msg)
}

// usageError marks a command-line mistake (exit status 2).
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

// usageErrorf returns a usage error (exit status 2).
func usageErrorf(format string, args ...any) error {
	return &usageError{fmt.Errorf(format, args...)}
}

// inputError marks bad input data (exit status 3) that is not already a
// *lineshape.InputError.
type inputError struct{ err error }

func (e *inputError) Error() string { return e.err.Error() }
func (e *inputError) Unwrap() error { return e.err }

// badInput wraps err as bad input data (exit status 3); nil stays nil.
func badInput(err error) error {
	if err == nil {
		return nil
	}
	return &inputError{err}
}

// badInputf returns a bad-input error (exit status 3).
func badInputf(format string, args ...any) error {
	return &inputError{fmt.Errorf(format, args...)}
}

// exitCode maps an error to the contract's exit status.
func exitCode(err error) int {
	if err == nil {
		return exitOK
	}
	var ue *usageError
	if errors.As(err, &ue) || isCobraUsage(err) {
		return exitUsage
	}
	var ie *inputError
	var le *lineshape.InputError
	if errors.As(err, &ie) || errors.As(err, &le) {
		return exitBadInput
	}
	return exitFailure
}

// run executes the command line args and returns the exit status.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	app := &App{
		In: stdin, Out: stdout, Err: stderr,
		Getenv: os.Getenv, Now: time.Now, Ctx: ctx,
	}
	return app.Execute(args)
}

// Execute runs the command tree on args and prints any error once as
// "statemix: ...".
func (a *App) Execute(args []string) int {
	if a.Ctx == nil {
		a.Ctx = context.Background()
	}
	if a.Getenv == nil {
		a.Getenv = os.Getenv
	}
	if a.Now == nil {
		a.Now = time.Now
	}
	root := newRootCmd(a)
	root.SetArgs(args)
	root.SetIn(a.In)
	root.SetOut(a.Out)
	root.SetErr(a.Err)
	err := root.ExecuteContext(a.Ctx)
	if err != nil {
		fmt.Fprintln(a.Err, "statemix:", err)
	}
	return exitCode(err)
}

// cobraUsagePrefixes are the beginnings of the messages cobra returns for
// command-line mistakes it detects itself (argument counts, unknown
// commands, required or exclusive flags).
var cobraUsagePrefixes = []string{
	"unknown command", "unknown flag", "unknown shorthand flag", "accepts ", "requires at least",
	"requires at most", "received ", "required flag(s)", "invalid argument",
	"if any flags in the group", "at least one of the flags", "flag needs an argument",
	"invalid command",
}

// isCobraUsage reports whether err is one of cobra's own usage errors.
func isCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range cobraUsagePrefixes {
		if strings.HasPrefix(msg, p) {
			return true
		}
	}
	return false
}

// flagUsage turns cobra's flag parsing errors into usage errors, with
// the strconv detail of a value that is not a number put in words.
func flagUsage(cmd *cobra.Command, err error) error {
	if m := strconvDetail.FindStringSubmatchIndex(err.Error()); m != nil {
		msg := err.Error()
		kind, why := msg[m[2]:m[3]], msg[m[4]:m[5]]
		want := map[string]string{"Int": "a whole number", "Uint": "a whole number, 0 or more",
			"Float": "a number", "Bool": "true or false"}[kind]
		if why == "value out of range" {
			want += " in range"
		}
		return &usageError{fmt.Errorf("%swant %s", msg[:m[0]], want)}
	}
	return &usageError{err}
}

// strconvDetail matches the tail pflag copies from strconv into its error
// for a flag value that does not parse ("strconv.ParseInt: parsing "x":
// invalid syntax").
var strconvDetail = regexp.MustCompile(`strconv\.Parse(Int|Uint|Float|Bool): parsing "[^"]*": (invalid syntax|value out of range)$`)
