package quant

import (
	"strings"
	"testing"
)

// TestTPP2MWarningPlain: the out-of-range warning gives the energy in plain
// notation.
func TestTPP2MWarningPlain(t *testing.T) {
	al := Material{Formula: "Al", Density: 2.70, ValenceElectrons: 3}
	r, err := TPP2M(al, 1e6)
	if err != nil {
		t.Fatal(err)
	}
	want := "energy 1000000 eV is outside 50-2000 eV"
	if len(r.Warnings) != 1 || !strings.Contains(r.Warnings[0], want) || strings.Contains(r.Warnings[0], "e+") {
		t.Errorf("warnings %q, want one containing %q", r.Warnings, want)
	}
}
