package library

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// storedCatalog reads the library's catalogue and fails the test unless it
// is the one the manifest records.
func storedCatalog(t *testing.T, s *Store) *catalog {
	t.Helper()
	m, err := readManifest(s.Dir())
	if err != nil {
		t.Fatal(err)
	}
	c, err := readCatalog(s.Dir(), m)
	if err != nil {
		t.Fatalf("catalogue: %v", err)
	}
	return c
}

// checkCatalogCurrent fails the test unless the stored catalogue is the
// one the entry files call for.
func checkCatalogCurrent(t *testing.T, s *Store) {
	t.Helper()
	c := storedCatalog(t, s)
	if c.DirTimes != s.dirTimes() || !s.listsFiles(c) {
		t.Errorf("a writer would not trust the catalogue: folder mtimes %v, recorded %v; lists the files: %v", s.dirTimes(), c.DirTimes, s.listsFiles(c))
	}
	want := s.scanCatalog(c.Revision)
	if !reflect.DeepEqual(c.rows, want.rows) && !(len(c.rows) == 0 && len(want.rows) == 0) {
		t.Errorf("catalogue at revision %d:\n%+v\nfiles call for\n%+v", c.Revision, c.rows, want.rows)
	}
}

func TestCatalogEncodeParse(t *testing.T) {
	rows := []catRow{
		{ID: "0123456789ab", Kind: KindReference, Name: "plain name", Element: "Ti", Transition: "L3M23M23", State: "metal",
			Mode: "derivative", N: 300, Lo: 330.25, Hi: 479.75, Feature: 383.1000000000001, HasFeature: true},
		{ID: "0123456789ac", Kind: KindMeasurement, Name: "tab\there, newline\nthere", Mode: "direct", N: 2, Lo: 1e-300, Hi: 3000},
		{ID: "0123456789ad", Kind: KindReference, Name: `"quoted" at the start`, Element: "Al", Transition: "KL23L23",
			State: "other:oxy\\nitride", Mode: "direct", N: 5, Lo: 1, Hi: 2, Feature: -0.5, HasFeature: true},
		{ID: "0123456789ae", Kind: KindMeasurement, Bad: true},
		{ID: "0123456789af", Kind: KindReference, Name: "bad utf-8 \xff, ünïcödé", Mode: "direct", N: 3, Lo: 0, Hi: 1},
	}
	c := newCatalog(7, append([]catRow(nil), rows...))
	b := c.encode()
	got, err := parseCatalog(b)
	if err != nil {
		t.Fatalf("parse: %v\n%s", err, b)
	}
	if got.Revision != 7 || !reflect.DeepEqual(got.rows, rows) {
		t.Errorf("round trip:\n%+v\nwant\n%+v", got.rows, rows)
	}
	if n := bytes.Count(b, []byte("\n")); n != len(rows)+1 {
		t.Errorf("%d lines, want one per row and a header:\n%s", n, b)
	}
	for name, bad := range map[string][]byte{
		"truncated":  b[:len(b)-3],
		"no header":  []byte("0123456789ab\tr\tok\n"),
		"version":    bytes.Replace(b, []byte(catalogFormat+"\t1"), []byte(catalogFormat+"\t2"), 1),
		"count":      bytes.Replace(b, []byte("\t7\t5\t"), []byte("\t7\t4\t"), 1),
		"mtime":      bytes.Replace(b, []byte("\t7\t5\t0\t0\n"), []byte("\t7\t5\t0\n"), 1),
		"kind":       bytes.Replace(b, []byte("0123456789ab\tr"), []byte("0123456789ab\tx"), 1),
		"unsorted":   bytes.Replace(b, []byte("0123456789ac\t"), []byte("0123456789aa\t"), 1),
		"number":     bytes.Replace(b, []byte("330.25"), []byte("330,25"), 1),
		"fields":     bytes.Replace(b, []byte("\tmetal\t"), []byte("\tmetal\t\t"), 1),
		"bad status": bytes.Replace(b, []byte("\tbad\t"), []byte("\tgood\t"), 1),
	} {
		if _, err := parseCatalog(bad); err == nil {
			t.Errorf("%s: parsed", name)
		}
	}
	// Resolution by name, prefix and id; unreadable files take no part.
	for ref, want := range map[string]string{
		"plain name": "0123456789ab", "0123456789ac": "0123456789ac", "0123456789AD": "0123456789ad",
		"tab\there, newline\nthere": "0123456789ac",
	} {
		if r, err := got.resolve(ref); err != nil || r.ID != want {
			t.Errorf("resolve %q: %v %v, want %s", ref, r, err, want)
		}
	}
	if _, err := got.resolve("0123456789ae"); !errors.Is(err, ErrNotFound) {
		t.Errorf("an unreadable file resolved: %v", err)
	}
	if _, err := got.resolve("0123"); !errors.Is(err, ErrAmbiguous) || !strings.Contains(err.Error(), "0123456789ab, 0123456789ac, 0123456789ad, 0123456789af") {
		t.Errorf("ambiguous prefix: %v", err)
	}
}

// TestCatalogFollowsWrites checks after each kind of write that the
// catalogue is the one the manifest records and says what the files say.
func TestCatalogFollowsWrites(t *testing.T) {
	s := newLib(t)
	checkCatalogCurrent(t, s)
	a := mustAdd(t, s, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2), tiEntry("c", "nitride", 393, 3))
	checkCatalogCurrent(t, s)
	if _, _, err := s.Edit("b", map[string]string{"name": "b2", "state": "carbide"}); err != nil {
		t.Fatal(err)
	}
	checkCatalogCurrent(t, s)
	if _, err := s.Remove("c"); err != nil {
		t.Fatal(err)
	}
	checkCatalogCurrent(t, s)
	src := newLib(t)
	mustAdd(t, src, tiEntry("d", "metal", 385, 4), &Entry{Kind: KindMeasurement, Name: "run", Element: "Ti",
		Spectrum: synth(330, 0.5, 201, 383, 3, 100, 0.2, 9), Fit: []byte(`{"schema": "statemix.fit/v1"}`)})
	if _, err := s.Import(bytes.NewReader(exportAll(t, src)), ImportOptions{}); err != nil {
		t.Fatal(err)
	}
	checkCatalogCurrent(t, s)
	if c := storedCatalog(t, s); len(c.rows) != 4 || c.Revision != s.Revision() || c.Revision != 4 {
		t.Errorf("catalogue: %d rows at revision %d, library at %d", len(c.rows), c.Revision, s.Revision())
	}
	if r, ok := storedCatalog(t, s).row(a[1].ID); !ok || r.Name != "b2" || r.State != "carbide" {
		t.Errorf("edited row: %+v", r)
	}
	if rep, err := s.Verify(VerifyOptions{}); err != nil || len(rep.Problems) != 0 {
		t.Errorf("verify: %+v %v", rep, err)
	}
}

// TestCatalogMissingOrStale removes, replaces and tampers with the
// catalogue: the library keeps working (by reading the entry files),
// verify reports the catalogue, and repair or the next write rebuilds it.
func TestCatalogMissingOrStale(t *testing.T) {
	cpath := func(s *Store) string { return filepath.Join(s.Dir(), catalogName) }
	cases := map[string]func(t *testing.T, s *Store){
		"missing": func(t *testing.T, s *Store) { os.Remove(cpath(s)) },
		"older version": func(t *testing.T, s *Store) {
			// An older version rewrites library.json without the digest
			// and leaves the catalogue alone.
			p := filepath.Join(s.Dir(), manifestName)
			b, _ := os.ReadFile(p)
			m, err := parseManifest(b)
			if err != nil {
				t.Fatal(err)
			}
			m.Catalog = ""
			if err := s.writeManifest(m); err != nil {
				t.Fatal(err)
			}
		},
		"other revision": func(t *testing.T, s *Store) {
			// A catalogue of the right digest but another revision
			// (the digest in the manifest updated to match).
			m, _ := readManifest(s.Dir())
			c := storedCatalog(t, s)
			c.Revision++
			b := catalogBytes(m, c)
			os.WriteFile(cpath(s), b, 0o644)
			s.writeManifest(m)
		},
		"wrong digest": func(t *testing.T, s *Store) {
			b, _ := os.ReadFile(cpath(s))
			os.WriteFile(cpath(s), bytes.Replace(b, []byte("\tmetal\t"), []byte("\toxide\t"), 1), 0o644)
		},
		"wrong content": func(t *testing.T, s *Store) {
			// A consistent-looking catalogue that disagrees with the files:
			// b is renamed and a row for a missing file added.
			m, _ := readManifest(s.Dir())
			c := storedCatalog(t, s)
			r, _ := c.resolve("b")
			r.Name = "not b"
			c = c.with(c.Revision, nil, []catRow{{ID: "00000000000a", Kind: KindReference, Name: "ghost", Mode: "direct", N: 3}})
			os.WriteFile(cpath(s), catalogBytes(m, c), 0o644)
			s.writeManifest(m)
		},
	}
	for name, spoil := range cases {
		t.Run(name, func(t *testing.T) {
			s := newLib(t)
			added := mustAdd(t, s, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2))
			spoil(t, s)
			s2, err := Open(s.Dir())
			if err != nil {
				t.Fatal(err)
			}
			if name != "wrong content" {
				if c := s2.readerCatalog(); c != nil {
					t.Fatal("a spoilt catalogue was accepted")
				}
			}
			if e, err := s2.Resolve("b"); name != "wrong content" && (err != nil || e.ID != added[1].ID) {
				// (Lookups trust a catalogue that matches its manifest, so
				// one edited by hand misleads them until verify finds it.)
				t.Errorf("resolve by name: %v %v", e, err)
			}
			if e, err := s2.Resolve(added[0].ID[:5]); err != nil || e.ID != added[0].ID {
				t.Errorf("resolve by prefix: %v %v", e, err)
			}
			rep, err := s2.Verify(VerifyOptions{})
			if err != nil || problemCodes(rep) != ProblemCatalog || rep.OK() || rep.Problems[0].Path != catalogName {
				t.Fatalf("verify: %+v %v", rep, err)
			}
			rep, err = s2.Verify(VerifyOptions{Repair: true})
			if err != nil || problemCodes(rep) != ProblemCatalog || !rep.OK() {
				t.Fatalf("repair: %+v %v", rep, err)
			}
			if rep, err = s2.Verify(VerifyOptions{}); err != nil || len(rep.Problems) != 0 {
				t.Fatalf("verify after repair: %+v %v", rep, err)
			}
			checkCatalogCurrent(t, s2)
			if s2.Revision() != 1 {
				t.Errorf("repairing the catalogue changed the revision to %d", s2.Revision())
			}
			// The next write rebuilds a spoilt catalogue by itself and
			// sees every entry while doing so.
			spoil(t, s2)
			if _, _, err := s2.Add(tiEntry("b", "carbide", 397, 3)); !errors.Is(err, ErrNameTaken) {
				t.Errorf("name clash beside a spoilt catalogue: %v", err)
			}
			checkCatalogCurrent(t, s2) // even a refused write leaves the rebuilt catalogue
			mustAdd(t, s2, tiEntry("c", "carbide", 397, 3))
			checkCatalogCurrent(t, s2)
			if n := len(storedCatalog(t, s2).rows); n != 3 {
				t.Errorf("%d rows after the write, want 3", n)
			}
		})
	}
}

// TestCatalogNameClash checks that names are kept unique through the
// catalogue alone: a name whose file became unreadable after it was
// catalogued stays taken (a scan would skip that file).
func TestCatalogNameClash(t *testing.T) {
	s := newLib(t)
	added := mustAdd(t, s, tiEntry("Ti metal", "metal", 383, 1), tiEntry("Ti oxide", "oxide", 388, 2), tiEntry("spoilt", "nitride", 393, 3))
	var nt *NameTakenError
	if _, _, err := s.Add(tiEntry("Ti metal", "carbide", 397, 4)); !errors.As(err, &nt) || nt.ID != added[0].ID {
		t.Errorf("add with a taken name: %v", err)
	}
	if _, _, err := s.Add(tiEntry("new", "carbide", 397, 4), tiEntry("new", "boride", 401, 5)); !errors.Is(err, ErrNameTaken) {
		t.Errorf("one name twice in a batch: %v", err)
	}
	if _, _, err := s.Edit("Ti oxide", map[string]string{"name": "Ti metal"}); !errors.As(err, &nt) || nt.ID != added[0].ID {
		t.Errorf("rename to a taken name: %v", err)
	}
	if _, _, err := s.Edit("Ti oxide", map[string]string{"name": "Ti oxide", "note": "same name is fine"}); err != nil {
		t.Errorf("edit keeping the name: %v", err)
	}
	// Default names avoid catalogued names too.
	out := mustAdd(t, s, &Entry{Element: "Ti", Transition: "L3M23M23", State: "metal", Spectrum: synth(330, 0.5, 201, 384, 3, 100, 0.2, 6)},
		&Entry{Element: "Ti", Transition: "L3M23M23", State: "metal", Spectrum: synth(330, 0.5, 201, 385, 3, 100, 0.2, 7)})
	if out[0].Name != "Ti metal L3M23M23" || out[1].Name != "Ti metal L3M23M23 (2)" {
		t.Errorf("default names %q, %q", out[0].Name, out[1].Name)
	}
	os.WriteFile(filepath.Join(s.Dir(), "refs", added[2].ID+".json"), []byte("{"), 0o644)
	if _, _, err := s.Add(tiEntry("spoilt", "carbide", 397, 4)); !errors.As(err, &nt) || nt.ID != added[2].ID {
		t.Errorf("name of a catalogued entry whose file is now unreadable: %v", err)
	}
	// Resolve does not hand out the unreadable entry (the catalogue says
	// it is there; the file read fails; the scan skips it).
	if _, err := s.Resolve("spoilt"); !errors.Is(err, ErrNotFound) {
		t.Errorf("resolve an unreadable entry by name: %v", err)
	}
}

// TestCatalogDuplicateCheck compares the duplicate-state warnings found
// through the catalogue's candidates with those of the full check against
// every entry, on a library of close lines of several states.
func TestCatalogDuplicateCheck(t *testing.T) {
	s := newLib(t)
	r := rand.New(rand.NewPCG(3, 4))
	states := []string{"metal", "oxide", "nitride"}
	var es []*Entry
	for i := 0; i < 40; i++ {
		e := tiEntry(fmt.Sprintf("e%d", i), states[i%3], 383+float64(r.IntN(5))*0.5, uint64(100+i))
		if i%10 == 9 {
			e.Element, e.Transition = "N", "KL23L23" // same spectrum family, other element
		}
		es = append(es, e)
	}
	_, ws, err := s.Add(es...)
	if err != nil {
		t.Fatal(err)
	}
	// The batch was checked entry by entry against the earlier ones.
	var want []Warning
	for i, e := range es {
		want = append(want, duplicateWarnings(e, es[:i])...)
	}
	if got := onlyCode(ws, WarnDuplicateState); !reflect.DeepEqual(got, want) || len(want) < 10 {
		t.Errorf("batch: %d duplicate warnings, the full check gives %d", len(got), len(want))
	}
	// A new entry against the library.
	for i, st := range []string{"metal", "carbide"} {
		all, _ := s.Entries()
		e := tiEntry(fmt.Sprintf("new %d", i), st, 384, uint64(900+i))
		if err := normalize(e); err != nil {
			t.Fatal(err)
		}
		want := duplicateWarnings(e, all)
		_, ws, err := s.Add(e)
		if err != nil {
			t.Fatal(err)
		}
		if got := onlyCode(ws, WarnDuplicateState); !reflect.DeepEqual(got, want) || len(want) < 5 {
			t.Errorf("%s: %d duplicate warnings, the full check gives %d", st, len(got), len(want))
		}
	}
}

func onlyCode(ws []Warning, code string) []Warning {
	var out []Warning
	for _, w := range ws {
		if w.Code == code {
			out = append(out, w)
		}
	}
	return out
}

// TestCatalogCrashes kills a writer before it renames the entry, the
// manifest or the catalogue into place. Lookups stay right; a name taken
// by the interrupted write stays taken; verify reports what is left and
// repair fixes it.
func TestCatalogCrashes(t *testing.T) {
	for mode, want := range map[string]string{
		"crash-entry":    ProblemLeftover,
		"crash-manifest": ProblemLeftover + "," + ProblemRevision,
		"crash-catalog":  ProblemLeftover + "," + ProblemCatalog,
	} {
		t.Run(mode, func(t *testing.T) {
			s := newLib(t)
			kept := mustAdd(t, s, tiEntry("survivor", "metal", 383, 1))
			c, out := startHelper(t, s.Dir(), mode, 0, time.Now())
			var ee *exec.ExitError
			if err := c.Wait(); !errors.As(err, &ee) || ee.ExitCode() != 7 {
				t.Fatalf("helper: %v\n%s", err, out)
			}
			s2, err := Open(s.Dir())
			if err != nil {
				t.Fatal(err)
			}
			if e, err := s2.Resolve("survivor"); err != nil || e.ID != kept[0].ID {
				t.Errorf("resolve after the crash: %v %v", e, err)
			}
			doomed := tiEntry("doomed", "oxide", 393, 99)
			normalize(doomed)
			e, err := s2.Resolve("doomed")
			if mode == "crash-catalog" && (err != nil || e.ID != doomed.ID) {
				t.Errorf("the write landed before the catalogue: resolve %v %v", e, err)
			}
			if mode == "crash-entry" && !errors.Is(err, ErrNotFound) {
				t.Errorf("resolve an entry never written: %v %v", e, err)
			}
			rep, err := s2.Verify(VerifyOptions{})
			if err != nil || problemCodes(rep) != want || rep.OK() {
				t.Fatalf("verify: %q %+v %v, want %s", problemCodes(rep), rep.Problems, err, want)
			}
			// Before any repair, the next writer sees the entry the crashed
			// write left (the catalogue does not list it, so it reads the
			// files) and keeps its name.
			_, _, err = s2.Add(tiEntry("doomed", "carbide", 397, 4))
			if mode == "crash-entry" && err != nil {
				t.Errorf("add: %v", err)
			}
			if mode != "crash-entry" && !errors.Is(err, ErrNameTaken) {
				t.Errorf("add with the name of the interrupted write's entry: %v", err)
			}
			rep, err = s2.Verify(VerifyOptions{Repair: true})
			if err != nil || !rep.OK() {
				t.Fatalf("repair: %+v %v", rep, err)
			}
			if rep, err = s2.Verify(VerifyOptions{}); err != nil || len(rep.Problems) != 0 {
				t.Fatalf("verify after repair: %+v %v", rep, err)
			}
			checkCatalogCurrent(t, s2)
			mustAdd(t, s2, tiEntry("after", "nitride", 401, 5))
			checkCatalogCurrent(t, s2)
		})
	}
}

// TestCatalogInterruptedEdit kills a writer after it renamed an edited
// entry into place and before the manifest: the entry file list is the
// same, but the next writer notices the folder changed after the
// catalogue was written, reads the files, and keeps the new name taken.
func TestCatalogInterruptedEdit(t *testing.T) {
	s := newLib(t)
	kept := mustAdd(t, s, tiEntry("survivor", "metal", 383, 1))
	c, out := startHelper(t, s.Dir(), "crash-edit", 0, time.Now())
	var ee *exec.ExitError
	if err := c.Wait(); !errors.As(err, &ee) || ee.ExitCode() != 7 {
		t.Fatalf("helper: %v\n%s", err, out)
	}
	s2, err := Open(s.Dir())
	if err != nil {
		t.Fatal(err)
	}
	var nt *NameTakenError
	if _, _, err := s2.Add(tiEntry("renamed", "oxide", 390, 2)); !errors.As(err, &nt) || nt.ID != kept[0].ID {
		t.Errorf("add with the name the interrupted edit gave: %v", err)
	}
	rep, err := s2.Verify(VerifyOptions{})
	if err != nil || problemCodes(rep) != ProblemLeftover+","+ProblemRevision {
		t.Fatalf("verify: %q %+v %v", problemCodes(rep), rep.Problems, err)
	}
	if rep, err = s2.Verify(VerifyOptions{Repair: true}); err != nil || !rep.OK() {
		t.Fatalf("repair: %+v %v", rep, err)
	}
	checkCatalogCurrent(t, s2)
	if e, err := s2.Resolve("renamed"); err != nil || e.ID != kept[0].ID {
		t.Errorf("resolve the edited name after repair: %v %v", e, err)
	}
}
