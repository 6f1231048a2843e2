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
	"errors"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// suggestReferences proposes the k library references most like unknown.
func suggestReferences(app *App, unknown *lineshape.Spectrum, opts *fitOptions, k int) ([]fit.Reference, error) {
	return nil, errors.New("not yet available in this build: give the references with --refs, --element or --ref-file")
}
