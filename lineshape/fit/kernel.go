package fit

import (
	"fmt"
	"math"
	"sort"

	"statemix/lineshape"
)

// The shift search works in a lightly smoothed copy of the problem so that
// the noise of the references does not depend on the sub-channel part of
// the shift (see "Shift search space" in doc.go).

const (
	// kernelWidth is the SD of the search kernel in units of the coarsest
	// node spacing of the unknown and the references. Gaussian weights
	// on nodes spaced h keep sum_j w_j and sum_j w_j^2 independent of the
	// position between nodes to within about 2 exp(-2 pi^2 s^2) and
	// 2 exp(-pi^2 s^2) (Poisson summation, s = sigma/h): 5e-9 and 1e-4
	// for s = 1, against 36 % for cubic interpolation between noisy
	// nodes. (s = 0.8 gives 0.4 %, and no measurable difference in
	// TestShiftBiasNoisyReferences either way.)
	kernelWidth = 1.0
	// kernelCut truncates the kernel at kernelCut SDs (weight 3e-4).
	kernelCut = 4.0
)

// kernelSampler evaluates a spectrum's samples through a normalised
// Gaussian kernel of SD sigma (eV): v(e) = sum_j w_j y_j / sum_j w_j,
// w_j = exp(-(x_j - e)^2 / (2 sigma^2)) over the nodes within kernelCut
// SDs. With sigma = 0 it uses the monotone cubic Curve instead.
type kernelSampler struct {
	xs, ys  []float64 // nodes, ascending energies
	uniform bool
	x0, h   float64 // uniform nodes: first energy and step
	sigma   float64
	inv2s2  float64
	curve   *lineshape.Curve
}

func newKernelSampler(s *lineshape.Spectrum, sigma float64, curve *lineshape.Curve) *kernelSampler {
	k := &kernelSampler{xs: s.Axis.Energies(), ys: s.Y, uniform: s.Axis.Uniform(), sigma: sigma, curve: curve}
	if k.uniform {
		k.x0, k.h = s.Axis.Start, s.Axis.Step
	}
	if sigma > 0 {
		k.inv2s2 = 1 / (2 * sigma * sigma)
	}
	return k
}

// maxSpacing returns the largest node spacing of s in eV.
func maxSpacing(s *lineshape.Spectrum) float64 {
	if s.Axis.Uniform() {
		return s.Axis.Step
	}
	xs := s.Axis.Energies()
	h := 0.0
	for i := 1; i < len(xs); i++ {
		h = math.Max(h, xs[i]-xs[i-1])
	}
	return h
}

// sample fills dst[i] with the kernel value at start + i*step - d.
func (k *kernelSampler) sample(dst []float64, start, step, d float64) {
	if k.sigma == 0 {
		k.curve.SampleShifted(dst, start, step, d)
		return
	}
	cut := kernelCut * k.sigma
	n := len(k.xs)
	if k.uniform && math.Abs(step-k.h) <= 1e-9*k.h {
		// The unknown's grid is the nodes' grid: every channel sits at the
		// same position between nodes, so the weights are computed once.
		u0 := (start - d - k.x0) / k.h
		base := math.Floor(u0)
		frac := u0 - base
		c := cut / k.h
		kmin, kmax := int(math.Ceil(frac-c)), int(math.Floor(frac+c))
		var buf [64]float64
		var w []float64
		if kmax-kmin+1 <= len(buf) {
			w = buf[:kmax-kmin+1]
		} else {
			w = make([]float64, kmax-kmin+1)
		}
		for t := range w {
			x := (float64(kmin+t) - frac) * k.h
			w[t] = math.Exp(-x * x * k.inv2s2)
		}
		wsum := 0.0
		for _, wt := range w {
			wsum += wt
		}
		inv := 1 / wsum
		b := int(base)
		for i := range dst {
			j0 := b + i + kmin
			if j0 >= 0 && j0+len(w) <= n {
				// All taps on nodes: the usual case, no end to mind.
				ys := k.ys[j0 : j0+len(w) : j0+len(w)]
				sy := 0.0
				for t, wt := range w {
					sy += wt * ys[t]
				}
				dst[i] = sy * inv
				continue
			}
			var sw, sy float64
			for t, wt := range w {
				j := j0 + t
				if j < 0 || j >= n {
					continue
				}
				sw += wt
				sy += wt * k.ys[j]
			}
			dst[i] = k.ratio(sy, sw, start+float64(i)*step-d)
		}
		return
	}
	j := 0
	for i := range dst {
		e := start + float64(i)*step - d
		if j >= n || k.xs[j] < e-cut {
			j = sort.SearchFloat64s(k.xs, e-cut)
		}
		for j > 0 && k.xs[j-1] >= e-cut {
			j--
		}
		var sw, sy float64
		for l := j; l < n && k.xs[l] <= e+cut; l++ {
			x := k.xs[l] - e
			wt := math.Exp(-x * x * k.inv2s2)
			sw += wt
			sy += wt * k.ys[l]
		}
		dst[i] = k.ratio(sy, sw, e)
	}
}

// ratio returns sy/sw, or the nearest end value where no node is near.
func (k *kernelSampler) ratio(sy, sw, e float64) float64 {
	if sw > 0 {
		return sy / sw
	}
	if e <= k.xs[0] {
		return k.ys[0]
	}
	return k.ys[len(k.ys)-1]
}

// searchSpace is the smoothed copy of the problem the shift search works
// in: the window's channels r..n-1-r, the unknown smoothed by the same
// kernel at its own channels (taps), the references through their
// kernelSamplers, the background basis restricted to those channels.
type searchSpace struct {
	sigma     float64 // eV, 0 when the window is too short for the kernel
	r, n      int     // first window channel and number of channels
	taps      []float64
	samplers  []*kernelSampler
	basis     [][]float64
	basisGram []float64
	tables    [][][]float64 // [ref][shift][channel]
}

// data fills dst (length s.n) with the window values y as the search sees
// them.
func (s *searchSpace) data(dst, y []float64) {
	if s.sigma == 0 {
		copy(dst, y[:s.n])
		return
	}
	for i := range dst {
		v := 0.0
		for t, w := range s.taps {
			v += w * y[i+t] // window channel r+i+t-r
		}
		dst[i] = v
	}
}

// SearchChannels returns the first window channel and the number of
// channels of the smoothed problem the shift search works in (see "Shift
// search space" in the package documentation). Without fitted shifts it is
// the whole window.
func (m *Model) SearchChannels() (first, n int) {
	if m.bound == 0 {
		return 0, m.n
	}
	return m.search.r, m.search.n
}

// SearchReference fills dst, of the length SearchChannels returns, with
// reference i (in fit order) shifted by d eV as the shift search sees it.
// It is safe for concurrent use.
func (m *Model) SearchReference(dst []float64, i int, d float64) {
	first, n := m.SearchChannels()
	if len(dst) != n || i < 0 || i >= len(m.refs) {
		panic(fmt.Sprintf("fit: SearchReference with %d values for reference %d, want %d values and a reference below %d", len(dst), i, n, len(m.refs)))
	}
	if m.bound == 0 {
		m.curves[i].SampleShifted(dst, m.start+float64(first)*m.step, m.step, d)
		return
	}
	m.searchRef(dst, i, d)
}

// SearchData fills dst, of the length SearchChannels returns, with the
// window values y (length Points, in the model's mode) as the shift search
// sees them. It allocates nothing.
func (m *Model) SearchData(dst, y []float64) {
	_, n := m.SearchChannels()
	if len(dst) != n || len(y) != m.n {
		panic(fmt.Sprintf("fit: SearchData with %d and %d values, want %d and %d", len(dst), len(y), n, m.n))
	}
	if m.bound == 0 {
		copy(dst, y)
		return
	}
	m.search.data(dst, y)
}
