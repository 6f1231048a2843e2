package index

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// SuggestOptions configure Suggest. The zero value proposes up to 4
// references.
type SuggestOptions struct {
	// K is the largest number of references in the chosen subset; 0 means 4.
	K int
	// Element, when not empty, restricts the candidates to references of
	// that element.
	Element string
	// Candidates is the size of the candidate pool the subsets are drawn
	// from; 0 means 2K, at least 6.
	Candidates int
	// Beam is how many of the best subsets of each size are extended by
	// one more candidate; 0 means 3.
	Beam int
	// Fit are the options of the trial fits (window, shift mode, maximum
	// shift, background, modulation, normalisation). Their uncertainty
	// method is replaced by fit.Covariance: trials need only the residual.
	Fit fit.Options
}

// Trial is one subset of references fitted while choosing.
type Trial struct {
	Names  []string `json:"names"`
	Refs   []string `json:"refs"`
	RSS    float64  `json:"rss"`
	Points int      `json:"points"`
	Params int      `json:"params"`
	// BIC is the Bayesian information criterion of the fit, +Inf when the
	// fit failed or a component came out at zero (the subset without it
	// then explains the data equally well with fewer parameters).
	BIC  float64 `json:"bic"`
	Note string  `json:"note,omitempty"`
}

// Suggestion is what Suggest chose and how.
type Suggestion struct {
	// Refs are the chosen references, at their recorded intensity.
	Refs []fit.Reference
	// Candidates are the similarity hits the subsets were drawn from.
	Candidates []Hit
	// Trials lists every subset fitted, in the order tried.
	Trials []Trial
	// Best indexes Trials: the winner.
	Best int
	// EffectivePoints is the number of independent channels the criterion
	// used: the fit's points divided by the residual correlation factor
	// of the fullest model that could be fitted.
	EffectivePoints float64
	// Reason says in a sentence or two why the winner won.
	Reason string
	// Window is the fit window every trial used, eV.
	Window [2]float64
}

// Suggest proposes references for fitting unknown from the library of
// store: candidates are the references most similar to it (see Like;
// restricted to an element if given, topped up with other references of
// that element from the index), and subsets of up to K of them are fitted
// with package fit over one common window (the one asked for, else the
// unknown's overlap with the most similar candidate less the maximum shift
// at each end; candidates not covering it are dropped), starting from single references and growing the Beam
// best subsets of each size by one candidate at a time. The winner is the
// subset with the lowest Bayesian information criterion
//
//	BIC = n_eff ln(RSS/n) + p ln(n_eff)
//
// (Schwarz, Ann. Stat. 6 (1978) 461) with n fitted channels, p fitted
// parameters (nonzero coefficients, background terms and shifts) and
// n_eff = n / F, F the residual autocorrelation factor of the fullest
// model (fit.Quality.CorrelationFactor), so that smoothed, correlated
// derivative channels are not counted as independent evidence. BIC rather
// than AIC: its penalty ln(n_eff) per parameter (about 4 to 6 here, against
// AIC's 2) is what keeps a decoy reference, which always lowers RSS a
// little, out of the model, and BIC is consistent: with more data it
// picks the true subset with probability tending to one. A subset in
// which a component comes out at zero coefficient is never chosen.
func (x *Index) Suggest(ctx context.Context, store *library.Store, unknown *lineshape.Spectrum, o SuggestOptions) (*Suggestion, error) {
	if o.K <= 0 {
		o.K = 4
	}
	if o.Candidates <= 0 {
		o.Candidates = max(2*o.K, 6)
	}
	if o.Beam <= 0 {
		o.Beam = 3
	}
	fo := o.Fit
	fo.Uncertainty = fit.Covariance
	fo.Progress = nil
	if fo.Element == "" {
		fo.Element = o.Element
	}
	maxShift := fo.MaxShift
	if maxShift <= 0 {
		maxShift = 3
	}
	hits, err := x.Like(unknown, LikeOptions{Query: "+kind:reference", Element: o.Element, Top: o.Candidates,
		MaxShiftEV: math.Max(MaxShiftEV, maxShift), ModulationEV: fo.Modulation})
	if err != nil {
		return nil, err
	}
	if o.Element != "" && len(hits) < o.Candidates {
		more, _, err := x.Search(fmt.Sprintf("+kind:reference +element:%q", o.Element), o.Candidates)
		if err == nil {
			have := map[string]bool{}
			for _, h := range hits {
				have[h.Ref] = true
			}
			for _, h := range more {
				if !have[h.Ref] && len(hits) < o.Candidates {
					hits = append(hits, h)
				}
			}
		}
	}
	sug := &Suggestion{Candidates: hits, Best: -1}
	var pool []fit.Reference
	for _, h := range hits {
		e, err := library.ReadEntryFile(entryPath(store.Dir(), library.KindReference, h.Ref))
		if err != nil {
			continue // removed or corrupt since it was indexed
		}
		pool = append(pool, fit.Reference{ID: e.ID, Name: e.Name, Element: e.Element, State: e.State, Spectrum: e.Spectrum})
	}
	if len(pool) == 0 {
		return sug, nil
	}
	// Every trial must fit the same channels, or their criteria are not
	// comparable: fix the window (the one asked for, else the unknown's
	// overlap with the most similar candidate, trimmed by the maximum shift)
	// and keep only candidates that cover it.
	win := fo.Window
	if win == [2]float64{} {
		lo := math.Max(unknown.Axis.Lo(), pool[0].Spectrum.Axis.Lo()) + maxShift
		hi := math.Min(unknown.Axis.Hi(), pool[0].Spectrum.Axis.Hi()) - maxShift
		if !(hi > lo) {
			return sug, nil
		}
		win = [2]float64{lo, hi}
	}
	var covering []fit.Reference
	for _, r := range pool {
		if r.Spectrum.Axis.Lo() <= win[0]-maxShift+1e-9 && r.Spectrum.Axis.Hi() >= win[1]+maxShift-1e-9 {
			covering = append(covering, r)
		}
	}
	pool = covering
	fo.Window = win
	sug.Window = win
	if len(pool) == 0 {
		return sug, nil
	}

	type result struct {
		set []int
		res *fit.Result
		err error
	}
	cache := map[string]*result{}
	key := func(set []int) string {
		s := append([]int(nil), set...)
		sort.Ints(s)
		return fmt.Sprint(s)
	}
	run := func(set []int) (*result, error) {
		k := key(set)
		if r, ok := cache[k]; ok {
			return r, nil
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		refs := make([]fit.Reference, len(set))
		for i, j := range set {
			refs[i] = pool[j]
		}
		r := &result{set: append([]int(nil), set...)}
		m, err := fit.Prepare(unknown, refs, fo)
		if err == nil {
			r.res, err = m.Fit(ctx, unknown)
		}
		r.err = err
		cache[k] = r
		return r, nil
	}

	// The residual correlation of the fullest fittable model sets n_eff.
	factor := 1.0
	for n := min(len(pool), o.K+2); n >= 1; n-- {
		set := make([]int, n)
		for i := range set {
			set[i] = i
		}
		r, err := run(set)
		if err != nil {
			return nil, err
		}
		if r.err == nil {
			factor = math.Max(1, r.res.Quality.CorrelationFactor)
			break
		}
	}

	var trials []Trial
	record := func(r *result) int {
		t := Trial{BIC: math.Inf(1)}
		for _, j := range r.set {
			t.Names = append(t.Names, pool[j].Label())
			t.Refs = append(t.Refs, pool[j].ID)
		}
		switch {
		case r.err != nil:
			t.Note = "fit failed: " + r.err.Error()
			var ce *fit.CollinearError
			if errors.As(r.err, &ce) {
				t.Note = "references too alike to separate"
			}
		default:
			q := r.res.Quality
			t.Points = q.Points
			t.Params = q.Points - q.DOF
			t.RSS = q.ResidualRMS * q.ResidualRMS * float64(q.Points)
			neff := float64(q.Points) / factor
			if t.RSS > 0 && neff > 1 {
				t.BIC = neff*math.Log(t.RSS/float64(q.Points)) + float64(t.Params)*math.Log(neff)
			}
			var zero []string
			for _, c := range r.res.Components {
				if c.AtBound {
					zero = append(zero, c.Name)
				}
			}
			if len(zero) > 0 {
				t.Note = "at zero: " + strings.Join(zero, ", ")
				t.BIC = math.Inf(1)
			}
		}
		trials = append(trials, t)
		return len(trials) - 1
	}
	seen := map[string]int{}
	try := func(set []int) (int, error) {
		k := key(set)
		if i, ok := seen[k]; ok {
			return i, nil
		}
		r, err := run(set)
		if err != nil {
			return 0, err
		}
		i := record(r)
		seen[k] = i
		return i, nil
	}

	type scored struct {
		set []int
		bic float64
	}
	var level []scored
	for j := range pool {
		i, err := try([]int{j})
		if err != nil {
			return nil, err
		}
		level = append(level, scored{[]int{j}, trials[i].BIC})
	}
	best := math.Inf(1)
	for size := 1; ; size++ {
		sort.SliceStable(level, func(a, b int) bool { return level[a].bic < level[b].bic })
		if len(level) > o.Beam {
			level = level[:o.Beam]
		}
		improved := false
		for _, s := range level {
			if s.bic < best {
				best, improved = s.bic, true
			}
		}
		if size >= o.K || (!improved && size > 1) || len(level) == 0 {
			break
		}
		var next []scored
		for _, s := range level {
			if math.IsInf(s.bic, 1) {
				continue
			}
			for j := range pool {
				if containsInt(s.set, j) {
					continue
				}
				set := append(append([]int(nil), s.set...), j)
				if _, dup := seen[key(set)]; dup {
					continue
				}
				i, err := try(set)
				if err != nil {
					return nil, err
				}
				next = append(next, scored{set, trials[i].BIC})
			}
		}
		level = next
	}
	sug.Trials = trials
	sug.EffectivePoints = 0
	for i, t := range trials {
		if math.IsInf(t.BIC, 1) {
			continue
		}
		if sug.Best < 0 || t.BIC < trials[sug.Best].BIC {
			sug.Best = i
		}
		if sug.EffectivePoints == 0 {
			sug.EffectivePoints = float64(t.Points) / factor
		}
	}
	if sug.Best < 0 {
		return sug, nil
	}
	w := trials[sug.Best]
	byID := map[string]fit.Reference{}
	for _, r := range pool {
		byID[r.ID] = r
	}
	for _, id := range w.Refs {
		sug.Refs = append(sug.Refs, byID[id])
	}
	sug.Reason = reason(trials, sug.Best)
	return sug, nil
}

// reason explains the winner against the nearest bigger and smaller
// subsets.
func reason(trials []Trial, best int) string {
	w := trials[best]
	msg := fmt.Sprintf("{%s} has the lowest BIC (%.1f, %d parameters)", strings.Join(w.Names, ", "), w.BIC, w.Params)
	// The best superset by one: what adding a reference would have done.
	sup, sub := -1, -1
	for i, t := range trials {
		if math.IsInf(t.BIC, 1) && t.Note == "" {
			continue
		}
		if len(t.Refs) == len(w.Refs)+1 && isSubset(w.Refs, t.Refs) && (sup < 0 || t.BIC < trials[sup].BIC || math.IsInf(trials[sup].BIC, 1)) {
			sup = i
		}
		if len(t.Refs) == len(w.Refs)-1 && isSubset(t.Refs, w.Refs) && (sub < 0 || t.BIC < trials[sub].BIC) {
			sub = i
		}
	}
	if sup >= 0 {
		t := trials[sup]
		added := strings.Join(diff(t.Names, w.Names), ", ")
		switch {
		case strings.HasPrefix(t.Note, "at zero"):
			msg += fmt.Sprintf("; adding %s gives it zero coefficient", added)
		case math.IsInf(t.BIC, 1):
			msg += fmt.Sprintf("; adding %s: %s", added, t.Note)
		default:
			msg += fmt.Sprintf("; adding %s lowers RSS by %.1f %% but raises BIC by %.1f", added, 100*(1-t.RSS/w.RSS), t.BIC-w.BIC)
		}
	}
	if sub >= 0 && !math.IsInf(trials[sub].BIC, 1) {
		t := trials[sub]
		msg += fmt.Sprintf("; without %s BIC is higher by %.1f", strings.Join(diff(w.Names, t.Names), ", "), t.BIC-w.BIC)
	}
	return msg
}

func containsInt(s []int, v int) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

func isSubset(a, b []string) bool {
	for _, x := range a {
		found := false
		for _, y := range b {
			if x == y {
				found = true
				break
			}
		}
		if !found {
			return false
		}
	}
	return true
}

// diff returns the elements of a that are not in b.
func diff(a, b []string) []string {
	var out []string
	for _, x := range a {
		if !isSubset([]string{x}, b) {
			out = append(out, x)
		}
	}
	return out
}
