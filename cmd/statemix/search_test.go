package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"statemix/library"
	"statemix/lineshape"
)

// gaussDeriv returns the derivative of a sum of Gaussians (centre, height,
// sigma in eV) on lo..hi with step, shifted by dE and scaled: invented test
// data with the shape of a derivative Auger spectrum.
func gaussDeriv(lo, hi, step float64, ps [][3]float64, dE, scale float64) *lineshape.Spectrum {
	n := int(math.Round((hi-lo)/step)) + 1
	y := make([]float64, n)
	for i := range y {
		e := lo + float64(i)*step - dE
		for _, p := range ps {
			u := (e - p[0]) / p[2]
			y[i] += -scale * p[1] * u / p[2] * math.Exp(-u*u/2)
		}
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Derivative)
	if err != nil {
		panic(err)
	}
	return s
}

// searchLibrary makes a library of labelled synthetic references and
// returns its folder and the ids by name. It builds no index: search must
// build it on first use.
func searchLibrary(t *testing.T) (string, map[string]string) {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "lib")
	st, err := library.Create(dir)
	if err != nil {
		t.Fatal(err)
	}
	mk := func(name, el, state string, kev float64, note string, ps ...[3]float64) *library.Entry {
		lo, hi := ps[0][0]-40, ps[len(ps)-1][0]+40
		return &library.Entry{Kind: library.KindReference, Name: name, Element: el, Transition: "LMM", State: state,
			Note: note, Acquisition: library.Acquisition{BeamEnergyKeV: kev}, Spectrum: gaussDeriv(lo, hi, 0.5, ps, 0, 1)}
	}
	es := []*library.Entry{
		mk("TiN-A", "Ti", "nitride", 10, "diffusion barrier standard", [3]float64{385, 1, 3}, [3]float64{416, 1.5, 2.6}),
		mk("TiN-B", "Ti", "nitride", 5, "reactive film", [3]float64{385.5, 1.2, 3.2}, [3]float64{416.5, 1.3, 2.6}),
		mk("Ti-foil", "Ti", "metal", 10, "sputter-cleaned foil", [3]float64{387, 1, 2.5}, [3]float64{418, 1.4, 2.2}),
		mk("TiO2", "Ti", "oxide", 10, "grown oxide", [3]float64{383, 1, 3.5}, [3]float64{413, 1.4, 3}),
		mk("Cu-foil", "Cu", "metal", 10, "diffusion barrier test", [3]float64{840, 0.4, 3}, [3]float64{920, 1, 2.5}),
		mk("Fe-foil", "Fe", "metal", 10, "", [3]float64{651, 0.6, 3}, [3]float64{703, 1, 3}),
	}
	out, _, err := st.Add(es...)
	if err != nil {
		t.Fatal(err)
	}
	ids := map[string]string{}
	for _, e := range out {
		ids[e.Name] = e.ID
	}
	return dir, ids
}

func decodeSearch(t *testing.T, stdout string) searchJSON {
	t.Helper()
	var doc searchJSON
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("search --json output is not JSON: %v\n%s", err, stdout)
	}
	if doc.Schema != "statemix.search/v1" {
		t.Fatalf("schema %q", doc.Schema)
	}
	return doc
}

func TestSearchQuery(t *testing.T) {
	dir, ids := searchLibrary(t)
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "search", "+element:Ti +state:nitride")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	doc := decodeSearch(t, out)
	var got []string
	for _, h := range doc.Hits {
		got = append(got, h.Ref)
		if h.Similarity != nil || h.ShiftEV != nil || h.Kind != "reference" || h.Element != "Ti" || h.State != "nitride" {
			t.Errorf("hit %+v", h)
		}
	}
	sort.Strings(got)
	want := []string{ids["TiN-A"], ids["TiN-B"]}
	sort.Strings(want)
	if !slices.Equal(got, want) {
		t.Errorf("hits %v, want %v", got, want)
	}
	// The raw JSON has the contract's keys, with null similarity.
	var raw map[string][]map[string]any
	_ = json.Unmarshal([]byte(out), &raw)
	for _, k := range []string{"ref", "kind", "name", "element", "state", "score", "similarity", "shift_ev"} {
		if _, ok := raw["hits"][0][k]; !ok {
			t.Errorf("hit has no %q key: %v", k, raw["hits"][0])
		}
	}

	// Text phrase and numeric range, human output.
	code, out, _ = runApp(t, nil, "--library", dir, "search", `+note:"diffusion barrier" +beam_energy_kev:>=9.5`, "--top", "5")
	if code != 0 || !strings.Contains(out, "TiN-A") || !strings.Contains(out, "Cu-foil") || strings.Contains(out, "TiN-B") {
		t.Errorf("phrase+range: exit %d\n%s", code, out)
	}
	// A malformed query is a usage error.
	if code, _, errs := runApp(t, nil, "--library", dir, "search", `note:"open`); code != exitUsage {
		t.Errorf("malformed query: exit %d (%s)", code, errs)
	}
	// An unknown field gets a warning.
	if _, _, errs := runApp(t, nil, "--library", dir, "search", "elemnt:Ti"); !strings.Contains(errs, `no field "elemnt"`) {
		t.Errorf("unknown field: stderr %q", errs)
	}
	// No query: the field listing.
	code, out, _ = runApp(t, nil, "--library", dir, "search")
	if code != 0 || !strings.Contains(out, "beam_energy_kev") || !strings.Contains(out, "keyword") {
		t.Errorf("field listing: exit %d\n%s", code, out)
	}
}

func TestSearchFollowsLibraryWrites(t *testing.T) {
	dir, ids := searchLibrary(t)
	if code, _, errs := runApp(t, nil, "--library", dir, "search", "element:Ti"); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	st, err := library.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.Remove(ids["TiN-B"]); err != nil {
		t.Fatal(err)
	}
	// The index is behind now; search brings it up to date first.
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "search", "+state:nitride")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	doc := decodeSearch(t, out)
	if len(doc.Hits) != 1 || doc.Hits[0].Ref != ids["TiN-A"] {
		t.Errorf("after remove: %+v", doc.Hits)
	}
}

// TestSearchLike writes a noisy, shifted, scaled copy of Ti-foil as a text
// file and checks search --like ranks Ti-foil first with the 2.5 eV shift
// (within 0.2 eV: 0.4 of the 0.5 eV grid channel).
func TestSearchLike(t *testing.T) {
	dir, ids := searchLibrary(t)
	s := gaussDeriv(330, 470, 0.3, [][3]float64{{387, 1, 2.5}, {418, 1.4, 2.2}}, 2.5, 0.3)
	rng := rand.New(rand.NewPCG(3, 4))
	for i := range s.Y {
		s.Y[i] += 0.3 * 0.5 / 20 * rng.NormFloat64()
	}
	var b strings.Builder
	for i := range s.Y {
		fmt.Fprintf(&b, "%.4f\t%.6g\n", s.Energy(i), s.Y[i])
	}
	path := filepath.Join(t.TempDir(), "unknown.txt")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "search", "--like", path, "--top", "3")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	doc := decodeSearch(t, out)
	if len(doc.Hits) == 0 || doc.Hits[0].Ref != ids["Ti-foil"] {
		t.Fatalf("hits %+v, want Ti-foil first", doc.Hits)
	}
	h := doc.Hits[0]
	if h.Similarity == nil || *h.Similarity < 0.9 || h.ShiftEV == nil || math.Abs(*h.ShiftEV-2.5) > 0.2 {
		t.Errorf("best hit %+v", h)
	}
	// A query restricts the candidates.
	code, out, _ = runApp(t, nil, "--library", dir, "--json", "search", "--like", path, "+state:nitride")
	doc = decodeSearch(t, out)
	if code != 0 || len(doc.Hits) == 0 || doc.Hits[0].State != "nitride" {
		t.Errorf("restricted: exit %d %+v", code, doc.Hits)
	}
	// Human table.
	code, out, _ = runApp(t, nil, "--library", dir, "search", "--like", path)
	if code != 0 || !strings.Contains(out, "SIMILARITY") || !strings.Contains(out, "Ti-foil") {
		t.Errorf("table: exit %d\n%s", code, out)
	}
	// A missing file fails; --block without --like is a usage error.
	if code, _, _ := runApp(t, nil, "--library", dir, "search", "--like", path+".none"); code == 0 {
		t.Error("missing --like file: exit 0")
	}
	if code, _, _ := runApp(t, nil, "--library", dir, "search", "--block", "2", "x"); code != exitUsage {
		t.Errorf("--block without --like: exit %d", code)
	}
}

// TestFitSuggestAndSave runs fit --suggest on a two-state Ti mixture with
// four Ti states in the library (with --element, which narrows the
// candidates but must not add every reference of the element), saves the
// run, and finds it again with search: by kind, by what it was fitted with,
// and by similarity.
func TestFitSuggestAndSave(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	st, err := library.Create(dir)
	if err != nil {
		t.Fatal(err)
	}
	shapes := map[string][][3]float64{
		"metal":   {{387, 1, 2.5}, {418, 1.4, 2.2}},
		"oxide":   {{383, 1, 3.5}, {413, 1.5, 3}, {405, 0.5, 2.5}},
		"nitride": {{385, 1.2, 3}, {416, 1.2, 2.6}, {395, 0.4, 2}},
		"carbide": {{386, 1, 2.8}, {417, 1.3, 2.4}, {426, 0.35, 2}},
	}
	var es []*library.Entry
	for _, s := range []string{"metal", "oxide", "nitride", "carbide"} {
		es = append(es, &library.Entry{Kind: library.KindReference, Name: "Ti " + s, Element: "Ti",
			Transition: "LMM", State: s, Spectrum: gaussDeriv(340, 460, 0.5, shapes[s], 0, 1)})
	}
	if _, _, err := st.Add(es...); err != nil {
		t.Fatal(err)
	}
	m := gaussDeriv(350, 450, 0.25, shapes["metal"], 0.4, 0.6)
	o := gaussDeriv(350, 450, 0.25, shapes["oxide"], 0.4, 0.4)
	rng := rand.New(rand.NewPCG(8, 9))
	var b strings.Builder
	for i := range m.Y {
		fmt.Fprintf(&b, "%.4f\t%.6g\n", m.Energy(i), m.Y[i]+o.Y[i]+0.01*rng.NormFloat64())
	}
	path := filepath.Join(t.TempDir(), "mix.txt")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "fit", path, "--suggest",
		"--element", "Ti", "--uncertainty", "covariance", "--save")
	if code != 0 {
		t.Fatalf("fit --suggest --save: exit %d\n%s", code, errs)
	}
	var doc struct {
		Components []struct {
			State    string  `json:"state"`
			Fraction float64 `json:"fraction"`
		} `json:"components"`
		Saved string `json:"saved"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	var states []string
	for _, c := range doc.Components {
		if c.Fraction > 0 {
			states = append(states, c.State)
		}
	}
	sort.Strings(states)
	if !slices.Equal(states, []string{"metal", "oxide"}) {
		t.Errorf("suggested fit has states %v, want [metal oxide]\n%s", states, errs)
	}
	if !strings.Contains(errs, "lowest BIC") || !strings.Contains(errs, "subsets fitted") {
		t.Errorf("stderr does not explain the choice:\n%s", errs)
	}
	if doc.Saved == "" {
		t.Fatal("no saved id")
	}
	code, out, _ = runApp(t, nil, "--library", dir, "--json", "search", "+kind:measurement +fit_states:oxide")
	sd := decodeSearch(t, out)
	if code != 0 || len(sd.Hits) != 1 || sd.Hits[0].Ref != doc.Saved || sd.Hits[0].Kind != "measurement" {
		t.Errorf("saved run by query: exit %d %+v", code, sd.Hits)
	}
	code, out, _ = runApp(t, nil, "--library", dir, "--json", "search", "--like", path, "kind:measurement")
	sd = decodeSearch(t, out)
	if code != 0 || len(sd.Hits) == 0 || sd.Hits[0].Ref != doc.Saved || *sd.Hits[0].Similarity < 0.999 || math.Abs(*sd.Hits[0].ShiftEV) > 0.05 {
		t.Errorf("saved run by similarity: exit %d %+v", code, sd.Hits)
	}
}

// TestSearchLikeRealData finds the measured spectrum of ../shared/realdata
// again through the command line (format.ReadFile on the uneven grid, the
// index, the ranking) after a 2.5 eV shift, a 0.3 scale and noise at S/N 20
// (sd = peak-to-peak/20), among synthetic decoys over the same range.
func TestSearchLikeRealData(t *testing.T) {
	const real = "../../../shared/realdata/derivative-aes-metal-crystal.dat"
	if _, err := os.Stat(real); err != nil {
		t.Skipf("real data not available (%v): skipping; it lives in ../shared/realdata beside the repository", err)
	}
	dir := filepath.Join(t.TempDir(), "lib")
	if code, _, errs := runApp(t, nil, "--library", dir, "library", "init"); code != 0 {
		t.Fatal(errs)
	}
	if code, _, errs := runApp(t, nil, "--library", dir, "library", "add", real, "--element", "Ti", "--transition", "LMM",
		"--state", "metal", "--name", "measured"); code != 0 {
		t.Fatal(errs)
	}
	st, err := library.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(11, 12))
	var decoys []*library.Entry
	for i := 0; i < 20; i++ {
		var ps [][3]float64
		for j := 0; j < 3; j++ {
			ps = append(ps, [3]float64{110 + 370*rng.Float64(), 0.3 + rng.Float64(), 1.5 + 3*rng.Float64()})
		}
		sort.Slice(ps, func(a, b int) bool { return ps[a][0] < ps[b][0] })
		decoys = append(decoys, &library.Entry{Kind: library.KindReference, Name: fmt.Sprintf("decoy %d", i), Element: "Ti",
			Transition: "LMM", State: "oxide", Spectrum: gaussDeriv(98, 486, 0.35, ps, 0, 0.01)})
	}
	if _, _, err := st.Add(decoys...); err != nil {
		t.Fatal(err)
	}
	// The unknown: the measured values moved 2.5 eV up the energy axis.
	b, _ := os.ReadFile(real)
	var e, y []float64
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		var a, v float64
		if _, err := fmt.Sscan(line, &a, &v); err != nil {
			t.Fatal(err)
		}
		e, y = append(e, a+2.5), append(y, 0.3*v)
	}
	lo, hi := slices.Min(y), slices.Max(y)
	var sb strings.Builder
	for i := range e {
		fmt.Fprintf(&sb, "%.5f\t%.6g\n", e[i], y[i]+(hi-lo)/20*rng.NormFloat64())
	}
	path := filepath.Join(t.TempDir(), "unknown.dat")
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runApp(t, nil, "--library", dir, "--json", "search", "--like", path, "--top", "3")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	doc := decodeSearch(t, out)
	if len(doc.Hits) == 0 || doc.Hits[0].Name != "measured" || math.Abs(*doc.Hits[0].ShiftEV-2.5) > 0.2 {
		t.Fatalf("hits %+v, want measured first at +2.5 +/- 0.2 eV", doc.Hits)
	}
	t.Logf("best: similarity %.3f shift %+.3f eV; next %.3f", *doc.Hits[0].Similarity, *doc.Hits[0].ShiftEV, *doc.Hits[1].Similarity)
}
