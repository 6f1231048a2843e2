package library

import (
	"archive/tar"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"path"
	"sort"
	"strings"
	"time"
)

// A bundle is a gzip-compressed tar archive holding, first, the manifest
// bundleManifestName and then one member per entry, refs/<id>.json or
// runs/<id>.json, byte for byte the entry file. The manifest lists every
// member with its size and SHA-256.
const (
	bundleManifestName = "statemix-bundle.json"
	bundleFormat       = "statemix-bundle"
	bundleVersion      = 1
	// maxBundleMember bounds one member's size (a 100 000-channel spectrum
	// is about 4 MB of JSON).
	maxBundleMember = 256 << 20
)

// BundleManifest is the table of contents of a bundle.
type BundleManifest struct {
	Format          string        `json:"format"`  // "statemix-bundle"
	Version         int           `json:"version"` // 1
	CreatedAt       time.Time     `json:"created_at"`
	LibraryRevision int           `json:"library_revision"` // revision of the exporting library
	Query           string        `json:"query,omitempty"`  // the selection, as given
	Entries         []BundleEntry `json:"entries"`
}

// BundleEntry is one member of a bundle.
type BundleEntry struct {
	Path   string `json:"path"` // "refs/<id>.json" or "runs/<id>.json"
	ID     string `json:"id"`
	Kind   Kind   `json:"kind"`
	Name   string `json:"name"`
	Size   int64  `json:"size"`   // bytes
	SHA256 string `json:"sha256"` // hex digest of the member's bytes
}

// ExportOptions configures Export; the zero value exports every entry.
type ExportOptions struct {
	// Match selects the entries to export; nil selects all.
	Match func(*Entry) bool
	// Query is recorded in the bundle manifest as the description of the
	// selection; it is not interpreted.
	Query string
}

// ExportResult says what Export wrote.
type ExportResult struct {
	Entries []*Entry // exported, in bundle order
	Skipped []error  // corrupt entry files left out (each a *CorruptError)
}

// Export writes a bundle of the selected entries to w. Corrupt entry files
// are left out and reported in the result; the bundle itself is complete
// and consistent.
func (s *Store) Export(w io.Writer, opts ExportOptions) (*ExportResult, error) {
	entries, errs := s.Entries()
	res := &ExportResult{Skipped: errs}
	var sel []*Entry
	for _, e := range entries {
		if opts.Match == nil || opts.Match(e) {
			sel = append(sel, e)
		}
	}
	man := BundleManifest{Format: bundleFormat, Version: bundleVersion, CreatedAt: s.now().UTC(),
		LibraryRevision: s.Revision(), Query: opts.Query, Entries: []BundleEntry{}}
	blobs := make([][]byte, len(sel))
	for i, e := range sel {
		b, err := encodeEntry(e)
		if err != nil {
			return nil, err
		}
		blobs[i] = b
		sum := sha256.Sum256(b)
		man.Entries = append(man.Entries, BundleEntry{
			Path: e.Kind.folder() + "/" + e.ID + ".json", ID: e.ID, Kind: e.Kind, Name: e.Name,
			Size: int64(len(b)), SHA256: hex.EncodeToString(sum[:]),
		})
	}
	mb, err := json.MarshalIndent(man, "", "  ")
	if err != nil {
		return nil, err
	}
	gz := gzip.NewWriter(w)
	tw := tar.NewWriter(gz)
	put := func(name string, b []byte) error {
		hdr := &tar.Header{Name: name, Mode: 0o644, Size: int64(len(b)), ModTime: man.CreatedAt, Typeflag: tar.TypeReg, Format: tar.FormatPAX}
		if err := tw.WriteHeader(hdr); err != nil {
			return err
		}
		_, err := tw.Write(b)
		return err
	}
	if err := put(bundleManifestName, append(mb, '\n')); err != nil {
		return nil, fmt.Errorf("write bundle: %w", err)
	}
	for i, be := range man.Entries {
		if err := put(be.Path, blobs[i]); err != nil {
			return nil, fmt.Errorf("write bundle: %w", err)
		}
	}
	if err := tw.Close(); err != nil {
		return nil, fmt.Errorf("write bundle: %w", err)
	}
	if err := gz.Close(); err != nil {
		return nil, fmt.Errorf("write bundle: %w", err)
	}
	res.Entries = sel
	return res, nil
}

// ImportOptions configures Import; the zero value refuses name clashes.
type ImportOptions struct {
	// Rename gives an entry whose name is taken by a different entry a new
	// name, "NAME (2)", "NAME (3)", ..., instead of refusing the bundle.
	Rename bool
	// Bundle names the bundle in error messages (its file name); it may be
	// empty.
	Bundle string
}

// ImportResult says what Import did.
type ImportResult struct {
	Added    []*Entry          // written to the library
	Skipped  []*Entry          // already there, identical
	Renamed  map[string]string // entry ID -> new name, for renamed entries
	Warnings []Warning
	Revision int // library revision after the import (unchanged if nothing was added)
}

// ReadBundle reads and checks a whole bundle: every member listed in the
// manifest, sizes and checksums equal, every entry's content hashing to its
// id, no extra members. Errors are *BundleError.
func ReadBundle(r io.Reader, name string) (*BundleManifest, []*Entry, error) {
	bad := func(member string, format string, args ...any) error {
		return &BundleError{Bundle: name, Member: member, Err: fmt.Errorf(format, args...)}
	}
	gz, err := gzip.NewReader(r)
	if err != nil {
		return nil, nil, bad("", "not a gzip-compressed bundle: %v", err)
	}
	tr := tar.NewReader(gz)
	members := map[string][]byte{}
	var order []string
	for {
		hdr, err := tr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, bad("", "truncated or damaged archive: %v", unexpected(err))
		}
		if hdr.Typeflag == tar.TypeDir {
			continue
		}
		if hdr.Typeflag != tar.TypeReg {
			return nil, nil, bad(hdr.Name, "not a regular file")
		}
		if hdr.Size > maxBundleMember {
			return nil, nil, bad(hdr.Name, "member of %d bytes is larger than %d", hdr.Size, maxBundleMember)
		}
		if _, dup := members[hdr.Name]; dup {
			return nil, nil, bad(hdr.Name, "member appears twice")
		}
		b, err := io.ReadAll(io.LimitReader(tr, maxBundleMember+1))
		if err != nil {
			return nil, nil, bad(hdr.Name, "truncated or damaged archive: %v", unexpected(err))
		}
		members[hdr.Name] = b
		order = append(order, hdr.Name)
	}
	// Read to the end of the gzip stream so a cut after the tar trailer is
	// caught by the gzip checksum.
	if _, err := io.Copy(io.Discard, gz); err != nil {
		return nil, nil, bad("", "truncated or damaged archive: %v", unexpected(err))
	}
	mb, ok := members[bundleManifestName]
	if !ok {
		return nil, nil, bad("", "no %s: not a statemix bundle", bundleManifestName)
	}
	var man BundleManifest
	if err := json.Unmarshal(mb, &man); err != nil {
		return nil, nil, bad(bundleManifestName, "not valid JSON: %v", err)
	}
	if man.Format != bundleFormat {
		return nil, nil, bad(bundleManifestName, "format %q, want %q", man.Format, bundleFormat)
	}
	if man.Version != bundleVersion {
		return nil, nil, bad(bundleManifestName, "version %d, this program reads version %d", man.Version, bundleVersion)
	}
	listed := map[string]bool{bundleManifestName: true}
	var entries []*Entry
	for _, be := range man.Entries {
		if listed[be.Path] {
			return nil, nil, bad(be.Path, "listed twice in the manifest")
		}
		listed[be.Path] = true
		dir, file := path.Split(be.Path)
		id, ok := strings.CutSuffix(file, ".json")
		if !ok || !isID(id) || (dir != refsDir+"/" && dir != runsDir+"/") {
			return nil, nil, bad(be.Path, "not an entry path (want refs/<id>.json or runs/<id>.json)")
		}
		b, ok := members[be.Path]
		if !ok {
			return nil, nil, bad(be.Path, "listed in the manifest but missing from the archive")
		}
		if int64(len(b)) != be.Size {
			return nil, nil, bad(be.Path, "size %d bytes, manifest says %d", len(b), be.Size)
		}
		sum := sha256.Sum256(b)
		if got := hex.EncodeToString(sum[:]); got != be.SHA256 {
			return nil, nil, bad(be.Path, "checksum mismatch: SHA-256 %s, manifest says %s", got, be.SHA256)
		}
		e, err := decodeEntry(b)
		if err == nil {
			err = checkStored(e, id, strings.TrimSuffix(dir, "/"))
		}
		if err != nil {
			return nil, nil, bad(be.Path, "%v", err)
		}
		entries = append(entries, e)
	}
	for _, n := range order {
		if !listed[n] {
			return nil, nil, bad(n, "member not listed in the manifest")
		}
	}
	return &man, entries, nil
}

// unexpected turns a bare io.EOF inside an archive into ErrUnexpectedEOF.
func unexpected(err error) error {
	if errors.Is(err, io.EOF) {
		return io.ErrUnexpectedEOF
	}
	return err
}

// Import reads a bundle, checks it completely (see ReadBundle) and adds
// its entries in one operation: entries already in the library and
// identical (ignoring revision and edit time) are skipped; an entry with
// the same id but different labels, or a name taken by another entry
// (unless opts.Rename), refuses the whole bundle. On any error nothing is
// changed.
func (s *Store) Import(r io.Reader, opts ImportOptions) (*ImportResult, error) {
	_, bentries, err := ReadBundle(r, opts.Bundle)
	if err != nil {
		return nil, err
	}
	for _, e := range bentries {
		c := e.Clone()
		if err := normalize(c); err != nil {
			return nil, &BundleError{Bundle: opts.Bundle, Member: e.Kind.folder() + "/" + e.ID + ".json", Err: err}
		}
	}
	lk, err := acquireLock(s.dir, s.lockTimeout(), s.now)
	if err != nil {
		return nil, err
	}
	defer lk.release()
	m, err := readManifest(s.dir)
	if err != nil {
		return nil, err
	}
	c := s.writerCatalog(m)
	byID := map[string]*Entry{}  // entries of the bundle (and the library entries they match)
	names := map[string]string{} // names taken by the bundle
	taken := func(n string) (string, bool) {
		if id, ok := names[n]; ok {
			return id, true
		}
		return c.nameOwner(n, "")
	}
	res := &ImportResult{Renamed: map[string]string{}, Revision: m.Revision}
	var toAdd []*Entry
	var clashes []string
	for _, e := range bentries {
		x, ok := byID[e.ID]
		if !ok {
			if row, in := c.row(e.ID); in {
				// An unreadable file is replaced by the bundle's copy.
				x, _ = ReadEntryFile(s.entryPath(row.Kind, row.ID))
			}
		}
		if x != nil {
			if sameEntry(x, e) {
				res.Skipped = append(res.Skipped, x)
				continue
			}
			clashes = append(clashes, fmt.Sprintf("%s (%q) is in the library with different labels", e.ID, x.Name))
			continue
		}
		if owner, ok := taken(e.Name); ok {
			if !opts.Rename {
				if owner == "" {
					owner = "another entry of the bundle"
				}
				clashes = append(clashes, fmt.Sprintf("name %q of %s is taken by %s", e.Name, e.ID, owner))
				continue
			}
			base := e.Name
			n := base
			for i := 2; ; i++ {
				if _, ok := taken(n); !ok {
					break
				}
				n = fmt.Sprintf("%s (%d)", base, i)
			}
			res.Renamed[e.ID] = n
			e.Name = n
		}
		names[e.Name] = ""
		byID[e.ID] = e
		toAdd = append(toAdd, e)
	}
	if len(clashes) > 0 {
		sort.Strings(clashes)
		hint := ""
		if !opts.Rename {
			hint = " (--rename gives clashing names a suffix)"
		}
		return nil, fmt.Errorf("%s: %w: %s%s", bundleLabel(opts.Bundle), ErrBundleClash, strings.Join(clashes, "; "), hint)
	}
	if len(toAdd) == 0 {
		return res, nil
	}
	rev := m.Revision + 1
	t := s.now().UTC()
	rows := make([]catRow, len(toAdd))
	for i, e := range toAdd {
		e.Revision = rev
		rows[i] = rowOf(e)
		res.Warnings = append(res.Warnings, intrinsicWarnings(e)...)
		res.Warnings = append(res.Warnings, s.dupWarnings(e, &rows[i], c, toAdd[:i], rows[:i])...)
	}
	if err := s.writeNew(m, rev, t, toAdd, c.with(rev, nil, rows)); err != nil {
		return nil, err
	}
	res.Added = toAdd
	res.Revision = rev
	return res, nil
}

func bundleLabel(name string) string {
	if name == "" {
		return "bundle"
	}
	return name
}

// sameEntry reports whether a and b are equal apart from their revision
// and edit time.
func sameEntry(a, b *Entry) bool {
	x, y := a.Clone(), b.Clone()
	x.Revision, y.Revision = 0, 0
	x.ModifiedAt, y.ModifiedAt = time.Time{}, time.Time{}
	bx, err1 := encodeEntry(x)
	by, err2 := encodeEntry(y)
	return err1 == nil && err2 == nil && bytes.Equal(bx, by)
}
