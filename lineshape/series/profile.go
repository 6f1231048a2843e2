package series

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// ProfileOptions tunes Profile. The zero value is ready to use.
type ProfileOptions struct {
	// Fit holds the options of the fit of every step (those of statemix
	// fit). Fit.Uncertainty is overridden by Bootstrap.
	Fit fit.Options
	// Bootstrap selects bootstrap uncertainties (fit.Bootstrap). If
	// Bootstrap is false (the default), steps use fit.Covariance, which
	// is fast enough for hundreds of steps.
	Bootstrap bool
	// SputterRate converts sputter time to depth, in nm per minute. If
	// SputterRate is 0, depths are not given (NaN).
	SputterRate float64
	// Workers bounds the steps fitted at once. If Workers is 0, it
	// defaults to runtime.GOMAXPROCS(0). Results do not depend on it.
	Workers int
	// Progress, if not nil, is called after each step with the steps done
	// and the total. It is never called concurrently.
	Progress func(done, total int)
}

// StepResult is the fit of one step.
type StepResult struct {
	Index        int
	SputterTimeS float64
	// DepthNM is SputterTimeS times the sputter rate, NaN without one.
	DepthNM float64
	Source  string
	Result  *fit.Result
}

// Interface is where a state's fraction crosses 50 % in a depth profile.
type Interface struct {
	// State is the component's state (or label when it has none);
	// Component its index in the fit.
	State     string
	Component int
	// Rising is true where the fraction increases with depth.
	Rising bool
	// PositionS is the sputter time of the 50 % crossing, interpolated
	// linearly between steps; WidthS the distance between the 16 % and
	// 84 % crossings either side of it, NaN if the profile does not reach
	// both levels there.
	PositionS, WidthS float64
	// DepthNM and WidthNM are the same in nm, NaN without a sputter rate.
	DepthNM, WidthNM float64
}

// ProfileResult is the outcome of Profile.
type ProfileResult struct {
	Steps      []StepResult
	Interfaces []Interface
	// Warnings are the model's warnings once and each step's own, prefixed
	// by the step.
	Warnings []string
}

// Profile fits every step with one fit.Model prepared on the first step's
// grid (the same Prepare and Model.Fit as statemix fit) and finds the
// interfaces. Steps are fitted in parallel; each result goes to its own
// slot and bootstrap samples are seeded per step (Fit.Seed + step index),
// so the result does not depend on Workers. A step that does not cover the
// model's window is an error naming it. If ctx is cancelled, Profile
// returns ctx.Err().
func Profile(ctx context.Context, steps []Step, refs []fit.Reference, opts ProfileOptions) (*ProfileResult, error) {
	if len(steps) == 0 {
		panic("series: Profile with no steps")
	}
	fo := opts.Fit
	fo.Uncertainty = fit.Covariance
	if opts.Bootstrap {
		fo.Uncertainty = fit.Bootstrap
	}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, len(steps))
	if fo.Workers == 0 {
		// Parallel over steps; the bootstrap of one step gets the rest.
		fo.Workers = max(1, runtime.GOMAXPROCS(0)/workers)
	}
	m, err := fit.Prepare(steps[0].Spectrum, refs, fo)
	if err != nil {
		return nil, err
	}
	out := &ProfileResult{Steps: make([]StepResult, len(steps)), Warnings: m.Warnings()}
	seen := map[string]bool{}
	for _, w := range out.Warnings {
		seen[w] = true
	}
	models := make([]*fit.Model, len(steps))
	if opts.Bootstrap {
		// The seed is part of the model; a model per step gives each step
		// its own stream.
		for i := range steps {
			o := fo
			o.Seed = fo.Seed + uint64(steps[i].Index)
			if models[i], err = fit.Prepare(steps[0].Spectrum, refs, o); err != nil {
				return nil, err
			}
		}
	} else {
		for i := range models {
			models[i] = m
		}
	}
	var (
		next  atomic.Int64
		mu    sync.Mutex
		done  int
		first error
		wg    sync.WaitGroup
	)
	cctx, cancel := context.WithCancel(ctx)
	defer cancel()
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for cctx.Err() == nil {
				i := int(next.Add(1) - 1)
				if i >= len(steps) {
					return
				}
				st := steps[i]
				res, err := models[i].Fit(cctx, st.Spectrum)
				if err != nil {
					mu.Lock()
					if first == nil {
						first = stepErr(st, err)
					}
					mu.Unlock()
					cancel()
					return
				}
				out.Steps[i] = StepResult{Index: st.Index, SputterTimeS: st.SputterTimeS, DepthNM: depth(st.SputterTimeS, opts.SputterRate), Source: st.Source, Result: res}
				if opts.Progress != nil {
					mu.Lock()
					done++
					opts.Progress(done, len(steps))
					mu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if first != nil {
		return nil, first
	}
	for _, s := range out.Steps {
		for _, w := range s.Result.Warnings {
			if !seen[w] {
				out.Warnings = append(out.Warnings, fmt.Sprintf("step %d (%s): %s", s.Index, s.Source, w))
			}
		}
	}
	times := make([]float64, len(steps))
	for i, s := range out.Steps {
		times[i] = s.SputterTimeS
	}
	fr := make([]float64, len(steps))
	for c, comp := range out.Steps[0].Result.Components {
		for i, s := range out.Steps {
			fr[i] = s.Result.Components[c].Fraction
		}
		state := comp.State
		if state == "" {
			state = refs[c].Label()
		}
		for _, x := range Crossings(times, fr) {
			x.State, x.Component = state, c
			x.DepthNM, x.WidthNM = depth(x.PositionS, opts.SputterRate), depth(x.WidthS, opts.SputterRate)
			out.Interfaces = append(out.Interfaces, x)
		}
	}
	return out, nil
}

// stepErr names the step in err, keeping a *lineshape.InputError one.
func stepErr(st Step, err error) error {
	if ie, ok := err.(*lineshape.InputError); ok {
		c := *ie
		c.Err = fmt.Errorf("step %d (%s): %w", st.Index, st.Source, ie.Err)
		return &c
	}
	return fmt.Errorf("step %d (%s): %w", st.Index, st.Source, err)
}

func depth(t, rate float64) float64 {
	if rate <= 0 {
		return math.NaN()
	}
	return t * rate / 60
}

// Hysteresis of the interface detection: a state is "high" above 0.6 and
// "low" below 0.4; an interface is a passage from one to the other.
const (
	levelHigh = 0.6
	levelLow  = 0.4
)

// Crossings finds the interfaces of one state's fraction f against time t
// (strictly increasing): every passage of f from below 0.4 to above 0.6 or
// back (the hysteresis keeps noise near 50 % from making several). Within
// a passage, the position is the 50 % crossing nearest the passage's
// middle, interpolated linearly; the width is the distance between the
// 16 % and 84 % crossings nearest to it on either side (for an erf-shaped
// interface of standard deviation s that is 2 s, the common 16-84 %
// measure of depth resolution), NaN where the profile does not reach a
// level. State and depths are left empty.
func Crossings(t, f []float64) []Interface {
	if len(t) != len(f) {
		panic("series: Crossings with mismatched lengths")
	}
	var out []Interface
	state, last := 0, -1 // -1 low, +1 high; index of the last sample in state
	for i, v := range f {
		s := 0
		switch {
		case v > levelHigh:
			s = 1
		case v < levelLow:
			s = -1
		}
		if s == 0 || math.IsNaN(v) {
			continue
		}
		if state != 0 && s != state {
			rising := s > 0
			pos := crossingNear(t, f, last, i, 0.5, rising)
			x := Interface{Rising: rising, PositionS: pos, WidthS: math.NaN()}
			lo, hi := levelAt(t, f, pos, 0.16, rising), levelAt(t, f, pos, 0.84, rising)
			if !math.IsNaN(lo) && !math.IsNaN(hi) {
				x.WidthS = math.Abs(hi - lo)
			}
			out = append(out, x)
		}
		state, last = s, i
	}
	return out
}

// crossingNear returns the time of the crossing of level between samples
// a and b (a < b) in the direction rising nearest the middle of the
// passage.
func crossingNear(t, f []float64, a, b int, level float64, rising bool) float64 {
	mid := (t[a] + t[b]) / 2
	best, bestD := math.NaN(), math.Inf(1)
	for i := a; i < b; i++ {
		if x, ok := cross(t, f, i, level, rising); ok {
			if d := math.Abs(x - mid); d < bestD {
				best, bestD = x, d
			}
		}
	}
	return best
}

// cross reports the crossing of level between samples i and i+1 in the
// direction rising.
func cross(t, f []float64, i int, level float64, rising bool) (float64, bool) {
	y0, y1 := f[i]-level, f[i+1]-level
	if !rising {
		y0, y1 = -y0, -y1
	}
	if !(y0 <= 0 && y1 > 0) {
		return 0, false
	}
	return t[i] + (t[i+1]-t[i])*(-y0)/(y1-y0), true
}

// levelAt returns the time of the crossing of level in the direction
// rising nearest to pos on the side of pos where the fraction is on that
// side of 50 %: before pos for the lower level of a rising fraction, after
// it for the upper one, and mirrored for a falling one. It returns NaN if
// there is none.
func levelAt(t, f []float64, pos, level float64, rising bool) float64 {
	before := (level < 0.5) == rising
	best, bestD := math.NaN(), math.Inf(1)
	for i := 0; i+1 < len(t); i++ {
		x, ok := cross(t, f, i, level, rising)
		if !ok {
			continue
		}
		if before && x > pos || !before && x < pos {
			continue
		}
		if d := math.Abs(x - pos); d < bestD {
			best, bestD = x, d
		}
	}
	return best
}
