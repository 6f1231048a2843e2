package fit

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

// gaussRef returns a direct reference: a Gaussian of height 1 and SD sd at
// e0 on lo..hi in steps of step (invented data).
func gaussRef(id string, e0, sd, lo, hi, step float64) Reference {
	n := int(math.Round((hi-lo)/step)) + 1
	y := make([]float64, n)
	for i := range y {
		x := (lo + float64(i)*step - e0) / sd
		y[i] = math.Exp(-0.5 * x * x)
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Direct)
	if err != nil {
		panic(err)
	}
	return Reference{ID: id, Name: id, State: id, Spectrum: s}
}

// sumOf returns the direct spectrum a*A + b*B + 0.1 on A's axis.
func sumOf(ra, rb Reference, a, b float64) *lineshape.Spectrum {
	u := ra.Spectrum.Clone()
	for i := range u.Y {
		u.Y[i] = a*ra.Spectrum.Y[i] + b*rb.Spectrum.Y[i] + 0.1
	}
	u.Meta.Source = "mix.csv"
	return u
}

// TestCollinearMessage: a reference that is exactly twice another is
// refused in plain words, without a condition number of +Inf.
func TestCollinearMessage(t *testing.T) {
	a := gaussRef("A", 400, 3, 350, 450, 0.5)
	b := gaussRef("B", 400, 3, 350, 450, 0.5)
	for i := range b.Spectrum.Y {
		b.Spectrum.Y[i] *= 2
	}
	_, err := Prepare(sumOf(a, gaussRef("C", 405, 3, 350, 450, 0.5), 1, 1), []Reference{a, b}, Options{})
	var ce *CollinearError
	if !errors.As(err, &ce) {
		t.Fatalf("error %v (%T), want a *CollinearError", err, err)
	}
	want := "references A and B are collinear in the fit window (correlation 1.0000: one is a multiple of the other)"
	if msg := err.Error(); !strings.Contains(msg, want) || strings.Contains(msg, "Inf") {
		t.Errorf("error %q, want it to contain %q and no Inf", msg, want)
	}
	if !ce.Multiple {
		t.Error("Multiple not set for a reference twice another")
	}
}

// TestNearCollinearWarning: references that correlate above 0.95 in the
// window give a warning naming them and the effect; less alike ones do
// not.
func TestNearCollinearWarning(t *testing.T) {
	// Two Gaussians of SD s whose centres differ by d have the (uncentred,
	// continuous) correlation exp(-d^2/(4 s^2)) (Gaussian product integral,
	// from memory). Sampled at s/6 over +/- 16 s the sum equals the integral
	// to far better than the 1e-9 tolerance.
	const s = 3.0
	for _, d := range []float64{1.15, 3} {
		a := gaussRef("A", 400, s, 350, 450, 0.5)
		b := gaussRef("B", 400+d, s, 350, 450, 0.5)
		got := correlatedPairs([][]float64{a.Spectrum.Y, b.Spectrum.Y}, nil, 0)
		if want := math.Exp(-d * d / (4 * s * s)); len(got) != 1 || !scalar.EqualWithinAbsOrRel(got[0].r, want, 1e-9, 1e-9) {
			t.Errorf("d=%g: pairs %+v, want correlation %.9f", d, got, want)
		}
	}
	for _, tc := range []struct {
		d    float64
		warn bool
	}{{1.0, true}, {3, false}} {
		a := gaussRef("TiO2", 400, s, 350, 450, 0.5)
		b := gaussRef("TiN", 400+tc.d, s, 350, 450, 0.5)
		m, err := Prepare(sumOf(a, b, 0.3, 0.7), []Reference{a, b}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		w := strings.Join(m.Warnings(), "; ")
		has := strings.Contains(w, "references TiO2 and TiN are alike") &&
			strings.Contains(w, "fractions of TiO2 and TiN are strongly anti-correlated; their uncertainties are large")
		if has != tc.warn {
			t.Errorf("d=%g: warnings %q, want the near-collinearity warning %v", tc.d, w, tc.warn)
		}
		if tc.warn && !strings.Contains(w, "correlation 0.9") {
			t.Errorf("d=%g: warning %q does not give the correlation", tc.d, w)
		}
	}
}

// TestMaxShiftOption: a maximum shift above 50 eV or too wide for the
// unknown is refused up front, in plain notation; the overlap message
// does not contradict itself.
func TestMaxShiftOption(t *testing.T) {
	a := gaussRef("A", 1380, 3, 1330, 1430, 0.5)
	b := gaussRef("B", 1385, 3, 1330, 1430, 0.5)
	u := sumOf(a, b, 1, 1)
	for _, tc := range []struct {
		max  float64
		want string
	}{
		{1e6, "maximum shift 1000000 eV (Options.MaxShift, --max-shift on the command line) is more than 50 eV"},
		{50.5, "is more than 50 eV"},
		{40, "maximum shift 40 eV (Options.MaxShift, --max-shift on the command line) is not less than the energy range of the unknown, 1370-1400 eV (30 eV)"},
	} {
		uu := u
		if tc.max == 40 {
			var err error
			if uu, err = u.Window(1370, 1400); err != nil {
				t.Fatal(err)
			}
		}
		_, err := Prepare(uu, []Reference{a, b}, Options{MaxShift: tc.max})
		var ie *lineshape.InputError
		if !errors.As(err, &ie) {
			t.Fatalf("max %g: error %v (%T), want a *lineshape.InputError", tc.max, err, err)
		}
		if msg := err.Error(); !strings.Contains(msg, tc.want) || strings.Contains(msg, "e+") {
			t.Errorf("max %g: error %q, want %q and no exponent", tc.max, msg, tc.want)
		}
	}
	if _, err := Prepare(u, []Reference{a, b}, Options{MaxShift: 20}); err != nil {
		t.Errorf("max 20 on a 100 eV range: %v", err)
	}
	// ShiftNone ignores the bound.
	if _, err := Prepare(u, []Reference{a, b}, Options{MaxShift: 1e6, Shift: ShiftNone}); err != nil {
		t.Errorf("max 1e6 with no shift fitted: %v", err)
	}
	// A reference far away: the message says what the shift leaves.
	far := gaussRef("far", 1480, 3, 1425, 1530, 0.5)
	_, err := Prepare(u, []Reference{a, far}, Options{MaxShift: 10})
	want := "reference covers 1425-1530 eV; shifted by up to 10 eV either way it is known at every shift only in 1435-1520 eV, which does not overlap the unknown's 1330-1430 eV"
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("far reference: %v, want %q", err, want)
	}
}

// TestDirectReferencesNeedModulation: a derivative unknown without a
// recorded modulation and direct references: the message names the direct
// ones and the option.
func TestDirectReferencesNeedModulation(t *testing.T) {
	a := gaussRef("TiO2", 400, 3, 350, 450, 0.5)
	b := gaussRef("TiN", 405, 3, 350, 450, 0.5)
	u := sumOf(a, b, 1, 1)
	u.Mode = lineshape.Derivative
	u.Meta.Source = "cube.npy"
	_, err := Prepare(u, []Reference{a, b}, Options{})
	want := "references TiO2 and TiN are direct but the unknown is derivative: the direct spectra must be converted by lock-in emulation at the derivative spectrum's modulation, which it does not record; give the peak-to-peak modulation in eV (Options.Modulation, --modulation EV on the command line)"
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), want) {
		t.Errorf("error %v, want an InputError containing %q", err, want)
	}
	if _, err := Prepare(u, []Reference{a, b}, Options{Modulation: 2}); err != nil {
		t.Errorf("with Modulation 2: %v", err)
	}
}

// TestNearCollinearAtFittedShifts: with one shift per reference, two
// references that differ at zero shift but coincide once shifted get the
// warning from Fit, at their fitted shifts.
func TestNearCollinearAtFittedShifts(t *testing.T) {
	a := gaussRef("A", 400, 3, 350, 450, 0.25)
	b := gaussRef("B", 404, 3, 350, 450, 0.25)
	// The unknown holds A as it is and B moved down by 3.5 eV, to 400.5
	// eV: there the two correlate at about exp(-0.25/36) = 0.993 (see
	// above), at zero shift at exp(-16/36) = 0.64. The fitted positions
	// may trade off a little; r stays above 0.95 while they are within
	// 1.3 eV of each other.
	bs := gaussRef("Bs", 400.5, 3, 350, 450, 0.25)
	u := sumOf(a, bs, 1, 1)
	for _, tc := range []struct {
		shift ShiftMode
		warn  bool
	}{{ShiftEach, true}, {ShiftCommon, false}} {
		m, err := Prepare(u, []Reference{a, b}, Options{Shift: tc.shift, MaxShift: 4, Uncertainty: Covariance})
		if err != nil {
			t.Fatal(err)
		}
		if w := strings.Join(m.Warnings(), "; "); strings.Contains(w, "alike") {
			t.Errorf("%v: Prepare warns %q at zero shift", tc.shift, w)
		}
		res, err := m.Fit(t.Context(), u)
		if err != nil {
			t.Fatal(err)
		}
		w := strings.Join(res.Warnings, "; ")
		if got := strings.Contains(w, "references A and B are alike in the fit window at their fitted shifts"); got != tc.warn {
			t.Errorf("%v: shifts %+.3f %+.3f, warnings %q; want the fitted-shift warning %v",
				tc.shift, res.Components[0].Shift, res.Components[1].Shift, w, tc.warn)
		}
	}
}

// TestPlain: numbers in messages never carry an exponent.
func TestPlain(t *testing.T) {
	for _, c := range []struct {
		v    float64
		sig  int
		want string
	}{{1e6, 4, "1000000"}, {2.4, 3, "2.4"}, {1.5e-7, 3, "0.00000015"}, {1330.25, 6, "1330.25"}, {1234567, 3, "1230000"}, {-3, 3, "-3"}} {
		if got := plain(c.v, c.sig); got != c.want {
			t.Errorf("plain(%v, %d) = %q, want %q", c.v, c.sig, got, c.want)
		}
	}
	a := gaussRef("A", 400, 3, 350, 450, 0.5)
	b := gaussRef("B", 405, 3, 350, 450, 0.5)
	_, err := Prepare(sumOf(a, b, 1, 1), []Reference{a, b}, Options{Window: [2]float64{1e6, 2e6}})
	if err == nil || strings.Contains(err.Error(), "e+") || !strings.Contains(err.Error(), "window 1000000:2000000 eV") {
		t.Errorf("window far away: %v, want it in plain notation", err)
	}
}
