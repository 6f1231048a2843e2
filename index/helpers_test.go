package index

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"statemix/library"
	"statemix/lineshape"
)

// peak is one Gaussian of a synthetic direct spectrum.
type peak struct{ E, A, Sigma float64 }

// synthDerivative returns, on lo..hi with step, the analytic derivative of
// a sum of Gaussians on a sloping background, shifted by dE and scaled: the
// shape of a derivative Auger spectrum recorded with a small modulation.
// Invented data for tests.
func synthDerivative(lo, hi, step float64, ps []peak, dE, scale float64) *lineshape.Spectrum {
	n := int(math.Round((hi-lo)/step)) + 1
	y := make([]float64, n)
	for i := range y {
		e := lo + float64(i)*step - dE
		v := -0.002 // derivative of a falling secondary background
		for _, p := range ps {
			u := (e - p.E) / p.Sigma
			v += -p.A * u / p.Sigma * math.Exp(-u*u/2)
		}
		y[i] = scale * v
	}
	s, err := lineshape.NewUniform(lo, step, y, lineshape.Derivative)
	if err != nil {
		panic(err)
	}
	return s
}

// addNoise adds Gaussian noise with standard deviation peak-to-peak/snr.
func addNoise(s *lineshape.Spectrum, snr float64, rng *rand.Rand) *lineshape.Spectrum {
	c := s.Clone()
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range c.Y {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	sd := (hi - lo) / snr
	for i := range c.Y {
		c.Y[i] += sd * rng.NormFloat64()
	}
	return c
}

// elementPeaks are invented multi-peak shapes near handbook derivative
// energies (DOMAIN.md, from memory, +/-2 eV); the states differ by a
// chemical shift and a width, as oxide and nitride lineshapes do.
var elementPeaks = map[string][]peak{
	"Ti": {{387, 1, 2.5}, {418, 1.4, 2.2}},
	"N":  {{379, 1, 3}},
	"O":  {{503, 1, 3}, {485, 0.3, 3}},
	"Al": {{1396, 1, 2}, {1380, 0.2, 4}},
	"Si": {{92, 1, 1.5}, {80, 0.3, 2}},
	"Fe": {{703, 1, 3}, {651, 0.6, 3}, {598, 0.3, 3}},
	"Ni": {{848, 1, 3}, {783, 0.5, 3}},
	"Cu": {{920, 1, 2.5}, {840, 0.4, 3}},
	"C":  {{272, 1, 3.5}},
}

// stateShape changes a lineshape per chemical state: a chemical shift of
// the main peaks, a broadening, and a satellite of the state's own at an
// offset from the first peak (real oxide, nitride and carbide spectra
// differ in such loss and satellite structure). Invented for tests.
var stateShape = map[string]struct{ dE, width, satE, satA float64 }{
	"metal":   {0, 1, 0, 0},
	"oxide":   {-4, 1.4, -12, 0.35},
	"nitride": {-2, 1.25, 8, 0.3},
	"carbide": {-1, 0.85, -6, 0.3},
}

// entryPeaks returns the peaks of element el in state st, variant v: the
// variant changes relative heights and widths and adds a weak satellite at
// a variant-dependent offset, so that no two entries are the same shape
// merely shifted (which no similarity measure over shifts could tell
// apart).
func entryPeaks(el, st string, v int) []peak {
	ps := elementPeaks[el]
	sh := stateShape[st]
	var q []peak
	for i, p := range ps {
		a := p.A * (1 + 0.15*float64(v%4)*float64(i%2*2-1))
		w := p.Sigma * sh.width * (1 + 0.1*float64(v%3))
		q = append(q, peak{p.E + sh.dE + 0.3*float64(v%3), a, w})
	}
	if sh.satA > 0 {
		q = append(q, peak{ps[0].E + sh.dE + sh.satE, sh.satA * ps[0].A, 2})
	}
	if v > 0 {
		q = append(q, peak{ps[0].E + 15 + 4*float64(v%5), 0.2 * ps[0].A, 1.5 + 0.5*float64(v%2)})
	}
	return q
}

// synthEntry makes an entry of element el in state st, variant v, as a
// library.Store would get from library add.
func synthEntry(el, st string, v int, name string) *library.Entry {
	q := entryPeaks(el, st, v)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range elementPeaks[el] {
		lo, hi = math.Min(lo, p.E), math.Max(hi, p.E)
	}
	s := synthDerivative(math.Max(40, lo-45), hi+35, 0.5, q, 0, 1)
	s.Meta.ModulationEV = 1
	return &library.Entry{
		Kind: library.KindReference, Name: name, Element: el, Transition: transitionOf(el),
		State: st, Spectrum: s,
		Acquisition: library.Acquisition{BeamEnergyKeV: 10, ModulationEV: 1},
	}
}

func transitionOf(el string) string {
	switch el {
	case "Ti", "Fe", "Ni", "Cu":
		return "LMM"
	case "Si":
		return "LVV"
	}
	return "KLL"
}

// newLibrary creates a library in a temporary folder with entries, and
// returns the store and the stored entries.
func newLibrary(t testing.TB, es ...*library.Entry) (*library.Store, []*library.Entry) {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "lib")
	st, err := library.Create(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(es) == 0 {
		return st, nil
	}
	out, _, err := st.Add(es...)
	if err != nil {
		t.Fatal(err)
	}
	return st, out
}

// syncIndex opens the library's index for writing, syncs it and closes it.
func syncIndex(t testing.TB, st *library.Store) {
	t.Helper()
	x, err := Open(st.Dir(), false)
	if err != nil {
		t.Fatal(err)
	}
	if err := x.Sync(st); err != nil {
		x.Close()
		t.Fatal(err)
	}
	if err := x.Close(); err != nil {
		t.Fatal(err)
	}
}

func openReader(t testing.TB, st *library.Store) *Index {
	t.Helper()
	x, err := Open(st.Dir(), true)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { x.Close() })
	return x
}

// realDataPath is the measured spectrum of ../shared/realdata, from the
// package folder.
const realDataPath = "../../shared/realdata/derivative-aes-metal-crystal.dat"

// readTwoColumn reads a whitespace-separated two-column text file (energy
// eV, value) into a derivative spectrum: a tiny local parser, so the index
// tests do not depend on the format packages.
func readTwoColumn(t testing.TB, path string) *lineshape.Spectrum {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Skipf("real data not available (%v): skipping; it lives in ../shared/realdata beside the repository", err)
	}
	defer f.Close()
	var e, y []float64
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 {
			continue
		}
		if len(fs) != 2 {
			t.Fatalf("%s: line %d: %d columns", path, line, len(fs))
		}
		a, err1 := strconv.ParseFloat(fs[0], 64)
		b, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: line %d: not numbers", path, line)
		}
		e, y = append(e, a), append(y, b)
	}
	s, err := lineshape.New(e, y, lineshape.Derivative)
	if err != nil {
		t.Fatal(err)
	}
	s.Meta.Source = path
	return s
}

func ids(hs []Hit) []string {
	out := make([]string, len(hs))
	for i, h := range hs {
		out[i] = h.Ref
	}
	return out
}

var _ = fmt.Sprint
var _ = time.Now
