package library

import (
	"fmt"
	"math"
	"sort"

	"statemix/lineshape"
)

// duplicateWarnings warns when e, a reference, has the same main feature
// and the same lineshape within noise as an existing reference of the same
// element and another state: a duplicate or a mislabelled state.
//
// "Same main feature" means main-feature energies within two channel steps
// (of the coarser spectrum): the feature of a noisy spectrum is uncertain by
// about a channel. "Same lineshape within noise" means
// that after the best scaling of one onto the other over their common
// energy range (linear interpolation onto e's channels), the residual RMS
// is at most 3 times the combined noise of the two, each estimated from
// second differences of its values (sigma^2 = mean(d2^2)/6 for white
// noise, which is exact for a locally linear signal).
func duplicateWarnings(e *Entry, existing []*Entry) []Warning {
	if e.Kind != KindReference || e.Spectrum == nil {
		return nil
	}
	fe, ok := MainFeature(e.Spectrum)
	if !ok {
		return nil
	}
	var ws []Warning
	for _, x := range existing {
		if x.ID == e.ID || x.Kind != KindReference || x.Element != e.Element || x.State == e.State ||
			x.Spectrum == nil || x.Spectrum.Mode != e.Spectrum.Mode {
			continue
		}
		fx, ok := MainFeature(x.Spectrum)
		if !ok {
			continue
		}
		tol := 2 * math.Max(channelStep(e.Spectrum), channelStep(x.Spectrum))
		if math.Abs(fe-fx) > tol {
			continue
		}
		if !sameShape(e.Spectrum, x.Spectrum) {
			continue
		}
		ws = append(ws, Warning{Ref: e.ID, Name: e.Name, Code: WarnDuplicateState, Message: fmt.Sprintf(
			"main feature (%.1f eV) and lineshape match %s (%q, %s) within noise, but the states differ (%s vs %s): a duplicate or a mislabelled state?",
			fe, x.ID, x.Name, x.State, e.State, x.State)})
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

// noiseSD estimates white noise from second differences: for y = f + e
// with f locally linear, d2 = e[i-1] - 2e[i] + e[i+1] has variance 6 sigma^2.
func noiseSD(y []float64) float64 {
	if len(y) < 3 {
		return 0
	}
	var s float64
	for i := 1; i+1 < len(y); i++ {
		d := y[i-1] - 2*y[i] + y[i+1]
		s += d * d
	}
	return math.Sqrt(s / float64(len(y)-2) / 6)
}

// interpAt returns s linearly interpolated at energy x (x inside the range).
func interpAt(s *lineshape.Spectrum, x float64) float64 {
	n := s.Axis.Len()
	lo, hi := 0, n-1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if s.Axis.At(mid) <= x {
			lo = mid
		} else {
			hi = mid
		}
	}
	x0, x1 := s.Axis.At(lo), s.Axis.At(hi)
	t := (x - x0) / (x1 - x0)
	return s.Y[lo] + t*(s.Y[hi]-s.Y[lo])
}

// sameShape reports whether b scaled onto a matches a within noise over
// their common range (see duplicateWarnings). At least 10 common channels
// are needed.
func sameShape(a, b *lineshape.Spectrum) bool {
	lo := math.Max(a.Axis.Lo(), b.Axis.Lo())
	hi := math.Min(a.Axis.Hi(), b.Axis.Hi())
	var ya, yb []float64
	for i := 0; i < a.Axis.Len(); i++ {
		x := a.Axis.At(i)
		if x < lo || x > hi {
			continue
		}
		ya = append(ya, a.Y[i])
		yb = append(yb, interpAt(b, x))
	}
	if len(ya) < 10 {
		return false
	}
	var ab, bb float64
	for i := range ya {
		ab += ya[i] * yb[i]
		bb += yb[i] * yb[i]
	}
	if bb == 0 || ab <= 0 {
		return false
	}
	k := ab / bb
	var rss, scale float64
	for i := range ya {
		r := ya[i] - k*yb[i]
		rss += r * r
	}
	rms := math.Sqrt(rss / float64(len(ya)))
	na, nb := noiseSD(a.Y), k*noiseSD(b.Y)
	noise := math.Sqrt(na*na + nb*nb)
	// Signal scale guards against calling two flat, noise-only spectra
	// "the same": the lineshape must stand well above the noise.
	lo2, hi2 := ya[0], ya[0]
	for _, v := range ya {
		lo2, hi2 = math.Min(lo2, v), math.Max(hi2, v)
	}
	scale = hi2 - lo2
	if scale <= 10*noise {
		return false
	}
	return rms <= 3*noise
}
