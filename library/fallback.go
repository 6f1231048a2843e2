package library

// Temporary stand-ins for package quant's CheckAugerElement and
// ParseTransition while that package is being written; validate.go switches
// to quant and this file goes away.

import (
	"fmt"
	"strings"
)

const fallbackSymbols = "H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No Lr Rf Db Sg Bh Hs Mt Ds Rg Cn Nh Fl Mc Lv Ts Og"

func fallbackCheckElement(symbol string) error {
	for i, s := range strings.Fields(fallbackSymbols) {
		if s == symbol {
			if i < 2 {
				return fmt.Errorf("element %s has no Auger transition: the process needs three electrons, so AES detects Li (Z = 3) and heavier elements only", s)
			}
			return nil
		}
	}
	return fmt.Errorf("unknown element symbol %q", symbol)
}

func fallbackParseTransition(t string) (string, error) {
	u := strings.ToUpper(strings.TrimSpace(t))
	levels := 0
	for i := 0; i < len(u); {
		c := u[i]
		if !strings.ContainsRune("KLMNOPV", rune(c)) {
			return "", fmt.Errorf("transition %q: %q is not a shell (K, L, M, N, O, P or V)", t, c)
		}
		if levels == 0 && c == 'V' {
			return "", fmt.Errorf("transition %q: the initial hole cannot be in the valence band", t)
		}
		i++
		for i < len(u) && u[i] >= '1' && u[i] <= '7' {
			i++
		}
		levels++
	}
	if levels != 3 {
		return "", fmt.Errorf("transition %q: want three levels, e.g. KL23L23, L3M45M45, LVV", t)
	}
	return u, nil
}
