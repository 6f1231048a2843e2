package quant

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// alOxide is DOMAIN.md's worked check: Al2O3 on Al, N 4.690e22 / 6.026e22
// Al per cm3, L 3.210 / 3.072 nm, normal exit.
var alOxide = Overlayer{NOverlayer: 4.690e22, NSubstrate: 6.026e22, LambdaOverlayer: 3.210, LambdaSubstrate: 3.072}

// TestThicknessWorked: ratio 1 gives 2.574 nm (DOMAIN.md, quoted to 1 pm:
// tolerance 0.0005 nm).
func TestThicknessWorked(t *testing.T) {
	for _, deg := range []float64{0, 90} {
		o := alOxide
		o.TakeOffDeg = deg
		th, err := o.Thickness(1, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbs(th.Thickness, 2.574, 5e-4) || th.TakeOff != 90 {
			t.Errorf("take-off %g: thickness %.4f nm at %g deg, want 2.574 at 90", deg, th.Thickness, th.TakeOff)
		}
		// sd = L sin(theta) sd_R / (k + R), first order.
		want := 3.210 * 0.05 / (th.K + 1)
		if !scalar.EqualWithinRel(th.SD, want, 1e-12) || len(th.Warnings) != 0 {
			t.Errorf("sd %g, want %g; warnings %v", th.SD, want, th.Warnings)
		}
	}
	// At 30 degrees the thickness scales with sin(theta) = 0.5.
	o := alOxide
	o.TakeOffDeg = 30
	th, _ := o.Thickness(1, 0)
	if !scalar.EqualWithinRel(th.Thickness, 2.574/2, 5e-4) {
		t.Errorf("30 deg: %g nm, want half of 2.574", th.Thickness)
	}
}

// TestThicknessFromCoefficients checks the ratio propagation against a
// finite-difference derivative of the thickness in each coefficient
// (tolerance 1e-5 relative).
func TestThicknessFromCoefficients(t *testing.T) {
	o := alOxide
	o.SensitivityRatio = 1 // coefficients against pure standards
	c := Coefficients{Overlayer: 0.4, Substrate: 0.5, VarOverlayer: 4e-4, VarSubstrate: 9e-4, Covariance: -2e-4}
	th, err := o.ThicknessFromCoefficients(c)
	if err != nil {
		t.Fatal(err)
	}
	if want := 3.210 * math.Log(1+0.4/0.5); !scalar.EqualWithinRel(th.Thickness, want, 1e-12) {
		t.Errorf("thickness %g, want %g", th.Thickness, want)
	}
	d := func(co, cs float64) float64 {
		r, _ := o.ThicknessFromCoefficients(Coefficients{Overlayer: co, Substrate: cs})
		return r.Thickness
	}
	h := 1e-6
	g0 := (d(0.4+h, 0.5) - d(0.4-h, 0.5)) / (2 * h)
	g1 := (d(0.4, 0.5+h) - d(0.4, 0.5-h)) / (2 * h)
	want := math.Sqrt(g0*g0*c.VarOverlayer + g1*g1*c.VarSubstrate + 2*g0*g1*c.Covariance)
	if !scalar.EqualWithinRel(th.SD, want, 1e-5) {
		t.Errorf("sd %g, finite differences %g", th.SD, want)
	}
}

func TestThicknessMeaningless(t *testing.T) {
	// Oxide only: no substrate signal.
	_, err := alOxide.ThicknessFromCoefficients(Coefficients{Overlayer: 0.8, Substrate: 0, SubstrateAtBound: true})
	var oe *OverlayerError
	if !errors.As(err, &oe) || !strings.Contains(err.Error(), "overlayer-only") {
		t.Errorf("oxide only: %v, want *OverlayerError", err)
	}
	if _, err := alOxide.Thickness(math.Inf(1), 0); !errors.As(err, &oe) {
		t.Errorf("infinite ratio: %v", err)
	}
	if _, err := alOxide.Thickness(-0.1, 0); !errors.As(err, &oe) {
		t.Errorf("negative ratio: %v", err)
	}
	// Substrate only: thickness 0 with a warning and an upper limit.
	th, err := alOxide.ThicknessFromCoefficients(Coefficients{Overlayer: 0, Substrate: 0.9, VarOverlayer: 1e-4, OverlayerAtBound: true})
	if err != nil || th.Thickness != 0 || len(th.Warnings) != 1 || !strings.Contains(th.Warnings[0], "upper limit") {
		t.Errorf("substrate only: %+v, %v", th, err)
	}
	// Very thick film: beyond 3 L.
	th, err = alOxide.Thickness(100, 0)
	if err != nil || len(th.Warnings) != 1 || !strings.Contains(th.Warnings[0], "information depth") {
		t.Errorf("thick film: %+v, %v", th, err)
	}
	for _, o := range []Overlayer{
		{NOverlayer: 1, NSubstrate: 1, LambdaOverlayer: 0, LambdaSubstrate: 1},
		{NOverlayer: 0, NSubstrate: 1, LambdaOverlayer: 1, LambdaSubstrate: 1},
		{NOverlayer: 1, NSubstrate: 1, LambdaOverlayer: 1, LambdaSubstrate: 1, TakeOffDeg: 120},
	} {
		if _, err := o.Thickness(1, 0); err == nil {
			t.Errorf("%+v accepted", o)
		}
	}
}
