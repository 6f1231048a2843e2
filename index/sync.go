package index

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"github.com/blevesearch/bleve/v2"
	"github.com/blevesearch/bleve/v2/index/scorch"
	"github.com/blevesearch/bleve/v2/index/scorch/mergeplan"

	"statemix/library"
)

// testHookAfterBatch, when set, runs after each committed batch of a
// multi-batch update (tests use it to kill a writer half-way).
var testHookAfterBatch func(done, total int)

// Progress, when not nil, is told after each committed batch how many
// entries of how many have been indexed.
type Progress func(done, total int)

// Sync brings the index up to the library's current revision. It applies
// the library's change log since the revision the index reflects (an add
// or edit re-indexes the entry, a remove deletes it), all in one atomic
// batch for the usual few changes. When the index is new, was left
// incomplete by an interrupted writer, has another vector layout, or the
// change log no longer reaches back far enough, it reconciles the whole
// library instead (see Reconcile). The index must be open for writing.
func (x *Index) Sync(store *library.Store) error {
	return x.SyncContext(context.Background(), store, nil)
}

// SyncContext is Sync with cancellation and progress reporting.
func (x *Index) SyncContext(ctx context.Context, store *library.Store, progress Progress) error {
	x.mustWrite("Sync")
	st, err := x.State()
	if err != nil {
		return err
	}
	if !st.Complete || st.VectorVersion != vectorVersion || st.Revision == 0 {
		return x.reconcile(ctx, store, progress)
	}
	changes, rev, complete, err := store.ChangesSince(int(st.Revision))
	if err != nil {
		return fmt.Errorf("index sync: %w", err)
	}
	if !complete {
		return x.reconcile(ctx, store, progress)
	}
	if int64(rev) == st.Revision && len(changes) == 0 {
		return nil
	}
	// Last change per id wins.
	last := map[string]library.Change{}
	var order []string
	for _, c := range changes {
		if _, ok := last[c.ID]; !ok {
			order = append(order, c.ID)
		}
		last[c.ID] = c
	}
	var docs []*library.Entry
	var dels []string
	for _, id := range order {
		c := last[id]
		if c.Op == library.OpRemove {
			dels = append(dels, id)
			continue
		}
		e, err := library.ReadEntryFile(entryPath(store.Dir(), c.Kind, id))
		if errors.Is(err, fs.ErrNotExist) {
			dels = append(dels, id) // removed since; a later change says so
			continue
		}
		if err != nil {
			// A corrupt file is left out of the index; verify reports it.
			dels = append(dels, id)
			continue
		}
		docs = append(docs, e)
	}
	return x.apply(ctx, docs, dels, int64(rev), progress)
}

// Reconcile compares every entry of the library with the index and
// re-indexes what is missing or out of date and deletes what the library no
// longer has. Entry files that cannot be read are left out (library verify
// reports them).
func (x *Index) Reconcile(store *library.Store) error {
	x.mustWrite("Reconcile")
	return x.reconcile(context.Background(), store, nil)
}

func (x *Index) reconcile(ctx context.Context, store *library.Store, progress Progress) error {
	entries, _ := store.Entries()
	return x.reconcileEntries(ctx, entries, store.Revision(), progress)
}

func (x *Index) reconcileEntries(ctx context.Context, entries []*library.Entry, rev int, progress Progress) error {
	have, err := x.fingerprints()
	if err != nil {
		return err
	}
	var docs []*library.Entry
	want := make(map[string]bool, len(entries))
	for _, e := range entries {
		want[e.ID] = true
		if have[e.ID] != fingerprint(e) {
			docs = append(docs, e)
		}
	}
	var dels []string
	for id := range have {
		if !want[id] {
			dels = append(dels, id)
		}
	}
	sort.Strings(dels)
	return x.apply(ctx, docs, dels, int64(rev), progress)
}

// fingerprints returns the stored fingerprint of every document by id.
func (x *Index) fingerprints() (map[string]string, error) {
	n, err := x.bi.DocCount()
	if err != nil {
		return nil, err
	}
	out := make(map[string]string, n)
	if n == 0 {
		return out, nil
	}
	req := bleve.NewSearchRequestOptions(bleve.NewMatchAllQuery(), int(n), 0, false)
	req.Fields = []string{fieldFingerprint}
	res, err := x.bi.Search(req)
	if err != nil {
		return nil, fmt.Errorf("index: list documents: %w", err)
	}
	for _, h := range res.Hits {
		s, _ := h.Fields[fieldFingerprint].(string)
		out[h.ID] = s
	}
	return out, nil
}

// apply indexes docs and deletes dels in batches of batchSize and records
// revision rev. One batch is atomic with the state it records; with more
// batches the first marks the index incomplete and the last complete again,
// so a writer killed in between leaves an index Check calls stale.
func (x *Index) apply(ctx context.Context, docs []*library.Entry, dels []string, rev int64, progress Progress) error {
	total := len(docs) + len(dels)
	nb := max(1, (total+batchSize-1)/batchSize)
	done := 0
	for b := 0; b < nb; b++ {
		if err := ctx.Err(); err != nil {
			return err
		}
		batch := x.bi.NewBatch()
		for n := 0; n < batchSize && done < total; n++ {
			if done < len(docs) {
				e := docs[done]
				if err := batch.Index(e.ID, document(e)); err != nil {
					return fmt.Errorf("index entry %s: %w", e.ID, err)
				}
			} else {
				batch.Delete(dels[done-len(docs)])
			}
			done++
		}
		st := State{Revision: rev, Complete: b == nb-1, VectorVersion: vectorVersion, Updated: time.Now().UTC()}
		batch.SetInternal([]byte(stateKey), st.encode())
		if err := x.bi.Batch(batch); err != nil {
			return fmt.Errorf("index %s: %w", x.path, err)
		}
		if progress != nil {
			progress(done, total)
		}
		if testHookAfterBatch != nil && nb > 1 {
			testHookAfterBatch(done, total)
		}
	}
	return x.compact(ctx)
}

// maxSegments is the number of on-disk segments above which a writer
// merges before it closes. Every update makes a segment and a short writer
// session (one library add) closes before bleve's background merger gets to
// them, so without this a library grown by thousands of single adds would
// have thousands of segments and slow queries.
const maxSegments = 12

// compact runs one pass of scorch's default tiered merge plan when the
// index has more than maxSegments segments, and waits until the merged
// root is on disk (a batch waits for persistence), so the work is not lost
// at Close.
func (x *Index) compact(ctx context.Context) error {
	sc, n := x.scorch()
	if sc == nil || n <= maxSegments {
		return nil
	}
	opts := mergeplan.DefaultMergePlanOptions
	if err := sc.ForceMerge(ctx, &opts); err != nil {
		return fmt.Errorf("index %s: merge segments: %w", x.path, err)
	}
	st, err := x.State()
	if err != nil {
		return err
	}
	b := x.bi.NewBatch()
	b.SetInternal([]byte(stateKey), st.encode())
	if err := x.bi.Batch(b); err != nil {
		return fmt.Errorf("index %s: %w", x.path, err)
	}
	return nil
}

// scorch returns the scorch index under x and its number of on-disk
// segments (nil, 0 if it is not scorch).
func (x *Index) scorch() (*scorch.Scorch, int) {
	adv, err := x.bi.Advanced()
	if err != nil {
		return nil, 0
	}
	sc, ok := adv.(*scorch.Scorch)
	if !ok {
		return nil, 0
	}
	n, _ := sc.StatsMap()["TotFileSegmentsAtRoot"].(uint64)
	return sc, int(n)
}

// Segments returns the number of on-disk segments of the index (for
// diagnostics and tests).
func (x *Index) Segments() int {
	_, n := x.scorch()
	return n
}

func (x *Index) mustWrite(op string) {
	if x.readOnly {
		panic("index: " + op + " on an index opened read-only")
	}
}

// Rebuild builds the index of the library in libDir afresh from the entry
// files, beside the old one, and swaps it in; readers that have the old one
// open finish undisturbed. It waits for other writers like Open. A corrupt
// or missing old index is simply replaced. Use it for library verify
// --repair.
func Rebuild(store *library.Store) error {
	return RebuildContext(context.Background(), store, nil)
}

// RebuildContext is Rebuild with cancellation and progress reporting.
func RebuildContext(ctx context.Context, store *library.Store, progress Progress) error {
	entries, _ := store.Entries()
	return rebuildEntries(ctx, store.Dir(), entries, store.Revision(), progress)
}

// rebuildEntries is Rebuild from entries already read, at revision rev.
func rebuildEntries(ctx context.Context, libDir string, entries []*library.Entry, rev int, progress Progress) error {
	base := filepath.Join(libDir, Dir)
	if err := os.MkdirAll(base, 0o755); err != nil {
		return fmt.Errorf("index: %w", err)
	}
	old, err := Open(libDir, false)
	var busy *BusyError
	if errors.As(err, &busy) {
		return err
	}
	if err != nil {
		// Corrupt: move it out of the way and build from nothing.
		old = nil
	}
	defer old.Close()
	cleanTemp(base)
	tmpLib := filepath.Join(base, fmt.Sprintf("rebuild-%d", os.Getpid()))
	_ = os.RemoveAll(tmpLib)
	fresh, err := Open(tmpLib, false)
	if err != nil {
		return err
	}
	if err := fresh.reconcileEntries(ctx, entries, rev, progress); err != nil {
		fresh.Close()
		_ = os.RemoveAll(tmpLib)
		return err
	}
	if err := fresh.Close(); err != nil {
		_ = os.RemoveAll(tmpLib)
		return err
	}
	// Close the old index before moving it: bleve addresses its files by
	// path, so an open handle's background merging would otherwise run
	// inside the fresh index once it takes the old one's place, deleting
	// its segment files (seen as a stale index after verify --repair). The
	// writer lock is released for the two renames; another writer opening
	// the index in that instant is the remaining, much smaller, window.
	if old != nil {
		if err := old.Close(); err != nil {
			_ = os.RemoveAll(tmpLib)
			return err
		}
	}
	cur := filepath.Join(base, "bleve")
	trash := filepath.Join(base, fmt.Sprintf("old-%d", os.Getpid()))
	_ = os.RemoveAll(trash)
	if err := os.Rename(cur, trash); err != nil && !errors.Is(err, fs.ErrNotExist) {
		_ = os.RemoveAll(tmpLib)
		return fmt.Errorf("index: %w", err)
	}
	if err := os.Rename(filepath.Join(tmpLib, Dir, "bleve"), cur); err != nil {
		return fmt.Errorf("index: %w", err)
	}
	_ = os.RemoveAll(tmpLib)
	_ = os.RemoveAll(trash)
	return nil
}

// cleanTemp removes what rebuilds of dead processes left in base.
func cleanTemp(base string) {
	ents, _ := os.ReadDir(base)
	for _, e := range ents {
		name := e.Name()
		for _, p := range []string{"rebuild-", "old-"} {
			if rest, ok := strings.CutPrefix(name, p); ok {
				var pid int
				if _, err := fmt.Sscanf(rest, "%d", &pid); err == nil && !alive(pid) {
					_ = os.RemoveAll(filepath.Join(base, name))
				}
			}
		}
	}
}

// Check compares the index of store's library with its entry files and
// reports whether it is stale (out of date, incomplete, unreadable or
// missing) with one line per problem. It opens the index read-only. err is
// set only when the check itself cannot run (the index is busy).
func Check(store *library.Store) (stale bool, problems []string, err error) {
	entries, _ := store.Entries()
	return checkEntries(store.Dir(), entries, store.Revision())
}

// checkEntries is Check against entries already read, at revision rev.
func checkEntries(libDir string, entries []*library.Entry, rev int) (stale bool, problems []string, err error) {
	x, err := Open(libDir, true)
	if errors.Is(err, ErrNotExist) {
		return true, []string{"index: missing"}, nil
	}
	var busy *BusyError
	if errors.As(err, &busy) {
		return false, nil, err
	}
	if err != nil {
		return true, []string{fmt.Sprintf("index: cannot be opened: %v", err)}, nil
	}
	defer x.Close()
	st, err := x.State()
	if err != nil {
		return true, []string{fmt.Sprintf("index: %v", err)}, nil
	}
	if !st.Complete {
		problems = append(problems, "index: an update was interrupted before it finished")
	}
	if st.VectorVersion != vectorVersion {
		problems = append(problems, fmt.Sprintf("index: similarity vectors of layout %d, this program uses %d", st.VectorVersion, vectorVersion))
	}
	if int64(rev) != st.Revision {
		problems = append(problems, fmt.Sprintf("index: reflects library revision %d, the library is at %d", st.Revision, rev))
	}
	have, err := x.fingerprints()
	if err != nil {
		return true, append(problems, fmt.Sprintf("index: %v", err)), nil
	}
	var missing, outdated, extra []string
	want := map[string]bool{}
	for _, e := range entries {
		want[e.ID] = true
		fp, ok := have[e.ID]
		switch {
		case !ok:
			missing = append(missing, e.ID)
		case fp != fingerprint(e):
			outdated = append(outdated, e.ID)
		}
	}
	for id := range have {
		if !want[id] {
			extra = append(extra, id)
		}
	}
	sort.Strings(extra)
	list := func(one, many string, ids []string) {
		if len(ids) == 0 {
			return
		}
		shown := ids
		more := ""
		if len(shown) > 5 {
			shown, more = shown[:5], fmt.Sprintf(" and %d more", len(ids)-5)
		}
		what := many
		if len(ids) == 1 {
			what = one
		}
		problems = append(problems, fmt.Sprintf("index: %d %s: %s%s", len(ids), what, strings.Join(shown, ", "), more))
	}
	list("entry not indexed", "entries not indexed", missing)
	list("entry indexed from an older version", "entries indexed from an older version", outdated)
	list("indexed entry no longer in the library", "indexed entries no longer in the library", extra)
	return len(problems) > 0, problems, nil
}

// Checker returns the index check for library verify
// (library.VerifyOptions.CheckIndex) of the library in libDir: it reports
// each problem Check finds with code library.ProblemIndex, and with repair
// rebuilds the index from the entries verify read and marks the problems
// repaired.
func Checker(libDir string) library.IndexChecker {
	return func(entries []*library.Entry, revision int, repair bool) ([]library.Problem, error) {
		stale, msgs, err := checkEntries(libDir, entries, revision)
		if err != nil {
			return nil, err
		}
		if !stale {
			return nil, nil
		}
		repaired := false
		if repair {
			if err := rebuildEntries(context.Background(), libDir, entries, revision, nil); err != nil {
				return nil, fmt.Errorf("rebuild index: %w", err)
			}
			repaired = true
		}
		ps := make([]library.Problem, len(msgs))
		for i, m := range msgs {
			msg := strings.TrimPrefix(m, "index: ")
			if !repaired {
				msg += " (library verify --repair rebuilds it)"
			}
			ps[i] = library.Problem{Path: Dir, Code: library.ProblemIndex, Message: msg, Repaired: repaired}
		}
		return ps, nil
	}
}
