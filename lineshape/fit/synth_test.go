package fit

import (
	"math"
	"math/rand/v2"

	"statemix/lineshape"
)

// Synthetic spectra for the tests: invented data (no external values).
// A chemical state's direct spectrum is a sum of asymmetric Gaussian peaks
// (a wider low-energy side, as a loss tail gives) on a power-law secondary
// background; derivative spectra are made from it by lock-in emulation
// computed here by direct quadrature of the first-harmonic integral, not by
// package lineshape.

type peak struct{ h, e0, sl, sr float64 }

type state struct {
	name  string
	peaks []peak
	bgAmp float64 // power-law background A (E/400)^-bgExp
	bgExp float64
}

func asymPeak(e float64, p peak) float64 {
	s := p.sr
	if e < p.e0 {
		s = p.sl
	}
	x := (e - p.e0) / s
	return p.h * math.Exp(-0.5*x*x)
}

func (st state) direct(e float64) float64 {
	v := st.bgAmp * math.Pow(e/400, -st.bgExp)
	for _, p := range st.peaks {
		v += asymPeak(e, p)
	}
	return v
}

// lockInAt returns A1/(k/2) = (2/(pi k)) Int_0^2pi f(e + (k/2) sin t) sin t dt
// by the midpoint rule over 256 phases (spectrally accurate for a periodic
// integrand).
func lockInAt(f func(float64) float64, e, k float64) float64 {
	const np = 256
	s := 0.0
	for j := 0; j < np; j++ {
		t := 2 * math.Pi * (float64(j) + 0.5) / np
		s += f(e+k/2*math.Sin(t)) * math.Sin(t)
	}
	return s * (2 * math.Pi / np) / math.Pi / (k / 2)
}

var (
	stMetal   = state{"metal", []peak{{1, 400, 2.5, 1.5}, {0.35, 386, 3, 2}}, 3, 1.6}
	stOxide   = state{"oxide", []peak{{0.8, 393.5, 3.2, 2.0}, {0.45, 381, 2.5, 2}}, 2.5, 1.8}
	stNitride = state{"nitride", []peak{{0.9, 397, 2.0, 2.6}, {0.3, 410, 2.5, 2.5}}, 2, 1.4}
)

const testModulation = 2.0 // eV peak-to-peak

// refSpectrum returns st as a derivative reference on lo..hi at step.
func refSpectrum(st state, lo, hi, step, k float64) *lineshape.Spectrum {
	n := int(math.Round((hi-lo)/step)) + 1
	y := make([]float64, n)
	for i := range y {
		y[i] = lockInAt(st.direct, lo+float64(i)*step, k)
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Derivative)
	if err != nil {
		panic(err)
	}
	s.Meta.ModulationEV = k
	return s
}

func refsFor(states []state, lo, hi, step float64) []Reference {
	out := make([]Reference, len(states))
	for i, st := range states {
		out[i] = Reference{ID: "ref-" + st.name, Name: "X " + st.name, Element: "X", State: st.name,
			Spectrum: refSpectrum(st, lo, hi, step, testModulation)}
	}
	return out
}

// mixture describes a synthetic unknown: coefficients of the states, all
// shifted by shift eV, plus an extra power-law background.
type mixture struct {
	states []state
	coef   []float64
	shift  float64
	extra  float64 // amplitude of an extra (E/400)^-2 background
}

func (mx mixture) direct(e float64) float64 {
	v := mx.extra * math.Pow(e/400, -2)
	for i, st := range mx.states {
		v += mx.coef[i] * st.direct(e-mx.shift)
	}
	return v
}

func (mx mixture) fractions() []float64 {
	s := 0.0
	for _, c := range mx.coef {
		s += c
	}
	f := make([]float64, len(mx.coef))
	for i, c := range mx.coef {
		f[i] = c / s
	}
	return f
}

// clean returns the noise-free derivative unknown on lo..hi and the direct
// spectrum (for counting-noise weights).
func (mx mixture) clean(lo, hi, step float64) (e, d, dir []float64) {
	n := int(math.Round((hi-lo)/step)) + 1
	e, d, dir = make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range e {
		e[i] = lo + float64(i)*step
		d[i] = lockInAt(mx.direct, e[i], testModulation)
		dir[i] = mx.direct(e[i])
	}
	return e, d, dir
}

// noisy adds counting-like noise (sd proportional to sqrt of the direct
// signal) scaled to a peak-to-peak signal-to-noise ratio snr (peak-to-peak
// of the clean derivative over the mean noise sd). If smooth, white noise
// is first passed through a 5-point running mean (the usual export
// smoothing) and the result rescaled to the same mean sd.
func noisy(d, dir []float64, snr float64, smooth bool, rng *rand.Rand) (y []float64, sigma float64) {
	n := len(d)
	lo, hi := d[0], d[0]
	meanSqrt := 0.0
	for i := range d {
		lo, hi = math.Min(lo, d[i]), math.Max(hi, d[i])
		meanSqrt += math.Sqrt(dir[i])
	}
	meanSqrt /= float64(n)
	sigma = (hi - lo) / snr
	z := make([]float64, n)
	for i := range z {
		z[i] = rng.NormFloat64()
	}
	if smooth {
		s := make([]float64, n)
		for i := range z {
			acc, c := 0.0, 0
			for j := i - 2; j <= i+2; j++ {
				if j >= 0 && j < n {
					acc += z[j]
					c++
				}
			}
			s[i] = acc / float64(c) * math.Sqrt(5) // unit variance again
		}
		z = s
	}
	y = make([]float64, n)
	for i := range y {
		y[i] = d[i] + sigma*math.Sqrt(dir[i])/meanSqrt*z[i]
	}
	return y, sigma
}

func unknownSpectrum(lo, step float64, y []float64) *lineshape.Spectrum {
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Derivative)
	if err != nil {
		panic(err)
	}
	s.Meta.ModulationEV = testModulation
	s.Meta.Source = "synthetic"
	return s
}
