package library

import (
	"fmt"
	"os"
	"testing"
	"time"
)

// benchLines are the (element, transition) pairs of the generated
// libraries; each line sits at its Chung-Jenkins estimate.
var benchLines = []struct{ el, tr string }{
	{"Ti", "L3M23M23"}, {"N", "KL23L23"}, {"O", "KL23L23"}, {"C", "KL23L23"},
	{"Al", "KL23L23"}, {"Si", "KL23L23"}, {"Fe", "L3M45M45"}, {"Cu", "L3M45M45"},
}

// benchEntry returns entry i of a generated library: every fourth entry is
// a reference (8 elements, 4 states), the others are measurements with a
// small fit result; 300-channel derivative spectra at 0.5 eV, the line
// shifted by -5 to +4.8 eV from the estimate. Invented data.
func benchEntry(i int) *Entry {
	l := benchLines[(i/4)%len(benchLines)]
	e0, err := estimateEnergy(l.el, l.tr)
	if err != nil {
		panic(err)
	}
	e0 += float64(i%50)*0.2 - 5
	e := &Entry{
		Element: l.el, Transition: l.tr,
		Spectrum: synth(e0-75, 0.5, 300, e0, 3, 100, 0.2, uint64(i)),
	}
	if i%4 == 0 {
		e.Kind = KindReference
		e.Name = fmt.Sprintf("ref %d", i)
		e.State = States[(i/(4*len(benchLines)))%4]
	} else {
		e.Kind = KindMeasurement
		e.Name = fmt.Sprintf("run %d", i)
		e.Fit = []byte(fmt.Sprintf(`{"schema":"statemix.fit/v1","chi2_reduced":%d.5}`, i%7))
	}
	return e
}

// benchLib returns a library of n generated entries (see benchEntry). The
// entry files are written directly (without fsync) and the library is then
// made consistent by a repair, so that building a 10 000 entry library
// takes seconds, not the n Add calls it would otherwise need.
func benchLib(b *testing.B, n int) *Store {
	b.Helper()
	s, err := Create(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	t0 := time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC)
	for i := 0; i < n; i++ {
		e := benchEntry(i)
		if err := normalize(e); err != nil {
			b.Fatal(err)
		}
		e.Revision = 1
		e.Provenance.ImportedAt = t0
		data, err := encodeEntry(e)
		if err != nil {
			b.Fatal(err)
		}
		if err := os.WriteFile(s.entryPath(e.Kind, e.ID), data, 0o644); err != nil {
			b.Fatal(err)
		}
	}
	if rep, err := s.Verify(VerifyOptions{Repair: true}); err != nil || !rep.OK() || rep.Entries != n {
		b.Fatalf("generated library: %+v %v", rep, err)
	}
	return s
}

func BenchmarkEntries(b *testing.B) {
	for _, n := range []int{100, 1000} {
		b.Run(fmt.Sprintf("entries=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			for b.Loop() {
				if es, errs := s.Entries(); len(es) != n || len(errs) > 0 {
					b.Fatal(len(es), errs)
				}
			}
		})
	}
}

// BenchmarkAdd adds one Ti reference (lock, checks against the library,
// write, fsync) to a library of n entries, then removes it untimed.
func BenchmarkAdd(b *testing.B) {
	for _, n := range []int{100, 1000, 10000} {
		b.Run(fmt.Sprintf("entries=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			// A Ti oxide in the middle of the Ti references' range, so
			// the duplicate-state check has the most candidates.
			e0, err := estimateEnergy("Ti", "L3M23M23")
			if err != nil {
				b.Fatal(err)
			}
			i := 0
			for b.Loop() {
				i++
				e := benchEntry(0)
				e.Name = fmt.Sprintf("new %d", i)
				e.State = "oxide"
				e.Spectrum = synth(e0-75, 0.5, 300, e0+float64(i%10)*0.1, 3, 100, 0.2, uint64(1e6+i))
				if _, _, err := s.Add(e); err != nil {
					b.Fatal(err)
				}
				b.StopTimer()
				if _, err := s.Remove(e.ID); err != nil {
					b.Fatal(err)
				}
				b.StartTimer()
			}
		})
	}
}

// BenchmarkEdit changes the note of one reference in a library of n
// entries.
func BenchmarkEdit(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("entries=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			i := 0
			for b.Loop() {
				i++
				if _, _, err := s.Edit("ref 4", map[string]string{"note": fmt.Sprint("pass ", i)}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkResolve resolves a name, an id prefix and a full id in a library
// of n entries.
func BenchmarkResolve(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("entries=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			e, err := s.Resolve("ref 4")
			if err != nil {
				b.Fatal(err)
			}
			for _, ref := range []struct{ kind, ref string }{{"name", "ref 4"}, {"prefix", e.ID[:6]}, {"id", e.ID}} {
				b.Run("ref="+ref.kind, func(b *testing.B) {
					for b.Loop() {
						if _, err := s.Resolve(ref.ref); err != nil {
							b.Fatal(err)
						}
					}
				})
			}
		})
	}
}
