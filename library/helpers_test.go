package library

import (
	"math"
	"math/rand/v2"
	"sync/atomic"
	"testing"
	"time"

	"statemix/lineshape"
)

// synth returns a derivative spectrum of a Gaussian line at e0 eV (width w
// eV, area a) on start + i*step, plus Gaussian noise of standard deviation
// noise drawn from seed. Invented data for tests.
func synth(start, step float64, n int, e0, w, a, noise float64, seed uint64) *lineshape.Spectrum {
	r := rand.New(rand.NewPCG(seed, 7))
	y := make([]float64, n)
	for i := range y {
		x := start + float64(i)*step - e0
		y[i] = -a * x / (w * w) * math.Exp(-x*x/(2*w*w))
		y[i] += noise * r.NormFloat64()
	}
	s, err := lineshape.NewUniform(start, step, y, lineshape.Derivative)
	if err != nil {
		panic(err)
	}
	return s
}

// tiEntry returns a Ti reference with a line at e0 eV; seed varies noise.
func tiEntry(name, state string, e0 float64, seed uint64) *Entry {
	return &Entry{
		Name: name, Element: "Ti", Transition: "L3M23M23", State: state,
		Spectrum: synth(330, 0.5, 201, e0, 3, 100, 0.2, seed),
	}
}

// fixedClock is a clock for deterministic timestamps.
func fixedClock() func() time.Time {
	t0 := time.Date(2026, 1, 2, 3, 4, 5, 678000000, time.UTC)
	var n atomic.Int64
	return func() time.Time { return t0.Add(time.Duration(n.Add(1)) * time.Second) }
}

// newLib creates a library in a fresh temporary folder.
func newLib(t *testing.T) *Store {
	t.Helper()
	s, err := Create(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	s.Now = fixedClock()
	s.LockTimeout = 5 * time.Second
	return s
}

// mustAdd adds entries or fails the test.
func mustAdd(t *testing.T, s *Store, es ...*Entry) []*Entry {
	t.Helper()
	out, _, err := s.Add(es...)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// sameBits reports whether a and b hold the same float64 bit patterns.
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// countEntries returns how many entries read cleanly.
func countEntries(t *testing.T, s *Store) int {
	t.Helper()
	es, errs := s.Entries()
	if len(errs) > 0 {
		t.Fatalf("entries: %v", errs)
	}
	return len(es)
}
