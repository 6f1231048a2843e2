package quant

import (
	"fmt"
	"math/bits"
	"strconv"
	"strings"
)

// Shell is an electron shell in X-ray notation, or the valence band.
type Shell int

// Shells in order of decreasing binding energy; Valence stands for the
// valence band (V in Auger notation).
const (
	ShellK Shell = iota
	ShellL
	ShellM
	ShellN
	ShellO
	ShellP
	Valence
)

// shellLetters are the letters of the shells, indexed by Shell.
const shellLetters = "KLMNOPV"

// subshellCount is the number of subshells of each shell that the
// binding-energy table holds (xraylib defines P1..P5).
var subshellCount = [...]int{ShellK: 1, ShellL: 3, ShellM: 5, ShellN: 7, ShellO: 7, ShellP: 5, Valence: 0}

// firstSubshell is the column of the shell's first subshell in bindingEV.
var firstSubshell = [...]int{ShellK: 0, ShellL: 1, ShellM: 4, ShellN: 9, ShellO: 16, ShellP: 23}

// String returns the shell's letter.
func (s Shell) String() string {
	if s < 0 || int(s) >= len(shellLetters) {
		return "Shell(" + strconv.Itoa(int(s)) + ")"
	}
	return shellLetters[s : s+1]
}

// Level is one level of an Auger transition: a shell with a set of its
// subshells ("L23" is L2 and L3), a whole shell ("L" in group notation such
// as KLL) or the valence band ("V").
type Level struct {
	Shell Shell
	// Sub is the set of subshells, bit i-1 for subshell i; 0 means the whole
	// shell (group notation), and is always 0 for K and Valence.
	Sub uint16
}

// Subshells returns the subshell numbers of the level in ascending order, or
// nil for a whole shell, K or the valence band.
func (l Level) Subshells() []int {
	var out []int
	for i := 1; i <= 16; i++ {
		if l.Sub&(1<<(i-1)) != 0 {
			out = append(out, i)
		}
	}
	return out
}

// IsGroup reports whether the level names a whole shell with subshells left
// unspecified (the "L" of KLL). K and V are never groups.
func (l Level) IsGroup() bool {
	return l.Sub == 0 && l.Shell != ShellK && l.Shell != Valence
}

// String writes the level in IUPAC notation without commas ("L23", "M45",
// "K", "V", "L").
func (l Level) String() string {
	var b strings.Builder
	b.WriteString(l.Shell.String())
	for _, i := range l.Subshells() {
		b.WriteString(strconv.Itoa(i))
	}
	return b.String()
}

// minSub and maxSub are the lowest and highest subshell of a level with
// subshells; for K they are 1.
func (l Level) minSub() int {
	if l.Sub == 0 {
		return 1
	}
	return bits.TrailingZeros16(l.Sub) + 1
}

func (l Level) maxSub() int {
	if l.Sub == 0 {
		return subshellCount[l.Shell]
	}
	return 16 - bits.LeadingZeros16(l.Sub)
}

// Transition is an Auger transition WXY in IUPAC (X-ray) notation: a core
// hole in level W is filled by an electron from X, and an electron from Y
// is emitted.
type Transition struct {
	W, X, Y Level
}

// String returns the transition in IUPAC notation without commas
// ("KL23L23", "L3M45M45", "LVV").
func (t Transition) String() string {
	return t.W.String() + t.X.String() + t.Y.String()
}

// IsGroup reports whether any level of t is a whole shell (group notation
// such as KLL or LMM).
func (t Transition) IsGroup() bool {
	return t.W.IsGroup() || t.X.IsGroup() || t.Y.IsGroup()
}

const maxTransitionLen = 32

// ParseTransition parses an Auger transition in IUPAC (X-ray) notation:
// three levels W, X and Y, each a shell letter K, L, M, N, O or P with
// optional subshell digits, or V for the valence band. Digits list a group
// of subshells in ascending order, optionally separated by commas
// ("L23" = "L2,3" = L2 and L3); a shell letter alone is a whole shell
// (group notation: KLL, LMM, MNN). Levels may be separated by '-' or
// spaces. Letters may be given in lower case. Examples: KLL, KL23L23,
// KL1L1, L3M45M45, L3M23M45, LMM, LVV, L23VV, L3VV, MNN, M5N67N67,
// M45N45N45, KVV, M2,3VV.
//
// W must be a core level (not V), and X and Y must be less tightly bound
// than W: a deeper shell, or the same shell with higher subshell numbers
// (a Coster-Kronig transition such as L1L23M45).
func ParseTransition(s string) (Transition, error) {
	if len(s) == 0 {
		return Transition{}, fmt.Errorf("empty transition")
	}
	if len(s) > maxTransitionLen {
		return Transition{}, fmt.Errorf("transition %q: too long (at most %d characters)", s, maxTransitionLen)
	}
	var levels []Level
	i := 0
	for i < len(s) {
		c := s[i]
		if c == ' ' || c == '-' {
			if len(levels) == 0 || i+1 >= len(s) || s[i+1] == ' ' || s[i+1] == '-' {
				return Transition{}, fmt.Errorf("transition %q: position %d: misplaced separator %q", s, i+1, c)
			}
			i++
			continue
		}
		if c >= 'a' && c <= 'z' {
			c -= 'a' - 'A'
		}
		sh := strings.IndexByte(shellLetters, c)
		if sh < 0 {
			return Transition{}, fmt.Errorf("transition %q: position %d: %q is not a shell letter (K, L, M, N, O, P or V for the valence band)", s, i+1, s[i])
		}
		lv := Level{Shell: Shell(sh)}
		i++
		last := 0
		for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == ',') {
			if s[i] == ',' {
				if last == 0 || i+1 >= len(s) || s[i+1] < '0' || s[i+1] > '9' {
					return Transition{}, fmt.Errorf("transition %q: position %d: a comma must stand between subshell digits", s, i+1)
				}
				i++
				continue
			}
			d := int(s[i] - '0')
			switch {
			case lv.Shell == ShellK || lv.Shell == Valence:
				return Transition{}, fmt.Errorf("transition %q: position %d: %s has no subshells", s, i+1, lv.Shell)
			case d < 1 || d > subshellCount[lv.Shell]:
				return Transition{}, fmt.Errorf("transition %q: position %d: shell %s has subshells 1 to %d, not %d", s, i+1, lv.Shell, subshellCount[lv.Shell], d)
			case d <= last:
				return Transition{}, fmt.Errorf("transition %q: position %d: subshells of %s must be listed once each in ascending order", s, i+1, lv.Shell)
			}
			lv.Sub |= 1 << (d - 1)
			last = d
			i++
		}
		levels = append(levels, lv)
		if len(levels) > 3 {
			return Transition{}, fmt.Errorf("transition %q: more than three levels (an Auger transition is W X Y)", s)
		}
	}
	if len(levels) != 3 {
		return Transition{}, fmt.Errorf("transition %q: %d level(s), want three (core level W, then X and Y, e.g. KL23L23)", s, len(levels))
	}
	t := Transition{W: levels[0], X: levels[1], Y: levels[2]}
	if t.W.Shell == Valence {
		return Transition{}, fmt.Errorf("transition %q: the initial hole W must be a core level, not the valence band", s)
	}
	for _, l := range []Level{t.X, t.Y} {
		if !lessBound(l, t.W) {
			return Transition{}, fmt.Errorf("transition %q: level %s is not less tightly bound than the core level %s", s, l, t.W)
		}
	}
	return t, nil
}

// lessBound reports whether every subshell of l is less tightly bound than
// every subshell of the core level w, judged by notation (shell order, then
// subshell number).
func lessBound(l, w Level) bool {
	if l.Shell == Valence {
		return true
	}
	if l.Shell != w.Shell {
		return l.Shell > w.Shell
	}
	if l.Sub == 0 || w.Sub == 0 {
		return false // "LL...": whole shell against itself
	}
	return l.minSub() > w.maxSub()
}

// MarshalText writes the transition in canonical notation (String).
func (t Transition) MarshalText() ([]byte, error) { return []byte(t.String()), nil }

// UnmarshalText parses notation as ParseTransition does.
func (t *Transition) UnmarshalText(b []byte) error {
	p, err := ParseTransition(string(b))
	if err != nil {
		return err
	}
	*t = p
	return nil
}
