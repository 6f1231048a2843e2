package index

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"
	"testing"

	"statemix/library"
	"statemix/lineshape"
)

// tiStates are invented Ti LMM-like derivative lineshapes of four states
// in one window: the main peaks shift and broaden and each compound has a
// satellite of its own, as real oxide, nitride and carbide spectra differ.
var tiStates = map[string][]peak{
	"metal":   {{387, 1, 2.5}, {418, 1.4, 2.2}},
	"oxide":   {{383, 1, 3.5}, {413, 1.5, 3}, {405, 0.5, 2.5}},
	"nitride": {{385, 1.2, 3}, {416, 1.2, 2.6}, {395, 0.4, 2}},
	"carbide": {{386, 1, 2.8}, {417, 1.3, 2.4}, {426, 0.35, 2}},
}

// mixture returns sum_i f_i * state_i, shifted by dE, on a 0.25 eV grid
// from 350 to 450 eV, with noise of sd = peak-to-peak/snr.
func mixture(fr map[string]float64, dE, snr float64, rng *rand.Rand) *lineshape.Spectrum {
	var s *lineshape.Spectrum
	for st, f := range fr {
		c := synthDerivative(350, 450, 0.25, tiStates[st], dE, f)
		if s == nil {
			s = c
			continue
		}
		for i := range s.Y {
			s.Y[i] += c.Y[i]
		}
	}
	return addNoise(s, snr, rng)
}

// TestSuggestPicksPresentStates: ten 3-state mixtures of the four Ti
// states (each state left out in turn, fractions random in [0.15, 0.6],
// a common shift of up to +/-1 eV, noise at S/N 50), with the four Ti
// references and references of other elements in the library. Suggest
// (K = 4) must choose exactly the three present states, leaving out the
// absent decoy, in at least 9 of the 10 cases (the bar).
func TestSuggestPicksPresentStates(t *testing.T) {
	states := []string{"metal", "oxide", "nitride", "carbide"}
	var es []*library.Entry
	for _, st := range states {
		s := synthDerivative(340, 460, 0.5, tiStates[st], 0, 1)
		es = append(es, &library.Entry{Kind: library.KindReference, Name: "Ti " + st, Element: "Ti",
			Transition: "LMM", State: st, Spectrum: s})
	}
	for i, el := range []string{"N", "O", "Fe", "Cu"} {
		es = append(es, synthEntry(el, "metal", i, el+" ref"))
	}
	st, _ := newLibrary(t, es...)
	syncIndex(t, st)
	x := openReader(t, st)
	rng := rand.New(rand.NewPCG(2026, 12))
	ok := 0
	for c := 0; c < 10; c++ {
		absent := states[c%4]
		fr := map[string]float64{}
		for _, s := range states {
			if s != absent {
				fr[s] = 0.15 + 0.45*rng.Float64()
			}
		}
		dE := 2*rng.Float64() - 1
		unk := mixture(fr, dE, 50, rng)
		sug, err := x.Suggest(context.Background(), st, unk, SuggestOptions{K: 4, Element: "Ti"})
		if err != nil {
			t.Fatalf("case %d: %v", c, err)
		}
		var got []string
		for _, r := range sug.Refs {
			got = append(got, r.State)
		}
		sort.Strings(got)
		var want []string
		for s := range fr {
			want = append(want, s)
		}
		sort.Strings(want)
		pass := slices.Equal(got, want)
		if pass {
			ok++
		}
		t.Logf("case %d (absent %s, shift %+.2f eV): chose %v pass=%v, %d trials; %s", c, absent, dE, got, pass, len(sug.Trials), sug.Reason)
	}
	if ok < 9 {
		t.Errorf("%d of 10 cases chose exactly the present states, want >= 9", ok)
	}
}

// TestSuggestSingleState: a pure reference with noise must get a single
// reference suggested, not a mixture.
func TestSuggestSingleState(t *testing.T) {
	var es []*library.Entry
	for _, s := range []string{"metal", "oxide", "nitride", "carbide"} {
		es = append(es, &library.Entry{Kind: library.KindReference, Name: "Ti " + s, Element: "Ti",
			Transition: "LMM", State: s, Spectrum: synthDerivative(340, 460, 0.5, tiStates[s], 0, 1)})
	}
	st, _ := newLibrary(t, es...)
	syncIndex(t, st)
	x := openReader(t, st)
	rng := rand.New(rand.NewPCG(5, 5))
	unk := mixture(map[string]float64{"oxide": 0.7}, 0.6, 50, rng)
	sug, err := x.Suggest(context.Background(), st, unk, SuggestOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(sug.Refs) != 1 || sug.Refs[0].State != "oxide" {
		var names []string
		for _, r := range sug.Refs {
			names = append(names, r.Name)
		}
		t.Errorf("chose %v, want [Ti oxide]; %s", names, sug.Reason)
	}
	if !strings.Contains(sug.Reason, "lowest BIC") || math.IsInf(sug.Trials[sug.Best].BIC, 0) {
		t.Errorf("reason %q", sug.Reason)
	}
	_ = fmt.Sprint
}
