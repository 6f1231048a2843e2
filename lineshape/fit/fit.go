package fit

import (
	"context"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"statemix/lineshape"
)

// Component is one reference's share of the fit. The JSON names are those
// of the statemix.fit/v1 schema.
type Component struct {
	Ref     string `json:"ref"`
	Name    string `json:"name"`
	Element string `json:"element"`
	State   string `json:"state"`
	// Coefficient multiplies the reference (as prepared: at its recorded
	// intensity unless normalised) in the model.
	Coefficient   float64 `json:"coefficient"`
	CoefficientSD float64 `json:"coefficient_sd"`
	// Fraction is Coefficient / sum of all coefficients.
	Fraction   float64 `json:"fraction"`
	FractionSD float64 `json:"fraction_sd"`
	// FractionCI95 is the 95 % interval; for a component at zero it is
	// [0, one-sided 95 % upper limit].
	FractionCI95 [2]float64 `json:"fraction_ci95"`
	Shift        float64    `json:"shift_ev"`
	ShiftSD      float64    `json:"shift_sd_ev"`
	// AtBound is true when the coefficient is at its bound, zero.
	AtBound bool `json:"at_bound"`
	// ShiftAtBound is true when the shift is at +/-MaxShift.
	ShiftAtBound bool `json:"shift_at_bound,omitempty"`
}

// Quality summarises how well the model describes the data.
type Quality struct {
	Points int `json:"points"`
	// DOF is Points minus the number of fitted parameters (nonzero
	// coefficients, background terms and fitted shifts).
	DOF int `json:"dof"`
	// Chi2Reduced is (RSS / DOF) / NoiseSD^2.
	Chi2Reduced float64 `json:"chi2_reduced"`
	// RFactor is sum (y - model)^2 / sum y^2 over the window.
	RFactor     float64 `json:"r_factor"`
	ResidualRMS float64 `json:"residual_rms"`
	// NoiseSD is the noise estimated from the second differences of the
	// residual (see the package documentation).
	NoiseSD float64 `json:"noise_sd"`
	// CorrelationFactor is 1 + 2 sum rho_k of the residual
	// autocorrelation, so that Points / CorrelationFactor is the effective
	// number of independent channels.
	CorrelationFactor float64 `json:"correlation_factor"`
	// CorrelationLags is the number of lags summed in CorrelationFactor.
	CorrelationLags int `json:"correlation_lags"`
}

// Curves are the data and the fitted model on the fit grid, for plotting.
type Curves struct {
	Energy     []float64   // eV
	Data       []float64   // the unknown, in the fit's mode
	Total      []float64   // the model
	Background []float64   // the polynomial background
	Residual   []float64   // Data - Total
	Components [][]float64 // coefficient x shifted reference, in component order
}

// Samples holds the bootstrap replicates, one row per successful sample.
type Samples struct {
	Coefficients [][]float64 // [sample][component]
	Fractions    [][]float64 // [sample][component]
	Shifts       [][]float64 // [sample][component], eV
	Failed       int         // samples whose refit failed
	// Method is "block-bootstrap" or "poisson".
	Method      string
	BlockLength int // channels, for the block bootstrap
}

// Result is the outcome of Fit.
type Result struct {
	Window     [2]float64
	Mode       lineshape.Mode
	Modulation float64 // eV, 0 if not used or not known
	Options    Options // resolved
	Components []Component
	// Background holds the coefficients of the Legendre polynomials
	// P_0..P_deg of t = 2(E-lo)/(hi-lo) - 1 over the window.
	Background []float64
	Quality    Quality
	Warnings   []string
	Curves     Curves
	// Covariance is the covariance of Params (coefficients of the nonzero
	// components, background terms, fitted shifts), scaled by the residual
	// variance and the correlation factor.
	Covariance *mat.SymDense
	// Params names the rows of Covariance: "c:<label>", "b:<degree>",
	// "d:common" or "d:<label>".
	Params []string
	// Samples holds the bootstrap replicates (nil for Covariance).
	Samples *Samples
	// Uncertainty is the method the reported SDs and intervals come from.
	Uncertainty Uncertainty

	rho []float64 // residual autocorrelations summed in the correlation factor
}

// Fit fits unknown, which must cover the model's window, with the model's
// references and computes the uncertainties with the method of the
// options. It is safe to call Fit concurrently on one Model.
func (m *Model) Fit(ctx context.Context, unknown *lineshape.Spectrum) (*Result, error) {
	y, err := m.values(unknown)
	if err != nil {
		return nil, err
	}
	w := m.newWorker()
	w.setData(y)
	sol, err := w.search()
	if err != nil {
		return nil, err
	}
	res, err := m.result(w, y, sol)
	if err != nil {
		return nil, err
	}
	if err := m.covariance(w, res, sol); err != nil {
		return nil, err
	}
	if m.opts.Uncertainty == Bootstrap {
		if err := m.bootstrap(ctx, res, unknown); err != nil {
			return nil, err
		}
	}
	sanitize(res)
	return res, nil
}

// values returns the unknown converted to the model's mode on its grid.
func (m *Model) values(unknown *lineshape.Spectrum) ([]float64, error) {
	if unknown == nil {
		panic("fit: Fit with a nil unknown")
	}
	label := unknown.Meta.Source
	if label == "" {
		label = m.unknownLabel
	}
	if err := unknown.Validate(); err != nil {
		return nil, inputErr(label, "%v", err)
	}
	if allZero(unknown.Y) {
		return nil, inputErr(label, "the spectrum is zero in every channel")
	}
	if m.mode == lineshape.Direct && unknown.Mode == lineshape.Derivative {
		return nil, inputErr(label, "derivative spectrum given to a model prepared for direct spectra")
	}
	s := unknown
	k := m.lockIn
	if k == 0 {
		k = m.modulation
	}
	if m.mode == lineshape.Derivative && s.Mode == lineshape.Direct && k == 0 {
		return nil, inputErr(label, "direct spectrum given to a model prepared for derivative spectra of unknown modulation")
	}
	if m.mode == lineshape.Derivative && s.Mode == lineshape.Direct {
		if !s.Axis.Uniform() {
			n := s.Len()
			r, err := s.Resample(s.Axis.Lo(), (s.Axis.Hi()-s.Axis.Lo())/float64(n-1), n)
			if err != nil {
				return nil, inputErr(label, "resampling the non-uniform energy axis: %v", err)
			}
			s = r
		}
		d, err := s.LockIn(k)
		if err != nil {
			return nil, inputErr(label, "lock-in emulation with %s eV modulation: %v", plain(k, 3), err)
		}
		s = d
	}
	lo, hi := m.window[0], m.window[1]
	tol := 1e-6 * m.step
	if s.Axis.Lo() > lo+tol || s.Axis.Hi() < hi-tol {
		return nil, inputErr(label, "spectrum covers %s-%s eV, shorter than the fit window %s-%s eV", plain(s.Axis.Lo(), 5), plain(s.Axis.Hi(), 5), plain(lo, 5), plain(hi, 5))
	}
	y := make([]float64, m.n)
	if s.Axis.Uniform() && math.Abs(s.Axis.Step-m.step) <= 1e-9*m.step {
		off := (m.start - s.Axis.Start) / m.step
		i0 := int(math.Round(off))
		if math.Abs(off-float64(i0)) < 1e-6 && i0 >= 0 && i0+m.n <= s.Len() {
			copy(y, s.Y[i0:i0+m.n])
			return y, nil
		}
	}
	s.Curve().SampleShifted(y, m.start, m.step, 0)
	return y, nil
}

// result builds the Result (without uncertainties) from a solution.
func (m *Model) result(w *worker, y []float64, sol solution) (*Result, error) {
	k, q := len(m.refs), len(m.basis)
	n := m.n
	res := &Result{Window: m.window, Mode: m.mode, Modulation: m.modulation, Options: m.opts, Uncertainty: m.opts.Uncertainty}
	res.Warnings = append(res.Warnings, m.warnings...)
	cv := Curves{Energy: append([]float64(nil), m.energy...), Data: append([]float64(nil), y...),
		Total: make([]float64, n), Background: make([]float64, n), Residual: make([]float64, n), Components: make([][]float64, k)}
	sum := 0.0
	for i := 0; i < k; i++ {
		sum += sol.x[i]
	}
	if !(sum > 0) {
		return nil, inputErr(m.unknownLabel, "no reference describes the spectrum: every coefficient is zero at the best shift (wrong references, element or energy range?)")
	}
	res.Components = make([]Component, k)
	for i, r := range m.refs {
		c := sol.x[i]
		comp := make([]float64, n)
		m.curves[i].SampleShifted(comp, m.start, m.step, sol.shifts[i])
		for j := range comp {
			comp[j] *= c
			cv.Total[j] += comp[j]
		}
		cv.Components[i] = comp
		res.Components[i] = Component{Ref: r.ID, Name: r.Name, Element: r.Element, State: r.State,
			Coefficient: c, Fraction: c / sum, Shift: sol.shifts[i], AtBound: c <= 0}
		if m.opts.Shift != ShiftNone && math.Abs(sol.shifts[i]) >= m.bound-0.01 && c > 0 {
			res.Components[i].ShiftAtBound = true
		}
	}
	res.Background = append([]float64(nil), sol.x[k:k+q]...)
	for a := 0; a < q; a++ {
		for j := 0; j < n; j++ {
			cv.Background[j] += sol.x[k+a] * m.basis[a][j]
		}
	}
	rss := 0.0
	for j := 0; j < n; j++ {
		cv.Total[j] += cv.Background[j]
		cv.Residual[j] = y[j] - cv.Total[j]
		rss += cv.Residual[j] * cv.Residual[j]
	}
	res.Curves = cv

	// Quality.
	active := 0
	for _, c := range res.Components {
		if !c.AtBound {
			active++
		}
	}
	np := active + q + m.shiftParams(res.Components)
	qu := Quality{Points: n, DOF: n - np}
	qu.ResidualRMS = math.Sqrt(rss / float64(n))
	qu.RFactor = rss / dot(y, y)
	qu.NoiseSD = highPassNoise(cv.Residual)
	if qu.DOF > 0 && qu.NoiseSD > 0 {
		qu.Chi2Reduced = rss / float64(qu.DOF) / (qu.NoiseSD * qu.NoiseSD)
	}
	qu.CorrelationFactor, qu.CorrelationLags, res.rho = correlationFactor(cv.Residual, np)
	res.Quality = qu
	if qu.DOF <= 0 {
		return nil, inputErr(m.unknownLabel, "%d channels for %d parameters: no degrees of freedom left", n, np)
	}

	// Warnings.
	for _, c := range res.Components {
		if c.ShiftAtBound {
			res.Warnings = append(res.Warnings, fmt.Sprintf("shift of %s is at its bound (%+.3g eV of %s eV allowed): widen the maximum shift or check the energy scale", label(c), c.Shift, plain(m.bound, 3)))
			if m.opts.Shift == ShiftCommon {
				break
			}
		}
	}
	if m.opts.Shift == ShiftEach {
		res.Warnings = append(res.Warnings, m.alikeAtShifts(sol.shifts)...)
	}
	if lo, hi, ratio, thr := structure(cv.Energy, cv.Residual, qu.CorrelationFactor); ratio > thr {
		res.Warnings = append(res.Warnings, fmt.Sprintf("structure left in the residual: its variance in %.5g-%.5g eV is %.1f times the median over the window (reduced chi-square %s): the references may not span the unknown", lo, hi, ratio, plain(qu.Chi2Reduced, 3)))
	}
	return res, nil
}

// alikeAtShifts returns the near-collinearity warnings for pairs of
// references that correlate above nearCollinearCorr at the fitted shifts
// (each reference shifted by its own) but did not at zero shift, where
// Prepare looked.
func (m *Model) alikeAtShifts(shifts []float64) []string {
	moved := false
	for _, d := range shifts {
		moved = moved || d != 0
	}
	if !moved {
		return nil
	}
	at0 := map[[2]int]bool{}
	for _, p := range correlatedPairs(m.zero, m.basis, nearCollinearCorr) {
		at0[[2]int{p.a, p.b}] = true
	}
	cols := make([][]float64, len(m.refs))
	for i, c := range m.curves {
		cols[i] = make([]float64, m.n)
		c.SampleShifted(cols[i], m.start, m.step, shifts[i])
	}
	var out []string
	for _, p := range correlatedPairs(cols, m.basis, nearCollinearCorr) {
		if !at0[[2]int{p.a, p.b}] {
			out = append(out, m.alikeWarning(p, " at their fitted shifts"))
		}
	}
	return out
}

func label(c Component) string {
	switch {
	case c.Name != "":
		return c.Name
	case c.Ref != "":
		return c.Ref
	}
	return c.State
}

// shiftParams returns the number of fitted shift parameters.
func (m *Model) shiftParams(comps []Component) int {
	if m.bound == 0 {
		return 0
	}
	if m.opts.Shift == ShiftCommon {
		return 1
	}
	n := 0
	for _, c := range comps {
		if !c.AtBound {
			n++
		}
	}
	return n
}

// structure splits the window into 8 segments (fewer for short windows, at
// least 10 channels each) and returns the segment with the largest residual
// variance, its ratio to the median segment variance, and the threshold
// above which that ratio reports structure. Noise that is stationary, even
// if correlated by smoothing, gives similar variances; a state the
// references miss leaves its residual where its peaks are.
//
// With nu = (n / segments) / f effective channels per segment (f the
// correlation factor), a segment variance is about sigma^2 chi2_nu / nu.
// The threshold is 1.2 times the ratio of the chi2_nu quantile at
// 1 - 0.01/segments (the largest of the segments, 1 % false alarms) to its
// median, and at least 4.
func structure(e, r []float64, f float64) (lo, hi, ratio, thr float64) {
	n := len(r)
	segs := min(8, n/10)
	if segs < 3 {
		return 0, 0, 0, math.Inf(1)
	}
	v := make([]float64, segs)
	best := 0
	for s := 0; s < segs; s++ {
		a, b := s*n/segs, (s+1)*n/segs
		for _, x := range r[a:b] {
			v[s] += x * x
		}
		v[s] /= float64(b - a)
		if v[s] > v[best] {
			best = s
		}
	}
	sorted := append([]float64(nil), v...)
	sort.Float64s(sorted)
	med := sorted[segs/2]
	if segs%2 == 0 {
		med = (sorted[segs/2-1] + sorted[segs/2]) / 2
	}
	if !(med > 0) {
		return 0, 0, 0, math.Inf(1)
	}
	nu := math.Max(1, float64(n)/float64(segs)/math.Max(f, 1))
	cs := distuv.ChiSquared{K: nu}
	thr = math.Max(4, 1.2*cs.Quantile(1-0.01/float64(segs))/cs.Quantile(0.5))
	return e[best*n/segs], e[(best+1)*n/segs-1], v[best] / med, thr
}

// highPassNoise estimates the noise standard deviation from second
// differences: var(r_{i+1} - 2 r_i + r_{i-1}) = 6 sigma^2 for white noise.
func highPassNoise(r []float64) float64 {
	if len(r) < 3 {
		return 0
	}
	s := 0.0
	for i := 1; i+1 < len(r); i++ {
		d := r[i+1] - 2*r[i] + r[i-1]
		s += d * d
	}
	return math.Sqrt(s / (6 * float64(len(r)-2)))
}

// correlationFactor returns 1 + 2 sum_k rho_k over the lags k = 1, 2, ...
// while rho_k stays above 2/sqrt(n) (the 95 % band of a white residual),
// at most n/4 lags, and the number of lags summed. It is at least 1.
//
// The residuals of a least-squares fit with p parameters smooth across the
// window are (I - H) times the noise, H the hat matrix, whose elements near
// the diagonal are about p/n; so each short-lag autocorrelation of the
// residual is biased by about -p/n, and p/n is added back.
func correlationFactor(r []float64, p int) (float64, int, []float64) {
	n := len(r)
	mean := 0.0
	for _, v := range r {
		mean += v
	}
	mean /= float64(n)
	c0 := 0.0
	for _, v := range r {
		c0 += (v - mean) * (v - mean)
	}
	if c0 == 0 {
		return 1, 0, nil
	}
	thr := 1.5 / math.Sqrt(float64(n))
	bias := float64(p) / float64(n)
	f, lags := 1.0, 0
	var rhos []float64
	for k := 1; k <= n/4; k++ {
		ck := 0.0
		for i := 0; i+k < n; i++ {
			ck += (r[i] - mean) * (r[i+k] - mean)
		}
		rho := ck/c0 + bias
		if rho < thr {
			break
		}
		f += 2 * rho
		lags = k
		rhos = append(rhos, rho)
	}
	return f, lags, rhos
}

// sanitize replaces values JSON cannot carry (NaN, Inf) by 0.
func sanitize(res *Result) {
	fix := func(v *float64) {
		if math.IsNaN(*v) || math.IsInf(*v, 0) {
			*v = 0
		}
	}
	for i := range res.Components {
		c := &res.Components[i]
		for _, v := range []*float64{&c.Coefficient, &c.CoefficientSD, &c.Fraction, &c.FractionSD, &c.FractionCI95[0], &c.FractionCI95[1], &c.Shift, &c.ShiftSD} {
			fix(v)
		}
	}
	q := &res.Quality
	for _, v := range []*float64{&q.Chi2Reduced, &q.RFactor, &q.ResidualRMS, &q.NoiseSD, &q.CorrelationFactor} {
		fix(v)
	}
}

// CoefficientCovariance returns the k x k covariance of the coefficients of
// all components in component order (rows and columns of components at
// their bound are zero), taken from Covariance, or nil if it is not known.
func (r *Result) CoefficientCovariance() *mat.SymDense {
	if r.Covariance == nil {
		return nil
	}
	k := len(r.Components)
	out := mat.NewSymDense(k, nil)
	var idx []int // component of each "c:" parameter, in order
	for i, c := range r.Components {
		if !c.AtBound {
			idx = append(idx, i)
		}
	}
	for a, i := range idx {
		for b, j := range idx {
			if b >= a {
				out.SetSym(i, j, r.Covariance.At(a, b))
			}
		}
	}
	return out
}
