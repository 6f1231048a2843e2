package index

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"testing"
	"time"

	"statemix/library"
	"statemix/lineshape"
)

// labelledLibrary makes a small library whose labels the query tests know.
func labelledLibrary(t *testing.T) (*library.Store, map[string]string) {
	mk := func(el, st string, v int, name string, kev float64, note string, tags map[string]string) *library.Entry {
		e := synthEntry(el, st, v, name)
		e.Acquisition.BeamEnergyKeV = kev
		e.Note = note
		e.Tags = tags
		return e
	}
	es := []*library.Entry{
		mk("Ti", "nitride", 0, "TiN standard A", 10, "sputtered TiN film, diffusion barrier stack", map[string]string{"site": "lab2"}),
		mk("Ti", "nitride", 1, "TiN standard B", 5, "reactive deposition", nil),
		mk("Ti", "metal", 0, "Ti foil", 10, "sputter-cleaned foil", map[string]string{"site": "lab1"}),
		mk("Ti", "oxide", 0, "TiO2 grown", 3, "thermally grown oxide", nil),
		mk("Al", "metal", 0, "Al foil", 10, "barrier layer reference, not a diffusion test", nil),
		mk("Al", "oxide", 0, "Al2O3 film", 10.4, "anodic oxide", map[string]string{"site": "lab2"}),
		mk("Fe", "metal", 0, "Fe foil", 9.6, "", nil),
		mk("Cu", "metal", 0, "Cu foil", 20, "diffusion barrier test sample", nil),
	}
	st, out := newLibrary(t, es...)
	syncIndex(t, st)
	byName := map[string]string{}
	for _, e := range out {
		byName[e.Name] = e.ID
	}
	return st, byName
}

func TestQueries(t *testing.T) {
	st, id := labelledLibrary(t)
	x := openReader(t, st)
	cases := []struct {
		q    string
		want []string // names; the exact set of hits
	}{
		{"+element:Ti +state:nitride", []string{"TiN standard A", "TiN standard B"}},
		{"element:Ti state:nitride", []string{"TiN standard A", "TiN standard B"}},                     // field clauses are required by default
		{`element:Ti state:nitride "diffusion barrier"`, []string{"TiN standard A", "TiN standard B"}}, // the phrase only ranks
		{"+element:ti +state:NITRIDE", []string{"TiN standard A", "TiN standard B"}},                   // keywords compare case-insensitively
		{"element:Al", []string{"Al foil", "Al2O3 film"}},
		{`note:"diffusion barrier"`, []string{"TiN standard A", "Cu foil"}}, // phrase: "barrier layer ... diffusion" is not
		{`"diffusion barrier"`, []string{"TiN standard A", "Cu foil"}},      // default field
		{"note:foil", []string{"Ti foil"}},
		{"name:foil", []string{"Ti foil", "Al foil", "Fe foil", "Cu foil"}},
		{"+beam_energy_kev:>=9.5 +beam_energy_kev:<=10.5", []string{"TiN standard A", "Ti foil", "Al foil", "Al2O3 film", "Fe foil"}},
		{"beam_energy_kev:<5", []string{"TiO2 grown"}},
		{"+element:Ti +beam_energy_kev:>4", []string{"TiN standard A", "TiN standard B", "Ti foil"}},
		{`tags:site\=lab2`, []string{"TiN standard A", "Al2O3 film"}},
		{"tags:site", []string{"TiN standard A", "Ti foil", "Al2O3 film"}},
		{"+peak_ev:>=410 +peak_ev:<=425", []string{"TiN standard A", "TiN standard B", "Ti foil", "TiO2 grown"}},
		{"+kind:reference -element:Ti -element:Al", []string{"Fe foil", "Cu foil"}},
		{"kind:measurement", nil},
		{"transition:lmm", []string{"TiN standard A", "TiN standard B", "Ti foil", "TiO2 grown", "Fe foil", "Cu foil"}},
		{`+imported:>="2000-01-01T00:00:00Z" +element:Fe`, []string{"Fe foil"}},
		{`imported:<"2000-01-01T00:00:00Z"`, nil},
	}
	for _, c := range cases {
		hits, total, err := x.Search(c.q, 100)
		if err != nil {
			t.Errorf("%s: %v", c.q, err)
			continue
		}
		var want []string
		for _, n := range c.want {
			want = append(want, id[n])
		}
		got := ids(hits)
		sort.Strings(got)
		sort.Strings(want)
		if !slices.Equal(got, want) || total != len(want) {
			var names []string
			for _, h := range hits {
				names = append(names, h.Name)
			}
			t.Errorf("%s: got %d hits %v, want %v", c.q, total, names, c.want)
		}
	}
	if _, _, err := x.Search(`element:"unclosed`, 10); err == nil {
		t.Error("a malformed query gave no error")
	}
	// Hits carry their labels.
	hits, _, _ := x.Search(`name:"Ti foil"`, 1)
	if len(hits) != 1 || hits[0].Element != "Ti" || hits[0].State != "metal" || hits[0].Kind != "reference" || hits[0].EnergyLo != 342 {
		t.Errorf("hit labels: %+v", hits)
	}
}

func TestSyncFollowsEdits(t *testing.T) {
	st, id := labelledLibrary(t)
	if _, _, err := st.Edit(id["Fe foil"], map[string]string{"note": "now a diffusion barrier too", "state": "oxide"}); err != nil {
		t.Fatal(err)
	}
	if _, err := st.Remove(id["Cu foil"]); err != nil {
		t.Fatal(err)
	}
	if stale, _, _ := Check(st); !stale {
		t.Error("Check: index not stale after an edit and a remove")
	}
	syncIndex(t, st)
	if stale, probs, err := Check(st); stale || err != nil {
		t.Errorf("Check after Sync: stale=%v %v %v", stale, probs, err)
	}
	x := openReader(t, st)
	hits, _, _ := x.Search(`note:"diffusion barrier"`, 10)
	got := ids(hits)
	sort.Strings(got)
	want := []string{id["TiN standard A"], id["Fe foil"]}
	sort.Strings(want)
	if !slices.Equal(got, want) {
		t.Errorf("after edit+remove: %v, want %v", got, want)
	}
	hits, _, _ = x.Search("+element:Fe +state:oxide", 10)
	if len(hits) != 1 {
		t.Errorf("edited state not indexed: %v", hits)
	}
}

func TestReadOnlyMissing(t *testing.T) {
	st, _ := newLibrary(t)
	_, err := Open(st.Dir(), true)
	if !errors.Is(err, ErrNotExist) {
		t.Fatalf("read-only open of a missing index: %v, want ErrNotExist", err)
	}
	stale, probs, err := Check(st)
	if !stale || err != nil || len(probs) != 1 {
		t.Errorf("Check of a missing index: %v %v %v", stale, probs, err)
	}
}

func TestWriterTimeout(t *testing.T) {
	st, _ := labelledLibrary(t)
	w, err := Open(st.Dir(), false)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	start := time.Now()
	_, err = OpenWithOptions(st.Dir(), Options{Timeout: 200 * time.Millisecond})
	var busy *BusyError
	if !errors.As(err, &busy) {
		t.Fatalf("second writer: %v, want *BusyError", err)
	}
	if time.Since(start) > 5*time.Second {
		t.Errorf("second writer waited %v", time.Since(start))
	}
	if len(busy.Holders) == 0 || !busy.Holders[0].Write {
		t.Errorf("busy error names no writer: %v", err)
	}
	_, err = OpenWithOptions(st.Dir(), Options{ReadOnly: true, Timeout: 100 * time.Millisecond})
	if !errors.As(err, &busy) {
		t.Fatalf("reader during a writer: %v, want *BusyError", err)
	}
	t.Log(err)
}

// TestLikeSynthetic: 50 references of 9 elements in four states and
// variants (see entryPeaks); each of them in turn, shifted by 2.5 eV, scaled by 0.3 and given noise at a
// signal-to-noise (peak-to-peak over noise sd) of 20, must come first with
// a shift within 0.2 eV of 2.5 (0.4 of a grid channel: refinement bias plus
// noise).
func TestLikeSynthetic(t *testing.T) {
	var es []*library.Entry
	els := []string{"Ti", "N", "O", "Al", "Si", "Fe", "Ni", "Cu", "C"}
	sts := []string{"metal", "oxide", "nitride", "carbide"}
	for i := 0; len(es) < 50; i++ {
		el, s := els[i%len(els)], sts[(i/len(els))%len(sts)]
		es = append(es, synthEntry(el, s, i/len(els)/len(sts), fmt.Sprintf("%s %s %d", el, s, i)))
	}
	st, out := newLibrary(t, es...)
	syncIndex(t, st)
	x := openReader(t, st)
	rng := rand.New(rand.NewPCG(6, 25))
	for k := range es { // every one of the 50 in turn
		e := out[slices.IndexFunc(out, func(o *library.Entry) bool { return o.Name == es[k].Name })]
		q := entryPeaks(e.Element, e.State, k/len(els)/len(sts))
		lo, hi := e.Spectrum.Axis.Lo(), e.Spectrum.Axis.Hi()
		unk := addNoise(synthDerivative(lo-10, hi+10, 0.25, q, 2.5, 0.3), 20, rng)
		hits, err := x.Like(unk, LikeOptions{Top: 5})
		if err != nil {
			t.Fatal(err)
		}
		if len(hits) == 0 || hits[0].Ref != e.ID {
			t.Errorf("%s: hits %v, want %s first", e.Name, hitNames(hits), e.ID)
			continue
		}
		if d := hits[0].ShiftEV - 2.5; d > 0.2 || d < -0.2 {
			t.Errorf("%s: shift %.3f eV, want 2.5 +/- 0.2", e.Name, hits[0].ShiftEV)
		}
	}
}

func hitNames(hs []Hit) []string {
	var out []string
	for _, h := range hs {
		out = append(out, fmt.Sprintf("%s(%.3f@%+.2f)", h.Name, h.Similarity, h.ShiftEV))
	}
	return out
}

// TestLikeRealData hides the measured spectrum of ../shared/realdata among
// 49 synthetic references over the same energy range and finds it again
// after a 2.5 eV shift, a 0.3 scale and noise at S/N 20.
func TestLikeRealData(t *testing.T) {
	real := readTwoColumn(t, realDataPath)
	var es []*library.Entry
	es = append(es, &library.Entry{Kind: library.KindReference, Name: "measured", Element: "Ti",
		Transition: "LMM", State: "metal", Spectrum: real})
	rng := rand.New(rand.NewPCG(7, 7))
	// Decoys: random multi-peak derivative shapes in 100-490 eV, including
	// peaks at the measured spectrum's minima (README: 157.7 ... 250.9 eV).
	minima := []float64{157.7, 169.6, 184.5, 199.4, 236.2, 250.9}
	for i := 1; i < 50; i++ {
		var ps []peak
		for j := 0; j < 2+i%4; j++ {
			e := 110 + 370*rng.Float64()
			if j < 2 {
				e = minima[rng.IntN(len(minima))] - 2 + 4*rng.Float64()
			}
			ps = append(ps, peak{e, 0.3 + rng.Float64(), 1.5 + 3*rng.Float64()})
		}
		s := synthDerivative(98, 486, 0.35, ps, 0, 0.01)
		es = append(es, &library.Entry{Kind: library.KindReference, Name: fmt.Sprintf("decoy %d", i),
			Element: "Ti", Transition: "LMM", State: "oxide", Spectrum: s})
	}
	st, out := newLibrary(t, es...)
	syncIndex(t, st)
	x := openReader(t, st)
	unk := real.Shift(2.5)
	for i := range unk.Y {
		unk.Y[i] *= 0.3
	}
	unk = addNoise(unk, 20, rng)
	hits, err := x.Like(unk, LikeOptions{Top: 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(hits) == 0 || hits[0].Ref != out[slices.IndexFunc(out, func(e *library.Entry) bool { return e.Name == "measured" })].ID {
		t.Fatalf("hits %v, want the measured spectrum first", hitNames(hits))
	}
	// Shift.Shift fills the vacated channels with the end value; the shift
	// estimate is still within 0.2 eV (0.4 grid channel).
	if d := hits[0].ShiftEV - 2.5; d > 0.2 || d < -0.2 {
		t.Errorf("shift %.3f eV, want 2.5 +/- 0.2", hits[0].ShiftEV)
	}
	t.Logf("%v", hitNames(hits))
}

func TestCheckerForVerify(t *testing.T) {
	st, _ := newLibrary(t, synthEntry("Ti", "metal", 0, "a"), synthEntry("Ti", "oxide", 0, "b"))
	rep, err := st.Verify(library.VerifyOptions{CheckIndex: Checker(st.Dir())})
	if err != nil {
		t.Fatal(err)
	}
	if rep.OK() || len(rep.Problems) == 0 || rep.Problems[0].Code != library.ProblemIndex {
		t.Fatalf("verify without an index: %+v", rep)
	}
	rep, err = st.Verify(library.VerifyOptions{Repair: true, CheckIndex: Checker(st.Dir())})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.OK() {
		t.Fatalf("verify --repair left problems: %+v", rep.Problems)
	}
	if stale, probs, err := Check(st); stale || err != nil {
		t.Fatalf("after repair: %v %v %v", stale, probs, err)
	}
}

// TestLikeDirectUnknown searches with a direct N(E) spectrum in a library
// of derivative references recorded with a 2 eV modulation: Like must
// emulate the lock-in on the unknown and find the matching reference at
// the right shift (within 0.2 eV, 0.4 grid channel).
func TestLikeDirectUnknown(t *testing.T) {
	direct := func(ps []peak, dE float64) *lineshape.Spectrum {
		y := make([]float64, 801)
		for i := range y {
			e := 300 + 0.25*float64(i) - dE
			y[i] = 80 - 0.1*(e-300)
			for _, p := range ps {
				u := (e - p.E) / p.Sigma
				y[i] += 10 * p.A * math.Exp(-u*u/2)
			}
		}
		s, err := lineshape.NewUniform(300, 0.25, y, lineshape.Direct)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	shapes := [][]peak{
		{{360, 1, 3}, {372, 0.6, 2}},
		{{358, 1, 4}, {380, 0.5, 2}},
		{{365, 1, 2.5}},
		{{355, 0.7, 3}, {370, 1, 3}, {390, 0.3, 2}},
	}
	var es []*library.Entry
	for i, ps := range shapes {
		d, err := direct(ps, 0).LockIn(2)
		if err != nil {
			t.Fatal(err)
		}
		es = append(es, &library.Entry{Kind: library.KindReference, Name: fmt.Sprintf("ref %d", i), Element: "Ti",
			Transition: "LMM", State: "metal", Spectrum: d, Acquisition: library.Acquisition{ModulationEV: 2}})
	}
	st, out := newLibrary(t, es...)
	syncIndex(t, st)
	x := openReader(t, st)
	for i, ps := range shapes {
		hits, err := x.Like(direct(ps, 1.5), LikeOptions{Top: 2})
		if err != nil {
			t.Fatal(err)
		}
		want := out[slices.IndexFunc(out, func(e *library.Entry) bool { return e.Name == fmt.Sprintf("ref %d", i) })].ID
		if len(hits) == 0 || hits[0].Ref != want || math.Abs(hits[0].ShiftEV-1.5) > 0.2 || hits[0].Similarity < 0.95 {
			t.Errorf("direct unknown %d: %v", i, hitNames(hits))
		}
	}

	// And the other way round: direct references, a derivative unknown.
	es = nil
	for i, ps := range shapes {
		es = append(es, &library.Entry{Kind: library.KindReference, Name: fmt.Sprintf("direct %d", i), Element: "Ti",
			Transition: "LMM", State: "oxide", Spectrum: direct(ps, 0), Acquisition: library.Acquisition{ModulationEV: 2}})
	}
	st, out = newLibrary(t, es...)
	syncIndex(t, st)
	x = openReader(t, st)
	for i, ps := range shapes {
		unk, err := direct(ps, -2).LockIn(2)
		if err != nil {
			t.Fatal(err)
		}
		hits, err := x.Like(unk, LikeOptions{Top: 2})
		if err != nil {
			t.Fatal(err)
		}
		want := out[slices.IndexFunc(out, func(e *library.Entry) bool { return e.Name == fmt.Sprintf("direct %d", i) })].ID
		if len(hits) == 0 || hits[0].Ref != want || math.Abs(hits[0].ShiftEV+2) > 0.2 || hits[0].Similarity < 0.95 {
			t.Errorf("derivative unknown %d against direct references: %v", i, hitNames(hits))
		}
	}
}
