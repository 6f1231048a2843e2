package vamas

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzVAMAS feeds Read arbitrary input. Any input must give a File or an
// error, never a panic or a hang; a File that Read accepts must be
// writable, and what Write makes of it must read back to the same File
// (minimum and maximum ordinate lines aside, which Write recomputes).
// Spectra must not panic either.
func FuzzVAMAS(f *testing.F) {
	var seeds []string
	for _, mode := range []string{ModeNORM, ModeSDP, ModeMAPDP, ModeMAPSVDP, ModeSEM} {
		for _, scan := range []string{ScanRegular, ScanIrregular} {
			var buf bytes.Buffer
			if err := Write(&buf, fullFile(mode, scan)); err != nil {
				f.Fatal(err)
			}
			seeds = append(seeds, buf.String())
		}
	}
	seeds = append(seeds, inclusionFile, twoVariables,
		strings.ReplaceAll(twoVariables, "\n", "\r"),
		edit(63, "10"), edit(63, "6"), edit(63, "1000000000000"), edit(28, "5 keV"),
		edit(15, "99999999999"), edit(11, "-2", "11", "32"), edit(6, "1E12"),
		strings.Join(twoVariableLines()[:40], "\n"), "", "VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4\n")
	for _, name := range []string{"sdp-example.vms", "mapdp-example.vms"} {
		if b, err := os.ReadFile(filepath.Join("testdata", name)); err == nil {
			seeds = append(seeds, string(b))
		}
	}
	for _, s := range seeds {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		v, err := Read(bytes.NewReader(data), "fuzz.vms")
		if err != nil {
			if v != nil {
				t.Fatalf("both a file and an error")
			}
			return
		}
		_, _ = v.Spectra()
		var buf bytes.Buffer
		if err := Write(&buf, v); err != nil {
			t.Fatalf("Write of a file Read accepted: %v", err)
		}
		w, err := Read(bytes.NewReader(buf.Bytes()), "again.vms")
		if err != nil {
			t.Fatalf("Read of Write output: %v", err)
		}
		for _, x := range [][]*Block{v.Blocks, w.Blocks} {
			for _, b := range x {
				b.Min, b.Max = nil, nil
			}
		}
		sameFile(t, v, w)
	})
}
