package library

import (
	"fmt"
	"testing"
)

// benchLib returns a library of n references of 201 channels.
func benchLib(b *testing.B, n int) *Store {
	b.Helper()
	s, err := Create(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	es := make([]*Entry, n)
	for i := range es {
		es[i] = tiEntry(fmt.Sprintf("ref %d", i), "metal", 370+float64(i%40), uint64(i))
	}
	if _, _, err := s.Add(es...); err != nil {
		b.Fatal(err)
	}
	return s
}

func BenchmarkEntries(b *testing.B) {
	for _, n := range []int{10, 100, 1000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			for b.Loop() {
				if es, errs := s.Entries(); len(es) != n || len(errs) > 0 {
					b.Fatal(len(es), errs)
				}
			}
		})
	}
}

// BenchmarkAdd adds one entry (lock, read the library, write, fsync) to a
// library of n entries, then removes it.
func BenchmarkAdd(b *testing.B) {
	for _, n := range []int{10, 100, 1000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			s := benchLib(b, n)
			i := 0
			for b.Loop() {
				i++
				e := tiEntry(fmt.Sprintf("new %d", i), "oxide", 390, uint64(1e6+i))
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

// BenchmarkResolve resolves a name and an id prefix in a library of n
// entries.
func BenchmarkResolve(b *testing.B) {
	for _, n := range []int{100, 1000} {
		s := benchLib(b, n)
		e, err := s.Resolve("ref 7")
		if err != nil {
			b.Fatal(err)
		}
		for _, ref := range []struct{ kind, ref string }{{"name", "ref 7"}, {"prefix", e.ID[:6]}, {"id", e.ID}} {
			b.Run(fmt.Sprintf("n=%d/ref=%s", n, ref.kind), func(b *testing.B) {
				for b.Loop() {
					if _, err := s.Resolve(ref.ref); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
