package main

// Contract of saveRun (the index engineer replaces the body).
//
// fit.go calls saveRun when the user gives --save, after a successful fit
// and before any output is printed, with:
//   - app: the App (open the library for writing with app.openLibrary(true)
//     and call app.afterLibraryWrite(store) after the write);
//   - unknown: the measured spectrum exactly as read (mode, axis, Meta with
//     Source and Block), to archive as a "measurement" entry;
//   - res: the fit result;
//   - opts: the parsed flags; opts.doc is the complete statemix.fit/v1
//     document (*fitDocument, the same value --json prints, without the
//     "saved" field) to store as the entry's Fit (json.Marshal(opts.doc));
//     opts.inputSHA256 is the SHA-256 of the input file (hex), opts.File
//     its path and opts.Block the 1-based block. Do not modify opts.
//
// It returns the id of the new library entry (printed as "saved as <id>" and
// put in the JSON document's "saved" field). An error fails the command
// with "statemix: fit: --save: <error>" after nothing has been printed;
// library errors should pass through libraryError(...) for their exit
// status.

import (
	"errors"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// saveRun archives the measurement and its fit in the library.
func saveRun(app *App, unknown *lineshape.Spectrum, res *fit.Result, opts *fitOptions) (string, error) {
	return "", errors.New("not yet available in this build")
}
