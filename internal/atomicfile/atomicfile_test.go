package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWriteFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := WriteFile(path, func(w io.Writer) error { _, err := fmt.Fprint(w, "first"); return err }); err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Mode().Perm() != 0o644 {
		t.Errorf("new file mode %v, want 0644", fi.Mode().Perm())
	}
	// A replaced file is made readable by all like a new one.
	if err := os.Chmod(path, 0o600); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(path, func(w io.Writer) error { _, err := fmt.Fprint(w, "second"); return err }); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(path); string(b) != "second" {
		t.Errorf("content %q, want %q", b, "second")
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o644 {
		t.Errorf("replaced file mode %v, want 0644", fi.Mode().Perm())
	}
	// A failing fill leaves the old file and no temporary file.
	boom := errors.New("boom")
	err = WriteFile(path, func(w io.Writer) error {
		fmt.Fprint(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want %v", err, boom)
	}
	if b, _ := os.ReadFile(path); string(b) != "second" {
		t.Errorf("after a failed write the content is %q, want the old %q", b, "second")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v, want only out.txt", names)
	}
}

func TestWriteFileMissingFolder(t *testing.T) {
	err := WriteFile(filepath.Join(t.TempDir(), "no", "such", "x"), func(io.Writer) error { return nil })
	if !errors.Is(err, os.ErrNotExist) || !strings.Contains(err.Error(), "folder") || strings.Contains(err.Error(), ".tmp-") {
		t.Errorf("error %q: want one naming the missing folder (not the temporary file) and wrapping os.ErrNotExist", err)
	}
}
