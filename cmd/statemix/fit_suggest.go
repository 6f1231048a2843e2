package main

// Contract of suggestReferences (the index engineer replaces the body).
//
// fit.go calls suggestReferences when the user gives --suggest [K] (K = 4
// when the flag has no value), after the unknown is read and before the
// fit, with:
//   - app: the App (open the library with app.openLibrary(false), print
//     progress with app.Infof, warnings with app.Warn);
//   - unknown: the spectrum to fit, exactly as read (mode, axis and Meta
//     as the file gave them; not windowed, not converted);
//   - opts: the parsed flags (read opts.Element to restrict candidates to
//     one element, opts.fit.Modulation, opts.fit.Window, opts.fit.MaxShift;
//     do not modify opts);
//   - k: the number of references wanted, >= 1.
//
// It returns up to k references ranked best first, each with ID, Name,
// Element, State and the library entry's Spectrum (at its recorded
// intensity: do not normalise). fit.go adds them to any --refs and
// --ref-file references, dropping ones already given, and fits with all of
// them. An error is printed as "statemix: fit: --suggest: <error>"; wrap
// bad input data as badInput(...) so the exit status is 3. Returning an
// empty slice with a nil error means "nothing suitable found"; fit.go then
// fails with a clear message if no other references were given.

import (
	"fmt"
	"math"
	"strings"

	"statemix/index"
	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// suggestReferences proposes the k library references most like unknown:
// index.Suggest draws candidates by spectral similarity (same element with
// --element) and the index, fits subsets of up to k of them and keeps the
// one with the lowest BIC. It prints on stderr which subsets were tried
// and why the winner won.
func suggestReferences(app *App, unknown *lineshape.Spectrum, opts *fitOptions, k int) ([]fit.Reference, error) {
	store, err := app.openLibrary(false)
	if err != nil {
		return nil, err
	}
	x, err := app.openSearchIndex(store)
	if err != nil {
		return nil, err
	}
	defer x.Close()
	sug, err := x.Suggest(app.Ctx, store, unknown, index.SuggestOptions{K: k, Element: opts.Element, Fit: opts.fit})
	if err != nil {
		return nil, badInput(err)
	}
	if len(sug.Candidates) == 0 {
		app.Infof("statemix: fit: --suggest: no library reference overlaps %s in energy\n", opts.File)
		return nil, nil
	}
	app.Infof("statemix: fit: --suggest: %d candidates by similarity:", len(sug.Candidates))
	for i, h := range sug.Candidates {
		sep := ","
		if i == 0 {
			sep = ""
		}
		app.Infof("%s %s (%.3f)", sep, h.Name, h.Similarity)
	}
	app.Infof("\n")
	app.Infof("statemix: fit: --suggest: %d subsets fitted (BIC with %.0f effective points; lower is better):\n", len(sug.Trials), sug.EffectivePoints)
	for i, t := range sug.Trials {
		mark := " "
		if i == sug.Best {
			mark = "*"
		}
		bic := "      -"
		if !math.IsInf(t.BIC, 0) {
			bic = fmt.Sprintf("%7.1f", t.BIC)
		}
		note := ""
		if t.Note != "" {
			note = "  (" + t.Note + ")"
		}
		app.Infof("  %s BIC %s  p=%-2d {%s}%s\n", mark, bic, t.Params, strings.Join(t.Names, ", "), note)
	}
	if sug.Best < 0 {
		app.Infof("statemix: fit: --suggest: no subset could be fitted\n")
		return nil, nil
	}
	app.Infof("statemix: fit: --suggest: chose %s\n", sug.Reason)
	return sug.Refs, nil
}
