package fit

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestComplementOfComponentsAtZero fits pure metal with metal and oxide
// references, for a noise realisation in which the oxide coefficient ends
// at its bound. The metal then has fraction 1, but not a certain one: its
// interval must be the one-sided [1 - U, 1], U the oxide's upper limit, and
// its SD the oxide's (f_metal = 1 - f_oxide with two components). With two
// components both relations are exact identities of the method
// (covariance: the same free SD; bootstrap: the 5 % and 95 % order
// statistics mirror each other), so the tolerance is rounding, 1e-12.
func TestComplementOfComponentsAtZero(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states, coef: []float64{1, 0}, shift: 0.3, extra: 1}
	_, d, dir := mx.clean(320, 470, 0.5)
	for _, method := range []Uncertainty{Covariance, Bootstrap} {
		t.Run("method="+method.String(), func(t *testing.T) {
			for seed := uint64(0); seed < 40; seed++ {
				y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(seed, 17)))
				u := unknownSpectrum(320, 0.5, y)
				m, err := Prepare(u, refs, Options{Uncertainty: method, Samples: 199, Seed: 5})
				if err != nil {
					t.Fatal(err)
				}
				res, err := m.Fit(context.Background(), u)
				if err != nil {
					t.Fatal(err)
				}
				me, ox := res.Components[0], res.Components[1]
				if !ox.AtBound {
					continue
				}
				t.Logf("seed %d: metal %v sd %.4g ci %v; oxide ci %v sd %.4g", seed, me.Fraction, me.FractionSD, me.FractionCI95, ox.FractionCI95, ox.FractionSD)
				if me.Fraction != 1 || me.FractionCI95[1] != 1 {
					t.Errorf("metal fraction %v, interval %v: want 1 and an upper end of 1", me.Fraction, me.FractionCI95)
				}
				if !(ox.FractionCI95[1] > 0) || !(me.FractionCI95[0] < 1) {
					t.Errorf("oxide upper limit %v, metal lower limit %v: want a real one-sided interval", ox.FractionCI95[1], me.FractionCI95[0])
				}
				if !scalar.EqualWithinAbs(me.FractionCI95[0], 1-ox.FractionCI95[1], 1e-12) {
					t.Errorf("metal lower limit %.15g, want 1 - oxide upper limit %.15g", me.FractionCI95[0], 1-ox.FractionCI95[1])
				}
				if !(me.FractionSD > 0) || !scalar.EqualWithinAbs(me.FractionSD, ox.FractionSD, 1e-12) {
					t.Errorf("metal fraction SD %.15g, want the oxide's %.15g (> 0)", me.FractionSD, ox.FractionSD)
				}
				return
			}
			t.Fatal("no noise realisation put the oxide at its bound")
		})
	}
}

// TestComplementWithTwoActive checks that with two active components and a
// third at zero, the active ones' intervals reach further down than the
// delta method alone would (they may lose signal to the third) and keep
// their upper ends.
func TestComplementWithTwoActive(t *testing.T) {
	states := []state{stMetal, stOxide, stNitride}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states[:2], coef: []float64{0.7, 0.3}, shift: -0.6, extra: 1}
	_, d, dir := mx.clean(320, 470, 0.5)
	for seed := uint64(0); seed < 40; seed++ {
		y, _ := noisy(d, dir, 50, false, rand.New(rand.NewPCG(seed, 3)))
		u := unknownSpectrum(320, 0.5, y)
		m, err := Prepare(u, refs, Options{Uncertainty: Covariance})
		if err != nil {
			t.Fatal(err)
		}
		res, err := m.Fit(context.Background(), u)
		if err != nil {
			t.Fatal(err)
		}
		if !res.Components[2].AtBound {
			continue
		}
		for _, c := range res.Components[:2] {
			below, above := c.Fraction-c.FractionCI95[0], c.FractionCI95[1]-c.Fraction
			t.Logf("seed %d %s: %.4f sd %.4f ci %v", seed, c.State, c.Fraction, c.FractionSD, c.FractionCI95)
			if !(below > above) || math.IsNaN(below) {
				t.Errorf("%s: interval %v around %.4f: want it longer below than above", c.State, c.FractionCI95, c.Fraction)
			}
		}
		return
	}
	t.Fatal("no noise realisation put the nitride at its bound")
}

// TestModulationWarning checks that a derivative unknown without a
// recorded modulation is said to be assumed at the references' modulation
// only when no modulation was given in the options.
func TestModulationWarning(t *testing.T) {
	states := []state{stMetal, stOxide}
	refs := refsFor(states, 300, 500, 0.5)
	mx := mixture{states: states, coef: []float64{0.5, 0.5}}
	_, d, _ := mx.clean(320, 470, 0.5)
	u := withoutModulation(unknownSpectrum(320, 0.5, d))
	for _, tc := range []struct {
		modulation float64
		warn       bool
	}{{0, true}, {testModulation, false}} {
		m, err := Prepare(u, refs, Options{Modulation: tc.modulation, Uncertainty: Covariance})
		if err != nil {
			t.Fatal(err)
		}
		got := false
		for _, w := range m.Warnings() {
			if strings.Contains(w, "modulation not recorded") {
				got = true
			}
		}
		if got != tc.warn {
			t.Errorf("Options.Modulation %v: warnings %q, want the modulation warning: %v", tc.modulation, m.Warnings(), tc.warn)
		}
	}
}
