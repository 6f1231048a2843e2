package library

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"time"
)

// File and folder names inside a library.
const (
	manifestName = "library.json"
	lockName     = ".lock"
	refsDir      = "refs"
	runsDir      = "runs"
	indexDir     = "index"
)

const (
	manifestFormat  = "statemix-library"
	manifestVersion = 1
	// maxChanges is how many change records the manifest keeps.
	maxChanges = 2000
)

// Change records one entry written or removed at a revision.
type Change struct {
	Revision int    `json:"revision"`
	Op       string `json:"op"` // "add", "edit", "remove"
	ID       string `json:"id"`
	Kind     Kind   `json:"kind"`
}

// The change operations.
const (
	OpAdd    = "add"
	OpEdit   = "edit"
	OpRemove = "remove"
)

// manifest is library.json.
type manifest struct {
	Format     string    `json:"format"`
	Version    int       `json:"version"`
	Revision   int       `json:"revision"`
	CreatedAt  time.Time `json:"created_at"`
	ModifiedAt time.Time `json:"modified_at"`
	// ChangesFrom is the revision up to which change records have been
	// dropped: Changes is complete for every revision above it.
	ChangesFrom int      `json:"changes_from"`
	Changes     []Change `json:"changes"`
	// Catalog is the SHA-256 (hex) of the catalogue (catalog.tsv) written
	// with this manifest; empty when a version without catalogue wrote it.
	Catalog string `json:"catalog_sha256,omitempty"`
}

// Store is an open library. Its methods are safe for concurrent use by
// several goroutines and several processes: writers serialise on the
// library's lock file, readers take no lock.
type Store struct {
	// LockTimeout is how long a write waits for the writer lock. If it is
	// 0, it defaults to DefaultLockTimeout.
	LockTimeout time.Duration
	// Now is the clock used for timestamps; it must be safe for concurrent
	// use. If it is nil, time.Now is used.
	Now func() time.Time

	dir string

	mu  sync.Mutex
	man manifest
}

// Create makes a new, empty library in dir (creating dir if needed) and
// opens it. It is an error if dir already holds a library.
func Create(dir string) (*Store, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("create library: %w", err)
	}
	s := &Store{dir: dir}
	lk, err := acquireLock(dir, s.lockTimeout(), s.now)
	if err != nil {
		return nil, err
	}
	defer lk.release()
	mpath := filepath.Join(dir, manifestName)
	if _, err := os.Stat(mpath); err == nil {
		return nil, fmt.Errorf("%s: %w", dir, ErrLibraryExists)
	}
	for _, sub := range []string{refsDir, runsDir} {
		if des, _ := os.ReadDir(filepath.Join(dir, sub)); len(des) > 0 {
			return nil, fmt.Errorf("%s has entry files in %s/ but no %s: statemix library verify --repair rebuilds the manifest from them", dir, sub, manifestName)
		}
	}
	for _, sub := range []string{refsDir, runsDir} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			return nil, fmt.Errorf("create library: %w", err)
		}
	}
	t := s.now().UTC()
	s.man = manifest{Format: manifestFormat, Version: manifestVersion, CreatedAt: t, ModifiedAt: t, Changes: []Change{}}
	if err := s.writeManifestCatalog(&s.man, newCatalog(0, nil)); err != nil {
		return nil, err
	}
	if err := syncDir(dir); err != nil {
		return nil, err
	}
	return s, nil
}

// Open opens the library in dir. It is an error (wrapping ErrNotLibrary)
// if dir has no library.json, and a *CorruptError if library.json cannot be
// read; VerifyDir works on such a folder.
func Open(dir string) (*Store, error) {
	s := &Store{dir: dir}
	if err := s.Reload(); err != nil {
		return nil, err
	}
	return s, nil
}

// Dir returns the library folder.
func (s *Store) Dir() string { return s.dir }

// IndexDir returns <library>/index, the folder package index owns.
func (s *Store) IndexDir() string { return filepath.Join(s.dir, indexDir) }

// Revision returns the manifest revision as last read: at Open, by Reload
// or Entries, or after this Store's own writes.
func (s *Store) Revision() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.man.Revision
}

// Reload re-reads the manifest.
func (s *Store) Reload() error {
	m, err := readManifest(s.dir)
	if err != nil {
		return err
	}
	s.mu.Lock()
	s.man = *m
	s.mu.Unlock()
	return nil
}

// ChangesSince returns the changes recorded after revision rev, oldest
// first, and the revision they bring the library to. complete is false
// when the manifest no longer holds every record after rev (the log is
// bounded); a reader keeping derived data (the index) must then rebuild
// from Entries. It re-reads the manifest.
func (s *Store) ChangesSince(rev int) (changes []Change, revision int, complete bool, err error) {
	if err := s.Reload(); err != nil {
		return nil, 0, false, err
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, c := range s.man.Changes {
		if c.Revision > rev {
			changes = append(changes, c)
		}
	}
	return changes, s.man.Revision, rev >= s.man.ChangesFrom && rev <= s.man.Revision, nil
}

func (s *Store) now() time.Time {
	if s.Now != nil {
		return s.Now()
	}
	return time.Now()
}

func (s *Store) lockTimeout() time.Duration {
	if s.LockTimeout > 0 {
		return s.LockTimeout
	}
	return DefaultLockTimeout
}

// readManifest reads and checks <dir>/library.json.
func readManifest(dir string) (*manifest, error) {
	path := filepath.Join(dir, manifestName)
	b, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("%s: %w (no %s; run statemix library init)", dir, ErrNotLibrary, manifestName)
	}
	if err != nil {
		return nil, err
	}
	m, err := parseManifest(b)
	if err != nil {
		return nil, &CorruptError{Path: path, Err: err}
	}
	return m, nil
}

func parseManifest(b []byte) (*manifest, error) {
	var m manifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("not valid JSON: %v", err)
	}
	if m.Format != manifestFormat {
		return nil, fmt.Errorf("format %q, want %q", m.Format, manifestFormat)
	}
	if m.Version != manifestVersion {
		return nil, fmt.Errorf("version %d, this program reads version %d", m.Version, manifestVersion)
	}
	if m.Revision < 0 {
		return nil, fmt.Errorf("negative revision %d", m.Revision)
	}
	return &m, nil
}

// writeManifest writes m atomically.
func (s *Store) writeManifest(m *manifest) error {
	if m.Changes == nil {
		m.Changes = []Change{}
	}
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(filepath.Join(s.dir, manifestName), append(b, '\n'))
}

// writeManifestCatalog writes m, recording the digest of catalogue c, and
// then c. The manifest goes first: if the catalogue write fails or is
// interrupted, the manifest's digest no longer matches the catalogue file,
// readers fall back to reading the entry files and the next writer (or
// verify --repair) writes a fresh catalogue. Only a failed manifest write
// is an error.
func (s *Store) writeManifestCatalog(m *manifest, c *catalog) error {
	c.Revision = m.Revision
	c.DirTimes = s.dirTimes() // the caller's changes to refs/ and runs/ are done
	cb := catalogBytes(m, c)
	if err := s.writeManifest(m); err != nil {
		return err
	}
	writeFileAtomic(filepath.Join(s.dir, catalogName), cb)
	return nil
}

// entryPath returns the file of entry id of kind k.
func (s *Store) entryPath(k Kind, id string) string {
	return filepath.Join(s.dir, k.folder(), id+".json")
}

// encodeEntry returns the on-disk bytes of e.
func encodeEntry(e *Entry) ([]byte, error) {
	b, err := json.MarshalIndent(entryFile{Format: entryFormat, Version: entryVersion, Entry: *e}, "", "  ")
	if err != nil {
		return nil, fmt.Errorf("encode entry %s: %w", e.ID, err)
	}
	return append(b, '\n'), nil
}

// decodeEntry parses an entry file's bytes and checks its schema. It does
// not check the ID against the content; see checkEntry.
func decodeEntry(b []byte) (*Entry, error) {
	var f entryFile
	if err := json.Unmarshal(b, &f); err != nil {
		return nil, fmt.Errorf("not valid JSON: %v", err)
	}
	if f.Format != entryFormat {
		return nil, fmt.Errorf("format %q, want %q", f.Format, entryFormat)
	}
	if f.Version != entryVersion {
		return nil, fmt.Errorf("version %d, this program reads version %d", f.Version, entryVersion)
	}
	e := f.Entry
	if len(e.Fit) > 0 {
		c, err := compactJSON(e.Fit)
		if err != nil {
			return nil, fmt.Errorf("fit: %v", err)
		}
		e.Fit = c
	}
	return &e, nil
}

// compactJSON returns b without insignificant space: the form in which an
// entry holds its fit result in memory (files hold it indented).
func compactJSON(b []byte) (json.RawMessage, error) {
	var buf bytes.Buffer
	if err := json.Compact(&buf, b); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// ReadEntryFile reads one entry file and checks its schema and that its ID
// matches its content. Errors are *CorruptError.
func ReadEntryFile(path string) (*Entry, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	e, err := decodeEntry(b)
	if err == nil {
		err = checkStored(e, strings.TrimSuffix(filepath.Base(path), ".json"), filepath.Base(filepath.Dir(path)))
	}
	if err != nil {
		return nil, &CorruptError{Path: path, Err: err}
	}
	return e, nil
}

// checkStored checks a decoded entry against its file name and folder:
// schema of the fields, id = hash of the content.
func checkStored(e *Entry, fileID, folder string) error {
	if e.ID != fileID {
		return fmt.Errorf("id %q does not match the file name", e.ID)
	}
	if e.Kind != KindReference && e.Kind != KindMeasurement {
		return fmt.Errorf("kind %q, want reference or measurement", e.Kind)
	}
	if e.Kind.folder() != folder {
		return fmt.Errorf("a %s does not belong in %s/", e.Kind, folder)
	}
	if e.Spectrum == nil {
		return errors.New("no spectrum")
	}
	if err := e.Spectrum.Validate(); err != nil {
		return fmt.Errorf("spectrum: %v", err)
	}
	id, err := ComputeID(e)
	if err != nil {
		return err
	}
	if id != e.ID {
		return fmt.Errorf("content hash %s does not match id %s: the spectrum was altered", id, e.ID)
	}
	if e.Name == "" {
		return errors.New("no name")
	}
	return nil
}

// Entries reads every entry file. Files that cannot be read are reported
// in errs (each a *CorruptError naming the file) and left out; the rest are
// returned sorted by kind (references first), element, name. It also
// re-reads the manifest (a manifest error is reported in errs too).
func (s *Store) Entries() (entries []*Entry, errs []error) {
	if err := s.Reload(); err != nil {
		errs = append(errs, err)
	}
	for _, sub := range []string{refsDir, runsDir} {
		dir := filepath.Join(s.dir, sub)
		des, err := os.ReadDir(dir)
		if err != nil {
			if !errors.Is(err, fs.ErrNotExist) {
				errs = append(errs, err)
			}
			continue
		}
		for _, de := range des {
			name := de.Name()
			if de.IsDir() || strings.HasPrefix(name, ".") || !strings.HasSuffix(name, ".json") {
				continue
			}
			e, err := ReadEntryFile(filepath.Join(dir, name))
			if errors.Is(err, fs.ErrNotExist) {
				continue // removed while we listed
			}
			if err != nil {
				errs = append(errs, err)
				continue
			}
			entries = append(entries, e)
		}
	}
	sortEntries(entries)
	return entries, errs
}

func sortEntries(es []*Entry) {
	sort.Slice(es, func(i, j int) bool {
		a, b := es[i], es[j]
		if a.Kind != b.Kind {
			return a.Kind == KindReference
		}
		if a.Element != b.Element {
			return a.Element < b.Element
		}
		if a.Name != b.Name {
			return a.Name < b.Name
		}
		return a.ID < b.ID
	})
}

// Resolve finds the entry ref names: a full ID, else a unique name, else a
// unique ID prefix of at least 4 characters. An ambiguous prefix or name
// is an *AmbiguousError listing the IDs; no match a *NotFoundError.
//
// A full id is read directly; a name or prefix is looked up in the
// catalogue (see catalog.go), and only the one entry file is read. Without
// a usable catalogue (an older version wrote the library, or a write was
// interrupted) the names and ids of all entry files are read instead. An
// entry file that cannot be read does not take part.
func (s *Store) Resolve(ref string) (*Entry, error) {
	r := strings.TrimSpace(ref)
	if isID(r) {
		for _, k := range []Kind{KindReference, KindMeasurement} {
			e, err := ReadEntryFile(s.entryPath(k, r))
			if err == nil {
				return e, nil
			}
			if !errors.Is(err, fs.ErrNotExist) {
				return nil, err
			}
		}
	}
	if c := s.readerCatalog(); c != nil {
		row, err := c.resolve(ref)
		if err != nil {
			return nil, err
		}
		if e, ok := s.readRowEntry(row); ok {
			return e, nil
		}
		// The file changed after the catalogue was read: scan.
	}
	heads := s.heads()
	h, err := resolveIn(heads, ref)
	if err != nil {
		return nil, err
	}
	return ReadEntryFile(s.entryPath(h.Kind, h.ID))
}

// heads returns the id, kind and name of every readable entry file,
// skipping the spectra (their numbers are most of the decoding work).
func (s *Store) heads() []*Entry {
	var out []*Entry
	for _, k := range []Kind{KindReference, KindMeasurement} {
		dir := filepath.Join(s.dir, k.folder())
		des, err := os.ReadDir(dir)
		if err != nil {
			continue
		}
		for _, de := range des {
			name := de.Name()
			id, ok := strings.CutSuffix(name, ".json")
			if de.IsDir() || strings.HasPrefix(name, ".") || !ok || !isID(id) {
				continue
			}
			h, err := readHead(filepath.Join(dir, name))
			if err != nil || h.Format != entryFormat || h.ID != id || h.Kind != k {
				continue
			}
			out = append(out, &Entry{ID: h.ID, Kind: h.Kind, Name: h.Name})
		}
	}
	return out
}

func resolveIn(entries []*Entry, ref string) (*Entry, error) {
	r := strings.TrimSpace(ref)
	if r == "" {
		return nil, &NotFoundError{Ref: ref}
	}
	for _, e := range entries {
		if e.ID == r {
			return e, nil
		}
	}
	var byName []*Entry
	for _, e := range entries {
		if e.Name == r {
			byName = append(byName, e)
		}
	}
	if len(byName) == 1 {
		return byName[0], nil
	}
	if len(byName) > 1 {
		return nil, &AmbiguousError{Ref: ref, IDs: ids(byName)}
	}
	lr := strings.ToLower(r)
	if len(lr) >= minPrefix && isHex(lr) {
		var byPrefix []*Entry
		for _, e := range entries {
			if strings.HasPrefix(e.ID, lr) {
				byPrefix = append(byPrefix, e)
			}
		}
		if len(byPrefix) == 1 {
			return byPrefix[0], nil
		}
		if len(byPrefix) > 1 {
			return nil, &AmbiguousError{Ref: ref, IDs: ids(byPrefix)}
		}
	}
	return nil, &NotFoundError{Ref: ref}
}

func ids(es []*Entry) []string {
	out := make([]string, len(es))
	for i, e := range es {
		out[i] = e.ID
	}
	sort.Strings(out)
	return out
}

// Warning is something about a new or edited entry the analyst should
// look at; the entry is still written.
type Warning struct {
	Ref     string `json:"ref,omitempty"`  // entry ID
	Name    string `json:"name,omitempty"` // entry name
	Code    string `json:"code"`           // WarnEnergyRange, WarnTransitionEnergy, WarnDuplicateState
	Message string `json:"message"`
}

// Warning codes.
const (
	WarnEnergyRange      = "energy-range"      // spectrum reaches outside 20 eV - 3 keV
	WarnTransitionEnergy = "transition-energy" // main feature far from the Chung-Jenkins estimate
	WarnDuplicateState   = "duplicate-state"   // same lineshape as a reference of another state
	WarnNoEstimate       = "no-estimate"       // no energy estimate for the transition
)

// String returns "name: message".
func (w Warning) String() string {
	if w.Name == "" {
		return w.Message
	}
	return w.Name + ": " + w.Message
}

// Add validates and writes new entries in one operation (one revision):
// either all are written or none. Each entry is normalised in place
// (canonical element, transition and state; ID; a default name when Name
// is empty; ImportedAt when zero; Revision) and the stored entries are
// returned with the warnings. Invalid labels are a *ValidationError, a
// spectrum already in the library an *ExistsError, a name in use a
// *NameTakenError.
func (s *Store) Add(es ...*Entry) ([]*Entry, []Warning, error) {
	if len(es) == 0 {
		return nil, nil, nil
	}
	var warns []Warning
	for _, e := range es {
		if err := normalize(e); err != nil {
			return nil, nil, err
		}
	}
	lk, err := acquireLock(s.dir, s.lockTimeout(), s.now)
	if err != nil {
		return nil, nil, err
	}
	defer lk.release()
	m, err := readManifest(s.dir)
	if err != nil {
		return nil, nil, err
	}
	c := s.writerCatalog(m)
	if err := s.checkNew(es, c); err != nil {
		return nil, nil, err
	}
	rev := m.Revision + 1
	t := s.now().UTC()
	rows := make([]catRow, len(es))
	for i, e := range es {
		e.Revision = rev
		if e.Provenance.ImportedAt.IsZero() {
			e.Provenance.ImportedAt = t
		}
		rows[i] = rowOf(e)
		warns = append(warns, intrinsicWarnings(e)...)
		// Later new entries are checked against earlier ones too.
		warns = append(warns, s.dupWarnings(e, &rows[i], c, es[:i], rows[:i])...)
	}
	if err := s.writeNew(m, rev, t, es, c.with(rev, nil, rows)); err != nil {
		return nil, nil, err
	}
	return es, warns, nil
}

// writeNew writes the files of new entries and then the manifest at
// revision rev with catalogue c. If a write fails, the files already
// written by this call are removed again, so that an operation lands
// completely or not at all (a crash instead leaves them for verify, which
// reports them).
func (s *Store) writeNew(m *manifest, rev int, t time.Time, es []*Entry, c *catalog) error {
	var changes []Change
	var written []string
	undo := func() {
		for _, p := range written {
			removeFileDurable(p)
		}
	}
	for _, e := range es {
		b, err := encodeEntry(e)
		if err != nil {
			undo()
			return err
		}
		p := s.entryPath(e.Kind, e.ID)
		if err := writeFileAtomic(p, b); err != nil {
			undo()
			return fmt.Errorf("write entry %s: %w", e.ID, err)
		}
		written = append(written, p)
		changes = append(changes, Change{Revision: rev, Op: OpAdd, ID: e.ID, Kind: e.Kind})
	}
	if err := s.commit(m, rev, t, changes, c); err != nil {
		undo()
		return err
	}
	return nil
}

// checkNew checks normalised new entries against the library's catalogue:
// IDs not already there (nor taken by a corrupt file), names unique, and
// gives entries without a name a default one.
func (s *Store) checkNew(es []*Entry, c *catalog) error {
	names := map[string]string{} // names taken by this batch
	taken := func(n string) (string, bool) {
		if id, ok := names[n]; ok {
			return id, true
		}
		return c.nameOwner(n, "")
	}
	seen := map[string]bool{}
	for _, e := range es {
		if x, ok := c.row(e.ID); ok {
			return &ExistsError{ID: e.ID, Name: x.Name}
		}
		if seen[e.ID] {
			return &ExistsError{ID: e.ID, Name: e.Name}
		}
		if _, err := os.Lstat(s.entryPath(e.Kind, e.ID)); err == nil {
			return fmt.Errorf("entry file %s exists but cannot be read; run statemix library verify: %w", s.entryPath(e.Kind, e.ID), ErrExists)
		}
		seen[e.ID] = true
	}
	for _, e := range es {
		if e.Name == "" {
			continue
		}
		if id, ok := taken(e.Name); ok {
			return &NameTakenError{Name: e.Name, ID: id}
		}
		names[e.Name] = ""
	}
	for _, e := range es {
		if e.Name != "" {
			continue
		}
		base := defaultName(e)
		n := base
		for i := 2; ; i++ {
			if _, ok := taken(n); !ok {
				break
			}
			n = fmt.Sprintf("%s (%d)", base, i)
		}
		e.Name = n
		names[n] = ""
	}
	return nil
}

// defaultName is the name an entry gets when none is given: "Ti nitride
// L3M23M23" for a reference, "measurement <source> block N" for a run.
func defaultName(e *Entry) string {
	if e.Kind == KindMeasurement {
		src := filepath.Base(e.Provenance.SourceFile)
		if e.Provenance.SourceFile == "" {
			src = e.ID
		}
		return fmt.Sprintf("%s block %d", src, e.Provenance.Block+1)
	}
	parts := []string{}
	for _, p := range []string{e.Element, e.State, e.Transition} {
		if p != "" {
			parts = append(parts, p)
		}
	}
	if len(parts) == 0 {
		return e.ID
	}
	return strings.Join(parts, " ")
}

// commit writes the manifest at revision rev with changes appended, and
// the catalogue c of the library after the write.
func (s *Store) commit(m *manifest, rev int, t time.Time, changes []Change, c *catalog) error {
	m.Revision = rev
	m.ModifiedAt = t
	m.Changes = append(m.Changes, changes...)
	if n := len(m.Changes); n > maxChanges {
		drop := n - maxChanges
		// Drop whole revisions only.
		for drop < n && m.Changes[drop].Revision == m.Changes[drop-1].Revision {
			drop++
		}
		m.ChangesFrom = m.Changes[drop-1].Revision
		m.Changes = append([]Change(nil), m.Changes[drop:]...)
	}
	if err := s.writeManifestCatalog(m, c); err != nil {
		return fmt.Errorf("write manifest: %w", err)
	}
	s.mu.Lock()
	s.man = *m
	s.mu.Unlock()
	return nil
}

// EditKeys are the keys Edit accepts; "tag.<key>" sets or (with an empty
// value) deletes a tag.
var EditKeys = []string{
	"name", "element", "transition", "state", "compound", "note", "tag.<key>",
	"density_g_cm3", "valence", "band_gap_ev",
	"beam_energy_kev", "beam_current_na", "modulation_ev", "dwell_s", "scans",
	"analyser_mode", "energy_reference", "technique", "take_off_deg",
}

// Edit changes labels of the entry ref names (see EditKeys); an empty value
// clears an optional field. The spectrum and provenance cannot be edited,
// so the ID stays. All keys are checked before anything is written.
func (s *Store) Edit(ref string, set map[string]string) (*Entry, []Warning, error) {
	lk, err := acquireLock(s.dir, s.lockTimeout(), s.now)
	if err != nil {
		return nil, nil, err
	}
	defer lk.release()
	m, err := readManifest(s.dir)
	if err != nil {
		return nil, nil, err
	}
	c, old, err := s.resolveLocked(m, ref)
	if err != nil {
		return nil, nil, err
	}
	e := old.Clone()
	if err := applyEdits(e, set); err != nil {
		return nil, nil, err
	}
	if err := normalize(e); err != nil {
		return nil, nil, err
	}
	if e.ID != old.ID {
		panic("library: edit changed the id") // applyEdits never touches spectrum or fit
	}
	if e.Name != old.Name {
		if id, ok := c.nameOwner(e.Name, e.ID); ok {
			return nil, nil, &NameTakenError{Name: e.Name, ID: id}
		}
	}
	rev := m.Revision + 1
	t := s.now().UTC()
	e.Revision = rev
	e.ModifiedAt = t
	row := rowOf(e)
	warns := append(intrinsicWarnings(e), s.dupWarnings(e, &row, c, nil, nil)...)
	b, err := encodeEntry(e)
	if err != nil {
		return nil, nil, err
	}
	if err := writeFileAtomic(s.entryPath(e.Kind, e.ID), b); err != nil {
		return nil, nil, fmt.Errorf("write entry %s: %w", e.ID, err)
	}
	if err := s.commit(m, rev, t, []Change{{Revision: rev, Op: OpEdit, ID: e.ID, Kind: e.Kind}}, c.with(rev, nil, []catRow{row})); err != nil {
		if ob, oerr := encodeEntry(old); oerr == nil {
			writeFileAtomic(s.entryPath(old.Kind, old.ID), ob) // put the old labels back
		}
		return nil, nil, err
	}
	return e, warns, nil
}

// Remove deletes the entry ref names and returns it.
func (s *Store) Remove(ref string) (*Entry, error) {
	lk, err := acquireLock(s.dir, s.lockTimeout(), s.now)
	if err != nil {
		return nil, err
	}
	defer lk.release()
	m, err := readManifest(s.dir)
	if err != nil {
		return nil, err
	}
	c, e, err := s.resolveLocked(m, ref)
	if err != nil {
		return nil, err
	}
	if err := removeFileDurable(s.entryPath(e.Kind, e.ID)); err != nil {
		return nil, fmt.Errorf("remove entry %s: %w", e.ID, err)
	}
	rev := m.Revision + 1
	if err := s.commit(m, rev, s.now().UTC(), []Change{{Revision: rev, Op: OpRemove, ID: e.ID, Kind: e.Kind}}, c.with(rev, []string{e.ID}, nil)); err != nil {
		return nil, err
	}
	return e, nil
}

// resolveLocked resolves ref for a writer holding the lock, whose manifest
// is m, and reads the entry: it returns the catalogue to update. If the
// entry file no longer says what the catalogue does (a file changed by
// hand), the catalogue is rebuilt from the files and ref resolved again.
func (s *Store) resolveLocked(m *manifest, ref string) (*catalog, *Entry, error) {
	c := s.writerCatalog(m)
	row, err := c.resolve(ref)
	if err != nil {
		return nil, nil, err
	}
	if e, ok := s.readRowEntry(row); ok {
		return c, e, nil
	}
	c = s.rebuildCatalog(m)
	if row, err = c.resolve(ref); err != nil {
		return nil, nil, err
	}
	e, err := ReadEntryFile(s.entryPath(row.Kind, row.ID))
	if err != nil {
		return nil, nil, err
	}
	return c, e, nil
}

// entryHead is the identifying part of an entry file.
type entryHead struct {
	Format string
	ID     string
	Kind   Kind
	Name   string
}

// readHead reads the format, id, kind and name of an entry file. Our
// files carry them first, so it stops reading long before the spectrum.
func readHead(path string) (entryHead, error) {
	var h entryHead
	f, err := os.Open(path)
	if err != nil {
		return h, err
	}
	defer f.Close()
	dec := json.NewDecoder(bufio.NewReaderSize(f, 4096))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return h, errors.New("not a JSON object")
	}
	seen := 0
	for dec.More() && seen < 4 {
		t, err := dec.Token()
		if err != nil {
			return h, err
		}
		key, _ := t.(string)
		var dst *string
		switch key {
		case "format":
			dst = &h.Format
		case "id":
			dst = &h.ID
		case "kind":
			dst = (*string)(&h.Kind)
		case "name":
			dst = &h.Name
		}
		if dst == nil {
			var skip json.RawMessage
			if err := dec.Decode(&skip); err != nil {
				return h, err
			}
			continue
		}
		if err := dec.Decode(dst); err != nil {
			return h, err
		}
		seen++
	}
	return h, nil
}
