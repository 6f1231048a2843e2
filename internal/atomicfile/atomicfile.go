package atomicfile

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// WriteFile writes path through fill: into a temporary file in the same
// folder (named ".<base>.tmp-*", so a leftover is recognisable), buffered,
// flushed and fsynced, then renamed over path, and the folder is fsynced
// so that the rename survives a crash. The file is made readable by all
// (0644), whatever the file it replaces had. If anything fails, the
// temporary file is removed and path is left as it was. A folder that does
// not exist or cannot be written is named in the error, not the temporary
// file that could not be created.
func WriteFile(path string, fill func(io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("folder %s does not exist: %w", filepath.Clean(dir), fs.ErrNotExist)
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
	w := bufio.NewWriterSize(tmp, 1<<16)
	if err := fill(w); err != nil {
		return err
	}
	if err := w.Flush(); err != nil {
		return err
	}
	if err := tmp.Chmod(0o644); err != nil { // CreateTemp makes 0600
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
