package library

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"statemix/lineshape"
)

// The catalogue is derived data kept beside the manifest so that writers
// and Resolve need not read every entry file: per entry file it holds the
// id, kind, name, element, transition, state, spectrum mode, channel count,
// energy range and main-feature energy. It is one tab-separated text file,
//
//	statemix-catalog<TAB>1<TAB>revision<TAB>count<TAB>refs-mtime<TAB>runs-mtime
//	id<TAB>kind<TAB>status<TAB>name<TAB>element<TAB>transition<TAB>state<TAB>mode<TAB>n<TAB>lo<TAB>hi<TAB>feature
//	...
//
// sorted by id, where kind is r (reference) or m (measurement), status is ok
// or bad (a file that could not be read when it was catalogued: only its id
// and kind are kept), text fields are written as they are unless they hold
// control characters, a backslash, invalid UTF-8 or start with a double
// quote, in which case they are Go-quoted (strconv.Quote), and numbers are
// the shortest decimal form that parses back to the same float64 (feature is
// empty when there is none). The mtimes are those of the refs/ and runs/
// folders (Unix nanoseconds) when the catalogue was written: a later change
// of either folder that did not come with a new catalogue (a write
// interrupted after it renamed an entry file into place) tells writers to
// read the files. The manifest records the SHA-256 of the
// catalogue it belongs to (catalog_sha256); a catalogue whose digest or
// revision does not match the manifest is stale and not used.
const (
	catalogName    = "catalog.tsv"
	catalogFormat  = "statemix-catalog"
	catalogVersion = 1
)

// catRow is one catalogue line.
type catRow struct {
	ID         string
	Kind       Kind
	Bad        bool // the file could not be read when catalogued
	Name       string
	Element    string
	Transition string
	State      string
	Mode       string // spectrum mode, as lineshape.Mode.String
	N          int    // channels
	Lo, Hi     float64
	Feature    float64 // main-feature energy (MainFeature), references only
	HasFeature bool
}

// step is the mean channel spacing in eV.
func (r *catRow) step() float64 {
	if r.N < 2 {
		return 0
	}
	return (r.Hi - r.Lo) / float64(r.N-1)
}

// rowOf returns the catalogue row of a clean entry.
func rowOf(e *Entry) catRow {
	r := catRow{ID: e.ID, Kind: e.Kind, Name: e.Name, Element: e.Element, Transition: e.Transition, State: e.State}
	if s := e.Spectrum; s != nil {
		r.Mode = s.Mode.String()
		r.N = s.Axis.Len()
		r.Lo, r.Hi = e.EnergyRange()
		if e.Kind == KindReference {
			r.Feature, r.HasFeature = MainFeature(s)
		}
	}
	return r
}

// catalog is a parsed catalogue. It is used by one goroutine.
type catalog struct {
	Revision int
	DirTimes [2]int64         // mtimes of refs/ and runs/ (Unix ns) when written
	rows     []catRow         // sorted by ID, each ID once
	byName   map[string][]int // clean rows by name, built on first use
}

// newCatalog returns the catalogue of rows (in any order, each ID once) at
// revision rev.
func newCatalog(rev int, rows []catRow) *catalog {
	sort.Slice(rows, func(i, j int) bool { return rows[i].ID < rows[j].ID })
	return &catalog{Revision: rev, rows: rows}
}

// index returns the row index of id.
func (c *catalog) index(id string) (int, bool) {
	i := sort.Search(len(c.rows), func(i int) bool { return c.rows[i].ID >= id })
	return i, i < len(c.rows) && c.rows[i].ID == id
}

// named returns the indices of the clean rows named name.
func (c *catalog) named(name string) []int {
	if c.byName == nil {
		c.byName = make(map[string][]int, len(c.rows))
		for i := range c.rows {
			if !c.rows[i].Bad {
				c.byName[c.rows[i].Name] = append(c.byName[c.rows[i].Name], i)
			}
		}
	}
	return c.byName[name]
}

// with returns a copy of c at revision rev without the rows of the ids in
// drop and with the rows add (replacing rows of the same id).
func (c *catalog) with(rev int, drop []string, add []catRow) *catalog {
	skip := make(map[string]bool, len(drop)+len(add))
	for _, id := range drop {
		skip[id] = true
	}
	for _, r := range add {
		skip[r.ID] = true
	}
	add = append([]catRow(nil), add...)
	sort.Slice(add, func(i, j int) bool { return add[i].ID < add[j].ID })
	rows := make([]catRow, 0, len(c.rows)+len(add))
	for _, r := range c.rows { // merge: both are sorted
		if skip[r.ID] {
			continue
		}
		for len(add) > 0 && add[0].ID < r.ID {
			rows = append(rows, add[0])
			add = add[1:]
		}
		rows = append(rows, r)
	}
	return &catalog{Revision: rev, DirTimes: c.DirTimes, rows: append(rows, add...)}
}

// row returns the clean row of id.
func (c *catalog) row(id string) (*catRow, bool) {
	i, ok := c.index(id)
	if !ok || c.rows[i].Bad {
		return nil, false
	}
	return &c.rows[i], true
}

// resolve finds the row ref names, with the rules of Store.Resolve: a full
// id, else a unique name, else a unique id prefix of at least 4 characters.
// Unreadable files take no part.
func (c *catalog) resolve(ref string) (*catRow, error) {
	r := strings.TrimSpace(ref)
	if r == "" {
		return nil, &NotFoundError{Ref: ref}
	}
	if row, ok := c.row(r); ok {
		return row, nil
	}
	if is := c.named(r); len(is) == 1 {
		return &c.rows[is[0]], nil
	} else if len(is) > 1 {
		out := make([]string, len(is))
		for k, i := range is {
			out[k] = c.rows[i].ID
		}
		sort.Strings(out)
		return nil, &AmbiguousError{Ref: ref, IDs: out}
	}
	lr := strings.ToLower(r)
	if len(lr) >= minPrefix && isHex(lr) {
		var hits []int
		for i := sort.Search(len(c.rows), func(i int) bool { return c.rows[i].ID >= lr }); i < len(c.rows) && strings.HasPrefix(c.rows[i].ID, lr); i++ {
			if !c.rows[i].Bad {
				hits = append(hits, i)
			}
		}
		if len(hits) == 1 {
			return &c.rows[hits[0]], nil
		}
		if len(hits) > 1 {
			out := make([]string, len(hits))
			for k, i := range hits {
				out[k] = c.rows[i].ID
			}
			return nil, &AmbiguousError{Ref: ref, IDs: out}
		}
	}
	return nil, &NotFoundError{Ref: ref}
}

// nameOwner returns the id of the clean entry named name other than self.
func (c *catalog) nameOwner(name, self string) (string, bool) {
	for _, i := range c.named(name) {
		if c.rows[i].ID != self {
			return c.rows[i].ID, true
		}
	}
	return "", false
}

// dupCandidate reports whether x may be a duplicate-state match of e (see
// duplicateWarnings): a clean reference of the same element, another state
// and mode, catalogued main features within the tolerance of
// duplicateWarnings, and a common energy range. The exact check then
// recomputes both features from the spectra. (A catalogue whose features
// no longer match what MainFeature computes is stale; verify reports it.)
func dupCandidate(e, x *catRow) bool {
	if x.Bad || x.ID == e.ID || x.Kind != KindReference || x.Element != e.Element || x.State == e.State ||
		x.Mode != e.Mode || !x.HasFeature || !e.HasFeature {
		return false
	}
	if math.Abs(e.Feature-x.Feature) > dupFeatureTol(e.Mode == lineshape.Direct.String(), e.step(), x.step())*(1+1e-9) {
		return false
	}
	return math.Max(e.Lo, x.Lo) < math.Min(e.Hi, x.Hi)
}

// candidates returns the clean rows that may be duplicate-state matches of
// the entry of row e.
func (c *catalog) candidates(e *catRow) []*catRow {
	if e.Kind != KindReference || !e.HasFeature {
		return nil
	}
	var out []*catRow
	for i := range c.rows {
		if dupCandidate(e, &c.rows[i]) {
			out = append(out, &c.rows[i])
		}
	}
	return out
}

// encode returns the catalogue file's bytes.
func (c *catalog) encode() []byte {
	var b bytes.Buffer
	b.Grow(64 + 120*len(c.rows))
	fmt.Fprintf(&b, "%s\t%d\t%d\t%d\t%d\t%d\n", catalogFormat, catalogVersion, c.Revision, len(c.rows), c.DirTimes[0], c.DirTimes[1])
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range c.rows {
		r := &c.rows[i]
		k := "r"
		if r.Kind == KindMeasurement {
			k = "m"
		}
		if r.Bad {
			b.WriteString(r.ID + "\t" + k + "\tbad\t\t\t\t\t\t0\t0\t0\t\n")
			continue
		}
		feat := ""
		if r.HasFeature {
			feat = num(r.Feature)
		}
		for _, f := range [...]string{r.ID, k, "ok", catQuote(r.Name), catQuote(r.Element), catQuote(r.Transition),
			catQuote(r.State), catQuote(r.Mode), strconv.Itoa(r.N), num(r.Lo), num(r.Hi)} {
			b.WriteString(f)
			b.WriteByte('\t')
		}
		b.WriteString(feat)
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// catQuote writes a text field (see catalogName).
func catQuote(s string) string {
	if strings.HasPrefix(s, `"`) || strings.ContainsRune(s, '\\') || !utf8.ValidString(s) {
		return strconv.Quote(s)
	}
	for i := 0; i < len(s); i++ {
		if s[i] < 0x20 || s[i] == 0x7f {
			return strconv.Quote(s)
		}
	}
	return s
}

func catUnquote(s string) (string, error) {
	if strings.HasPrefix(s, `"`) {
		return strconv.Unquote(s)
	}
	return s, nil
}

// parseCatalog reads a catalogue file's bytes.
func parseCatalog(b []byte) (*catalog, error) {
	head, rest, ok := strings.Cut(string(b), "\n")
	if !ok {
		return nil, errors.New("no header line")
	}
	hf := strings.Split(head, "\t")
	if len(hf) != 6 || hf[0] != catalogFormat {
		return nil, fmt.Errorf("header %q, want %s<TAB>%d<TAB>revision<TAB>count<TAB>refs-mtime<TAB>runs-mtime", head, catalogFormat, catalogVersion)
	}
	if hf[1] != strconv.Itoa(catalogVersion) {
		return nil, fmt.Errorf("version %s, this program reads version %d", hf[1], catalogVersion)
	}
	rev, err1 := strconv.Atoi(hf[2])
	count, err2 := strconv.Atoi(hf[3])
	t0, err3 := strconv.ParseInt(hf[4], 10, 64)
	t1, err4 := strconv.ParseInt(hf[5], 10, 64)
	if err1 != nil || err2 != nil || err3 != nil || err4 != nil || rev < 0 || count < 0 {
		return nil, fmt.Errorf("header %q: bad revision, count or mtime", head)
	}
	rows := make([]catRow, 0, min(count, strings.Count(rest, "\n"))) // count may lie
	line := 1
	for len(rest) > 0 {
		line++
		var l string
		l, rest, ok = strings.Cut(rest, "\n")
		if !ok {
			return nil, fmt.Errorf("line %d: not terminated (truncated file)", line)
		}
		var f [12]string
		if n := splitTabs(l, &f); n != 12 {
			return nil, fmt.Errorf("line %d: %d fields, want 12", line, n)
		}
		r := catRow{ID: f[0]}
		if !isID(r.ID) {
			return nil, fmt.Errorf("line %d: bad id %q", line, r.ID)
		}
		switch f[1] {
		case "r":
			r.Kind = KindReference
		case "m":
			r.Kind = KindMeasurement
		default:
			return nil, fmt.Errorf("line %d: bad kind %q", line, f[1])
		}
		switch f[2] {
		case "bad":
			r.Bad = true
			rows = append(rows, r)
			continue
		case "ok":
		default:
			return nil, fmt.Errorf("line %d: bad status %q", line, f[2])
		}
		var err error
		for k, dst := range []*string{&r.Name, &r.Element, &r.Transition, &r.State, &r.Mode} {
			if *dst, err = catUnquote(f[3+k]); err != nil {
				return nil, fmt.Errorf("line %d: field %d: %v", line, 4+k, err)
			}
		}
		if r.N, err = strconv.Atoi(f[8]); err != nil {
			return nil, fmt.Errorf("line %d: channels: %v", line, err)
		}
		if r.Lo, err = strconv.ParseFloat(f[9], 64); err != nil {
			return nil, fmt.Errorf("line %d: lo: %v", line, err)
		}
		if r.Hi, err = strconv.ParseFloat(f[10], 64); err != nil {
			return nil, fmt.Errorf("line %d: hi: %v", line, err)
		}
		if f[11] != "" {
			if r.Feature, err = strconv.ParseFloat(f[11], 64); err != nil {
				return nil, fmt.Errorf("line %d: feature: %v", line, err)
			}
			r.HasFeature = true
		}
		rows = append(rows, r)
	}
	if len(rows) != count {
		return nil, fmt.Errorf("%d rows, header says %d", len(rows), count)
	}
	for i := 1; i < len(rows); i++ {
		if rows[i].ID <= rows[i-1].ID {
			return nil, fmt.Errorf("rows not sorted by id, or id %s twice", rows[i].ID)
		}
	}
	return &catalog{Revision: rev, DirTimes: [2]int64{t0, t1}, rows: rows}, nil
}

// splitTabs splits l at tabs into f and returns the number of fields (more
// than len(f) if there are too many).
func splitTabs(l string, f *[12]string) int {
	n := 0
	for {
		i := strings.IndexByte(l, '\t')
		if n < len(f) {
			if i < 0 {
				f[n] = l
			} else {
				f[n] = l[:i]
			}
		}
		n++
		if i < 0 {
			return n
		}
		l = l[i+1:]
	}
}

func digest(b []byte) string {
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// readCatalog reads the catalogue belonging to manifest m. It returns an
// error saying why when the catalogue is missing, unreadable, or not the
// one m records (stale).
func readCatalog(dir string, m *manifest) (*catalog, error) {
	b, err := os.ReadFile(filepath.Join(dir, catalogName))
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("%s is missing", catalogName)
		}
		return nil, err
	}
	if m.Catalog == "" {
		return nil, fmt.Errorf("%s records no catalogue (written by an older version?)", manifestName)
	}
	if d := digest(b); d != m.Catalog {
		return nil, fmt.Errorf("%s is not the one %s records (digest %.12s, want %.12s)", catalogName, manifestName, d, m.Catalog)
	}
	c, err := parseCatalog(b)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", catalogName, err)
	}
	if c.Revision != m.Revision {
		return nil, fmt.Errorf("%s is at revision %d, %s at %d", catalogName, c.Revision, manifestName, m.Revision)
	}
	return c, nil
}

// readerCatalog returns the current catalogue for a reader that takes no
// lock, or nil if there is no usable one. A writer may replace manifest and
// catalogue between the two reads, so a mismatch is retried once.
func (s *Store) readerCatalog() *catalog {
	for try := 0; try < 2; try++ {
		m, err := readManifest(s.dir)
		if err != nil {
			return nil
		}
		if c, err := readCatalog(s.dir, m); err == nil {
			return c
		}
	}
	return nil
}

// dirTimes returns the mtimes of refs/ and runs/ in Unix nanoseconds (0 for
// a folder that cannot be read).
func (s *Store) dirTimes() [2]int64 {
	var out [2]int64
	for i, sub := range []string{refsDir, runsDir} {
		if fi, err := os.Stat(filepath.Join(s.dir, sub)); err == nil {
			out[i] = fi.ModTime().UnixNano()
		}
	}
	return out
}

// listsFiles reports whether c lists exactly the entry files (<id>.json in
// refs/ and runs/) there are.
func (s *Store) listsFiles(c *catalog) bool {
	files := make(map[string]Kind, len(c.rows))
	for _, k := range []Kind{KindReference, KindMeasurement} {
		f, err := os.Open(filepath.Join(s.dir, k.folder()))
		if err != nil {
			return false
		}
		names, err := f.Readdirnames(-1)
		f.Close()
		if err != nil {
			return false
		}
		for _, name := range names {
			id, ok := strings.CutSuffix(name, ".json")
			if !ok || !isID(id) {
				continue
			}
			if _, dup := files[id]; dup {
				return false
			}
			files[id] = k
		}
	}
	if len(files) != len(c.rows) {
		return false
	}
	for i := range c.rows {
		if files[c.rows[i].ID] != c.rows[i].Kind {
			return false
		}
	}
	return true
}

// writerCatalog returns the catalogue for a writer holding the lock, whose
// manifest is m: the stored one when it matches m, no entry file was
// renamed into place or removed since it was written (folder mtimes) and
// it lists exactly the entry files present, else one rebuilt by reading
// every entry file (an older version wrote the library, a write was
// interrupted, or files were added, removed or replaced by hand) and
// written at once (see rebuildCatalog).
func (s *Store) writerCatalog(m *manifest) *catalog {
	if c, err := readCatalog(s.dir, m); err == nil && c.DirTimes == s.dirTimes() && s.listsFiles(c) {
		return c
	}
	return s.rebuildCatalog(m)
}

// rebuildCatalog reads every entry file and writes the catalogue they call
// for with manifest m (same revision), so that the next writer and the
// readers find it even if the caller's write is refused. The caller holds
// the lock.
func (s *Store) rebuildCatalog(m *manifest) *catalog {
	c := s.scanCatalog(m.Revision)
	s.writeManifestCatalog(m, c) // a failure only leaves the old one stale
	return c
}

// scanCatalog builds the catalogue at revision rev by reading every entry
// file.
func (s *Store) scanCatalog(rev int) *catalog {
	var rows []catRow
	for _, k := range []Kind{KindReference, KindMeasurement} {
		dir := filepath.Join(s.dir, k.folder())
		f, err := os.Open(dir)
		if err != nil {
			continue
		}
		names, _ := f.Readdirnames(-1)
		f.Close()
		for _, n := range names {
			id, ok := strings.CutSuffix(n, ".json")
			if !ok || !isID(id) {
				continue
			}
			e, err := ReadEntryFile(filepath.Join(dir, n))
			if errors.Is(err, fs.ErrNotExist) {
				continue
			}
			if err != nil {
				rows = append(rows, catRow{ID: id, Kind: k, Bad: true})
				continue
			}
			rows = append(rows, rowOf(e))
		}
	}
	return newCatalog(rev, dedupRows(rows))
}

// dedupRows keeps one row per id (an id in both folders is a bad row).
func dedupRows(rows []catRow) []catRow {
	seen := map[string]int{}
	out := rows[:0]
	for _, r := range rows {
		if i, ok := seen[r.ID]; ok {
			out[i] = catRow{ID: r.ID, Kind: out[i].Kind, Bad: true}
			continue
		}
		seen[r.ID] = len(out)
		out = append(out, r)
	}
	return out
}

// readRowEntry reads the entry of a clean row and checks that the file
// still says what the row does (ok false otherwise: the catalogue cannot
// be trusted).
func (s *Store) readRowEntry(r *catRow) (*Entry, bool) {
	e, err := ReadEntryFile(s.entryPath(r.Kind, r.ID))
	if err != nil {
		return nil, false
	}
	return e, sameLabels(rowOf(e), *r)
}

// sameLabels compares two rows leaving out the feature energy (a feature
// recomputed after a change of the feature code may move a little; the
// duplicate check recomputes it anyway).
func sameLabels(a, b catRow) bool {
	a.Feature, b.Feature = 0, 0
	return a == b
}

// dupWarnings runs the duplicate-state check of e (row er) against the
// catalogue's candidates, read from their files, and against the earlier
// entries of the same batch.
func (s *Store) dupWarnings(e *Entry, er *catRow, c *catalog, batch []*Entry, batchRows []catRow) []Warning {
	var known []*Entry
	for _, x := range c.candidates(er) {
		if xe, err := ReadEntryFile(s.entryPath(x.Kind, x.ID)); err == nil {
			known = append(known, xe)
		}
	}
	for i, x := range batch {
		if dupCandidate(er, &batchRows[i]) {
			known = append(known, x)
		}
	}
	return duplicateWarnings(e, known)
}

// catalogBytes encodes c and records its digest in m.
func catalogBytes(m *manifest, c *catalog) []byte {
	b := c.encode()
	m.Catalog = digest(b)
	return b
}
