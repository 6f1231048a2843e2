package render

import (
	"math"
	"testing"

	"statemix/lineshape/fit"
)

// TestNum: 3 significant digits with trailing zeros, plain from 1e-4 to
// below 1e6.
func TestNum(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{2.4, "2.40"}, {2.45, "2.45"}, {1, "1.00"}, {9.996, "10.0"}, {0.0392, "0.0392"},
		{199.2, "199"}, {12345, "12300"}, {0.00012345, "0.000123"}, {-0.5, "-0.500"},
		{1.43e-7, "1.43e-07"}, {2.4e6, "2.40e+06"}, {0, "0"}, {math.NaN(), "NaN"}, {math.Inf(1), "+Inf"},
	} {
		if got := num(c.v); got != c.want {
			t.Errorf("num(%v) = %q, want %q", c.v, got, c.want)
		}
	}
}

// TestQualityText pins the quality line.
func TestQualityText(t *testing.T) {
	q := fit.Quality{Points: 269, DOF: 264, Chi2Reduced: 2.4, RFactor: 0.0392, ResidualRMS: 199.2, NoiseSD: 131}
	want := "points 269, dof 264, reduced chi-square 2.40, R-factor 0.0392, residual RMS 199, noise SD 131"
	if got := QualityText(q); got != want {
		t.Errorf("QualityText = %q\nwant          %q", got, want)
	}
	q = fit.Quality{Points: 100, DOF: 96, Chi2Reduced: 1.05, RFactor: 1.43e-7, ResidualRMS: 3.2e-9, NoiseSD: 3.1e-9}
	want = "points 100, dof 96, reduced chi-square 1.05, R-factor 1.43e-07, residual RMS 3.20e-09, noise SD 3.10e-09"
	if got := QualityText(q); got != want {
		t.Errorf("QualityText = %q\nwant          %q", got, want)
	}
}
