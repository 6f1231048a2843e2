package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// writeFileAtomically writes path through fill: into a temporary file in
// the same folder, buffered, flushed, fsynced, made readable by all
// (0644) and renamed over path, then the folder is fsynced so that the
// rename survives a crash. If anything fails, the temporary file is
// removed and path is left as it was.
func writeFileAtomically(path string, fill func(io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		// Say what is wrong with the folder, not which temporary name
		// could not be created.
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("folder %s does not exist", filepath.Clean(dir))
		}
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return fmt.Errorf("cannot create a file in folder %s: %w", filepath.Clean(dir), err)
	}
	renamed := false
	defer func() {
		if !renamed {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	w := bufio.NewWriter(tmp)
	if err := fill(w); err != nil {
		return err
	}
	if err := w.Flush(); err != nil {
		return err
	}
	if err := tmp.Chmod(0o644); err != nil {
		return err
	}
	if err := tmp.Sync(); err != nil {
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	renamed = true
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("%s: written, but the folder cannot be opened to sync it: %w", path, err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil {
		return fmt.Errorf("%s: written, but the folder cannot be synced: %w", path, err)
	}
	return nil
}
