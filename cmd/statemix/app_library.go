package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"

	"statemix/library"
)

// openLibrary opens the library named by --library, $STATEMIX_LIBRARY,
// $XDG_DATA_HOME/statemix or ~/.local/share/statemix. write says the
// caller will change it; the store then uses the app's clock for the
// timestamps it writes. Readers and writers open the same way: readers take
// no lock, writers lock per operation.
func (a *App) openLibrary(write bool) (*library.Store, error) {
	dir, err := a.LibraryDir()
	if err != nil {
		return nil, err
	}
	st, err := library.Open(dir)
	if err != nil {
		where := ""
		if a.LibraryFlag == "" && a.Getenv("STATEMIX_LIBRARY") == "" {
			where = " (the default folder: no --library and no $STATEMIX_LIBRARY)"
		}
		if _, serr := os.Stat(dir); errors.Is(serr, fs.ErrNotExist) {
			return nil, fmt.Errorf("library %s does not exist%s: create it with statemix library init, or choose another with --library or $STATEMIX_LIBRARY", dir, where)
		}
		if errors.Is(err, library.ErrNotLibrary) {
			return nil, fmt.Errorf("library %s: not a statemix library%s (create it with statemix library init, or choose another with --library)", dir, where)
		}
		return nil, fmt.Errorf("library %s: %w", dir, err)
	}
	if write && a.Now != nil {
		st.Now = a.Now
	}
	return st, nil
}

// afterLibraryWrite brings the index up to date after a library write. The
// write itself has succeeded, so a failure here is a warning: the index is
// derived and search or library verify --repair rebuilds it.
func (a *App) afterLibraryWrite(st *library.Store) {
	if err := a.syncIndex(st); err != nil {
		a.Warn(fmt.Sprintf("the library changed but its index was not updated (%v); statemix library verify --repair rebuilds it", err))
	}
}

// libraryError maps library errors to the command line's exit statuses:
// invalid entries, names in use, spectra already present, bad bundles and
// clashing bundles are bad input data (exit 3); the rest are failures.
func libraryError(err error) error {
	if err == nil {
		return nil
	}
	for _, bad := range []error{library.ErrInvalid, library.ErrNameTaken, library.ErrExists,
		library.ErrBadBundle, library.ErrBundleClash} {
		if errors.Is(err, bad) {
			return badInput(err)
		}
	}
	return err
}
