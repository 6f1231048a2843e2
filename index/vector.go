package index

import (
	"encoding/base64"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"sort"

	"statemix/lineshape"
)

// GridStepEV is the channel width of the similarity grid in eV. Every
// similarity vector lives on the global grid E_k = k*GridStepEV, so vectors of
// different entries line up channel for channel without interpolation.
const GridStepEV = 0.5

// DefaultModulationEV is the peak-to-peak modulation, in eV, with which a
// direct spectrum is turned into a derivative for comparison when neither it
// nor its counterpart says what modulation to emulate.
const DefaultModulationEV = 2.0

// MaxShiftEV is the largest energy shift, in eV, over which the correlation
// is maximised.
const MaxShiftEV = 5.0

// minVectorLen is the fewest grid channels a similarity vector may have
// (10 eV at 0.5 eV); shorter spectra get no vector and are never ranked.
const minVectorLen = 20

// vector is a spectrum prepared for shift-aligned correlation: derivative
// mode, sampled on the global grid from channel K0 (energy K0*GridStepEV),
// mean removed and scaled to unit Euclidean norm.
type vector struct {
	K0 int
	Y  []float32
}

// Hi returns one past the last grid channel.
func (v vector) hi() int { return v.K0 + len(v.Y) }

// errNoVector says a spectrum cannot be turned into a similarity vector.
var errNoVector = errors.New("spectrum too short or flat for a similarity vector")

// gridded samples s on the global grid over the part of the grid inside its
// energy range. Where s is finer than the grid its values are first averaged
// over a window of about one grid step (a boxcar anti-alias filter), so noise
// does not alias into the vector; the values at grid energies are then
// interpolated linearly. It returns the first grid channel and the values.
func gridded(s *lineshape.Spectrum) (int, []float64, error) {
	n := s.Len()
	if n < 2 || s.Axis.Len() != n {
		return 0, nil, errNoVector
	}
	e := s.Axis.Energies()
	y := s.Y
	lo, hi := e[0], e[n-1]
	meanStep := (hi - lo) / float64(n-1)
	if meanStep < GridStepEV*0.75 {
		y = boxcar(e, y, GridStepEV)
	}
	k0 := int(math.Ceil(lo/GridStepEV - 1e-9))
	k1 := int(math.Floor(hi/GridStepEV + 1e-9))
	m := k1 - k0 + 1
	if m < minVectorLen {
		return 0, nil, errNoVector
	}
	out := make([]float64, m)
	j := 0
	for i := range out {
		x := float64(k0+i) * GridStepEV
		for j < n-2 && e[j+1] < x {
			j++
		}
		t := (x - e[j]) / (e[j+1] - e[j])
		if t < 0 {
			t = 0
		} else if t > 1 {
			t = 1
		}
		out[i] = y[j] + t*(y[j+1]-y[j])
	}
	return k0, out, nil
}

// boxcar returns y averaged over the samples within +/- width/2 of each
// energy (e ascending).
func boxcar(e, y []float64, width float64) []float64 {
	n := len(y)
	out := make([]float64, n)
	lo, hi := 0, 0
	sum := 0.0
	for i := range y {
		for hi < n && e[hi] <= e[i]+width/2 {
			sum += y[hi]
			hi++
		}
		for e[lo] < e[i]-width/2 {
			sum -= y[lo]
			lo++
		}
		out[i] = sum / float64(hi-lo)
	}
	return out
}

// normalised returns y with its mean removed and scaled to unit norm, as
// float32. A flat y is an error.
func normalised(y []float64) ([]float32, error) {
	mean := 0.0
	for _, v := range y {
		mean += v
	}
	mean /= float64(len(y))
	ss := 0.0
	for _, v := range y {
		ss += (v - mean) * (v - mean)
	}
	if !(ss > 0) || math.IsInf(ss, 0) {
		return nil, errNoVector
	}
	inv := 1 / math.Sqrt(ss)
	out := make([]float32, len(y))
	for i, v := range y {
		out[i] = float32((v - mean) * inv)
	}
	return out, nil
}

// toDerivative returns s in derivative mode on the global grid: a derivative
// spectrum is gridded as it is; a direct one is gridded and passed through
// lock-in emulation with peak-to-peak modulation k eV (lineshape.LockIn).
func toDerivative(s *lineshape.Spectrum, k float64) (int, []float64, error) {
	k0, y, err := gridded(s)
	if err != nil {
		return 0, nil, err
	}
	if s.Mode == lineshape.Derivative {
		return k0, y, nil
	}
	if !(k > 0) {
		k = DefaultModulationEV
	}
	g, err := lineshape.NewUniform(float64(k0)*GridStepEV, GridStepEV, y, lineshape.Direct)
	if err != nil {
		return 0, nil, err
	}
	d, err := g.LockIn(k)
	if err != nil {
		return 0, nil, fmt.Errorf("lock-in emulation (%.3g eV): %w", k, err)
	}
	return k0, d.Y, nil
}

// newVector prepares s for similarity ranking; modulation is the
// peak-to-peak modulation in eV to emulate if s is direct (0: the one its
// metadata gives, else DefaultModulationEV).
func newVector(s *lineshape.Spectrum, modulation float64) (vector, error) {
	if modulation <= 0 {
		modulation = s.Meta.ModulationEV
	}
	k0, y, err := toDerivative(s, modulation)
	if err != nil {
		return vector{}, err
	}
	v, err := normalised(y)
	if err != nil {
		return vector{}, err
	}
	return vector{K0: k0, Y: v}, nil
}

// encode packs v as base64 of "k0 int32 little endian" followed by the
// float32 values, little endian: 4 bytes a channel, about 1.1 kB for a
// 100 eV window.
func (v vector) encode() string {
	b := make([]byte, 4+4*len(v.Y))
	binary.LittleEndian.PutUint32(b, uint32(int32(v.K0)))
	for i, f := range v.Y {
		binary.LittleEndian.PutUint32(b[4+4*i:], math.Float32bits(f))
	}
	return base64.StdEncoding.EncodeToString(b)
}

// decodeVector reverses encode.
func decodeVector(s string) (vector, error) {
	b, err := base64.StdEncoding.DecodeString(s)
	if err != nil || len(b) < 4 || len(b)%4 != 0 {
		return vector{}, fmt.Errorf("bad similarity vector encoding")
	}
	v := vector{K0: int(int32(binary.LittleEndian.Uint32(b))), Y: make([]float32, (len(b)-4)/4)}
	for i := range v.Y {
		v.Y[i] = math.Float32frombits(binary.LittleEndian.Uint32(b[4+4*i:]))
	}
	return v, nil
}

// probe is the unknown spectrum prepared for correlation against many
// vectors: its grid values with prefix sums of the values and their squares,
// so the Pearson correlation over any overlap costs one dot product.
type probe struct {
	k0  int
	y   []float64
	s1  []float64 // s1[i] = sum of y[:i]
	s2  []float64 // s2[i] = sum of y[:i]^2
	tmp []float64 // per-lag scores, reused
}

func newProbe(v vector) *probe {
	p := &probe{k0: v.K0, y: make([]float64, len(v.Y))}
	for i, f := range v.Y {
		p.y[i] = float64(f)
	}
	p.s1 = make([]float64, len(p.y)+1)
	p.s2 = make([]float64, len(p.y)+1)
	for i, f := range p.y {
		p.s1[i+1] = p.s1[i] + f
		p.s2[i+1] = p.s2[i] + f*f
	}
	return p
}

// match is the result of correlating a probe against one vector.
type match struct {
	Similarity float64 // maximum Pearson correlation over the shifts, refined
	ShiftEV    float64 // shift of the reference that best matches the probe, eV
	Overlap    int     // grid channels in the overlap at the best shift
}

// minOverlap returns the fewest channels two vectors of lengths a and b must
// share: half the shorter, and at least minVectorLen.
func minOverlap(a, b int) int {
	m := min(a, b) / 2
	return max(m, minVectorLen)
}

// correlate returns the maximum over integer lags |L| <= maxLag of the
// Pearson correlation between the probe and the reference r moved by L grid
// channels, computed over the channels they share, refined to a sub-channel
// shift by a parabola through the best lag and its neighbours. ok is false
// when no lag gives enough overlap.
//
// The reference moved by L channels puts its channel k at k+L: a positive
// shift means the probe's features lie at higher energy than the
// reference's.
func (p *probe) correlate(r vector, maxLag int) (m match, ok bool) {
	nl := 2*maxLag + 1
	if cap(p.tmp) < nl {
		p.tmp = make([]float64, nl)
	}
	sc := p.tmp[:nl]
	need := minOverlap(len(p.y), len(r.Y))
	best := -1
	for li := range sc {
		sc[li] = math.NaN()
		L := li - maxLag
		// Probe channel index i corresponds to global channel p.k0+i; the
		// moved reference has its index j at global r.K0+j+L.
		a := max(p.k0, r.K0+L)
		b := min(p.k0+len(p.y), r.K0+len(r.Y)+L)
		n := b - a
		if n < need {
			continue
		}
		pi, ri := a-p.k0, a-r.K0-L
		var sx, sxx, sxy float64
		py := p.y[pi : pi+n]
		ry := r.Y[ri : ri+n]
		for i, f := range ry {
			x := float64(f)
			sx += x
			sxx += x * x
			sxy += x * py[i]
		}
		sy := p.s1[pi+n] - p.s1[pi]
		syy := p.s2[pi+n] - p.s2[pi]
		fn := float64(n)
		vx := sxx - sx*sx/fn
		vy := syy - sy*sy/fn
		if !(vx > 0 && vy > 0) {
			continue
		}
		sc[li] = (sxy - sx*sy/fn) / math.Sqrt(vx*vy)
		if best < 0 || sc[li] > sc[best] {
			best = li
		}
	}
	if best < 0 {
		return match{}, false
	}
	r0 := sc[best]
	lag := float64(best - maxLag)
	sim := r0
	if best > 0 && best < nl-1 && !math.IsNaN(sc[best-1]) && !math.IsNaN(sc[best+1]) {
		rm, rp := sc[best-1], sc[best+1]
		den := rm - 2*r0 + rp
		if den < 0 {
			d := 0.5 * (rm - rp) / den
			d = math.Max(-0.5, math.Min(0.5, d))
			lag += d
			sim = r0 - 0.25*(rm-rp)*d
		}
	}
	sim = math.Max(-1, math.Min(1, sim))
	L := best - maxLag
	ov := min(p.k0+len(p.y), r.K0+len(r.Y)+L) - max(p.k0, r.K0+L)
	return match{Similarity: sim, ShiftEV: lag * GridStepEV, Overlap: ov}, true
}

// mainMinima returns the energies (eV) of up to k of the deepest local minima
// of a gridded derivative vector, deepest first: the negative excursions by
// which derivative Auger peaks are quoted. The vector is smoothed with a
// 5-point (2 eV) moving average first; a minimum must lie below -25 % of the
// largest excursion and at least 3 eV from a deeper one. These are the
// candidate features stored in the index (field feature_ev) and looked up for
// an unknown, computed the same way for both.
func mainMinima(v vector, k int) []float64 {
	n := len(v.Y)
	if n < 5 {
		return nil
	}
	sm := make([]float64, n)
	for i := range sm {
		lo, hi := max(0, i-2), min(n, i+3)
		s := 0.0
		for j := lo; j < hi; j++ {
			s += float64(v.Y[j])
		}
		sm[i] = s / float64(hi-lo)
	}
	big := 0.0
	for _, f := range sm {
		big = math.Max(big, math.Abs(f))
	}
	type cand struct {
		i int
		v float64
	}
	var cs []cand
	for i := 1; i < n-1; i++ {
		if sm[i] <= sm[i-1] && sm[i] < sm[i+1] && sm[i] < -0.25*big {
			cs = append(cs, cand{i, sm[i]})
		}
	}
	sort.Slice(cs, func(a, b int) bool { return cs[a].v < cs[b].v })
	sep := int(math.Round(3 / GridStepEV))
	var out []float64
	var taken []int
	for _, c := range cs {
		far := true
		for _, t := range taken {
			if abs(t-c.i) < sep {
				far = false
				break
			}
		}
		if !far {
			continue
		}
		taken = append(taken, c.i)
		out = append(out, float64(v.K0+c.i)*GridStepEV)
		if len(out) == k {
			break
		}
	}
	return out
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}
