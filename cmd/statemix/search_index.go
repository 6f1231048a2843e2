package main

import (
	"errors"
	"fmt"

	"statemix/index"
	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/format"
)

// syncIndex brings the library's index up to date after a write (library
// add, edit, remove, import; fit --save). It creates the index when it is
// missing and applies the library's change log otherwise; a busy index
// (another writer for longer than the timeout) is an error naming the
// holder. The library commands call it after each successful write.
func (a *App) syncIndex(store *library.Store) error {
	x, err := index.Open(store.Dir(), false)
	if err != nil {
		return fmt.Errorf("index: %w", err)
	}
	// A big reindex (a first search of a large library, an import) shows a
	// progress bar on a terminal; the usual one-entry update does not.
	var bar *progress
	started := false
	err = x.SyncContext(a.Ctx, store, func(done, total int) {
		if !started && total >= 1000 {
			bar, started = newProgress(a, total, "index"), true
		}
		bar.Set(done, total)
	})
	bar.Finish()
	if cerr := x.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("index: %w", err)
	}
	return nil
}

// openSearchIndex opens the index of store's library read-only for a
// query. If the index is missing or behind the library (a write whose
// index update did not happen), it is first brought up to date; if that
// cannot get the writer lock in time, the search goes on with the index as
// it is and a warning says so.
func (a *App) openSearchIndex(store *library.Store) (*index.Index, error) {
	x, err := index.Open(store.Dir(), true)
	if errors.Is(err, index.ErrNotExist) {
		a.Infof("statemix: building the library index\n")
		if err := a.syncIndex(store); err != nil {
			return nil, err
		}
		return index.Open(store.Dir(), true)
	}
	if err != nil {
		return nil, fmt.Errorf("index: %w", err)
	}
	st, err := x.State()
	if err == nil && st.Complete && st.Revision == int64(store.Revision()) {
		return x, nil
	}
	x.Close()
	if serr := a.syncIndex(store); serr != nil {
		a.Warn(fmt.Sprintf("index is behind the library and could not be updated (%v); results may be out of date", serr))
	}
	return index.Open(store.Dir(), true)
}

// readSpectrumBlock reads block (1-based; 0 means "the file's only
// spectrum") of a spectrum file in any format package format reads.
func readSpectrumBlock(path string, block int) (*lineshape.Spectrum, error) {
	specs, err := format.ReadFile(path, format.Options{Block: block})
	if err != nil {
		if errors.Is(err, format.ErrNoBlock) {
			// A block the file does not have is a command-line mistake,
			// as it is for fit and convert.
			return nil, usageErrorf("--block: %v", err)
		}
		return nil, err
	}
	if len(specs) != 1 {
		return nil, usageErrorf("%s holds %d spectra: choose one with --block N", path, len(specs))
	}
	return specs[0], nil
}
