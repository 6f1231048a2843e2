package main

import (
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"statemix/index"
	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/format/delimited"
	"statemix/lineshape/format/vamas"
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
	err = x.SyncContext(a.Ctx, store, nil)
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

// openStore opens the library named by --library and friends.
func (a *App) openStore() (*library.Store, error) {
	dir, err := a.LibraryDir()
	if err != nil {
		return nil, err
	}
	st, err := library.Open(dir)
	if err != nil {
		return nil, fmt.Errorf("library %s: %w", dir, err)
	}
	return st, nil
}

// readSpectrumBlock reads block (0-based; -1 means "the only one") of a
// spectrum file: VAMAS (.vms, .vamas) or delimited text otherwise.
func readSpectrumBlock(path string, block int) (*lineshape.Spectrum, error) {
	var specs []*lineshape.Spectrum
	switch strings.ToLower(filepath.Ext(path)) {
	case ".vms", ".vamas":
		f, err := vamas.ReadFile(path)
		if err != nil {
			return nil, err
		}
		specs, err = f.Spectra()
		if err != nil {
			return nil, err
		}
	default:
		s, err := delimited.ReadFile(path, delimited.Options{})
		if err != nil {
			return nil, err
		}
		specs = []*lineshape.Spectrum{s}
	}
	if block < 0 {
		if len(specs) != 1 {
			return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("%d blocks: choose one with --block", len(specs))}
		}
		return specs[0], nil
	}
	if block >= len(specs) {
		return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("no block %d: the file has %d", block+1, len(specs))}
	}
	return specs[block], nil
}
