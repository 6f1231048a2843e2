package library

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"
)

// Problem is one thing verify found wrong.
type Problem struct {
	Path     string `json:"path"`     // file concerned, relative to the library folder
	Code     string `json:"code"`     // one of the Problem codes
	Message  string `json:"message"`  // what is wrong and what to do
	Repaired bool   `json:"repaired"` // true if --repair fixed it
}

// Problem codes.
const (
	ProblemManifest = "manifest" // library.json missing or unreadable
	ProblemJSON     = "json"     // an entry file is not valid JSON
	ProblemSchema   = "schema"   // an entry file lacks or misnames fields
	ProblemHash     = "hash"     // an entry's content does not hash to its id
	ProblemName     = "name"     // two entries share a name
	ProblemRevision = "revision" // the manifest revision is behind an entry's
	ProblemLeftover = "leftover" // a temporary file left by an interrupted write
	ProblemStray    = "stray"    // a file that does not belong in the folder
	ProblemIndex    = "index"    // the index disagrees with the entries
	ProblemCatalog  = "catalog"  // catalog.tsv is missing or stale (derived; repair rebuilds it)
)

// Report is what verify found.
type Report struct {
	Revision int       `json:"revision"` // manifest revision after any repair
	Entries  int       `json:"entries"`  // entry files that read cleanly
	Problems []Problem `json:"problems"`
}

// OK reports whether nothing is left wrong (every problem was repaired).
func (r *Report) OK() bool {
	for _, p := range r.Problems {
		if !p.Repaired {
			return false
		}
	}
	return true
}

// IndexChecker checks derived data (the index) against the entries at a
// revision; with repair it should fix what it can (rebuild) and mark those
// problems Repaired. Package index provides one; library does not know it.
type IndexChecker func(entries []*Entry, revision int, repair bool) ([]Problem, error)

// VerifyOptions configures VerifyDir. The zero value checks without
// repairing and without an index check.
type VerifyOptions struct {
	// Repair fixes what can be fixed without guessing: removes leftover
	// temporary files, raises a manifest revision that lags an entry
	// written by an interrupted operation, rebuilds a missing or unreadable
	// manifest from the entries, and lets CheckIndex rebuild. Entry files
	// that are corrupt or altered are reported, never changed.
	Repair bool
	// CheckIndex, if not nil, is called with the clean entries.
	CheckIndex IndexChecker
	// LockTimeout is how long a repair waits for the writer lock (VerifyDir
	// only; Store.Verify uses the store's). If it is 0, it defaults to
	// DefaultLockTimeout.
	LockTimeout time.Duration
}

// Verify checks the store's library; see VerifyDir.
func (s *Store) Verify(opts VerifyOptions) (*Report, error) {
	rep, err := verifyDir(s.dir, opts, s)
	if err == nil {
		s.Reload()
	}
	return rep, err
}

// VerifyDir checks every file of the library in dir: the manifest, each
// entry's schema and hash (its id recomputed), unique names, the manifest
// revision against the entries', and leftover temporary files; with
// opts.CheckIndex, the index. It works on a library whose manifest is
// missing or unreadable. A read-only verify takes no lock; a repair takes
// the writer lock.
func VerifyDir(dir string, opts VerifyOptions) (*Report, error) {
	return verifyDir(dir, opts, &Store{dir: dir, LockTimeout: opts.LockTimeout})
}

func verifyDir(dir string, opts VerifyOptions, s *Store) (*Report, error) {
	if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
		return nil, fmt.Errorf("%s: %w", dir, ErrNotLibrary)
	}
	if opts.Repair {
		lk, err := acquireLock(dir, s.lockTimeout(), s.now)
		if err != nil {
			return nil, err
		}
		defer lk.release()
	}
	rep := &Report{Problems: []Problem{}}
	add := func(path, code, msg string, repaired bool) {
		rep.Problems = append(rep.Problems, Problem{Path: path, Code: code, Message: msg, Repaired: repaired})
	}
	rel := func(p string) string {
		if r, err := filepath.Rel(dir, p); err == nil {
			return r
		}
		return p
	}

	// Leftover temporary files. A read-only verify may run beside a writer,
	// so it lists temporary files first, then checks that no writer holds the
	// lock, then that each listed file still exists: a writer that released
	// the lock has renamed or removed its own, so those that remain are
	// leftovers of a crash.
	var temps []string
	removedTemp := false // a repair removed one: the folder mtimes the catalogue records change
	for _, sub := range []string{".", refsDir, runsDir} {
		des, err := os.ReadDir(filepath.Join(dir, sub))
		if err != nil {
			continue
		}
		for _, de := range des {
			if isTempName(de.Name()) {
				temps = append(temps, filepath.Join(dir, sub, de.Name()))
			}
		}
	}
	if len(temps) > 0 && (opts.Repair || tryLockFree(dir)) {
		for _, p := range temps {
			if _, err := os.Lstat(p); err != nil {
				continue
			}
			repaired := false
			if opts.Repair {
				if err := os.Remove(p); err == nil {
					repaired = true
					removedTemp = true
				}
			}
			add(rel(p), ProblemLeftover, "temporary file left by an interrupted write; repair removes it", repaired)
		}
	}

	// Entries.
	var entries []*Entry
	var badRows []catRow // entry files that cannot be used, for the catalogue
	maxRev := 0
	for _, sub := range []string{refsDir, runsDir} {
		d := filepath.Join(dir, sub)
		des, err := os.ReadDir(d)
		if errors.Is(err, fs.ErrNotExist) {
			add(sub, ProblemStray, fmt.Sprintf("folder %s/ is missing", sub), opts.Repair && os.MkdirAll(d, 0o755) == nil)
			continue
		}
		if err != nil {
			return nil, err
		}
		for _, de := range des {
			name := de.Name()
			p := filepath.Join(d, name)
			if isTempName(name) {
				continue
			}
			id, ok := strings.CutSuffix(name, ".json")
			if de.IsDir() || !ok || !isID(id) {
				add(rel(p), ProblemStray, "not an entry file (want <12 hex digits>.json); left alone", false)
				continue
			}
			b, err := os.ReadFile(p)
			if err != nil {
				if errors.Is(err, fs.ErrNotExist) {
					continue
				}
				return nil, err
			}
			e, err := decodeEntry(b)
			if err != nil {
				code := ProblemSchema
				if strings.HasPrefix(err.Error(), "not valid JSON") {
					code = ProblemJSON
				}
				add(rel(p), code, err.Error()+"; restore it from a backup or bundle, or remove it", false)
				badRows = append(badRows, catRow{ID: id, Kind: folderKind(sub), Bad: true})
				continue
			}
			if err := checkStored(e, id, sub); err != nil {
				code := ProblemSchema
				if strings.Contains(err.Error(), "content hash") {
					code = ProblemHash
				}
				add(rel(p), code, err.Error(), false)
				badRows = append(badRows, catRow{ID: id, Kind: folderKind(sub), Bad: true})
				continue
			}
			// Usable, but fields this version does not know (a misspelt
			// hand edit) or labels that no longer validate are reported.
			if err := strictDecode(b); err != nil {
				add(rel(p), ProblemSchema, err.Error()+"; the field is ignored: fix the file by hand or with statemix library edit", false)
			} else if err := normalize(e.Clone()); err != nil {
				add(rel(p), ProblemSchema, err.Error()+"; fix it with statemix library edit", false)
			}
			if e.Revision > maxRev {
				maxRev = e.Revision
			}
			entries = append(entries, e)
		}
	}
	sortEntries(entries)
	rep.Entries = len(entries)
	byName := map[string][]string{}
	for _, e := range entries {
		byName[e.Name] = append(byName[e.Name], e.ID)
	}
	var dupNames []string
	for n, ids := range byName {
		if len(ids) > 1 {
			dupNames = append(dupNames, n)
		}
	}
	sort.Strings(dupNames)
	for _, n := range dupNames {
		add(manifestName, ProblemName, fmt.Sprintf("name %q is used by %s; rename one with statemix library edit ID --set name=...", n, strings.Join(byName[n], ", ")), false)
	}

	// The catalogue the files call for.
	files := map[string]catRow{}
	revs := map[string]int{}
	rows := append([]catRow(nil), badRows...)
	for _, e := range entries {
		rows = append(rows, rowOf(e))
	}
	rows = dedupRows(rows)
	for _, r := range rows {
		files[r.ID] = r
	}
	for _, e := range entries {
		revs[e.ID] = e.Revision
	}
	scanned := func(rev int) *catalog { return newCatalog(rev, append([]catRow(nil), rows...)) }

	// Manifest.
	m, merr := readManifest(dir)
	if merr != nil {
		repaired := false
		if opts.Repair {
			t := s.now().UTC()
			m = &manifest{Format: manifestFormat, Version: manifestVersion, Revision: maxRev + 1,
				CreatedAt: t, ModifiedAt: t, ChangesFrom: maxRev + 1}
			if err := s.writeManifestCatalog(m, scanned(m.Revision)); err == nil {
				repaired = true
			}
		}
		add(manifestName, ProblemManifest, merr.Error()+"; repair rebuilds it from the entries (the change log starts afresh)", repaired)
	} else if maxRev > m.Revision && !opts.Repair {
		// Beside a writer the entry may be renamed into place before the
		// manifest: wait for the writer to finish, then look again.
		deadline := time.Now().Add(s.lockTimeout())
		for !tryLockFree(dir) && time.Now().Before(deadline) {
			time.Sleep(lockPoll)
		}
		if m2, err := readManifest(dir); err == nil {
			m = m2
		}
	}
	catProblem := -1 // index in rep.Problems
	if merr == nil {
		if why := s.checkCatalog(m, files, revs, !opts.Repair); why != "" {
			catProblem = len(rep.Problems)
			add(catalogName, ProblemCatalog, why+"; writers and lookups read every entry file until it is rebuilt: repair (or the next write) rebuilds it", false)
		}
	}
	if merr == nil && maxRev > m.Revision {
		behind := m.Revision // commit raises m.Revision
		var changes []Change
		for _, e := range entries {
			if e.Revision > m.Revision {
				changes = append(changes, Change{Revision: maxRev, Op: OpEdit, ID: e.ID, Kind: e.Kind})
			}
		}
		repaired := false
		if opts.Repair {
			if err := s.commit(m, maxRev, s.now().UTC(), changes, scanned(maxRev)); err == nil {
				repaired = true
				removedTemp = false // the commit wrote the catalogue
			}
		}
		if catProblem >= 0 {
			rep.Problems[catProblem].Repaired = repaired // the commit wrote a fresh catalogue
			catProblem = -1
		}
		add(manifestName, ProblemRevision, fmt.Sprintf("revision %d is behind entries written at revision %d (an interrupted write); repair raises it", behind, maxRev), repaired)
	}
	if opts.Repair && merr == nil && (catProblem >= 0 || removedTemp) {
		ok := s.writeManifestCatalog(m, scanned(m.Revision)) == nil
		if catProblem >= 0 {
			rep.Problems[catProblem].Repaired = ok
		}
	}
	if m != nil {
		rep.Revision = m.Revision
	}

	if opts.CheckIndex != nil {
		ps, err := opts.CheckIndex(entries, rep.Revision, opts.Repair)
		if err != nil {
			return nil, fmt.Errorf("check index: %w", err)
		}
		rep.Problems = append(rep.Problems, ps...)
	}
	return rep, nil
}

// folderKind is the kind of the entries a folder holds.
func folderKind(folder string) Kind {
	if folder == runsDir {
		return KindMeasurement
	}
	return KindReference
}

// checkCatalog compares the catalogue of manifest m with the entry files
// (files: the row each file calls for, bad rows for unusable files; revs:
// their revisions) and says what is wrong, or "" if nothing. Entries
// written after the catalogue's revision belong to an interrupted write
// (reported as a revision problem) and are left out; so are unusable files,
// as long as the catalogue lists them. Beside writers (settle), a
// disagreement may be a write in progress: it waits for the writer lock to
// be free, re-reads the manifest, the catalogue and the disagreeing files,
// and looks again, a few times.
func (s *Store) checkCatalog(m *manifest, files map[string]catRow, revs map[string]int, settle bool) string {
	why, diff := catalogDiff(s.dir, m, files, revs)
	deadline := time.Now().Add(s.lockTimeout())
	for try := 0; why != "" && settle && try < 20 && time.Now().Before(deadline); try++ {
		for !tryLockFree(s.dir) && time.Now().Before(deadline) {
			time.Sleep(lockPoll)
		}
		m2, err := readManifest(s.dir)
		if err != nil {
			break
		}
		for _, id := range diff {
			delete(files, id)
			delete(revs, id)
			for _, k := range []Kind{KindReference, KindMeasurement} {
				p := s.entryPath(k, id)
				e, err := ReadEntryFile(p)
				if err == nil {
					files[id], revs[id] = rowOf(e), e.Revision
					break
				}
				if _, serr := os.Lstat(p); serr == nil {
					files[id] = catRow{ID: id, Kind: k, Bad: true}
					break
				}
			}
		}
		why, diff = catalogDiff(s.dir, m2, files, revs)
	}
	return why
}

// catalogDiff reads the catalogue of m and returns what is wrong with it
// and the ids of the entries on which it disagrees with files.
func catalogDiff(dir string, m *manifest, files map[string]catRow, revs map[string]int) (string, []string) {
	c, err := readCatalog(dir, m)
	if err != nil {
		return err.Error(), nil
	}
	var diff []string
	for id, f := range files {
		i, ok := c.index(id)
		if !ok {
			if f.Bad || revs[id] <= c.Revision {
				diff = append(diff, id)
			}
			continue
		}
		if f.Bad || revs[id] > c.Revision {
			continue
		}
		if c.rows[i] != f {
			diff = append(diff, id)
		}
	}
	for _, r := range c.rows {
		if _, ok := files[r.ID]; !ok {
			diff = append(diff, r.ID)
		}
	}
	if len(diff) == 0 {
		return "", nil
	}
	sort.Strings(diff)
	ex := diff
	if len(ex) > 3 {
		ex = ex[:3]
	}
	return fmt.Sprintf("%s disagrees with %d entry files (%s)", catalogName, len(diff), strings.Join(ex, ", ")), diff
}

// strictDecode decodes an entry file refusing fields the entry type does
// not have.
func strictDecode(b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	var f entryFile
	if err := dec.Decode(&f); err != nil {
		return fmt.Errorf("schema: %v", err)
	}
	return nil
}
