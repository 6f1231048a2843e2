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
	"encoding/json"
	"errors"
	"fmt"
	"path/filepath"

	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// saveRun archives the measurement and its fit in the library as a
// "measurement" entry (runs/<id>.json) and brings the index up to date, so
// search --like finds it later with what it was fitted with. The name is
// "<file> block <N> <UTC time>"; saving the same spectrum with the same fit
// again returns the entry already there.
func saveRun(app *App, unknown *lineshape.Spectrum, res *fit.Result, opts *fitOptions) (string, error) {
	store, err := app.openLibrary(true)
	if err != nil {
		return "", err
	}
	doc, err := json.Marshal(opts.doc)
	if err != nil {
		return "", fmt.Errorf("encode fit result: %w", err)
	}
	block := max(opts.Block, 1)
	now := app.Now().UTC()
	e := &library.Entry{
		Kind:        library.KindMeasurement,
		Name:        fmt.Sprintf("%s block %d %s", filepath.Base(opts.File), block, now.Format("2006-01-02 15:04:05")),
		Element:     commonElement(res),
		Spectrum:    unknown,
		Fit:         doc,
		Acquisition: library.AcquisitionFromMeta(unknown.Meta),
		Provenance: library.Provenance{
			SourceFile:   opts.File,
			SourceSHA256: opts.inputSHA256,
			Block:        block - 1,
			BlockID:      unknown.Meta.BlockID,
			ImportedAt:   now,
		},
	}
	if opts.Modulation > 0 && e.Acquisition.ModulationEV == 0 {
		e.Acquisition.ModulationEV = opts.Modulation
	}
	added, _, err := store.Add(e)
	var exists *library.ExistsError
	if errors.As(err, &exists) {
		app.Infof("statemix: fit: --save: this measurement and fit are already archived as %s\n", exists.ID)
		return exists.ID, nil
	}
	if err != nil {
		return "", libraryError(err)
	}
	app.afterLibraryWrite(store)
	return added[0].ID, nil
}

// commonElement returns the element all fitted components share, or "".
func commonElement(res *fit.Result) string {
	el := ""
	for _, c := range res.Components {
		switch {
		case c.Element == "":
			return ""
		case el == "":
			el = c.Element
		case c.Element != el:
			return ""
		}
	}
	return el
}
