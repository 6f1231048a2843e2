package series

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/nnls"
)

// MapOptions tunes Map. The zero value is ready to use.
type MapOptions struct {
	// Fit holds the model options shared with fit.Prepare: Window,
	// MaxShift (default 3 eV), Background (default degree 1), Normalize,
	// Modulation and Element. Shift may be fit.ShiftCommon (the default)
	// or fit.ShiftNone; fit.ShiftEach is refused. The uncertainty and
	// bootstrap fields are ignored.
	Fit fit.Options
	// ShiftStep is the spacing of the shift grid in eV. If ShiftStep is 0,
	// it defaults to 0.1 eV (41 shifts for +/-2 eV).
	ShiftStep float64
	// Workers is the number of goroutines. If Workers is 0, it defaults to
	// runtime.GOMAXPROCS(0). Results do not depend on it.
	Workers int
	// TilePixels is the number of pixels read and fitted at a time by one
	// worker. If TilePixels is 0, it defaults to 4096, reduced so that
	// all workers' tiles together hold at most 128 MiB. Results do not
	// depend on it.
	TilePixels int
	// Progress, if not nil, is called after each tile with the pixels
	// done and the total. It is never called concurrently.
	Progress func(done, total int)

	fullScan bool // tests: solve every shift, no bound
}

// MapComponent names one reference of a map.
type MapComponent struct {
	Ref     string `json:"ref"`
	Name    string `json:"name"`
	Element string `json:"element"`
	State   string `json:"state"`
	// MeanFraction is the mean fraction over the pixels with a finite one.
	MeanFraction float64 `json:"mean_fraction"`
}

// MapResult holds the maps, each Height*Width values in row-major order.
type MapResult struct {
	Width, Height int
	Components    []MapComponent
	// Fractions[i][p] is the fraction of component i in pixel p, NaN
	// where every coefficient is zero.
	Fractions [][]float64
	// Coefficients[i][p] is the fitted coefficient of component i.
	Coefficients [][]float64
	// Shift is the refined common shift in eV (0 everywhere for
	// fit.ShiftNone).
	Shift []float64
	// Chi2 is the reduced chi-square (RSS/DOF)/NoiseSD^2, the noise from
	// the residual's second differences as in package fit.
	Chi2 []float64
	// Window is the fit window in eV; Mode the fit's mode.
	Window [2]float64
	Mode   lineshape.Mode
	// Shifts is the shift grid in eV.
	Shifts []float64
	// Failed counts pixels whose solve did not converge or whose values
	// were not finite; their maps hold NaN.
	Failed int
	// Seconds is the wall time of the fitting.
	Seconds  float64
	Warnings []string
}

// Map fits every pixel of cube with refs and returns fraction, shift and
// reduced chi-square maps; see the package documentation for the method.
// Bad input is reported as a *lineshape.InputError (or a
// *fit.CollinearError for references that cannot be told apart). If ctx is
// cancelled, Map stops after the tiles in progress and returns ctx.Err().
func Map(ctx context.Context, cube Cube, refs []fit.Reference, opts MapOptions) (*MapResult, error) {
	start := time.Now()
	pl, err := newPlan(cube, refs, opts)
	if err != nil {
		return nil, err
	}
	h, w, c := cube.Dims()
	np := h * w
	res := &MapResult{Width: w, Height: h, Window: pl.window, Mode: pl.mode, Shifts: pl.shifts, Warnings: pl.warnings}
	k := len(refs)
	res.Fractions = make([][]float64, k)
	res.Coefficients = make([][]float64, k)
	for i := range k {
		res.Fractions[i] = make([]float64, np)
		res.Coefficients[i] = make([]float64, np)
	}
	res.Shift = make([]float64, np)
	res.Chi2 = make([]float64, np)

	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	tile := opts.TilePixels
	if tile <= 0 {
		tile = 4096
		const budget = 128 << 20
		if lim := budget / (8 * c * workers); tile > lim {
			tile = max(lim, 1)
		}
	}
	ntiles := (np + tile - 1) / tile
	workers = max(1, min(workers, ntiles))

	var (
		next   atomic.Int64
		failed atomic.Int64
		mu     sync.Mutex
		done   int
		first  error
		wg     sync.WaitGroup
	)
	stop := make(chan struct{})
	var stopOnce sync.Once
	fail := func(err error) {
		mu.Lock()
		if first == nil {
			first = err
		}
		mu.Unlock()
		stopOnce.Do(func() { close(stop) })
	}
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			px := pl.newPixelWorker()
			buf := make([]float64, tile*c)
			for {
				select {
				case <-stop:
					return
				case <-ctx.Done():
					fail(ctx.Err())
					return
				default:
				}
				t := int(next.Add(1) - 1)
				if t >= ntiles {
					return
				}
				p0 := t * tile
				n := min(tile, np-p0)
				if err := cube.ReadPixels(buf, p0, n); err != nil {
					fail(err)
					return
				}
				for q := range n {
					if !px.fit(buf[q*c:(q+1)*c], res, p0+q) {
						failed.Add(1)
					}
				}
				if opts.Progress != nil {
					mu.Lock()
					done += n
					opts.Progress(done, np)
					mu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	if first != nil {
		return nil, first
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	res.Failed = int(failed.Load())
	if res.Failed > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d of %d pixels could not be fitted (values not finite or no convergence): their maps hold NaN", res.Failed, np))
	}
	res.Components = make([]MapComponent, k)
	for i, r := range refs {
		var s float64
		var cnt int
		for _, f := range res.Fractions[i] {
			if !math.IsNaN(f) {
				s += f
				cnt++
			}
		}
		mean := math.NaN()
		if cnt > 0 {
			mean = s / float64(cnt)
		}
		res.Components[i] = MapComponent{Ref: r.ID, Name: r.Name, Element: r.Element, State: r.State, MeanFraction: mean}
	}
	res.Seconds = time.Since(start).Seconds()
	return res, nil
}

// plan is the read-only part of a map fit shared by the workers.
type plan struct {
	k, q     int        // references, background columns
	n        int        // channels in the window
	i0       int        // first cube channel of the window
	window   [2]float64 // eV
	mode     lineshape.Mode
	shifts   []float64   // grid, eV
	h        float64     // grid step, eV (0 for a single shift)
	tables   [][]float64 // [ref*S+shift] shifted reference as the shift search sees it, length sn
	curves   []*lineshape.Curve
	step     float64     // channel step, eV
	basis    [][]float64 // background columns, length n
	model    *fit.Model  // for the shift search's smoothing of the data
	sr, sn   int         // first window channel and length of the search's problem
	sbasis   [][]float64 // background columns on the search's channels
	free     []bool      // k+q: background columns are free
	bgram    []float64   // q*q: dot products of the background columns
	ginv     [][]float64 // per shift: (A_s^T A_s)^-1 row-major, nil if not positive definite
	bank     *nnls.Bank
	warnings []string
	fullScan bool
}

// newPlan prepares the model with fit.Prepare (mode, modulation, window,
// validation and collinearity checks) and builds the shifted-reference
// bank.
func newPlan(cube Cube, refs []fit.Reference, opts MapOptions) (*plan, error) {
	h, w, c := cube.Dims()
	if h < 1 || w < 1 {
		return nil, lineshape.Errorf(cube.Name(), 0, "spectrum image of %d x %d pixels holds no spectrum", h, w)
	}
	ax := cube.Axis()
	if !ax.Uniform() || ax.Len() != c {
		panic("series: Cube.Axis must be uniform with one energy per channel")
	}
	fo := opts.Fit
	if fo.Shift == fit.ShiftEach {
		return nil, lineshape.Errorf(cube.Name(), 0, "maps fit one common shift per pixel: shift mode each is not available for maps (use common or none)")
	}
	fo.Uncertainty = fit.Covariance
	// The unknown only fixes grid and mode for Prepare; its values are
	// checked for being finite and not all zero, nothing else.
	ones := make([]float64, c)
	for i := range ones {
		ones[i] = 1
	}
	probe := &lineshape.Spectrum{Axis: ax, Y: ones, Mode: cube.Mode()}
	probe.Meta.Source = cube.Name()
	probe.Meta.ModulationEV = CubeModulation(cube)
	m, err := fit.Prepare(probe, refs, fo)
	if err != nil {
		return nil, err
	}
	if m.Mode() != cube.Mode() {
		return nil, lineshape.Errorf(cube.Name(), 0, "the cube holds %v spectra but the references need a %v fit: convert the references (statemix convert --to %v) so that no pixel needs lock-in emulation", cube.Mode(), m.Mode(), cube.Mode())
	}
	ro := m.Options()
	pl := &plan{k: len(refs), n: m.Points(), window: m.Window(), mode: m.Mode(), warnings: m.Warnings(), fullScan: opts.fullScan, model: m}
	pl.sr, pl.sn = m.SearchChannels()
	pl.i0 = int(math.Round((pl.window[0] - ax.Start) / ax.Step))
	if pl.i0 < 0 || pl.i0+pl.n > c {
		panic("series: fit window outside the cube")
	}
	step := opts.ShiftStep
	if step <= 0 {
		step = 0.1
	}
	bound := ro.MaxShift
	if ro.Shift == fit.ShiftNone {
		bound = 0
	}
	if bound == 0 {
		pl.shifts = []float64{0}
	} else {
		half := int(math.Ceil(bound/step - 1e-9))
		pl.h = bound / float64(half)
		pl.shifts = make([]float64, 2*half+1)
		for j := range pl.shifts {
			pl.shifts[j] = -bound + float64(j)*pl.h
		}
		pl.shifts[half] = 0
	}
	// References converted as fit.Prepare converts them; the modes agree
	// with the cube, so only direct references of a derivative fit need
	// lock-in emulation. The grid scan works in fit's smoothed search
	// problem (fit.Model.SearchReference), the solve at the refined shift
	// with these curves, as fit.Model.Fit does.
	S := len(pl.shifts)
	pl.tables = make([][]float64, pl.k*S)
	for i, r := range refs {
		s := r.Spectrum
		if pl.mode == lineshape.Derivative && s.Mode == lineshape.Direct {
			if !s.Axis.Uniform() {
				nn := s.Len()
				if s, err = s.Resample(s.Axis.Lo(), (s.Axis.Hi()-s.Axis.Lo())/float64(nn-1), nn); err != nil {
					return nil, lineshape.Errorf(r.Label(), 0, "resampling the non-uniform energy axis: %v", err)
				}
			}
			if s, err = s.LockIn(m.Modulation()); err != nil {
				return nil, lineshape.Errorf(r.Label(), 0, "lock-in emulation with %.3g eV modulation: %v", m.Modulation(), err)
			}
		}
		if ro.Normalize != lineshape.NormNone {
			if s, _, err = s.Normalize(ro.Normalize); err != nil {
				return nil, lineshape.Errorf(r.Label(), 0, "normalising: %v", err)
			}
		}
		pl.curves = append(pl.curves, s.Curve())
		for j, d := range pl.shifts {
			t := make([]float64, pl.sn)
			m.SearchReference(t, i, d)
			pl.tables[i*S+j] = t
		}
	}
	pl.basis = legendre(pl.n, ro.BackgroundDegree())
	for _, b := range pl.basis {
		pl.sbasis = append(pl.sbasis, b[pl.sr:pl.sr+pl.sn:pl.sr+pl.sn])
	}
	pl.q = len(pl.basis)
	pl.bgram = make([]float64, pl.q*pl.q)
	for a := range pl.q {
		for b := range pl.q {
			pl.bgram[a*pl.q+b] = dot(pl.basis[a], pl.basis[b])
		}
	}
	ncol := pl.k + pl.q
	as := make([]*mat.Dense, S)
	for j := range pl.shifts {
		a := mat.NewDense(pl.sn, ncol, nil)
		for i := range pl.k {
			a.SetCol(i, pl.tables[i*S+j])
		}
		for b := range pl.q {
			a.SetCol(pl.k+b, pl.sbasis[b])
		}
		as[j] = a
	}
	pl.ginv = make([][]float64, S)
	for j := range pl.shifts {
		pl.ginv[j] = inverseGram(as[j])
	}
	free := make([]bool, ncol)
	for b := range pl.q {
		free[pl.k+b] = true
	}
	pl.free, pl.step = free, ax.Step
	pl.bank, err = nnls.NewBank(as, free, nnls.Settings{})
	if err != nil {
		var re *nnls.RankError
		if errors.As(err, &re) {
			return nil, lineshape.Errorf(cube.Name(), 0, "the references are collinear at some shift of the grid (%v): drop one or reduce the maximum shift", err)
		}
		return nil, err
	}
	return pl, nil
}

// inverseGram returns (A^T A)^-1 row-major, or nil if A^T A is not
// numerically positive definite.
func inverseGram(a *mat.Dense) []float64 {
	_, n := a.Dims()
	var g mat.SymDense
	g.SymOuterK(1, a.T())
	var ch mat.Cholesky
	if !ch.Factorize(&g) {
		return nil
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil
	}
	out := make([]float64, n*n)
	for i := range n {
		for j := range n {
			out[i*n+j] = inv.At(i, j)
		}
	}
	return out
}

// basisGram returns the dot product of background columns a and b.
func (pl *plan) basisGram(a, b int) float64 { return pl.bgram[a*pl.q+b] }

// legendre returns the Legendre polynomials P_0..P_deg of
// t = 2 i/(n-1) - 1 on n channels (none for deg < 0), the background
// basis of package fit.
func legendre(n, deg int) [][]float64 {
	if deg < 0 {
		return nil
	}
	b := make([][]float64, deg+1)
	for j := range b {
		b[j] = make([]float64, n)
	}
	for i := range n {
		t := 2*float64(i)/float64(n-1) - 1
		b[0][i] = 1
		if deg >= 1 {
			b[1][i] = t
		}
		for j := 1; j < deg; j++ {
			b[j+1][i] = (float64(2*j+1)*t*b[j][i] - float64(j)*b[j-1][i]) / float64(j+1)
		}
	}
	return b
}

// pixelWorker holds one goroutine's workspace. It allocates nothing per
// pixel.
type pixelWorker struct {
	pl     *plan
	bank   *nnls.Bank
	atb    []float64 // k+q
	bgAtb  []float64 // q: search background columns . search data
	sb     []float64 // sn: the pixel as the shift search sees it
	refs   []float64 // k*S: A_k^T b of every reference at every shift
	rss    []float64 // S: NNLS RSS, NaN where not solved or failed
	lb     []float64 // S: unconstrained RSS, a lower bound on rss
	solved []bool    // S
	best   []float64 // k+q: coefficients at the best shift
	res    nnls.Result
	r      []float64 // n: residual

	// Solve at the refined shift.
	cols  [][]float64 // k+q columns, length n: refs at the shift, then the basis
	gram  []float64   // (k+q)^2 Gram matrix, then its Cholesky factor
	c     []float64   // k+q: L^-1 A^T b
	small *mat.Dense  // (k+q)^2: L^T, the equivalent small problem
	sv    nnls.Solver
	sres  nnls.Result
}

func (pl *plan) newPixelWorker() *pixelWorker {
	S := len(pl.shifts)
	p := pl.k + pl.q
	w := &pixelWorker{
		pl: pl, bank: pl.bank.Clone(),
		atb: make([]float64, p), bgAtb: make([]float64, pl.q),
		refs: make([]float64, pl.k*S), rss: make([]float64, S),
		lb: make([]float64, S), solved: make([]bool, S),
		best: make([]float64, p), r: make([]float64, pl.n), sb: make([]float64, pl.sn),
		cols: make([][]float64, p), gram: make([]float64, p*p), c: make([]float64, p),
		small: mat.NewDense(p, p, nil),
	}
	for i := range pl.k {
		w.cols[i] = make([]float64, pl.n)
	}
	copy(w.cols[pl.k:], pl.basis)
	return w
}

// assemble sets w.atb to A_s^T b from the per-shift reference projections
// and the background ones.
func (w *pixelWorker) assemble(s int) {
	S, k := len(w.pl.shifts), w.pl.k
	for i := range k {
		w.atb[i] = w.refs[i*S+s]
	}
	copy(w.atb[k:], w.bgAtb)
}

// quadForm returns v^T G v for the row-major square matrix g.
func quadForm(g, v []float64) float64 {
	n := len(v)
	var q float64
	for i := range n {
		q += v[i] * dot(g[i*n:(i+1)*n], v)
	}
	return q
}

// solveAt solves the pixel's NNLS problem with the references sampled at
// shift d (eV) from their curves, as package fit does: the Gram matrix of
// the columns is factored by Cholesky, L L^T, and the equivalent small
// problem min ||L^T x - L^-1 A^T b|| goes to nnls.Solver. It leaves the
// solution in w.best and reports false if the Gram matrix is not positive
// definite or the solver fails.
func (w *pixelWorker) solveAt(b []float64, d float64) bool {
	pl := w.pl
	k, p := pl.k, pl.k+pl.q
	for i := range k {
		pl.curves[i].SampleShifted(w.cols[i], pl.window[0], pl.step, d)
		w.atb[i] = dot(w.cols[i], b)
	}
	for j := range pl.q {
		w.atb[k+j] = dot(pl.basis[j], b)
	}
	g := w.gram
	for i := range p {
		for j := 0; j <= i; j++ {
			if i >= k && j >= k {
				g[i*p+j] = pl.basisGram(i-k, j-k)
			} else {
				g[i*p+j] = dot(w.cols[i], w.cols[j])
			}
		}
	}
	// In-place lower Cholesky factor of g.
	for j := range p {
		v := g[j*p+j]
		for l := range j {
			v -= g[j*p+l] * g[j*p+l]
		}
		if !(v > 0) {
			return false
		}
		ljj := math.Sqrt(v)
		g[j*p+j] = ljj
		for i := j + 1; i < p; i++ {
			u := g[i*p+j]
			for l := range j {
				u -= g[i*p+l] * g[j*p+l]
			}
			g[i*p+j] = u / ljj
		}
	}
	// c = L^-1 A^T b by forward substitution.
	for i := range p {
		v := w.atb[i]
		for l := range i {
			v -= g[i*p+l] * w.c[l]
		}
		w.c[i] = v / g[i*p+i]
	}
	raw := w.small.RawMatrix()
	for i := range p {
		for j := range p {
			v := 0.0
			if j >= i {
				v = g[j*p+i] // (L^T)_ij = L_ji
			}
			raw.Data[i*raw.Stride+j] = v
		}
	}
	if err := w.sv.Solve(&w.sres, w.small, w.c, pl.free); err != nil {
		var ce *nnls.ConvergenceError
		if !errors.As(err, &ce) {
			return false
		}
	}
	copy(w.best, w.sres.X)
	return true
}

// fit fits one pixel spectrum (all cube channels) into pixel p of res. It
// reports false (and writes NaN) when the pixel cannot be fitted.
func (w *pixelWorker) fit(spec []float64, res *MapResult, p int) bool {
	pl := w.pl
	b := spec[pl.i0 : pl.i0+pl.n]
	for _, v := range b {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			w.writeNaN(res, p)
			return false
		}
	}
	S := len(pl.shifts)
	k, q := pl.k, pl.q
	sb := w.sb
	pl.model.SearchData(sb, b)
	btb := dot(sb, sb)
	for j := range q {
		w.bgAtb[j] = dot(pl.sbasis[j], sb)
	}
	for i := range w.refs {
		w.refs[i] = dot(pl.tables[i], sb)
	}
	// Branch and bound over the grid: the unconstrained least-squares RSS
	// of a shift is a lower bound on its NNLS RSS, so shifts whose bound
	// exceeds the best NNLS RSS found (by more than rounding) cannot win
	// and are not solved. The result is the full scan's.
	bestK, bestRSS := -1, math.Inf(1)
	first, firstLB := -1, math.Inf(1)
	for s := range S {
		w.solved[s] = false
		w.rss[s] = math.NaN()
		w.lb[s] = math.Inf(-1)
		if g := pl.ginv[s]; g != nil {
			w.assemble(s)
			w.lb[s] = btb - quadForm(g, w.atb)
		}
		if w.lb[s] < firstLB {
			first, firstLB = s, w.lb[s]
		}
	}
	solve := func(s int) {
		w.solved[s] = true
		w.assemble(s)
		err := w.bank.SolveNormal(&w.res, s, w.atb, btb)
		if err != nil {
			var ce *nnls.ConvergenceError
			if !errors.As(err, &ce) {
				return
			}
		}
		r := w.res.ResidualNorm * w.res.ResidualNorm
		w.rss[s] = r
		if r < bestRSS {
			bestK, bestRSS = s, r
			copy(w.best, w.res.X)
		}
	}
	if first >= 0 {
		solve(first)
	}
	margin := 1e-9 * btb
	if pl.fullScan {
		margin = math.Inf(1)
	}
	for s := range S {
		if !w.solved[s] && !(w.lb[s] > bestRSS+margin) {
			solve(s)
		}
	}
	if bestK >= 0 {
		for _, s := range []int{bestK - 1, bestK + 1} {
			if s >= 0 && s < S && !w.solved[s] {
				solve(s)
			}
		}
	}
	if bestK < 0 {
		w.writeNaN(res, p)
		return false
	}
	// Parabola through the best grid point and its neighbours.
	shift := pl.shifts[bestK]
	if bestK > 0 && bestK < S-1 {
		r0, r1, r2 := w.rss[bestK-1], w.rss[bestK], w.rss[bestK+1]
		if den := r0 - 2*r1 + r2; den > 0 && !math.IsNaN(r0+r2) {
			d := 0.5 * (r0 - r2) / den
			d = math.Max(-0.5, math.Min(0.5, d))
			shift += d * pl.h
		}
	}
	// Coefficients at the refined shift with the references as recorded.
	if !w.solveAt(b, shift) {
		w.writeNaN(res, p)
		return false
	}
	cols := func(i int) []float64 { return w.cols[i] }
	// Residual, for the RSS and the noise.
	r := w.r
	copy(r, b)
	nz := 0
	var sum float64
	for i := range k {
		c := w.best[i]
		if c > 0 {
			nz++
			sum += c
			axpy(-c, cols(i), r)
		}
	}
	for j := range q {
		axpy(-w.best[k+j], pl.basis[j], r)
	}
	rss := dot(r, r)
	var d2 float64
	for i := 1; i+1 < len(r); i++ {
		v := r[i+1] - 2*r[i] + r[i-1]
		d2 += v * v
	}
	noise2 := d2 / (6 * float64(len(r)-2))
	dof := pl.n - nz - q
	if S > 1 {
		dof--
	}
	chi2 := math.NaN()
	if dof > 0 && noise2 > 0 {
		chi2 = rss / float64(dof) / noise2
	}
	for i := range k {
		c := w.best[i]
		res.Coefficients[i][p] = c
		if sum > 0 {
			res.Fractions[i][p] = c / sum
		} else {
			res.Fractions[i][p] = math.NaN()
		}
	}
	if sum == 0 {
		shift = math.NaN() // no reference signal: no shift to speak of
	}
	res.Shift[p] = shift
	res.Chi2[p] = chi2
	return true
}

func (w *pixelWorker) writeNaN(res *MapResult, p int) {
	for i := range w.pl.k {
		res.Fractions[i][p] = math.NaN()
		res.Coefficients[i][p] = math.NaN()
	}
	res.Shift[p], res.Chi2[p] = math.NaN(), math.NaN()
}

// dot returns the dot product of a and b[:len(a)] by gonum's assembly
// kernel (floats.Dot), whose summation order depends only on the length,
// so that results are reproducible.
func dot(a, b []float64) float64 { return floats.Dot(a, b[:len(a)]) }

// axpy sets y += alpha x.
func axpy(alpha float64, x, y []float64) {
	y = y[:len(x)]
	for i, v := range x {
		y[i] += alpha * v
	}
}
