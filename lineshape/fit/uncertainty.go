package fit

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"statemix/lineshape"
)

// z975 is the standard normal 97.5 % quantile.
const z975 = 1.959963984540054

// covariance fills Covariance, Params and (for the Covariance method) the
// SDs and intervals of res.
func (m *Model) covariance(w *worker, res *Result, sol solution) error {
	q := len(m.basis)
	n := m.n
	var active []int
	sum := 0.0
	for i, c := range res.Components {
		sum += c.Coefficient
		if !c.AtBound {
			active = append(active, i)
		}
	}
	// Jacobian columns.
	var cols [][]float64
	var names []string
	for _, i := range active {
		cols = append(cols, scaledCopy(res.Curves.Components[i], 1/res.Components[i].Coefficient))
		names = append(names, "c:"+m.refs[i].Label())
	}
	for a := 0; a < q; a++ {
		cols = append(cols, m.basis[a])
		names = append(names, fmt.Sprintf("b:%d", a))
	}
	deriv := func(i int) []float64 {
		d := sol.shifts[i]
		h := m.step / 4
		up, dn := make([]float64, n), make([]float64, n)
		m.curves[i].SampleShifted(up, m.start, m.step, d+h)
		m.curves[i].SampleShifted(dn, m.start, m.step, d-h)
		c := res.Components[i].Coefficient
		for j := range up {
			up[j] = c * (up[j] - dn[j]) / (2 * h)
		}
		return up
	}
	shiftCol := map[int]int{} // component -> column index; -1 key for common
	if m.bound > 0 && len(active) > 0 {
		if m.opts.Shift == ShiftCommon {
			col := make([]float64, n)
			for _, i := range active {
				di := deriv(i)
				for j := range col {
					col[j] += di[j]
				}
			}
			shiftCol[-1] = len(cols)
			cols = append(cols, col)
			names = append(names, "d:common")
		} else {
			for _, i := range active {
				shiftCol[i] = len(cols)
				cols = append(cols, deriv(i))
				names = append(names, "d:"+m.refs[i].Label())
			}
		}
	}
	qu := res.Quality
	s2 := math.Pow(qu.ResidualRMS, 2) * float64(qu.Points) / float64(qu.DOF)
	scale := s2 * qu.CorrelationFactor
	cov, ok := invGram(cols, scale)
	res.Params = names
	if !ok {
		res.Warnings = append(res.Warnings, "the parameter covariance is singular (a shift or coefficient is not determined by the data): uncertainties are not available")
		return nil
	}
	res.Covariance = cov
	if m.opts.Uncertainty != Covariance {
		return nil
	}
	// Intervals use Student's t with the effective degrees of freedom
	// n/f - p: the residual variance and the correlation factor are
	// themselves estimated, from about n/f independent channels.
	nu := math.Max(1, float64(qu.Points)/qu.CorrelationFactor-float64(qu.Points-qu.DOF))
	t975 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(0.975)
	t95 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(0.95)
	// Coefficients and shifts.
	for a, i := range active {
		c := &res.Components[i]
		c.CoefficientSD = math.Sqrt(cov.At(a, a))
		if j, ok := shiftCol[i]; ok {
			c.ShiftSD = math.Sqrt(cov.At(j, j))
		} else if j, ok := shiftCol[-1]; ok {
			c.ShiftSD = math.Sqrt(cov.At(j, j))
		}
	}
	// Components at zero: the SD of their coefficient if it were free,
	// for a one-sided upper limit; and, jointly, the SD of the sum of all
	// of them if they were free, which bounds how much of the signal the
	// active components may lose to them.
	var bound [][]float64
	for i, c := range res.Components {
		if !c.AtBound {
			continue
		}
		col := make([]float64, n)
		m.curves[i].SampleShifted(col, m.start, m.step, sol.shifts[i])
		bound = append(bound, col)
		ext := append([][]float64{col}, cols...)
		cz, ok := invGram(ext, scale)
		cc := &res.Components[i]
		if !ok {
			cc.FractionCI95 = [2]float64{0, 1}
			continue
		}
		sd := math.Sqrt(cz.At(0, 0))
		cc.CoefficientSD = sd
		cc.FractionSD = sd / sum
		cc.FractionCI95 = [2]float64{0, math.Min(1, t95*sd/sum)}
	}
	boundSD, boundOK := 0.0, true // SD of the at-bound fractions' sum
	if nb := len(bound); nb > 0 {
		cz, ok := invGram(append(bound, cols...), scale)
		boundOK = ok
		if ok {
			v := 0.0
			for a := 0; a < nb; a++ {
				for b := 0; b < nb; b++ {
					v += cz.At(a, b)
				}
			}
			boundSD = math.Sqrt(math.Max(v, 0)) / sum
		}
	}
	// Fractions by the delta method: df_i/dc_j = (delta_ij - f_i) / S,
	// over the active components. Components at zero can only take signal
	// from them: if theirs rose from 0 to a share b of the sum, f_i would
	// become f_i (1 - b); so f_i's interval is widened downwards by
	// f_i U_B, U_B = t_0.95 SD_B the one-sided upper limit of b, and its
	// SD by f_i SD_B (in quadrature with the delta-method terms). With one
	// active component this gives [1 - U_B, 1] and SD SD_B.
	grad := make([]float64, len(active))
	for a, i := range active {
		fi := res.Components[i].Fraction
		for b := range active {
			grad[b] = -fi / sum
		}
		grad[a] += 1 / sum
		v := 0.0
		for b := range active {
			for c2 := range active {
				v += grad[b] * cov.At(b, c2) * grad[c2]
			}
		}
		sd := math.Sqrt(math.Max(v, 0))
		lo, hi := fi-t975*sd, fi+t975*sd
		if !boundOK {
			lo = 0
		} else if boundSD > 0 {
			lo = fi - math.Hypot(t975*sd, fi*t95*boundSD)
			sd = math.Hypot(sd, fi*boundSD)
		}
		c := &res.Components[i]
		c.FractionSD = sd
		c.FractionCI95 = [2]float64{math.Max(0, lo), math.Min(1, hi)}
	}
	return nil
}

// invGram returns scale * (J^T J)^-1 for the columns of J.
func invGram(cols [][]float64, scale float64) (*mat.SymDense, bool) {
	p := len(cols)
	g := mat.NewSymDense(p, nil)
	d := make([]float64, p)
	for i := range cols {
		d[i] = 1 / math.Sqrt(dot(cols[i], cols[i]))
		if math.IsInf(d[i], 0) || math.IsNaN(d[i]) {
			return nil, false
		}
	}
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			g.SetSym(i, j, dot(cols[i], cols[j])*d[i]*d[j])
		}
	}
	var chol mat.Cholesky
	if !chol.Factorize(g) {
		return nil, false
	}
	if c := chol.Cond(); c > 1e14 || math.IsNaN(c) {
		return nil, false
	}
	var inv mat.SymDense
	if err := chol.InverseTo(&inv); err != nil {
		return nil, false
	}
	out := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			out.SetSym(i, j, inv.At(i, j)*d[i]*d[j]*scale)
		}
	}
	return out, true
}

func scaledCopy(v []float64, s float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x * s
	}
	return out
}

// blockLength returns the moving-block length in channels for n channels
// whose residual is correlated over lags lags, for a fit of p parameters:
// at least n^(1/3) (the usual rate for variance estimation, Kuensch 1989)
// and 2 lags + 1, so that a block spans the correlation in both directions;
// at most n / (2p), so that the inflation of blockInflation stays below 2.
func blockLength(n, lags, p int) int {
	l := int(math.Ceil(math.Cbrt(float64(n))))
	l = max(l, 2*lags+1)
	return max(1, min(l, n/(2*max(p, 1))))
}

// blockInflation returns the factor by which the centred residuals are
// multiplied before block resampling. The fit removes from the residual
// the components along its p (smooth) Jacobian columns; a sum over a block
// of L channels loses about L p / n of its variance (the hat matrix has
// elements of about p/n near the diagonal), which would make the block
// bootstrap too narrow. sqrt(n / (n - L p)) restores it; for L = 1 it is
// the familiar sqrt(n / (n - p)).
func blockInflation(n, L, p int) float64 {
	return math.Sqrt(float64(n) / float64(n-L*p))
}

// bartlett returns sqrt(f / f_L): f = 1 + 2 sum rho_k is the long-run
// variance factor of the residual, f_L = 1 + 2 sum (1 - k/L) rho_k the part
// of it that resampled blocks of L channels keep (correlation across a
// block join is lost; Kuensch 1989). Multiplying the resampled residuals by
// it gives the block bootstrap the full long-run variance.
func bartlett(rho []float64, L int) float64 {
	f, fl := 1.0, 1.0
	for i, r := range rho {
		k := i + 1
		f += 2 * r
		if k < L {
			fl += 2 * (1 - float64(k)/float64(L)) * r
		}
	}
	return math.Sqrt(f / fl)
}

// bootstrap fills Samples, SDs and percentile intervals of res.
func (m *Model) bootstrap(ctx context.Context, res *Result, u *lineshape.Spectrum) error {
	k := len(m.refs)
	n := m.n
	B := m.opts.Samples
	poisson := false
	if u.Mode == lineshape.Direct && u.Meta.Counts {
		poisson = true
		for _, v := range u.Y {
			if v < 0 {
				poisson = false
				res.Warnings = append(res.Warnings, "the spectrum is marked as counts but has negative values: block bootstrap of residuals used instead of Poisson resampling")
				break
			}
		}
	}
	smp := &Samples{Method: "block-bootstrap"}
	resid := make([]float64, n)
	if poisson {
		smp.Method = "poisson"
	} else {
		mean := 0.0
		for _, r := range res.Curves.Residual {
			mean += r
		}
		mean /= float64(n)
		p := res.Quality.Points - res.Quality.DOF
		smp.BlockLength = blockLength(n, res.Quality.CorrelationLags, p)
		infl := blockInflation(n, smp.BlockLength, p) * bartlett(res.rho, smp.BlockLength)
		for j, r := range res.Curves.Residual {
			resid[j] = (r - mean) * infl
		}
	}
	coef := make([][]float64, B)
	shifts := make([][]float64, B)
	fails := make([]bool, B)
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	workers := min(m.opts.Workers, B)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := m.newWorker()
			ys := make([]float64, n)
			one := func(b int) {
				rng := rand.New(rand.NewPCG(m.opts.Seed, uint64(b)+0x9e3779b97f4a7c15))
				var y []float64
				if poisson {
					c := u.Clone()
					for j, v := range u.Y {
						c.Y[j] = 0
						if v > 0 {
							c.Y[j] = distuv.Poisson{Lambda: v, Src: rng}.Rand()
						}
					}
					yy, err := m.values(c)
					if err != nil {
						fails[b] = true
						return
					}
					y = yy
				} else {
					L := smp.BlockLength
					for j := 0; j < n; {
						s := rng.IntN(n)
						for t := 0; t < L && j < n; t++ {
							ys[j] = res.Curves.Total[j] + resid[(s+t)%n]
							j++
						}
					}
					y = ys
				}
				w.setData(y)
				if s, err := w.search(); err != nil {
					fails[b] = true
				} else {
					coef[b] = s.x[:k:k]
					shifts[b] = s.shifts
				}
			}
			for b := range jobs {
				one(b)
				if m.opts.Progress != nil {
					mu.Lock()
					done++
					m.opts.Progress(done, B)
					mu.Unlock()
				}
			}
		}()
	}
	var cerr error
feed:
	for b := 0; b < B; b++ {
		select {
		case <-ctx.Done():
			cerr = ctx.Err()
			break feed
		case jobs <- b:
		}
	}
	close(jobs)
	wg.Wait()
	if cerr != nil {
		return cerr
	}
	for b := 0; b < B; b++ {
		if fails[b] || coef[b] == nil {
			smp.Failed++
			continue
		}
		s := 0.0
		for _, c := range coef[b] {
			s += c
		}
		if !(s > 0) {
			smp.Failed++
			continue
		}
		f := make([]float64, k)
		for i, c := range coef[b] {
			f[i] = c / s
		}
		smp.Coefficients = append(smp.Coefficients, coef[b])
		smp.Fractions = append(smp.Fractions, f)
		smp.Shifts = append(smp.Shifts, shifts[b])
	}
	res.Samples = smp
	good := len(smp.Fractions)
	if good < 20 {
		return fmt.Errorf("bootstrap: only %d of %d refits succeeded", good, B)
	}
	if smp.Failed > B/20 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("bootstrap: %d of %d refits failed; intervals rest on the others", smp.Failed, B))
	}
	col := make([]float64, good)
	nactive := 0
	for _, c := range res.Components {
		if !c.AtBound {
			nactive++
		}
	}
	for i := range res.Components {
		c := &res.Components[i]
		get := func(rows [][]float64) []float64 {
			for b, r := range rows {
				col[b] = r[i]
			}
			return col
		}
		c.CoefficientSD = sd(get(smp.Coefficients))
		if m.bound > 0 && !c.AtBound {
			c.ShiftSD = sd(get(smp.Shifts))
		}
		fr := get(smp.Fractions)
		c.FractionSD = sd(fr)
		sort.Float64s(fr)
		switch {
		case c.AtBound:
			c.FractionCI95 = [2]float64{0, quantile(fr, 0.95)}
		case nactive == 1 && len(res.Components) > 1:
			// The others are at zero: this one has fraction 1 and the
			// one-sided lower limit that mirrors their upper limits.
			c.FractionCI95 = [2]float64{quantile(fr, 0.05), 1}
		default:
			c.FractionCI95 = [2]float64{quantile(fr, 0.025), quantile(fr, 0.975)}
		}
	}
	res.Uncertainty = Bootstrap
	return nil
}

func sd(v []float64) float64 {
	if len(v) < 2 {
		return 0
	}
	mean := 0.0
	for _, x := range v {
		mean += x
	}
	mean /= float64(len(v))
	s := 0.0
	for _, x := range v {
		s += (x - mean) * (x - mean)
	}
	return math.Sqrt(s / float64(len(v)-1))
}

// quantile returns the p quantile of sorted v: the (B+1)p-th order
// statistic, interpolated (Hyndman & Fan 1996, type 6), the choice of
// Davison & Hinkley (Bootstrap Methods and their Application, 1997,
// sec. 5.2) for percentile intervals from B samples.
func quantile(v []float64, p float64) float64 {
	h := p*float64(len(v)+1) - 1 // 0-based position
	if h <= 0 {
		return v[0]
	}
	i := int(math.Floor(h))
	if i >= len(v)-1 {
		return v[len(v)-1]
	}
	return v[i] + (h-float64(i))*(v[i+1]-v[i])
}
