package lineshape

import "math"

// Extremum is a local minimum or maximum with its topographic prominence.
//
// Index is the channel (the middle channel of a flat run); Value is the
// sample value there. Energy is refined below the channel spacing by the
// vertex of the parabola through the channel and its two neighbours (the
// middle of the run for a flat run), so it lies within half a channel of
// Index's energy.
type Extremum struct {
	Index      int     `json:"index"`
	Energy     float64 `json:"energy_ev"`
	Value      float64 `json:"value"`
	Prominence float64 `json:"prominence"`
	Minimum    bool    `json:"minimum"`
}

// Features summarises a spectrum's derivative peaks.
type Features struct {
	Minima     []Extremum `json:"minima"`       // by energy, prominence >= the threshold
	Maxima     []Extremum `json:"maxima"`       // by energy, prominence >= the threshold
	PeakToPeak float64    `json:"peak_to_peak"` // max - min of the values
	// PeakEnergy is the conventional derivative peak energy: the energy of the
	// deepest minimum (the high-energy negative excursion of the main peak).
	// For a direct spectrum, the energy of the highest maximum.
	PeakEnergy float64 `json:"peak_energy_ev"`
}

// Features returns the extrema whose prominence is at least relProminence
// times the peak-to-peak range (0 means 0.05).
//
// A local maximum is a channel, or a run of equal channels, with lower
// neighbours on both sides; the end channels never count. Its topographic
// prominence is how far one must descend from it before climbing to
// anything higher: extend left and right until a strictly higher value or
// the end of the data, take the lowest value on each side, and subtract
// the higher of the two from the peak value. Minima are the maxima of -y.
// This is the usual definition of peak prominence in topography and signal
// processing. Negative relProminence counts as 0.05 too; to see every
// extremum pass a tiny positive value.
//
// If no minimum (derivative) or maximum (direct) passes the threshold,
// PeakEnergy falls back to the energy of the lowest (highest) channel. The
// values are taken as they are: smooth noisy data first (a 9-point
// quadratic Savitzky-Golay filter is customary).
func (s *Spectrum) Features(relProminence float64) Features {
	if !(relProminence > 0) {
		relProminence = 0.05
	}
	y := s.Y
	f := Features{}
	lo, hi := 0, 0
	for i, v := range y {
		if v < y[lo] {
			lo = i
		}
		if v > y[hi] {
			hi = i
		}
	}
	if len(y) == 0 {
		return f
	}
	f.PeakToPeak = y[hi] - y[lo]
	thr := relProminence * f.PeakToPeak
	if f.PeakToPeak > 0 {
		f.Maxima = s.extrema(thr, false)
		f.Minima = s.extrema(thr, true)
	}
	if s.Mode == Derivative {
		f.PeakEnergy = s.Energy(lo)
		if best := deepest(f.Minima, true); best >= 0 {
			f.PeakEnergy = f.Minima[best].Energy
		}
	} else {
		f.PeakEnergy = s.Energy(hi)
		if best := deepest(f.Maxima, false); best >= 0 {
			f.PeakEnergy = f.Maxima[best].Energy
		}
	}
	return f
}

// deepest returns the index in xs of the lowest (min) or highest value, or
// -1 for an empty list.
func deepest(xs []Extremum, min bool) int {
	best := -1
	for i, x := range xs {
		if best < 0 || (min && x.Value < xs[best].Value) || (!min && x.Value > xs[best].Value) {
			best = i
		}
	}
	return best
}

// extrema returns the local maxima (or, with min, minima) of s.Y whose
// prominence is at least thr, in channel order. It runs in O(n): the lowest
// value between each channel and the nearest strictly higher channel on
// either side comes from one pass each way with a monotone stack.
func (s *Spectrum) extrema(thr float64, min bool) []Extremum {
	y := s.Y
	n := len(y)
	if n < 3 {
		return nil
	}
	v := y
	if min {
		v = make([]float64, n)
		for i, x := range y {
			v[i] = -x
		}
	}
	left := make([]float64, n)
	right := make([]float64, n)
	baseMins(left, v, false)
	baseMins(right, v, true)
	var out []Extremum
	for i := 1; i < n-1; {
		if !(v[i] > v[i-1]) {
			i++
			continue
		}
		// Find the end of a flat run starting at i.
		j := i
		for j+1 < n && v[j+1] == v[i] {
			j++
		}
		if j+1 >= n || !(v[j+1] < v[i]) {
			i = j + 1
			continue
		}
		prom := v[i] - math.Max(left[i], right[j])
		if prom >= thr {
			mid := (i + j) / 2
			e := (s.Energy(i) + s.Energy(j)) / 2
			if i == j {
				e = parabolaVertex(s.Energy(i-1), s.Energy(i), s.Energy(i+1), y[i-1], y[i], y[i+1])
			}
			out = append(out, Extremum{Index: mid, Energy: e, Value: y[mid], Prominence: prom, Minimum: min})
		}
		i = j + 1
	}
	return out
}

// baseMins sets dst[i] to the lowest of v over the channels from i back to
// (not including) the nearest channel before i whose value is strictly
// higher than v[i], or to the start; with reverse, looking forward instead.
func baseMins(dst, v []float64, reverse bool) {
	n := len(v)
	type entry struct {
		val, low float64 // value at the channel; lowest value it covers
	}
	stack := make([]entry, 0, 64)
	for k := 0; k < n; k++ {
		i := k
		if reverse {
			i = n - 1 - k
		}
		low := v[i]
		for len(stack) > 0 && stack[len(stack)-1].val <= v[i] {
			low = math.Min(low, stack[len(stack)-1].low)
			stack = stack[:len(stack)-1]
		}
		stack = append(stack, entry{v[i], low})
		dst[i] = low
	}
}

// parabolaVertex returns the abscissa of the vertex of the parabola through
// (x0, y0), (x1, y1), (x2, y2), with y1 a strict local extremum, clamped to
// [x0, x2] for safety.
func parabolaVertex(x0, x1, x2, y0, y1, y2 float64) float64 {
	a, b := x1-x0, x1-x2
	num := a*a*(y1-y2) - b*b*(y1-y0)
	den := a*(y1-y2) - b*(y1-y0)
	if den == 0 {
		return x1
	}
	x := x1 - num/(2*den)
	return math.Max(x0, math.Min(x2, x))
}
