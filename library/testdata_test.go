package library

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"testing"

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
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs from what testdataFiles makes; run go test -run TestTestdata -update", path)
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
