package render

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"

	"statemix/lineshape/fit"
)

// Table is a header and rows of text cells.
type Table struct {
	Header []string
	Rows   [][]string
	// Right marks the columns that are right-aligned (numbers); missing
	// entries mean left.
	Right []bool
}

// WriteText writes t aligned for a terminal: columns two spaces apart, the
// header underlined.
func (t *Table) WriteText(w io.Writer) error {
	ncol := len(t.Header)
	for _, r := range t.Rows {
		ncol = max(ncol, len(r))
	}
	width := make([]int, ncol)
	measure := func(r []string) {
		for i, c := range r {
			width[i] = max(width[i], utf8.RuneCountInString(c))
		}
	}
	measure(t.Header)
	for _, r := range t.Rows {
		measure(r)
	}
	var sb strings.Builder
	line := func(r []string) {
		var parts []string
		for i := 0; i < ncol; i++ {
			c := ""
			if i < len(r) {
				c = r[i]
			}
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			if i < len(t.Right) && t.Right[i] {
				parts = append(parts, pad+c)
			} else {
				parts = append(parts, c+pad)
			}
		}
		sb.WriteString(strings.TrimRight(strings.Join(parts, "  "), " "))
		sb.WriteByte('\n')
	}
	if len(t.Header) > 0 {
		line(t.Header)
		u := make([]string, ncol)
		for i := range u {
			u[i] = strings.Repeat("-", width[i])
		}
		line(u)
	}
	for _, r := range t.Rows {
		line(r)
	}
	_, err := io.WriteString(w, sb.String())
	return err
}

// FitTable returns the table of a fit's components: state, reference,
// fraction +/- SD, 95 % interval and shift.
func FitTable(res *fit.Result) *Table {
	t := &Table{Header: []string{"state", "reference", "fraction", "95 % interval", "shift (eV)"},
		Right: []bool{false, false, true, true, true}}
	for _, c := range res.Components {
		ref := c.Name
		if strings.HasPrefix(c.Ref, "file:") {
			ref = filepath.Base(strings.TrimPrefix(c.Ref, "file:"))
		} else if c.Ref != "" && c.Ref != c.Name {
			if ref != "" {
				ref += " "
			}
			ref += "[" + c.Ref + "]"
		}
		frac := FractionText(c, false)
		ci := fmt.Sprintf("%.3f – %.3f", c.FractionCI95[0], c.FractionCI95[1])
		switch {
		case c.AtBound:
			frac = "0 (at bound)"
			ci = fmt.Sprintf("< %.3f", c.FractionCI95[1])
		case oneSidedLower(c):
			ci = fmt.Sprintf("> %.3f", c.FractionCI95[0])
		}
		shift := fmt.Sprintf("%+.3f", c.Shift)
		if c.ShiftSD > 0 {
			shift += fmt.Sprintf(" ± %.3f", c.ShiftSD)
		}
		if c.ShiftAtBound {
			shift += " (bound)"
		}
		state := c.State
		if state == "" {
			state = "-"
		}
		t.Rows = append(t.Rows, []string{state, ref, frac, ci, shift})
	}
	return t
}

// oneSidedLower reports whether c is the only component above zero: its
// fraction is 1 and its interval the one-sided [lower limit, 1].
func oneSidedLower(c fit.Component) bool {
	return !c.AtBound && c.Fraction == 1 && c.FractionCI95[1] == 1 && c.FractionCI95[0] < 1
}

// FractionText returns a component's fraction as a table cell: "f ± sd";
// "0 (< U)" for a component at its bound, U its one-sided 95 % upper
// limit; and "f (> L)" for the only component above zero, whose fraction 1
// has the one-sided lower limit L (package fit). With percent the values
// are in per cent with one decimal ("100.0 (> 97.0)"), else fractions with
// three.
func FractionText(c fit.Component, percent bool) string {
	scale, f := 1.0, "%.3f"
	if percent {
		scale, f = 100, "%.1f"
	}
	switch {
	case c.AtBound:
		return fmt.Sprintf("0 (< "+f+")", scale*c.FractionCI95[1])
	case oneSidedLower(c):
		return fmt.Sprintf(f+" (> "+f+")", scale*c.Fraction, scale*c.FractionCI95[0])
	}
	return fmt.Sprintf(f+" ± "+f, scale*c.Fraction, scale*c.FractionSD)
}

// QualityText returns the quality of a fit as one line, every value to 3
// significant digits (see num): "points 269, dof 264, reduced chi-square
// 2.40, R-factor 0.0392, residual RMS 199, noise SD 131".
func QualityText(q fit.Quality) string {
	return fmt.Sprintf("points %d, dof %d, reduced chi-square %s, R-factor %s, residual RMS %s, noise SD %s",
		q.Points, q.DOF, num(q.Chi2Reduced), num(q.RFactor), num(q.ResidualRMS), num(q.NoiseSD))
}

// num formats v with 3 significant digits, trailing zeros kept so that
// values side by side read alike (2.40 beside 2.45, not 2.4): in plain
// decimal notation from 0.0001 to below 1000000 (0.0392, 199, 12345),
// and outside that range, where plain digits would hide the magnitude, as
// 1.43e-07. Zero is "0"; NaN and infinities are spelled as Go does.
func num(v float64) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Sprint(v)
	}
	a := math.Abs(v)
	if a < 1e-4 || a >= 1e6 {
		return fmt.Sprintf("%.2e", v)
	}
	// Round to 3 significant digits first: 9.996 becomes 10.0, not 10.00.
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', 2, 64), 64)
	dec := 2 - int(math.Floor(math.Log10(math.Abs(r))))
	if dec < 0 {
		dec = 0
	}
	return strconv.FormatFloat(r, 'f', dec, 64)
}

// WriteFitText writes a fit for a terminal: the component table, the
// quality line and the warnings.
func WriteFitText(w io.Writer, res *fit.Result) error {
	if err := FitTable(res).WriteText(w); err != nil {
		return err
	}
	fmt.Fprintf(w, "\nwindow %.5g-%.5g eV, %s mode", res.Window[0], res.Window[1], res.Mode)
	if res.Modulation > 0 {
		fmt.Fprintf(w, ", modulation %.3g eV", res.Modulation)
	}
	fmt.Fprintf(w, ", uncertainty by %s\n%s\n", res.Uncertainty, QualityText(res.Quality))
	for _, s := range res.Warnings {
		fmt.Fprintf(w, "warning: %s\n", s)
	}
	return nil
}
