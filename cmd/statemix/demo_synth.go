package main

// The physics of the demo's invented data. Everything here is synthetic:
// the lab, the samples, the standards and every number are made up for the
// demonstration, and only the methods (asymmetric Auger lines with loss
// structure on a secondary-electron background, counting noise, lock-in
// detection, overlayer attenuation, a sputter-broadened interface) are
// those of the trade.

import (
	"math"
	"math/rand/v2"

	"statemix/lineshape"
)

// demoLine is one Auger line of a direct spectrum N(E): an exponentially
// modified Gaussian whose tail runs towards lower kinetic energy (intrinsic
// and near-elastic losses make Auger lines asymmetric), with a unit-area
// shape times Area.
type demoLine struct {
	E0    float64 // eV, centre of the Gaussian part
	Area  float64 // counts x eV
	Sigma float64 // eV, Gaussian width (analyser resolution and lifetime)
	Tail  float64 // eV, decay length of the low-energy tail
}

// demoLoss is a discrete energy-loss feature (a bulk or surface plasmon, or
// an interband loss in an oxide) repeated below every line of a state.
type demoLoss struct {
	Delta float64 // eV below the line
	Rel   float64 // intensity relative to the line (n-fold losses get Rel^n)
	Width float64 // eV, extra Gaussian width added in quadrature
	Order int     // number of multiple losses drawn (at least 1)
}

// demoState is the direct lineshape of one chemical state: its lines, the
// losses repeated below each, and the inelastic step (the continuum of
// electrons that lost energy on the way out) as a fraction of each line's
// area per eV.
type demoState struct {
	Lines  []demoLine
	Losses []demoLoss
	Step   float64 // step height below each line, as a fraction of its area per eV
}

// erfcx returns exp(x^2) erfc(x) for x >= 0 without overflow.
func erfcx(x float64) float64 {
	if x < 20 {
		return math.Exp(x*x) * math.Erfc(x)
	}
	// Asymptotic series (Abramowitz & Stegun 7.1.23), ample at x >= 20.
	x2 := x * x
	return (1 - 1/(2*x2) + 3/(4*x2*x2)) / (x * math.SqrtPi)
}

// emgLow is the unit-area exponentially modified Gaussian at E with centre
// e0, width sigma and an exponential tail of length tau towards lower
// energies: the Gaussian convolved with exp(-t/tau)/tau for t = e0 - E > 0.
// It is evaluated in the scaled form that neither overflows nor loses
// precision far from the centre.
func emgLow(e, e0, sigma, tau float64) float64 {
	t := e0 - e
	x := (sigma/tau - t/sigma) / math.Sqrt2
	if x >= 0 {
		return math.Exp(-t*t/(2*sigma*sigma)) * erfcx(x) / (2 * tau)
	}
	return math.Exp(sigma*sigma/(2*tau*tau)-t/tau) * math.Erfc(x) / (2 * tau)
}

// direct returns the state's signal (no background) at energy e, with the
// whole lineshape moved by shift eV.
func (s demoState) direct(e, shift float64) float64 {
	v := 0.0
	for _, l := range s.Lines {
		e0 := l.E0 + shift
		v += l.Area * emgLow(e, e0, l.Sigma, l.Tail)
		for _, ls := range s.Losses {
			rel := 1.0
			for n := 1; n <= max(ls.Order, 1); n++ {
				rel *= ls.Rel
				w := math.Sqrt(l.Sigma*l.Sigma + float64(n)*ls.Width*ls.Width)
				v += l.Area * rel * emgLow(e, e0-float64(n)*ls.Delta, w, l.Tail)
			}
		}
		// The inelastic step: electrons of this line that lost a little
		// energy, spread as a smooth step below it.
		v += s.Step * l.Area * 0.5 * math.Erfc((e-e0)/(math.Sqrt2*2*l.Sigma))
	}
	return v
}

// demoInstrument is how the invented lab's spectrometer records a region.
type demoInstrument struct {
	Start, Step float64 // eV
	N           int     // channels
	// Background is the secondary-electron (and backscattered) background
	// B (E/EB)^-M in counts per channel, the usual empirical power law of
	// the tail of the secondary-electron peak (common practice).
	B, EB, M float64
	// ModulationEV is the lock-in modulation, peak to peak; 0 records the
	// direct spectrum.
	ModulationEV float64
}

// demoCounts is the number of scans the lab accumulates for a standard:
// intensities are given per scan, counting noise is that of all scans.
const demoCounts = 4

// demoComponent is a state present in a synthetic spectrum with its
// coefficient against the pure standard (1 means the standard's own
// intensity).
type demoComponent struct {
	State demoState
	C     float64
}

// record returns the spectrum the instrument records from a surface whose
// signal is the sum of the components, shifted by shift eV (charging or
// energy-scale drift), with the background scaled by bg, counting
// statistics for a dwell of dwell times the standards' (dwell 1 is the
// standards' own acquisition) and, with a modulation, lock-in detection of
// the noisy direct signal.
//
// Counting noise is Poisson; with at least several thousand counts per
// channel here, its normal approximation (mean n, variance n) is used. The
// lock-in derivative is computed from the noisy direct signal by
// lineshape.Spectrum.LockIn, so the noise of the derivative is correlated
// over the modulation width as it is in a real lock-in.
func (in demoInstrument) record(rng *rand.Rand, comps []demoComponent, shift, bg, dwell float64) (*lineshape.Spectrum, error) {
	y := make([]float64, in.N)
	for i := range y {
		e := in.Start + float64(i)*in.Step
		v := bg * in.B * math.Pow(e/in.EB, -in.M)
		for _, c := range comps {
			v += c.C * c.State.direct(e, shift) * in.Step
		}
		n := demoCounts * dwell * v
		n += math.Sqrt(n) * rng.NormFloat64()
		y[i] = n / (demoCounts * dwell) // per standard dwell and scan: the standards' intensity scale
	}
	s, err := lineshape.NewUniform(in.Start, in.Step, y, lineshape.Direct)
	if err != nil {
		return nil, err
	}
	if in.ModulationEV == 0 {
		return s, nil
	}
	d, err := s.LockIn(in.ModulationEV)
	if err != nil {
		return nil, err
	}
	d.Meta.ModulationEV = in.ModulationEV
	d.Meta.Counts = false
	return d, nil
}
