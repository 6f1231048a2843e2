package fit

import (
	"errors"
	"math"

	"statemix/nnls"
)

// worker holds everything one goroutine needs to fit spectra with a Model.
type worker struct {
	m    *Model
	lin  *linear
	cols [][]float64 // current columns: k references then the basis
	own  [][]float64 // k buffers for references sampled off the scan grid
	y    []float64
	yy   float64
	by   []float64

	// The same for the shift search's smoothed problem (searchSpace).
	scols [][]float64
	sown  [][]float64
	sy    []float64
	syy   float64
	sby   []float64
}

func (m *Model) newWorker() *worker {
	k, q := len(m.refs), len(m.basis)
	w := &worker{m: m, lin: newLinear(k, q), cols: make([][]float64, k+q), own: make([][]float64, k), by: make([]float64, q)}
	for i := range w.own {
		w.own[i] = make([]float64, m.n)
	}
	copy(w.cols[k:], m.basis)
	if m.bound > 0 {
		ns := m.search.n
		w.scols, w.sown, w.sy, w.sby = make([][]float64, k+q), make([][]float64, k), make([]float64, ns), make([]float64, q)
		for i := range w.sown {
			w.sown[i] = make([]float64, ns)
		}
		copy(w.scols[k:], m.search.basis)
	}
	return w
}

// solution is the outcome of the nonlinear search for one spectrum.
type solution struct {
	x      []float64 // k coefficients then q background terms
	shifts []float64 // k shifts, eV
	rss    float64
}

// setData makes y the data of the following solves.
func (w *worker) setData(y []float64) {
	w.y = y
	w.yy = dot(y, y)
	for a, b := range w.m.basis {
		w.by[a] = dot(b, y)
	}
	if w.m.bound > 0 {
		w.m.search.data(w.sy, y)
		w.syy = dot(w.sy, w.sy)
		for a, b := range w.m.search.basis {
			w.sby[a] = dot(b, w.sy)
		}
	}
}

// solveCols solves the linear problem for the current columns.
func (w *worker) solveCols() (float64, error) {
	return w.lin.solve(w.cols, w.y, w.yy, w.m.basisGram, w.by)
}

// solveSearch solves the search's linear problem for its current columns.
func (w *worker) solveSearch() (float64, error) {
	return w.lin.solve(w.scols, w.sy, w.syy, w.m.search.basisGram, w.sby)
}

// sampleOwn samples reference i shifted by d into its own buffer and uses it.
func (w *worker) sampleOwn(i int, d float64) {
	w.m.curves[i].SampleShifted(w.own[i], w.m.start, w.m.step, d)
	w.cols[i] = w.own[i]
}

// searchOwn is sampleOwn for the search's problem.
func (w *worker) searchOwn(i int, d float64) {
	w.m.searchRef(w.sown[i], i, d)
	w.scols[i] = w.sown[i]
}

// evalCommon returns the search's residual sum of squares with every
// reference shifted by d (sampled off-grid).
func (w *worker) evalCommon(d float64) float64 {
	for i := range w.sown {
		w.searchOwn(i, d)
	}
	rss, err := w.solveSearch()
	if err != nil {
		return math.Inf(1)
	}
	return rss
}

// search finds the shifts and coefficients for the data set by setData.
// ShiftNone: one linear solve. Otherwise the shifts are searched in the
// smoothed problem of searchSpace and the coefficients then solved at them
// with the references as recorded. ShiftCommon: every shift of the scan
// grid (at most 0.05 eV apart) is tried, then the best is refined by
// Brent's method within one grid step on either side. ShiftEach: from the
// best common shift, coordinate sweeps: each reference's shift in turn is
// scanned with the others fixed, then refined by Brent's method, until no
// shift moves by more than 1e-3 eV (at most 20 sweeps).
func (w *worker) search() (solution, error) {
	m := w.m
	k := len(m.refs)
	nsh := len(m.shifts)
	shifts := make([]float64, k)
	if m.bound > 0 {
		best, bestJ := math.Inf(1), -1
		var firstErr error
		for j := 0; j < nsh; j++ {
			for i := 0; i < k; i++ {
				w.scols[i] = m.search.tables[i][j]
			}
			rss, err := w.solveSearch()
			if err != nil {
				if firstErr == nil {
					firstErr = err
				}
				continue
			}
			if rss < best {
				best, bestJ = rss, j
			}
		}
		if bestJ < 0 {
			return solution{}, w.wrapErr(w.scols, firstErr)
		}
		d := m.shifts[bestJ]
		h := m.shifts[1] - m.shifts[0]
		a, b := math.Max(d-h, -m.bound), math.Min(d+h, m.bound)
		xd, fd := brentMin(w.evalCommon, a, b, 1e-4, 60)
		if fd < best {
			d, best = xd, fd
		}
		for i := range shifts {
			shifts[i] = d
		}
		if m.opts.Shift == ShiftEach && k > 1 {
			w.sweep(shifts, best)
		}
	}
	// Final solve at the chosen shifts, references as recorded.
	for i := 0; i < k; i++ {
		w.sampleOwn(i, shifts[i])
	}
	rss, err := w.solveCols()
	if err != nil {
		return solution{}, w.wrapErr(w.cols, err)
	}
	x := append([]float64(nil), w.lin.x...)
	return solution{x: x, shifts: shifts, rss: rss}, nil
}

// sweep refines per-reference shifts by coordinate sweeps from shifts
// (overwritten) whose search residual sum of squares is cur, and returns
// the new one.
func (w *worker) sweep(shifts []float64, cur float64) float64 {
	m := w.m
	k := len(m.refs)
	h := m.shifts[1] - m.shifts[0]
	for i := 0; i < k; i++ {
		w.searchOwn(i, shifts[i])
	}
	for iter := 0; iter < 20; iter++ {
		moved := 0.0
		for i := 0; i < k; i++ {
			bestJ, best := -1, cur
			// The first sweep scans the whole range; later sweeps, once the
			// other shifts have settled, scan 0.2 eV either side.
			jlo, jhi := 0, len(m.shifts)-1
			if iter > 0 {
				j0 := int(math.Round((shifts[i] + m.bound) / h))
				jlo, jhi = max(0, j0-4), min(len(m.shifts)-1, j0+4)
			}
			for j := jlo; j <= jhi; j++ {
				w.scols[i] = m.search.tables[i][j]
				rss, err := w.solveSearch()
				if err == nil && rss < best*(1-1e-12) {
					best, bestJ = rss, j
				}
			}
			centre := shifts[i]
			if bestJ >= 0 {
				centre = m.shifts[bestJ]
			}
			f := func(d float64) float64 {
				w.searchOwn(i, d)
				rss, err := w.solveSearch()
				if err != nil {
					return math.Inf(1)
				}
				return rss
			}
			a, b := math.Max(centre-h, -m.bound), math.Min(centre+h, m.bound)
			xd, fd := brentMin(f, a, b, 1e-4, 60)
			nd := shifts[i]
			switch {
			case fd < best && fd < cur:
				nd, cur = xd, fd
			case bestJ >= 0 && best < cur:
				nd, cur = m.shifts[bestJ], best
			}
			moved = math.Max(moved, math.Abs(nd-shifts[i]))
			shifts[i] = nd
			w.searchOwn(i, nd)
		}
		if moved <= 1e-3 {
			break
		}
	}
	return cur
}

func (w *worker) wrapErr(cols [][]float64, err error) error {
	m := w.m
	var re *nnls.RankError
	if errors.As(err, &re) && len(re.Columns) >= 2 {
		a, b := re.Columns[0], re.Columns[1]
		return m.collinearError(cols, a, b, re.Cond, 0)
	}
	if err == errSingular || err == nil || re != nil {
		cond, a, b, corr := condition(append([][]float64(nil), cols...))
		return m.collinearError(cols, a, b, cond, corr)
	}
	return err
}

// brentMin minimises f on [a, b] to within tol by Brent's method (golden
// section with parabolic interpolation; R. P. Brent, Algorithms for
// Minimization without Derivatives, 1973, ch. 5) and returns the abscissa
// and value of the best point found.
func brentMin(f func(float64) float64, a, b, tol float64, maxIter int) (float64, float64) {
	const cgold = 0.3819660112501051
	if b-a <= 0 {
		return a, f(a)
	}
	x := a + cgold*(b-a)
	w, v := x, x
	fx := f(x)
	fw, fv := fx, fx
	var d, e float64
	for it := 0; it < maxIter; it++ {
		mid := 0.5 * (a + b)
		tol1 := 1e-10*math.Abs(x) + tol/3
		tol2 := 2 * tol1
		if math.Abs(x-mid) <= tol2-0.5*(b-a) {
			break
		}
		golden := true
		if math.Abs(e) > tol1 {
			r := (x - w) * (fx - fv)
			q := (x - v) * (fx - fw)
			p := (x-v)*q - (x-w)*r
			q = 2 * (q - r)
			if q > 0 {
				p = -p
			}
			q = math.Abs(q)
			etemp := e
			e = d
			if !(math.Abs(p) >= math.Abs(0.5*q*etemp) || p <= q*(a-x) || p >= q*(b-x)) {
				d = p / q
				u := x + d
				if u-a < tol2 || b-u < tol2 {
					d = math.Copysign(tol1, mid-x)
				}
				golden = false
			}
		}
		if golden {
			if x >= mid {
				e = a - x
			} else {
				e = b - x
			}
			d = cgold * e
		}
		var u float64
		if math.Abs(d) >= tol1 {
			u = x + d
		} else {
			u = x + math.Copysign(tol1, d)
		}
		fu := f(u)
		if fu <= fx {
			if u >= x {
				a = x
			} else {
				b = x
			}
			v, fv = w, fw
			w, fw = x, fx
			x, fx = u, fu
		} else {
			if u < x {
				a = u
			} else {
				b = u
			}
			if fu <= fw || w == x {
				v, fv = w, fw
				w, fw = u, fu
			} else if fu <= fv || v == x || v == w {
				v, fv = u, fu
			}
		}
	}
	return x, fx
}
