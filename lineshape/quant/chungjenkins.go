package quant

import (
	"fmt"
	"math"
)

// BindingEnergy returns the binding energy in eV of subshell sub (1-based;
// 1 for K) of shell sh for atomic number z, from xraylib 4.0.0 EdgeEnergy
// (bindingSource), and false when the table has no value (the subshell is
// empty, or z is outside 1..100).
func BindingEnergy(z int, sh Shell, sub int) (float64, bool) {
	if z < 1 || z > bindingZMax || sh < ShellK || sh >= Valence || sub < 1 || sub > subshellCount[sh] {
		return 0, false
	}
	e := bindingEV[z][firstSubshell[sh]+sub-1]
	return e, e > 0
}

// valenceBinding is the binding energy taken for the valence band V of
// element z: the smallest tabulated binding energy of z, that is the
// outermost occupied level in xraylib's table (for Cu the 3d, 1.6 eV; for
// Al the 3s, 0.7 eV; for Au the 5d, 2.5 eV).
func valenceBinding(z int) (float64, bool) {
	if z < 1 || z > bindingZMax {
		return 0, false
	}
	m := math.Inf(1)
	for _, e := range bindingEV[z] {
		if e > 0 && e < m {
			m = e
		}
	}
	return m, !math.IsInf(m, 1)
}

// levelBinding is the binding energy of a resolved level (no group) for z:
// the mean over its subshells, or the valence convention for V.
func levelBinding(z int, l Level) (float64, error) {
	el, _ := ElementByZ(z)
	if l.Shell == Valence {
		e, ok := valenceBinding(z)
		if !ok {
			return 0, fmt.Errorf("no binding energies tabulated for %s (Z = %d) in %s", el.Symbol, z, bindingSource)
		}
		return e, nil
	}
	subs := l.Subshells()
	if l.Shell == ShellK {
		subs = []int{1}
	}
	var sum float64
	for _, s := range subs {
		e, ok := BindingEnergy(z, l.Shell, s)
		if !ok {
			name := Level{Shell: l.Shell, Sub: 1 << (s - 1)}
			if l.Shell == ShellK {
				name = Level{Shell: ShellK}
			}
			return 0, fmt.Errorf("%s (Z = %d) has no tabulated %s binding energy in %s (level empty)", el.Symbol, z, name, bindingSource)
		}
		sum += e
	}
	return sum / float64(len(subs)), nil
}

// lGroups are the subshell sets of equal orbital angular momentum l in a
// shell, from s upwards: {1}, {2,3}, {4,5}, {6,7}.
var lGroups = [...]uint16{0b1, 0b110, 0b11000, 0b1100000}

// tabulated reports whether all subshells of sub in shell sh have binding
// energies for z.
func tabulated(z int, sh Shell, sub uint16) bool {
	for i := 1; i <= subshellCount[sh]; i++ {
		if sub&(1<<(i-1)) == 0 {
			continue
		}
		if _, ok := BindingEnergy(z, sh, i); !ok {
			return false
		}
	}
	return true
}

// PrincipalLine resolves group notation to the transition EstimateEnergy
// computes for the element, by these conventions (common practice for the
// strongest line of a group):
//   - a whole-shell core level W becomes its highest subshell tabulated for
//     the element (L -> L3, M -> M5 when the 3d is occupied, else M3);
//   - a whole-shell X or Y becomes the group of subshells of highest orbital
//     angular momentum l that is tabulated for Z and Z+1 (L -> L23;
//     M -> M45, else M23; N -> N67, else N45, else N23), so KLL -> KL23L23,
//     LMM -> L3M45M45 for Cu, MNN -> M5N67N67 for Au and M5N45N45 for Ag;
//   - LMM of Sc to Mn (Z = 21..25, few 3d electrons) becomes L3M23M45, the
//     strongest line in handbook spectra of those metals (Ti 418 eV, Cr
//     529 eV); from Fe on it is L3M45M45 (Fe 703 eV, Cu 920 eV);
//   - levels given with subshells, and V, are kept.
//
// The conventions pick one line of a group; spectra of group notation
// hold several, so a plausibility check against the estimate needs a
// tolerance of tens of eV.
func PrincipalLine(element string, t Transition) (Transition, error) {
	if err := CheckAugerElement(element); err != nil {
		return Transition{}, err
	}
	el, _ := Element(element)
	z := el.Z
	if z+1 > bindingZMax {
		return Transition{}, fmt.Errorf("%s (Z = %d): no binding energies for Z+1 in %s", el.Symbol, z, bindingSource)
	}
	out := t
	if t.W.IsGroup() {
		found := false
		for s := subshellCount[t.W.Shell]; s >= 1; s-- {
			if _, ok := BindingEnergy(z, t.W.Shell, s); ok {
				out.W = Level{Shell: t.W.Shell, Sub: 1 << (s - 1)}
				found = true
				break
			}
		}
		if !found {
			return Transition{}, fmt.Errorf("%s %s: %s has no occupied %s shell in %s", el.Symbol, t, el.Symbol, t.W.Shell, bindingSource)
		}
	}
	resolve := func(l Level) (Level, error) {
		if !l.IsGroup() {
			return l, nil
		}
		for g := len(lGroups) - 1; g >= 0; g-- {
			sub := lGroups[g] & (1<<subshellCount[l.Shell] - 1)
			if sub == 0 || sub != lGroups[g] {
				continue
			}
			if tabulated(z, l.Shell, sub) && tabulated(z+1, l.Shell, sub) {
				return Level{Shell: l.Shell, Sub: sub}, nil
			}
		}
		return Level{}, fmt.Errorf("%s %s: %s has no occupied %s shell in %s", el.Symbol, t, el.Symbol, l.Shell, bindingSource)
	}
	if t.W.Shell == ShellL && t.X.IsGroup() && t.Y.IsGroup() && t.X.Shell == ShellM && t.Y.Shell == ShellM && z >= 21 && z <= 25 &&
		tabulated(z, ShellM, lGroups[2]) && tabulated(z+1, ShellM, lGroups[2]) {
		out.X = Level{Shell: ShellM, Sub: lGroups[1]}
		out.Y = Level{Shell: ShellM, Sub: lGroups[2]}
		return out, nil
	}
	var err error
	if out.X, err = resolve(t.X); err != nil {
		return Transition{}, err
	}
	if out.Y, err = resolve(t.Y); err != nil {
		return Transition{}, err
	}
	return out, nil
}

// EstimateEnergy estimates the kinetic energy in eV (Fermi-level
// referenced) of the Auger transition t of element by the Chung-Jenkins
// rule (Chung & Jenkins, Surf. Sci. 21 (1970) 253):
//
//	E_WXY(Z) = E_W(Z) - [E_X(Z) + E_X(Z+1)]/2 - [E_Y(Z) + E_Y(Z+1)]/2
//
// with binding energies from xraylib 4.0.0 EdgeEnergy. Group notation is
// first resolved by PrincipalLine. A level that names several subshells
// (L23, M45) takes the mean of their binding energies: with this choice
// the rule gives Al KL23L23 1387.5 eV, Si KL23L23 1604.0 eV and Cu L3M45M45
// 921.4 eV (taking the least-bound member instead would give 1388.0 eV for
// Al). The valence band V takes the binding energy of the outermost
// occupied level of the table (the smallest one tabulated for that Z).
//
// The estimate is good to about 15 eV: enough to flag a mislabelled
// reference, not to assign chemical states.
func EstimateEnergy(element string, t Transition) (float64, error) {
	p, err := PrincipalLine(element, t)
	if err != nil {
		return 0, err
	}
	el, _ := Element(element)
	z := el.Z
	ew, err := levelBinding(z, p.W)
	if err != nil {
		return 0, fmt.Errorf("%s %s: %w", el.Symbol, p, err)
	}
	e := ew
	for _, l := range []Level{p.X, p.Y} {
		a, err := levelBinding(z, l)
		if err != nil {
			return 0, fmt.Errorf("%s %s: %w", el.Symbol, p, err)
		}
		b, err := levelBinding(z+1, l)
		if err != nil {
			return 0, fmt.Errorf("%s %s: %w", el.Symbol, p, err)
		}
		e -= (a + b) / 2
	}
	if e <= 0 {
		return 0, fmt.Errorf("%s %s: estimated energy %.1f eV is not positive: the transition is not energetically possible", el.Symbol, p, e)
	}
	return e, nil
}
