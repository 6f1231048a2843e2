package fit_test

import (
	"context"
	"fmt"
	"math"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// Example fits an invented derivative spectrum, 70 % metal and 30 % oxide
// shifted by +1 eV, with the two references.
func Example() {
	dg := func(e, e0, s float64) float64 { x := (e - e0) / s; return -x * math.Exp(-0.5*x*x) }
	metal := func(e float64) float64 { return dg(e, 400, 2) + 0.3*dg(e, 385, 3) }
	oxide := func(e float64) float64 { return 0.8*dg(e, 394, 2.5) + 0.4*dg(e, 381, 2) }
	sample := func(f func(float64) float64, lo, hi float64) *lineshape.Spectrum {
		y := make([]float64, int((hi-lo)/0.5)+1)
		for i := range y {
			y[i] = f(lo + 0.5*float64(i))
		}
		s, _ := lineshape.NewUniform(lo, 0.5, y, lineshape.Derivative)
		return s
	}
	refs := []fit.Reference{
		{ID: "m", Name: "foil", State: "metal", Spectrum: sample(metal, 340, 460)},
		{ID: "o", Name: "film", State: "oxide", Spectrum: sample(oxide, 340, 460)},
	}
	unknown := sample(func(e float64) float64 { return 0.7*metal(e-1) + 0.3*oxide(e-1) }, 360, 440)

	m, err := fit.Prepare(unknown, refs, fit.Options{Uncertainty: fit.Covariance})
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := m.Fit(context.Background(), unknown)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range res.Components {
		fmt.Printf("%s: fraction %.3f, shift %+.2f eV\n", c.State, c.Fraction, c.Shift)
	}
	fmt.Printf("window %.0f-%.0f eV, %d points\n", res.Window[0], res.Window[1], res.Quality.Points)
	// Output:
	// metal: fraction 0.700, shift +1.00 eV
	// oxide: fraction 0.300, shift +1.00 eV
	// window 360-440 eV, 161 points
}
