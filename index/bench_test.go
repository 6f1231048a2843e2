package index

import (
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"statemix/library"
)

// benchEntries generates n synthetic references: 9 elements x 4 states,
// variants with different relative heights, small extra shifts and windows,
// as a lab's library grown over years would hold many near-duplicates.
func benchEntries(n int, seed uint64) []*library.Entry {
	rng := rand.New(rand.NewPCG(seed, 1))
	els := []string{"Ti", "N", "O", "Al", "Si", "Fe", "Ni", "Cu", "C"}
	sts := []string{"metal", "oxide", "nitride", "carbide"}
	out := make([]*library.Entry, n)
	for i := range out {
		el, st := els[i%len(els)], sts[(i/len(els))%len(sts)]
		e := synthEntry(el, st, i/36, fmt.Sprintf("%s %s %d", el, st, i))
		for j := range e.Spectrum.Y {
			e.Spectrum.Y[j] *= 1 + 0.02*rng.NormFloat64()
		}
		e.ID = fmt.Sprintf("%012x", i)
		e.Revision = 1
		e.Acquisition.BeamEnergyKeV = []float64{3, 5, 10, 20}[rng.IntN(4)]
		e.Note = []string{"sputter-cleaned foil", "thermally grown film", "diffusion barrier stack", "reactive deposition"}[rng.IntN(4)]
		e.Provenance.ImportedAt = time.Date(2020, 1, 1, 0, 0, 0, 0, time.UTC).Add(time.Duration(i) * time.Hour)
		out[i] = e
	}
	return out
}

var benchLib struct {
	once    sync.Once
	dir     string
	entries []*library.Entry
	build   time.Duration
	err     error
}

// benchIndex builds (once per process) an index of 10 000 generated
// entries directly from entry values, without writing the library's files.
func benchIndex(b *testing.B) (string, []*library.Entry) {
	benchLib.once.Do(func() {
		dir, err := os.MkdirTemp("", "statemix-index-bench-")
		if err != nil {
			benchLib.err = err
			return
		}
		benchLib.dir = dir
		benchLib.entries = benchEntries(10000, 1)
		t0 := time.Now()
		x, err := Open(dir, false)
		if err != nil {
			benchLib.err = err
			return
		}
		benchLib.err = x.apply(context.Background(), benchLib.entries, nil, 1, nil)
		x.Close()
		benchLib.build = time.Since(t0)
	})
	if benchLib.err != nil {
		b.Fatal(benchLib.err)
	}
	b.Logf("index of %d entries in %s (built in %v)", len(benchLib.entries), filepath.Join(benchLib.dir, Dir), benchLib.build)
	return benchLib.dir, benchLib.entries
}

// BenchmarkIndex times what a command does on a 10 000-entry library:
// open read-only, query, close (field query; similarity search with a
// noisy shifted unknown), and open for writing, index one new entry and
// close (the index part of library add).
func BenchmarkIndex(b *testing.B) {
	b.Run("n=10000/op=add-one", func(b *testing.B) {
		dir, _ := benchIndex(b)
		i := 0
		for b.Loop() {
			e := synthEntry("Ni", "oxide", i, fmt.Sprintf("added %d", i))
			e.ID = fmt.Sprintf("a%011x", i)
			e.Revision = 2 + i
			i++
			x, err := Open(dir, false)
			if err != nil {
				b.Fatal(err)
			}
			if err := x.apply(context.Background(), []*library.Entry{e}, nil, int64(e.Revision), nil); err != nil {
				b.Fatal(err)
			}
			if err := x.Close(); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("n=10000/op=field-query", func(b *testing.B) {
		dir, _ := benchIndex(b)
		for b.Loop() {
			x, err := Open(dir, true)
			if err != nil {
				b.Fatal(err)
			}
			hits, _, err := x.Search(`+element:Ti +state:nitride +beam_energy_kev:>=9.5 +beam_energy_kev:<=10.5 "diffusion barrier"`, 10)
			x.Close()
			if err != nil || len(hits) == 0 {
				b.Fatal(err, len(hits))
			}
		}
	})
	b.Run("n=10000/op=like", func(b *testing.B) {
		dir, es := benchIndex(b)
		rng := rand.New(rand.NewPCG(2, 2))
		target := es[9*4*3+2] // an O reference
		lo, hi := target.Spectrum.Axis.Lo(), target.Spectrum.Axis.Hi()
		unk := addNoise(synthDerivative(lo-10, hi+10, 0.25, elementPeaks["O"], 2.5, 0.3), 20, rng)
		for b.Loop() {
			x, err := Open(dir, true)
			if err != nil {
				b.Fatal(err)
			}
			hits, err := x.Like(unk, LikeOptions{Top: 10})
			x.Close()
			if err != nil || len(hits) == 0 {
				b.Fatal(err, len(hits))
			}
		}
	})
}

// TestManySmallWritesStayCompact adds 60 entries one writer session each
// and checks the segment count stays bounded (a session merges when there
// are more than maxSegments) and queries still see everything.
func TestManySmallWritesStayCompact(t *testing.T) {
	dir := t.TempDir()
	for i := 0; i < 60; i++ {
		e := synthEntry("Ni", "oxide", i, fmt.Sprintf("small %d", i))
		e.ID = fmt.Sprintf("b%011x", i)
		e.Revision = i + 1
		x, err := Open(dir, false)
		if err != nil {
			t.Fatal(err)
		}
		if err := x.apply(context.Background(), []*library.Entry{e}, nil, int64(i+1), nil); err != nil {
			t.Fatal(err)
		}
		if n := x.Segments(); n > maxSegments+1 {
			t.Fatalf("after %d adds: %d segments, want <= %d", i+1, n, maxSegments+1)
		}
		if err := x.Close(); err != nil {
			t.Fatal(err)
		}
	}
	x, err := Open(dir, true)
	if err != nil {
		t.Fatal(err)
	}
	defer x.Close()
	if n, _ := x.Count(); n != 60 {
		t.Errorf("%d documents, want 60", n)
	}
	t.Logf("segments after 60 single adds: %d", x.Segments())
}
