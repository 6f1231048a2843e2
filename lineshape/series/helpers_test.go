package series

import (
	"math"
	"math/rand/v2"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// Invented test lineshapes (not measurements): direct-mode Auger-like peaks
// on a sloping background, each state a sum of Gaussians.

type peak struct{ e, w, a float64 } // centre eV, SD eV, height

func lineshapeAt(e float64, peaks []peak) float64 {
	var v float64
	for _, p := range peaks {
		x := (e - p.e) / p.w
		v += p.a * math.Exp(-0.5*x*x)
	}
	return v
}

var testStates = []struct {
	state string
	peaks []peak
}{
	{"metal", []peak{{380, 2.0, 1.0}, {395, 3.0, 0.35}}},
	{"oxide", []peak{{386, 2.5, 0.9}, {372, 3.5, 0.3}}},
	{"nitride", []peak{{391, 2.2, 0.8}, {405, 4.0, 0.25}}},
}

// testRefs returns k references on 300-500 eV in 0.25 eV steps.
func testRefs(k int) []fit.Reference {
	refs := make([]fit.Reference, k)
	for i := range k {
		y := make([]float64, 801)
		for j := range y {
			y[j] = lineshapeAt(300+0.25*float64(j), testStates[i].peaks)
		}
		s, err := lineshape.NewUniform(300, 0.25, y, lineshape.Direct)
		if err != nil {
			panic(err)
		}
		refs[i] = fit.Reference{ID: "ref" + testStates[i].state, Name: testStates[i].state, Element: "Ti", State: testStates[i].state, Spectrum: s}
	}
	return refs
}

// mixture fills y (channels start + j*step) with sum c_i ref_i(E - shift)
// plus a background a + b (E - 400) and Gaussian noise of SD sigma.
func mixture(y []float64, start, step float64, c []float64, shift, a, b, sigma float64, rng *rand.Rand) {
	for j := range y {
		e := start + float64(j)*step
		var v float64
		for i, ci := range c {
			v += ci * lineshapeAt(e-shift, testStates[i].peaks)
		}
		v += a + b*(e-400)
		if sigma > 0 {
			v += sigma * rng.NormFloat64()
		}
		y[j] = v
	}
}
