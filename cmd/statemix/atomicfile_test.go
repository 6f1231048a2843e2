package main

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// TestWriteFileAtomically: a complete write replaces the file with mode
// 0644 and leaves no temporary file; a failing fill leaves the old content
// and no temporary file either.
func TestWriteFileAtomically(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.txt")
	if err := os.WriteFile(p, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := writeFileAtomically(p, func(w io.Writer) error {
		_, _ = io.WriteString(w, "half")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Errorf("failing fill: %v, want boom", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "old" {
		t.Errorf("after a failed write the file holds %q, want old", b)
	}
	if err := writeFileAtomically(p, func(w io.Writer) error { _, err := io.WriteString(w, "new"); return err }); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "new" {
		t.Errorf("file holds %q, want new", b)
	}
	if st, err := os.Stat(p); err != nil || st.Mode().Perm() != 0o644 {
		t.Errorf("mode %v (%v), want 0644", st.Mode().Perm(), err)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("folder holds %d files, want only out.txt", len(ents))
	}
	if err := writeFileAtomically(filepath.Join(dir, "no", "such", "x"), func(io.Writer) error { return nil }); err == nil {
		t.Errorf("missing folder: no error")
	}
}
