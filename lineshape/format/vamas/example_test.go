package vamas_test

import (
	"fmt"
	"log"

	"statemix/lineshape/format/vamas"
)

// Example reads the invented sputter-depth-profile example and prints, for
// each block, the sputter time and the kinetic-energy range of its
// spectrum.
func Example() {
	f, err := vamas.ReadFile("testdata/sdp-example.vms")
	if err != nil {
		log.Fatal(err)
	}
	specs, err := f.Spectra()
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(f.ExperimentMode, f.ScanMode, len(f.Blocks), "blocks")
	for _, s := range specs[:3] {
		fmt.Printf("%s: %s, t = %.0f s, %.1f-%.1f eV, modulation %.1f eV\n",
			s.Meta.BlockID, s.Mode, *s.Meta.SputterTimeS, s.Axis.Lo(), s.Axis.Hi(), s.Meta.ModulationEV)
	}
	// Output:
	// SDP REGULAR 6 blocks
	// profile step 1: derivative, t = 0 s, 380.0-480.0 eV, modulation 2.0 eV
	// profile step 2: derivative, t = 120 s, 380.0-480.0 eV, modulation 2.0 eV
	// profile step 3: derivative, t = 240 s, 380.0-480.0 eV, modulation 2.0 eV
}
