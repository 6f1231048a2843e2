package library

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/format/vamas"
)

var updateTestdata = flag.Bool("update", false, "rewrite the files in testdata/")

// testdataFiles returns the small spectrum files the command tests add:
// invented lineshapes (a derivative Gaussian line with fixed noise), not
// measurements.
func testdataFiles(t *testing.T) map[string][]byte {
	t.Helper()
	metal := synth(330, 0.5, 201, 383, 3, 100, 0.2, 11)
	nitride := synth(330, 0.5, 201, 386, 3.5, 90, 0.2, 12)
	for i, s := range []*lineshape.Spectrum{metal, nitride} {
		s.Meta = lineshape.Meta{
			Sample: fmt.Sprintf("Ti standard %d", i+1), BlockID: fmt.Sprintf("Ti %d", i+1), Technique: "AES diff",
			Comments:      []string{"INVENTED test lineshape (a derivative Gaussian line with fixed noise), not a measurement"},
			BeamEnergyKeV: 10, BeamCurrentNA: 5, DwellS: 0.1, Scans: 3, ModulationEV: 2, AnalyserMode: "FRR",
		}
	}
	f, err := vamas.FromSpectra([]*lineshape.Spectrum{metal, nitride}, "")
	if err != nil {
		t.Fatal(err)
	}
	var vms bytes.Buffer
	if err := vamas.Write(&vms, f); err != nil {
		t.Fatal(err)
	}
	al := synth(1340, 0.5, 201, 1390, 3, 100, 0.2, 13)
	var csv bytes.Buffer
	csv.WriteString("# invented Al KL23L23 derivative lineshape for tests\nenergy_ev,dN/dE\n")
	for i, v := range al.Y {
		fmt.Fprintf(&csv, "%.1f,%.6g\n", al.Energy(i), v)
	}
	return map[string][]byte{"ti-two-blocks.vms": vms.Bytes(), "al-oxide.csv": csv.Bytes()}
}

// TestTestdata checks that testdata/ holds what testdataFiles makes (run
// with -update to rewrite it) and that the ISO 14976 file reads back.
func TestTestdata(t *testing.T) {
	for name, want := range testdataFiles(t) {
		path := filepath.Join("testdata", name)
		if *updateTestdata {
			if err := os.WriteFile(path, want, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if err := sameNumericText(got, want); err != nil {
			t.Errorf("%s differs from what testdataFiles makes (%v); run go test -run TestTestdata -update", path, err)
		}
	}
	f, err := vamas.ReadFile(filepath.Join("testdata", "ti-two-blocks.vms"))
	if err != nil {
		t.Fatal(err)
	}
	specs, err := f.Spectra()
	if err != nil {
		t.Fatal(err)
	}
	if len(specs) != 2 || specs[0].Mode != lineshape.Derivative || specs[0].Meta.BeamEnergyKeV != 10 {
		t.Errorf("read back: %d spectra, %+v", len(specs), specs[0].Meta)
	}
}

// sameNumericText reports how got differs from want, line by line and
// comma-separated field by field, treating fields that both parse as
// numbers as equal within 1e-12 absolute or relative. testdataFiles
// computes its lineshapes with math.Exp, whose last bit depends on the
// machine (amd64 uses an FMA path only on CPUs that have FMA; arm64 may
// fuse x*y+z), and the ISO 14976 writer prints the shortest round-trip
// text, so a byte comparison fails on machines other than the one that
// wrote the file (GODEBUG=cpu.fma=off shows it on amd64).
func sameNumericText(got, want []byte) error {
	g := strings.Split(string(got), "\n")
	w := strings.Split(string(want), "\n")
	if len(g) != len(w) {
		return fmt.Errorf("%d lines, want %d", len(g), len(w))
	}
	for i := range g {
		if g[i] == w[i] {
			continue
		}
		gf, wf := strings.Split(g[i], ","), strings.Split(w[i], ",")
		if len(gf) != len(wf) {
			return fmt.Errorf("line %d: %q, want %q", i+1, g[i], w[i])
		}
		for k := range gf {
			if gf[k] == wf[k] {
				continue
			}
			a, errA := strconv.ParseFloat(strings.TrimSpace(gf[k]), 64)
			b, errB := strconv.ParseFloat(strings.TrimSpace(wf[k]), 64)
			if errA != nil || errB != nil || !scalar.EqualWithinAbsOrRel(a, b, 1e-12, 1e-12) {
				return fmt.Errorf("line %d: %q, want %q", i+1, g[i], w[i])
			}
		}
	}
	return nil
}
