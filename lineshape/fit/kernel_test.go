package fit

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

// TestKernelNoiseGain checks the property the shift search rests on: the
// kernel's noise gain sum w_j^2 / (sum w_j)^2 on uniform nodes does not
// depend on the position between nodes. Poisson summation bounds its
// relative variation by about 2 exp(-pi^2 s^2) = 1e-4 for s = sigma/h = 1;
// 5e-4 is allowed. Cubic interpolation varies by 36 % on the same nodes.
// It also checks that the per-channel path (grids that differ) gives the
// same values as the shared-weights path (to 1e-12, rounding).
func TestKernelNoiseGain(t *testing.T) {
	const h, n = 0.5, 41
	gain := func(u float64) float64 {
		// The response at x = 10 + u h to a unit impulse at node j is w_j.
		var s2, s float64
		for j := range n {
			y := make([]float64, n)
			y[j] = 1
			sp, err := lineshape.NewUniform(0, h, y, lineshape.Derivative)
			if err != nil {
				t.Fatal(err)
			}
			k := newKernelSampler(sp, kernelWidth*h, nil)
			fast := make([]float64, 3)
			k.sample(fast, 10-h, h, -u*h) // channels at 10 - h, 10, 10 + h
			slow := make([]float64, 2)
			k.sample(slow, 10, 1.5*h, -u*h) // a different step: per-channel weights
			if !scalar.EqualWithinAbs(fast[1], slow[0], 1e-12) {
				t.Errorf("u=%v node %d: shared weights %v, per-channel %v", u, j, fast[1], slow[0])
			}
			s += fast[1]
			s2 += fast[1] * fast[1]
		}
		if !scalar.EqualWithinAbs(s, 1, 1e-12) {
			t.Errorf("u=%v: weights sum to %v", u, s)
		}
		return s2 / (s * s)
	}
	g0 := gain(0)
	for _, u := range []float64{0.1, 0.25, 0.4, 0.5} {
		if g := gain(u); math.Abs(g/g0-1) > 5e-4 {
			t.Errorf("noise gain at %.2f of a node spacing %.6g, at a node %.6g: relative change %.2g, want < 5e-4", u, g, g0, g/g0-1)
		}
	}
}
