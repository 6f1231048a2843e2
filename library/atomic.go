package library

import (
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// tempMarker is part of every temporary file name; verify treats files
// carrying it as leftovers of an interrupted write.
const tempMarker = ".tmp-"

// testHookAfterTemp, when set (by tests only), runs after a temporary file
// has been written and fsynced and before it is renamed into place. A
// non-nil return aborts the write and leaves the temporary file behind, as
// a crash would.
var testHookAfterTemp func(tmp string) error

// writeFileAtomic writes data to path: a temporary file in the same folder,
// fsync, rename, fsync of the folder. Readers see the old or the new file,
// never a part.
func writeFileAtomic(path string, data []byte) error {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	var rnd [6]byte
	if _, err := rand.Read(rnd[:]); err != nil {
		return err
	}
	tmp := filepath.Join(dir, fmt.Sprintf(".%s%s%d-%s", base, tempMarker, os.Getpid(), hex.EncodeToString(rnd[:])))
	f, err := os.OpenFile(tmp, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	ok := false
	defer func() {
		if !ok {
			f.Close()
			os.Remove(tmp)
		}
	}()
	if _, err := f.Write(data); err != nil {
		return fmt.Errorf("write %s: %w", tmp, err)
	}
	if err := f.Sync(); err != nil {
		return fmt.Errorf("fsync %s: %w", tmp, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("close %s: %w", tmp, err)
	}
	if testHookAfterTemp != nil {
		if err := testHookAfterTemp(tmp); err != nil {
			ok = true // leave the temporary file, as a crash would
			return err
		}
	}
	if err := os.Rename(tmp, path); err != nil {
		return err
	}
	ok = true
	return syncDir(dir)
}

// removeFileDurable removes path and fsyncs its folder.
func removeFileDurable(path string) error {
	if err := os.Remove(path); err != nil {
		return err
	}
	return syncDir(filepath.Dir(path))
}

// syncDir fsyncs a folder so renames and removals in it are durable.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil {
		return fmt.Errorf("fsync %s: %w", dir, err)
	}
	return nil
}

// isTempName reports whether a file name is one of our temporary files.
func isTempName(name string) bool {
	return strings.HasPrefix(name, ".") && strings.Contains(name, tempMarker)
}
