package quant

import (
	"math"
	"strings"
	"testing"
)

// TestEstimateEnergyDomain checks the Chung-Jenkins estimates DOMAIN.md
// computed from xraylib 4.0.0 edge energies (1387.5, 1604.0, 921.4 eV);
// tolerance 0.5 eV as the issue asks (the values are quoted to 0.1 eV and
// Al's exact value 1387.45 sits on a rounding boundary).
func TestEstimateEnergyDomain(t *testing.T) {
	for _, c := range []struct {
		el, tr string
		want   float64
	}{
		{"Al", "KL23L23", 1387.5},
		{"Si", "KL23L23", 1604.0},
		{"Cu", "L3M45M45", 921.4},
		{"Al", "KLL", 1387.5}, // principal line of the group
		{"Al", "KL2,3L2,3", 1387.5},
	} {
		tr, err := ParseTransition(c.tr)
		if err != nil {
			t.Fatal(err)
		}
		got, err := EstimateEnergy(c.el, tr)
		if err != nil {
			t.Fatalf("EstimateEnergy(%s, %s): %v", c.el, c.tr, err)
		}
		if math.Abs(got-c.want) > 0.5 {
			t.Errorf("EstimateEnergy(%s, %s) = %.2f eV, want %.1f +/- 0.5", c.el, c.tr, got, c.want)
		}
	}
}

// TestEstimateEnergyHandbook checks the estimate and the group conventions
// against measured derivative-peak energies (DOMAIN.md, handbook scale,
// from memory, about +/-2 eV). Chung-Jenkins is good to about 15 eV
// (DOMAIN.md; Si KLL is 15.0 eV low here); the tolerance is the 20 eV
// plausibility threshold the library uses, which is what the conventions
// must serve. Oxide and metal lines differ by up to ~15 eV, so only
// metals and the gas-phase-like light elements are used.
func TestEstimateEnergyHandbook(t *testing.T) {
	for _, c := range []struct {
		el, tr string
		want   float64
	}{
		{"C", "KLL", 272}, {"N", "KLL", 379}, {"O", "KLL", 503},
		{"Al", "KLL", 1396}, {"Al", "LVV", 68}, {"Si", "LVV", 92}, {"Si", "KLL", 1619},
		{"Ti", "LMM", 418}, {"Ti", "L3M23M23", 387}, {"Fe", "LMM", 703}, {"Ni", "LMM", 848},
		{"Cu", "LMM", 920},
		// ISO 17974 calibration energies (DOMAIN.md, from memory).
		{"Cu", "M23VV", 62.37}, {"Cu", "L3VV", 918.69}, {"Au", "M5N67N67", 2015.80}, {"Au", "MNN", 2015.80},
	} {
		tr, err := ParseTransition(c.tr)
		if err != nil {
			t.Fatal(err)
		}
		got, err := EstimateEnergy(c.el, tr)
		if err != nil {
			t.Fatalf("EstimateEnergy(%s, %s): %v", c.el, c.tr, err)
		}
		if math.Abs(got-c.want) > 20 {
			t.Errorf("EstimateEnergy(%s, %s) = %.1f eV, measured %.1f: off by more than 20 eV", c.el, c.tr, got, c.want)
		}
	}
}

func TestPrincipalLine(t *testing.T) {
	for _, c := range []struct{ el, in, want string }{
		{"Al", "KLL", "KL23L23"},
		{"Si", "LVV", "L3VV"},
		{"Ti", "LMM", "L3M23M45"},
		{"Fe", "LMM", "L3M45M45"},
		{"Cu", "LMM", "L3M45M45"},
		{"Au", "MNN", "M5N67N67"},
		{"Ag", "MNN", "M5N45N45"},
		{"Si", "LMM", "L3M23M23"},
		{"Cu", "L3M45M45", "L3M45M45"},
	} {
		tr, _ := ParseTransition(c.in)
		p, err := PrincipalLine(c.el, tr)
		if err != nil || p.String() != c.want {
			t.Errorf("PrincipalLine(%s, %s) = %s, %v; want %s", c.el, c.in, p, err, c.want)
		}
	}
}

func TestEstimateEnergyErrors(t *testing.T) {
	for _, c := range []struct{ el, tr, want string }{
		{"H", "KVV", "three electrons"},
		{"He", "KLL", "three electrons"},
		{"Xx", "KLL", "unknown element"},
		{"Li", "KL23L23", "no tabulated L2"},
		{"C", "LMM", "no occupied M"},
		{"Al", "L3M45M45", "no tabulated M4"},
		{"Fm", "KLL", "Z+1"},
	} {
		tr, err := ParseTransition(c.tr)
		if err != nil {
			t.Fatal(err)
		}
		_, err = EstimateEnergy(c.el, tr)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("EstimateEnergy(%s, %s) error %v, want it to contain %q", c.el, c.tr, err, c.want)
		}
	}
}

// TestBindingEnergy spot-checks the generated table against xraylib 4.0.0
// EdgeEnergy values printed by /usr/bin/python3 while writing this test
// (exact: same data).
func TestBindingEnergy(t *testing.T) {
	for _, c := range []struct {
		z   int
		sh  Shell
		sub int
		ev  float64
	}{
		{13, ShellK, 1, 1559.6}, {13, ShellL, 3, 72.7}, {14, ShellL, 2, 99.5},
		{29, ShellL, 3, 931.1}, {29, ShellM, 5, 1.6}, {30, ShellM, 4, 8.1},
		{79, ShellN, 7, 84.1}, {79, ShellO, 5, 2.5}, {3, ShellL, 1, 5.3},
	} {
		e, ok := BindingEnergy(c.z, c.sh, c.sub)
		if !ok || math.Abs(e-c.ev) > 1e-9 {
			t.Errorf("BindingEnergy(%d, %s, %d) = %g, %v; want %g", c.z, c.sh, c.sub, e, ok, c.ev)
		}
	}
	if _, ok := BindingEnergy(13, ShellM, 4); ok {
		t.Error("Al M4 tabulated, want empty")
	}
	if _, ok := BindingEnergy(0, ShellK, 1); ok {
		t.Error("Z = 0 tabulated")
	}
}
