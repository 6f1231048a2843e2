package quant

import (
	"bytes"
	"go/format"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// TestGeneratedHeader checks that binding_gen.go carries the standard
// generated-code header naming its source.
func TestGeneratedHeader(t *testing.T) {
	b, err := os.ReadFile("binding_gen.go")
	if err != nil {
		t.Fatal(err)
	}
	first, _, _ := bytes.Cut(b, []byte("\n"))
	if s := string(first); !strings.HasPrefix(s, "// Code generated ") || !strings.HasSuffix(s, " DO NOT EDIT.") || !strings.Contains(s, "xraylib 4.0.0 EdgeEnergy") {
		t.Errorf("header %q", first)
	}
}

// TestGeneratedUpToDate regenerates the table with gen_binding.py when
// Debian's /usr/bin/python3 with xraylib is present, and compares it with
// the committed file. Go tests never need Python: without it the test
// skips.
func TestGeneratedUpToDate(t *testing.T) {
	py := "/usr/bin/python3"
	if _, err := os.Stat(py); err != nil {
		t.Skip("no /usr/bin/python3")
	}
	if err := exec.Command(py, "-c", "import xraylib").Run(); err != nil {
		t.Skip("python3-xraylib not installed")
	}
	out := filepath.Join(t.TempDir(), "binding_gen.go")
	if b, err := exec.Command(py, "gen_binding.py", out).CombinedOutput(); err != nil {
		t.Fatalf("gen_binding.py: %v\n%s", err, b)
	}
	raw, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	got, err := format.Source(raw)
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile("binding_gen.go")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Error("binding_gen.go differs from gen_binding.py output: run go generate ./lineshape/quant/")
	}
}
