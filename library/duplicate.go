package library

import (
	"fmt"
	"math"
	"sort"
	"sync"

	"statemix/lineshape"
)

// The duplicate-state rule's constants.
const (
	// dupFeatureSteps, dupFeatureMinEV and dupFeatureMinDirectEV set how
	// close two main features (MainFeature) must be for the lineshapes to
	// be compared at all: within dupFeatureSteps channel steps of the
	// coarser spectrum, and at least 1 eV for derivative spectra (the
	// deepest minimum of a noisy derivative moves by a few tenths of an
	// eV) or 2.5 eV for direct ones (the top of a direct line, often two
	// overlapping lines, is flat: at S/N 20 it moves by up to 1.8 eV
	// between two recordings of one lineshape, TestDuplicateSameLineshape).
	// The alignment then decides how far apart the energies really are.
	dupFeatureSteps       = 2
	dupFeatureMinEV       = 1.0
	dupFeatureMinDirectEV = 2.5
	// dupHalfWindowEV is the half-width of the window around the main
	// feature over which the lineshapes are compared: an Auger derivative
	// feature with its tail and near losses spans about 20-30 eV.
	dupHalfWindowEV = 15
	// dupMaxShiftEV is how far one lineshape is moved to align it with the
	// other.
	dupMaxShiftEV = 2
	// dupMaxOffsetEV is the largest shift between the aligned lineshapes
	// that still counts as the same energy: the energy-scale
	// reproducibility of recordings made in different sessions (common
	// practice: a few tenths of an eV) plus the alignment's own
	// uncertainty at S/N 20 (up to 0.2 eV, TestDuplicateSameLineshape).
	dupMaxOffsetEV = 0.6
	// dupMaxChi2 is the largest chi-square per degree of freedom of the
	// aligned, scaled difference that still counts as "within noise".
	dupMaxChi2 = 2
	// dupSmoothEV is the standard deviation of the Gaussian the residual
	// is smoothed with to find a local difference (about half an Auger
	// line's width), and dupMaxZ the largest smoothed residual, in units
	// of its noise, that still counts as within noise: about 4.5 standard
	// deviations leaves room for the maximum over the window's dozen or
	// so independent positions and the noise estimate's 15 % uncertainty.
	dupSmoothEV = 1.5
	dupMaxZ     = 5
	// dupMinContrast is how far (in units of the combined noise) the
	// lineshape must stand above the noise for the comparison to mean
	// anything: two noise-only spectra are not "the same lineshape".
	dupMinContrast = 10
	// The noise high-pass: the residual of a Savitzky-Golay smooth of
	// noiseWindow points and degree noiseOrder.
	noiseWindow = 7
	noiseOrder  = 4
)

// dupFeatureTol returns how far apart the main features of two spectra
// of mode mode with mean channel steps stepA and stepB may lie for the
// duplicate-state check to compare them. The catalogue's candidate
// preselection uses the same tolerance.
func dupFeatureTol(direct bool, stepA, stepB float64) float64 {
	floor := dupFeatureMinEV
	if direct {
		floor = dupFeatureMinDirectEV
	}
	return math.Max(dupFeatureSteps*math.Max(stepA, stepB), floor)
}

// duplicateWarnings warns when e, a reference, has the same main feature
// and the same lineshape within noise as an existing reference of the same
// element, mode and another state: a duplicate or a mislabelled state.
//
// The rule. Two references a and b are "the same within noise" when all of
// these hold:
//
//   - Their main features (MainFeature) lie within max(2 channel steps of
//     the coarser spectrum, 1 eV) of each other, 2.5 eV for direct spectra
//     (see dupFeatureMinEV). This is the preselection the catalogue can
//     make without reading spectra.
//   - Over the window of +/- 15 eV around the mean of the two features
//     (where both spectra have data), b is aligned onto a: the finer
//     spectrum, interpolated by a 4-point cubic onto the channels of the
//     coarser one, shifted by the best shift within +/- 2 eV, times the
//     least-squares scale k, plus a least-squares background the scale
//     does not carry (a straight line under a derivative, a quadratic
//     under a direct spectrum). The best shift, the energy difference of
//     the two lineshapes, is at most 0.6 eV: their energies agree.
//   - The aligned difference r is consistent with the combined noise
//     sigma^2 = sigma_a^2 + k^2 sigma_b^2 (per channel; for direct spectra
//     of positive values scaled by the counting-noise profile y/mean(y)):
//     its chi-square per degree of freedom, sum r^2/sigma^2 over the n
//     channels divided by n minus the fitted parameters, is below 2, and
//     r smoothed by a Gaussian of 1.5 eV nowhere exceeds 5 standard
//     deviations of the smoothed noise. The mean over the window alone
//     would dilute a local difference (a satellite, one line of several
//     moved) over the whole window; the smoothed maximum does not.
//
// The lineshape must also stand out from the noise (its peak-to-peak height
// in the window at least 10 times the combined noise) and the window must
// hold at least 10 channels.
//
// For two recordings of one lineshape the chi-square is 0.35-1.9 and the
// smoothed maximum 0.6-4.6 (the 512 pairs of TestDuplicateSameLineshape:
// steps 0.1-1 eV, S/N 20-200, lock-in with 2 eV modulation and direct,
// shifts up to 0.3 eV, scales 0.6-1.7). What the rule can tell apart
// depends on S/N and mode (TestDuplicateDifferentLineshapes): in lock-in derivative spectra one
// line moved by 1 eV against its neighbours or a satellite of 15 % of a
// line is told apart at S/N 50 and above (at S/N 20 a satellite still
// passes for a duplicate in 1-3 of 16 pairs); in direct spectra, where
// the same differences are broad, low-contrast changes of the line top,
// a 1 eV move needs S/N 100 and a 15 % satellite S/N 200. A known limit:
// a lineshape whose two deepest derivative minima are nearly equally deep
// has a main feature that jumps between them from one recording to the
// next, and such twins are then not compared at all.
//
// The noise. sigma is the standard deviation per channel of each
// spectrum's noise, estimated by noiseSD from the residual of a 7-point
// quartic Savitzky-Golay smooth: its median absolute deviation locates
// the noise robustly, the RMS of the channels within 3.5 of those gives
// it, and dividing by the square root of the high-pass's noise gain turns
// it into the noise of the spectrum. The quartic follows an Auger line of
// a few channels' width, so the residual does not see the signal's
// curvature at the channel step (the estimate is the same at S/N 20 and
// 200 to a few per cent, at steps 0.1-1 eV). The gain is that of the noise the
// spectrum carries: white noise for direct spectra and for derivative
// spectra without a recorded modulation; for derivative spectra with one
// (Acquisition.ModulationEV, else Spectrum.Meta.ModulationEV) white
// counting noise in the direct spectrum passed through lock-in detection
// (lineshape LockIn), which correlates it over the modulation and moves
// most of its power out of the high-pass's band. Against the true noise of
// the test spectra the estimate is within 17 % at steps of 0.1-0.5 eV and
// 23 % at 1 eV (20 draws each, lock-in and direct).
//
// What was wrong before: the noise came from second differences, and two
// lineshapes counted as the same when the RMS of their scaled difference
// over the whole common range was within 3 times the combined noise. The
// second difference sees h^2 times the second derivative of the signal as
// well as the noise, and it is not calibrated for lock-in noise, whose
// power lies away from the highest frequencies: on the test spectra of
// 2 eV modulation it gave 0.5-0.7 of the true noise at steps of 0.1-0.5 eV
// and S/N 20, but 1.2-1.4 times it at 0.5 eV and S/N 200 and 4-5 times it
// at 1 eV and S/N 200 (the signal's curvature). And "RMS within 3 sigma"
// is a chi-square per channel of up to 9, over a range where a local
// difference is diluted. On the test grid above the old rule warned for
// 217 of 768 pairs of different lineshapes (92 of 384 lock-in) and missed
// 222 of 512 pairs of one lineshape (85 of 256 lock-in); this one warns
// for 4 of the 384 lock-in pairs (at S/N 20), for direct pairs below the
// S/N limits above, and misses 1 of 512.
func duplicateWarnings(e *Entry, existing []*Entry) []Warning {
	if e.Kind != KindReference || e.Spectrum == nil {
		return nil
	}
	fe, ok := MainFeature(e.Spectrum)
	if !ok {
		return nil
	}
	var ws []Warning
	var se *noisySpectrum
	for _, x := range existing {
		if x.ID == e.ID || x.Kind != KindReference || x.Element != e.Element || x.State == e.State ||
			x.Spectrum == nil || x.Spectrum.Mode != e.Spectrum.Mode {
			continue
		}
		fx, ok := MainFeature(x.Spectrum)
		if !ok {
			continue
		}
		if math.Abs(fe-fx) > dupFeatureTol(e.Spectrum.Mode == lineshape.Direct, channelStep(e.Spectrum), channelStep(x.Spectrum))*(1+1e-9) {
			continue
		}
		if se == nil {
			se = newNoisy(e)
		}
		chi2, z, shift, ok := shapeChi2(se, newNoisy(x), (fe+fx)/2)
		if !ok || !(chi2 < dupMaxChi2) || !(z < dupMaxZ) || math.Abs(shift) > dupMaxOffsetEV {
			continue
		}
		ws = append(ws, Warning{Ref: e.ID, Name: e.Name, Code: WarnDuplicateState, Message: fmt.Sprintf(
			"main feature (%.1f eV) and lineshape match %s (%q, %s) within noise (chi-square %.2f per channel), but the states differ (%s vs %s): a duplicate or a mislabelled state?",
			fe, x.ID, x.Name, x.State, chi2, e.State, x.State)})
	}
	sort.Slice(ws, func(i, j int) bool { return ws[i].Message < ws[j].Message })
	return ws
}

// channelStep is the mean channel spacing in eV.
func channelStep(s *lineshape.Spectrum) float64 {
	n := s.Axis.Len()
	if n < 2 {
		return 0
	}
	return (s.Axis.Hi() - s.Axis.Lo()) / float64(n-1)
}

// modulationOf returns the lock-in modulation (eV peak to peak) of a
// derivative entry's spectrum, 0 when none is recorded or the spectrum is
// direct.
func modulationOf(e *Entry) float64 {
	if e.Spectrum.Mode != lineshape.Derivative {
		return 0
	}
	if m := e.Acquisition.ModulationEV; m > 0 {
		return m
	}
	return e.Spectrum.Meta.ModulationEV
}

// noisySpectrum is a spectrum on a uniform axis with its noise estimate.
type noisySpectrum struct {
	s     *lineshape.Spectrum
	mod   float64   // lock-in modulation, eV; 0 for white noise
	w     []float64 // noise standard deviation per channel relative to sigma; nil: 1
	sigma float64   // noise standard deviation (at the mean value for counting noise)
}

// newNoisy returns e's spectrum (resampled onto its mean step if its axis
// is not uniform) and its noise.
func newNoisy(e *Entry) *noisySpectrum {
	s := e.Spectrum
	if !s.Axis.Uniform() && s.Len() >= 2 {
		if r, err := s.Resample(s.Axis.Lo(), channelStep(s), s.Len()); err == nil {
			s = r
		}
	}
	mod := modulationOf(e)
	w := countingWeights(s)
	return &noisySpectrum{s: s, mod: mod, w: w, sigma: noiseSD(s, mod, w)}
}

// countingWeights returns, for a direct spectrum whose values are all
// positive, the relative standard deviation of counting noise per channel,
// sqrt(y/mean(y)) (Poisson: variance proportional to the counts, for
// counts or count rates alike); nil (uniform noise) otherwise.
func countingWeights(s *lineshape.Spectrum) []float64 {
	if s.Mode != lineshape.Direct || len(s.Y) == 0 {
		return nil
	}
	var mean float64
	for _, v := range s.Y {
		if !(v > 0) {
			return nil
		}
		mean += v
	}
	mean /= float64(len(s.Y))
	w := make([]float64, len(s.Y))
	for i, v := range s.Y {
		w[i] = math.Sqrt(v / mean)
	}
	return w
}

// noiseSD estimates the standard deviation per channel of the noise of a
// uniform spectrum s recorded with lock-in modulation mod eV (0: white
// noise), as duplicateWarnings describes, with relative noise w per channel
// (nil: uniform); 0 when s is too short or not uniform.
func noiseSD(s *lineshape.Spectrum, mod float64, w []float64) float64 {
	n := s.Len()
	if !s.Axis.Uniform() || n < 3*noiseWindow {
		return 0
	}
	sm := make([]float64, n)
	if err := lineshape.SavitzkyGolayFilter(sm, s.Y, noiseWindow, noiseOrder, 0, s.Axis.Step); err != nil {
		return 0
	}
	m := noiseWindow / 2
	r := make([]float64, 0, n-2*m)
	for i := m; i < n-m; i++ {
		d := s.Y[i] - sm[i]
		if w != nil {
			d /= w[i]
		}
		r = append(r, d)
	}
	// The standard deviation of the residual: 1.4826 MAD (that of normal
	// data; the residual of a high-pass has median 0 for noise) locates it
	// robustly, then the RMS of the channels within 3.5 of those, 2.7
	// times as efficient as the MAD, gives it. (Clipping at 3.5 standard
	// deviations lowers the RMS of normal noise by 0.2 %.)
	a := make([]float64, len(r))
	for i, x := range r {
		a[i] = math.Abs(x)
	}
	mad := 1.4826 * median(a)
	var v float64
	k := 0
	for _, x := range r {
		if math.Abs(x) <= 3.5*mad {
			v += x * x
			k++
		}
	}
	if k == 0 {
		return 0
	}
	return math.Sqrt(v / float64(k) / highPassGain(s.Axis.Step, mod))
}

// median returns the median of v (the upper one for even lengths),
// reordering v: quickselect, linear time on average.
func median(v []float64) float64 {
	lo, hi, k := 0, len(v)-1, len(v)/2
	for lo < hi {
		p := v[lo+(hi-lo)/2]
		i, j := lo, hi
		for i <= j {
			for v[i] < p {
				i++
			}
			for v[j] > p {
				j--
			}
			if i <= j {
				v[i], v[j] = v[j], v[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return v[k]
		}
	}
	return v[k]
}

// gainKey identifies a noise gain: channel step, modulation, filter.
type gainKey struct {
	step, mod float64
	smooth    bool
}

var (
	gainMu    sync.Mutex
	gainCache = map[gainKey]float64{}
)

// highPassGain returns the fraction of a spectrum's noise variance that the
// noise high-pass (the residual of the noiseWindow-point, noiseOrder
// Savitzky-Golay smooth) passes: for white noise (mod 0) 1 - c0, c0 the
// smooth's centre weight; for the lock-in derivative of white direct noise
// (modulation mod eV at step eV) the ratio of the variances of the
// high-passed and the plain impulse response of LockIn.
func highPassGain(step, mod float64) float64 { return noiseGain(gainKey{step, mod, false}) }

// smoothGain returns the fraction of the noise variance that the Gaussian
// smooth of smoothedMaxZ passes, for the noise of highPassGain.
func smoothGain(step, mod float64) float64 { return noiseGain(gainKey{step, mod, true}) }

// noiseGain computes (and caches) the gains of highPassGain and
// smoothGain from the noise's impulse response.
func noiseGain(k gainKey) float64 {
	gainMu.Lock()
	g, ok := gainCache[k]
	gainMu.Unlock()
	if ok {
		return g
	}
	var h []float64
	if k.mod > 0 {
		h = lockInImpulse(k.step, k.mod)
	} else {
		h = []float64{1}
	}
	w := noiseWindow
	if k.smooth {
		w = len(gaussKernel(k.step))
	}
	pad := make([]float64, len(h)+2*w)
	copy(pad[w:], h)
	var all, out float64
	for _, v := range pad {
		all += v * v
	}
	if k.smooth {
		kern := gaussKernel(k.step)
		m := len(kern) / 2
		for i := range pad {
			var s float64
			for j, wj := range kern {
				if p := i - m + j; p >= 0 && p < len(pad) {
					s += wj * pad[p]
				}
			}
			out += s * s
		}
	} else {
		sm := make([]float64, len(pad))
		if err := lineshape.SavitzkyGolayFilter(sm, pad, noiseWindow, noiseOrder, 0, k.step); err != nil {
			panic("library: noiseGain: " + err.Error())
		}
		for i := range pad {
			d := pad[i] - sm[i]
			out += d * d
		}
	}
	g = out / all
	gainMu.Lock()
	if len(gainCache) > 1000 {
		clear(gainCache)
	}
	gainCache[k] = g
	gainMu.Unlock()
	return g
}

// shapeChi2 returns the chi-square per degree of freedom of the
// difference between a and b over the window around feature energy fc
// after the best alignment, how far b's lineshape lies above a's in
// energy (eV, the best alignment; see duplicateWarnings), and whether the
// comparison could be made.
func shapeChi2(a, b *noisySpectrum, fc float64) (chi2, zmax, shift float64, ok bool) {
	if a.sigma <= 0 || b.sigma <= 0 {
		return 0, 0, 0, false
	}
	// Grid: the channels of the coarser spectrum; the other is
	// interpolated. sign turns a shift of f into the shift of b.
	g, f, sign := a, b, 1.0
	if channelStep(b.s) > channelStep(a.s) {
		g, f, sign = b, a, -1
	}
	lo := math.Max(math.Max(g.s.Axis.Lo(), f.s.Axis.Lo()+dupMaxShiftEV), fc-dupHalfWindowEV)
	hi := math.Min(math.Min(g.s.Axis.Hi(), f.s.Axis.Hi()-dupMaxShiftEV), fc+dupHalfWindowEV)
	var yg, wg []float64
	start := math.NaN()
	for i := 0; i < g.s.Len(); i++ {
		if x := g.s.Axis.At(i); x >= lo && x <= hi {
			if len(yg) == 0 {
				start = x
			}
			yg = append(yg, g.s.Y[i])
			wi := 1.0
			if g.w != nil {
				wi = g.w[i]
			}
			wg = append(wg, wi)
		}
	}
	n := len(yg)
	// The background the scale does not carry (the secondary-electron
	// background need not scale with the line: another beam current,
	// surface or analyser setting): a quadratic under a direct line, its
	// derivative, a straight line, under a derivative one.
	deg := 1
	if g.s.Mode == lineshape.Direct {
		deg = 2
	}
	npar := deg + 3 // background, scale, shift
	if n < 10 || n <= npar+5 {
		return 0, 0, 0, false
	}
	step := g.s.Axis.Step
	// Orthonormal basis of the background polynomials on the window
	// (modified Gram-Schmidt on 1, t, t^2, t in [-1, 1]).
	q := make([][]float64, deg+1)
	for p := range q {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.Pow(2*float64(i)/float64(n-1)-1, float64(p))
		}
		for _, u := range q[:p] {
			d := dot(u, v)
			for i := range v {
				v[i] -= d * u[i]
			}
		}
		nv := math.Sqrt(dot(v, v))
		for i := range v {
			v[i] /= nv
		}
		q[p] = v
	}
	project := func(v []float64) {
		for _, u := range q {
			d := dot(u, v)
			for i := range v {
				v[i] -= d * u[i]
			}
		}
	}
	project(yg)
	ygg := dot(yg, yg)
	yf := make([]float64, n)
	// rss returns the residual sum of squares of yg against k*f(E-d) plus
	// the background, and k.
	rss := func(d float64) (float64, float64) {
		sampleCubic(yf, f.s, start, step, d)
		project(yf)
		ff, fg := dot(yf, yf), dot(yf, yg)
		if ff <= 0 {
			return ygg, 0
		}
		k := fg / ff
		return math.Max(ygg-k*fg, 0), k
	}
	// Coarse search over shifts at half the finer step, then two
	// parabolic refinements through the best point and its neighbours
	// (the residual is smooth in the shift: a cubic interpolant).
	ds := math.Min(step, channelStep(f.s)) / 2
	best, bestD := math.Inf(1), 0.0
	for d := -float64(dupMaxShiftEV); d <= dupMaxShiftEV+1e-12; d += ds {
		if r, _ := rss(d); r < best {
			best, bestD = r, d
		}
	}
	for h := ds; h > ds/3; h /= 2 {
		r0, _ := rss(bestD - h)
		r2, _ := rss(bestD + h)
		den := r0 - 2*best + r2
		if !(den > 0) {
			break
		}
		v := bestD + h*(r0-r2)/(2*den)
		v = math.Max(bestD-h, math.Min(bestD+h, v))
		if r, _ := rss(v); r < best {
			best, bestD = r, v
		}
	}
	d := bestD
	_, k := rss(d)
	if !(k > 0) {
		return 0, 0, 0, false
	}
	// Noise of f as carried into g's units: f is scaled by k.
	noise2 := g.sigma*g.sigma + k*k*f.sigma*f.sigma
	lo2, hi2 := math.Inf(1), math.Inf(-1)
	for i := 0; i < g.s.Len(); i++ {
		if x := g.s.Axis.At(i); x >= lo && x <= hi {
			lo2, hi2 = math.Min(lo2, g.s.Y[i]), math.Max(hi2, g.s.Y[i])
		}
	}
	if hi2-lo2 <= dupMinContrast*math.Sqrt(noise2) {
		return 0, 0, 0, false
	}
	// The residual at the best alignment; chi-square with each channel's
	// noise (counting noise of f taken to vary as g's).
	rss(d)
	var chi float64
	for i := range yf {
		yf[i] = yg[i] - k*yf[i]
		chi += yf[i] * yf[i] / (wg[i] * wg[i])
	}
	// Smoothed over a line width, a local difference that the mean over
	// the window dilutes stands out.
	z := smoothedMaxZ(yf, wg, step, math.Sqrt(noise2*smoothGain(step, g.mod)))
	return chi / noise2 / float64(n-npar), z, -sign * d, true
}

// smoothedMaxZ returns the largest absolute value of r smoothed by a
// Gaussian of dupSmoothEV (channel step eV), over the channels where the
// kernel lies inside r, divided by sd*rel[i], the smoothed noise's standard
// deviation there; 0 when no channel qualifies.
func smoothedMaxZ(r, rel []float64, step, sd float64) float64 {
	w := gaussKernel(step)
	m := len(w) / 2
	var z float64
	for i := m; i+m < len(r); i++ {
		var s float64
		for j, wj := range w {
			s += wj * r[i-m+j]
		}
		z = math.Max(z, math.Abs(s)/(sd*rel[i]))
	}
	return z
}

// gaussKernel returns the unit-sum Gaussian of standard deviation
// dupSmoothEV sampled at channel step eV, truncated at 3 standard
// deviations.
func gaussKernel(step float64) []float64 {
	sc := dupSmoothEV / step
	m := int(math.Ceil(3 * sc))
	w := make([]float64, 2*m+1)
	var sum float64
	for j := range w {
		x := float64(j-m) / sc
		w[j] = math.Exp(-x * x / 2)
		sum += w[j]
	}
	for j := range w {
		w[j] /= sum
	}
	return w
}

// sampleCubic fills dst[i] with the uniform spectrum s shifted by d eV at
// energy start + i*step, interpolated by the 4-point Lagrange cubic (exact
// for cubics; ends clamped). Not lineshape's Curve: its monotone cubic
// flattens sampled extrema by design, which at S/N 200 and 0.5 eV steps
// leaves a difference between two recordings of one lineshape of several
// noise standard deviations at each derivative peak.
func sampleCubic(dst []float64, s *lineshape.Spectrum, start, step, d float64) {
	n := s.Len()
	y := s.Y
	inv := 1 / s.Axis.Step
	u0 := (start - d - s.Axis.Start) * inv
	du := step * inv
	for i := range dst {
		u := u0 + float64(i)*du
		j := int(math.Floor(u))
		t := u - float64(j)
		wm := -t * (t - 1) * (t - 2) / 6
		w0 := (t + 1) * (t - 1) * (t - 2) / 2
		w1 := -(t + 1) * t * (t - 2) / 2
		w2 := (t + 1) * t * (t - 1) / 6
		if j >= 1 && j+2 < n {
			dst[i] = wm*y[j-1] + w0*y[j] + w1*y[j+1] + w2*y[j+2]
			continue
		}
		at := func(j int) float64 { return y[min(max(j, 0), n-1)] }
		dst[i] = wm*at(j-1) + w0*at(j) + w1*at(j+1) + w2*at(j+2)
	}
}

// dot returns the scalar product of a and b.
func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// lockInImpulse returns the response of lineshape's LockIn (modulation mod
// eV peak to peak, uniform step eV) to a unit impulse in the direct
// spectrum, over the channels around it: the kernel through which white
// noise in the direct counts reaches a lock-in derivative. The margins (30
// channels beyond the modulation on either side) hold the geometrically
// decaying tail of the cubic spline LockIn interpolates with.
func lockInImpulse(step, mod float64) []float64 {
	m := int(math.Ceil(mod/2/step)) + 30
	y := make([]float64, 2*m+1)
	y[m] = 1
	s, err := lineshape.NewUniform(0, step, y, lineshape.Direct)
	if err != nil {
		panic("library: lockInImpulse: " + err.Error())
	}
	d, err := s.LockIn(mod)
	if err != nil {
		panic("library: lockInImpulse: " + err.Error())
	}
	return d.Y
}
