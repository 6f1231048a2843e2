package quant

import (
	"strings"
	"testing"
)

func TestLookupMaterial(t *testing.T) {
	for _, c := range []struct {
		formula string
		rho, nv float64 // built-in table (CRC, from memory; Nv TPP-2M convention)
	}{
		{"Al", 2.70, 3}, {"Cu", 8.96, 11}, {"Au", 19.32, 11}, {"SiO2", 2.19, 16},
		{"O2Si", 2.19, 16}, {"Al2O3", 3.97, 24}, {"Si3N4", 3.17, 32}, {"Ta2O5", 8.2, 40},
	} {
		m, err := LookupMaterial(c.formula)
		if err != nil {
			t.Fatalf("LookupMaterial(%q): %v", c.formula, err)
		}
		if m.Density != c.rho || m.ValenceElectrons != c.nv || m.Source == "" {
			t.Errorf("LookupMaterial(%q) = %+v", c.formula, m)
		}
	}
	if _, err := LookupMaterial("InP"); err == nil || !strings.Contains(err.Error(), "not in the built-in table") {
		t.Errorf("InP: %v", err)
	}
	if _, err := LookupMaterial("Xx2O"); err == nil || !strings.Contains(err.Error(), "Xx") {
		t.Errorf("Xx2O: %v", err)
	}
	// Every built-in entry is usable by TPP-2M, and its valence count is
	// an integer sum (sanity of the table).
	for _, m := range builtinMaterials {
		if _, err := TPP2M(m, 1000); err != nil {
			t.Errorf("built-in %s: %v", m.Formula, err)
		}
	}
}

func TestResolveMaterial(t *testing.T) {
	rho := 2.2
	gap := 0.0
	m, err := ResolveMaterial("SiO2", Override{Density: &rho})
	if err != nil || m.Density != 2.2 || m.ValenceElectrons != 16 || m.BandGap != 9 || !strings.Contains(m.Source, "user-given density") {
		t.Errorf("SiO2 with density: %+v, %v", m, err)
	}
	if _, err := ResolveMaterial("InP", Override{Density: &rho}); err == nil || !strings.Contains(err.Error(), "valence electrons, band gap") {
		t.Errorf("InP partial: %v", err)
	}
	nv := 8.0
	m, err = ResolveMaterial("InP", Override{Density: &rho, ValenceElectrons: &nv, BandGap: &gap})
	if err != nil || m.Source != "user-given" {
		t.Errorf("InP full: %+v, %v", m, err)
	}
	neg := -1.0
	if _, err := ResolveMaterial("Al", Override{Density: &neg}); err == nil {
		t.Error("negative density accepted")
	}
}
