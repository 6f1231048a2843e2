package library

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"statemix/lineshape"
)

// Test spectra for the duplicate-state check: Ti LMM-like standards made of
// asymmetric lines on a power-law background with counting-like noise,
// recorded as lock-in derivatives or as direct spectra. Invented data; the
// line energies loosely follow the demo's Ti standards (Ti LMM derivative
// peaks near 387 and 418 eV, N KLL near 379 eV; DOMAIN.md, from memory).

// tline is one asymmetric Auger line: a Gaussian of width sigma convolved
// with an exponential tail of length tau towards lower energy, unit area
// times area.
type tline struct{ e0, area, sigma, tau float64 }

// emgLowTest is the unit-area exponentially modified Gaussian with its tail
// towards lower energies (the demo's emgLow).
func emgLowTest(e, e0, sigma, tau float64) float64 {
	t := e0 - e
	x := (sigma/tau - t/sigma) / math.Sqrt2
	if x >= 0 {
		erfcx := math.Exp(x*x) * math.Erfc(x)
		if x > 20 {
			x2 := x * x
			erfcx = (1 - 1/(2*x2) + 3/(4*x2*x2)) / (x * math.SqrtPi)
		}
		return math.Exp(-t*t/(2*sigma*sigma)) * erfcx / (2 * tau)
	}
	return math.Exp(sigma*sigma/(2*tau*tau)-t/tau) * math.Erfc(x) / (2 * tau)
}

// The TiN-like and TiO2-like lineshapes: the demo's standards before its
// commit 0acc7cd moved the TiO2 L3M23V lines (405 eV 1.3e5, 410 eV 1.1e5),
// the pair library add called identical within noise.
var (
	testTiN = []tline{
		{376.5, 2.2e5, 2.6, 3.0}, {382.0, 1.9e5, 2.3, 3.0}, {413.0, 3.0e5, 2.2, 2.8}, {445.0, 0.4e5, 2.6, 3.0},
	}
	testTiO2 = []tline{
		{380.5, 2.0e5, 2.6, 3.2}, {405.0, 1.3e5, 2.6, 3.0}, {410.0, 1.1e5, 2.0, 2.5},
	}
	// testTiO2b is the demo's TiO2 as it is now: the 410 eV line the
	// strongest. (In testTiO2 the derivative minima of the 405 and 410 eV
	// lines are nearly equally deep, so the main feature jumps between
	// them from one noisy recording to the next and two recordings are
	// not compared at all: a limit of the rule.)
	testTiO2b = []tline{
		{380.5, 2.0e5, 2.6, 3.2}, {405.0, 1.0e5, 2.6, 3.0}, {410.0, 1.7e5, 1.9, 2.5},
	}
)

// moved returns ls with line i moved by d eV.
func moved(ls []tline, i int, d float64) []tline {
	out := append([]tline(nil), ls...)
	out[i].e0 += d
	return out
}

// withSatellite returns ls with a satellite of rel times line i's
// amplitude (same width, no tail change) d eV from it.
func withSatellite(ls []tline, i int, d, rel float64) []tline {
	l := ls[i]
	return append(append([]tline(nil), ls...), tline{l.e0 + d, rel * l.area, l.sigma, l.tau})
}

// recordTest returns a spectrum of lines ls (moved by shift eV, scaled by
// scale) over 330-470 eV at step eV: the direct signal plus a background
// 1.2e5 (E/400)^-1.5 per channel, noise of standard deviation proportional
// to sqrt(counts), then, for mod > 0, the lock-in derivative of
// peak-to-peak modulation mod eV (lineshape LockIn, so the noise is
// correlated over the modulation as in a real lock-in). The noise level is
// set so that the recorded spectrum's signal-to-noise ratio, the largest
// absolute value of its noiseless signal (background removed for direct
// spectra) over the noise standard deviation per channel, is snr.
func recordTest(ls []tline, step, mod, shift, scale, snr float64, seed uint64) *lineshape.Spectrum {
	const lo, hi = 330.0, 470.0
	n := int(math.Round((hi-lo)/step)) + 1
	sig := make([]float64, n)
	bg := make([]float64, n)
	for i := range sig {
		e := lo + float64(i)*step
		bg[i] = 1.2e5 * math.Pow(e/400, -1.5) * step / 0.5
		for _, l := range ls {
			sig[i] += scale * l.area * emgLowTest(e, l.e0+shift, l.sigma, l.tau) * step
		}
	}
	clean := make([]float64, n)
	for i := range clean {
		clean[i] = sig[i] + bg[i]
	}
	// Noise shape: sqrt(counts), unit SD at the mean count.
	var mean float64
	for _, v := range clean {
		mean += v / float64(n)
	}
	unit := make([]float64, n)
	for i, v := range clean {
		unit[i] = math.Sqrt(v / mean)
	}
	peak := 0.0
	gain := 1.0 // noise SD of the recorded spectrum per unit direct noise
	if mod > 0 {
		s, _ := lineshape.NewUniform(lo, step, sig, lineshape.Direct)
		d, err := s.LockIn(mod)
		if err != nil {
			panic(err)
		}
		m := int(math.Ceil(mod/2/step)) + 1
		for _, v := range d.Y[m : n-m] {
			peak = math.Max(peak, math.Abs(v))
		}
		gain = math.Sqrt(noiseShapeVar(step, mod))
	} else {
		for _, v := range sig {
			peak = math.Max(peak, math.Abs(v))
		}
	}
	sd := peak / snr / gain
	r := rand.New(rand.NewPCG(seed, 11))
	y := make([]float64, n)
	for i := range y {
		y[i] = clean[i] + sd*unit[i]*r.NormFloat64()
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Direct)
	if err != nil {
		panic(err)
	}
	if mod == 0 {
		return s
	}
	d, err := s.LockIn(mod)
	if err != nil {
		panic(err)
	}
	// The lab trims the channels the modulation reaches beyond.
	m := int(math.Ceil(mod/2/step)) + 1
	w, err := d.Window(d.Axis.At(m), d.Axis.At(n-1-m))
	if err != nil {
		panic(err)
	}
	w.Meta.ModulationEV = mod
	return w
}

// noiseShapeVar is the variance per channel of the lock-in derivative of
// unit white noise (step eV, modulation mod eV), from its impulse response.
func noiseShapeVar(step, mod float64) float64 {
	h := lockInImpulse(step, mod)
	var v float64
	for _, x := range h {
		v += x * x
	}
	return v
}

// refEntry wraps a spectrum as a Ti reference of state st.
func refEntry(name, st string, s *lineshape.Spectrum) *Entry {
	e := &Entry{Name: name, Element: "Ti", Transition: "L3M23M23", State: st, Spectrum: s}
	e.Acquisition.ModulationEV = s.Meta.ModulationEV
	if err := normalize(e); err != nil {
		panic(err)
	}
	return e
}

// dupCase is one case of the test grid: two lineshapes per recording mode
// (lock-in derivative and direct: their main features lie on different
// lines), b recorded with a relative shift, scale and S/N.
type dupCase struct {
	name          string
	deriv, direct [2][]tline // a and b
	shift, scale  float64
	snrB          float64 // b's S/N relative to a's; 0 means 1
	// directSNR is, for different lineshapes, the S/N from which direct
	// recordings must not warn (see TestDuplicateDifferentLineshapes).
	directSNR float64
}

// same returns a case of one lineshape l in both modes.
func same(name string, l []tline, shift, scale, snrB float64) dupCase {
	return dupCase{name, [2][]tline{l, l}, [2][]tline{l, l}, shift, scale, snrB, 0}
}

// dupRate counts, over steps, modes (lock-in 2 eV and direct), S/N values
// and seeds, how often the check warns for the pair of c. by[mode][snr]
// holds the warnings per mode (0 lock-in, 1 direct) and S/N index;
// report lists each grid point.
func dupRate(c dupCase, steps, snrs []float64, seeds int) (by [2][]int, report string) {
	snrB := c.snrB
	if snrB == 0 {
		snrB = 1
	}
	by = [2][]int{make([]int, len(snrs)), make([]int, len(snrs))}
	for _, step := range steps {
		for mi, mod := range []float64{2, 0} {
			ls := c.deriv
			if mod == 0 {
				ls = c.direct
			}
			for si, snr := range snrs {
				w := 0
				for k := 0; k < seeds; k++ {
					seed := uint64(1000*k) + uint64(step*100) + uint64(snr)*7
					a := refEntry("a", "nitride", recordTest(ls[0], step, mod, 0, 1, snr, seed))
					b := refEntry("b", "oxide", recordTest(ls[1], step, mod, c.shift, c.scale, snr*snrB, seed+500))
					if len(dupCheck(b, []*Entry{a})) > 0 {
						w++
					}
				}
				by[mi][si] += w
				report += fmt.Sprintf("  step %.2g mod %g S/N %g: %d/%d warn\n", step, mod, snr, w, seeds)
			}
		}
	}
	return by, report
}

// rateLine formats by (see dupRate) as warnings per S/N and mode, out of
// n each.
func rateLine(by [2][]int, n int) string {
	s := ""
	for mi, mode := range []string{"lock-in", "direct"} {
		s += " " + mode + ":"
		for si, snr := range gridSNR {
			s += fmt.Sprintf(" S/N %g %d/%d", snr, by[mi][si], n)
		}
	}
	return s
}

// dupCheck is the check dupRate runs.
var dupCheck = duplicateWarnings

var (
	gridSteps = []float64{0.1, 0.25, 0.5, 1}
	gridSNR   = []float64{20, 50, 100, 200}
)

// gridSeeds is the number of noise draws per grid point.
const gridSeeds = 4

// TestDuplicateSameLineshape: two recordings of one lineshape under two
// states warn, with and without a small shift and scale, at steps 0.1-1 eV
// and S/N 20-200, lock-in and direct.
func TestDuplicateSameLineshape(t *testing.T) {
	for _, c := range sameCases() {
		by, rep := dupRate(c, gridSteps, gridSNR, gridSeeds)
		n := len(gridSteps) * gridSeeds
		t.Logf("%s: warnings%s", c.name, rateLine(by, n))
		// At S/N 20 one miss in 16 is allowed: the aligned shift of a
		// direct pair is then uncertain by about 0.2 eV and may pass
		// dupMaxOffsetEV.
		for mi := range by {
			for si, w := range by[mi] {
				if miss := n - w; miss > 0 && (gridSNR[si] > 20 || miss > 1) {
					t.Errorf("%s: %d of %d pairs warn at S/N %g, want all:\n%s", c.name, w, n, gridSNR[si], rep)
				}
			}
		}
	}
}

// TestDuplicateDifferentLineshapes: lineshapes that differ by a realistic
// amount between states (TiN against TiO2, the main line moved by 1 or 2
// eV against its neighbours, a 15 % satellite near the main feature) do not
// warn. The lock-in main feature is the TiN L3M23V line (413 eV), the
// direct one the N KLL and Ti L3M23M23 pair (376.5 and 382 eV).
func TestDuplicateDifferentLineshapes(t *testing.T) {
	for _, c := range diffCases() {
		by, rep := dupRate(c, gridSteps, gridSNR, gridSeeds)
		n := len(gridSteps) * gridSeeds
		t.Logf("%s: warnings%s", c.name, rateLine(by, n))
		for mi := range by {
			for si, w := range by[mi] {
				snr := gridSNR[si]
				allowed := 0
				switch {
				case mi == 0 && snr == 20:
					allowed = 3 // lock-in at S/N 20: at the detection limit
				case mi == 1 && snr < c.directSNR:
					allowed = n // direct below its detection limit: not tested
				}
				if w > allowed {
					t.Errorf("%s: %d of %d pairs warn at S/N %g, want at most %d:\n%s", c.name, w, n, snr, allowed, rep)
				}
			}
		}
	}
}

// sameCases are the pairs of one lineshape of TestDuplicateSameLineshape.
func sameCases() []dupCase {
	return []dupCase{
		same("TiN twice", testTiN, 0, 1, 0),
		same("TiN twice, shifted 0.3 eV, scaled 0.6", testTiN, 0.3, 0.6, 0),
		same("TiO2 twice, shifted -0.2 eV, scaled 1.7", testTiO2b, -0.2, 1.7, 0),
		same("TiO2 twice, the second at 3 times the S/N", testTiO2b, 0, 1, 3),
	}
}

// diffCases are the pairs of different lineshapes of
// TestDuplicateDifferentLineshapes.
func diffCases() []dupCase {
	return []dupCase{
		{"TiN vs TiO2", [2][]tline{testTiN, testTiO2}, [2][]tline{testTiN, testTiO2}, 0, 1, 0, 20},
		{"TiN vs TiO2 (demo's present lines)", [2][]tline{testTiN, testTiO2b}, [2][]tline{testTiN, testTiO2b}, 0, 1, 0, 50},
		{"main line moved 1 eV", [2][]tline{testTiN, moved(testTiN, 2, 1)}, [2][]tline{testTiN, moved(testTiN, 1, 1)}, 0, 1, 0, 100},
		{"main line moved -2 eV", [2][]tline{testTiN, moved(testTiN, 2, -2)}, [2][]tline{testTiN, moved(testTiN, 1, -2)}, 0, 0.8, 0, 50},
		{"15 % satellite 6 eV below the main line", [2][]tline{testTiN, withSatellite(testTiN, 2, -6, 0.15)},
			[2][]tline{testTiN, withSatellite(testTiN, 0, -6, 0.15)}, 0, 1, 0, 200},
		{"15 % satellite 5 eV above the main line", [2][]tline{testTiN, withSatellite(testTiN, 2, 5, 0.15)},
			[2][]tline{testTiN, withSatellite(testTiN, 1, 5, 0.15)}, 0, 1.3, 0, 200},
	}
}

// TestNoiseSD checks the noise estimate against the noise actually added,
// for lock-in (2 eV) and direct recordings at steps 0.1-1 eV: the same at
// S/N 20 and 200 (it does not see the signal), each draw within 30 % and
// the median of 10 draws within 10 % of the truth. (Measured: 17 % and
// 23 % worst over 20 draws at steps <= 0.5 and 1 eV; medians 0.96-1.03.)
func TestNoiseSD(t *testing.T) {
	for _, step := range gridSteps {
		for _, mod := range []float64{2, 0} {
			for _, snr := range []float64{20, 200} {
				var rs []float64
				for seed := uint64(1); seed <= 10; seed++ {
					s := recordTest(testTiN, step, mod, 0, 1, snr, seed)
					c := recordTest(testTiN, step, mod, 0, 1, 1e15, seed)
					w := countingWeights(s)
					var v float64
					for i := range s.Y {
						d := s.Y[i] - c.Y[i]
						if w != nil {
							d /= w[i]
						}
						v += d * d
					}
					truth := math.Sqrt(v / float64(len(s.Y)))
					r := noiseSD(s, s.Meta.ModulationEV, w) / truth
					if r < 0.7 || r > 1.3 {
						t.Errorf("step %g mod %g S/N %g seed %d: noise estimate %.3f of the truth, want 0.7-1.3", step, mod, snr, seed, r)
					}
					rs = append(rs, r)
				}
				if m := median(rs); m < 0.9 || m > 1.1 {
					t.Errorf("step %g mod %g S/N %g: median estimate %.3f of the truth, want 0.9-1.1", step, mod, snr, m)
				}
			}
		}
	}
}

// TestMedian compares the quickselect median with sorting.
func TestMedian(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for n := 1; n < 60; n++ {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.Round(r.NormFloat64() * 3) // ties too
		}
		s := append([]float64(nil), v...)
		sort.Float64s(s)
		if got := median(v); got != s[n/2] {
			t.Fatalf("n %d: median %v, want %v", n, got, s[n/2])
		}
	}
}
