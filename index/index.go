package index

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/blevesearch/bleve/v2"
	"github.com/blevesearch/bleve/v2/index/scorch"
	bolt "go.etcd.io/bbolt"
)

// Dir is the folder, inside a library folder, that holds everything the
// index derives from the library: the bleve index in Dir/bleve and the
// lock-holder notes in Dir/holders.
const Dir = "index"

// DefaultTimeout is how long Open waits for a writer (or, for a writer, for
// readers and other writers) to let go of the index.
const DefaultTimeout = 2 * time.Second

// stateKey is the bleve internal key under which the index records what it
// reflects.
const stateKey = "statemix.state"

// vectorVersion changes whenever the similarity vectors or the document
// layout change meaning; an index with another version is stale.
const vectorVersion = 1

// batchSize is the number of documents per bleve batch (a variable so the
// kill test can make updates of several batches cheaply).
var batchSize = 500

// ErrNotExist is returned by a read-only Open when the library has no index
// yet.
var ErrNotExist = errors.New("index does not exist")

// BusyError says the index could not be opened within the timeout because
// someone else holds it. Holders names the processes that said they hold it.
type BusyError struct {
	Path    string
	Write   bool
	Timeout time.Duration
	Holders []Holder
}

func (e *BusyError) Error() string {
	what := "for reading"
	if e.Write {
		what = "for writing"
	}
	msg := fmt.Sprintf("index %s: cannot open %s within %v", e.Path, what, e.Timeout)
	if len(e.Holders) == 0 {
		return msg + ": held by another process"
	}
	var hs []string
	for _, h := range e.Holders {
		hs = append(hs, h.String())
	}
	return msg + ": held by " + strings.Join(hs, ", ")
}

// Holder is a note a process leaves while it has the index open.
type Holder struct {
	PID     int       `json:"pid"`
	Write   bool      `json:"write"`
	Command string    `json:"command"`
	Since   time.Time `json:"since"`
}

// String describes h as "writer pid 123 (statemix library add) since 22:30:01".
func (h Holder) String() string {
	role := "reader"
	if h.Write {
		role = "writer"
	}
	return fmt.Sprintf("%s pid %d (%s) since %s", role, h.PID, h.Command, h.Since.Format(time.TimeOnly))
}

// Options configure Open. The zero value opens for writing with
// DefaultTimeout.
type Options struct {
	// ReadOnly opens the index for queries only; many readers share it.
	ReadOnly bool
	// Timeout is how long to wait for the index; 0 means DefaultTimeout.
	Timeout time.Duration
}

// Index is an open bleve index over one library.
type Index struct {
	lib      string
	path     string
	readOnly bool
	bi       bleve.Index
	holder   string
}

// State is what the index says it reflects.
type State struct {
	// Revision is the library revision the index was last brought up to.
	Revision int64 `json:"revision"`
	// Complete is false while a writer is between the first and the last
	// batch of a multi-batch update; an index left incomplete is stale.
	Complete bool `json:"complete"`
	// Entries is the number of documents after the last update.
	Entries int `json:"entries"`
	// VectorVersion is the similarity vector layout.
	VectorVersion int `json:"vector_version"`
	// Updated is when the last update finished.
	Updated time.Time `json:"updated"`
}

// Open opens the index of the library in libDir, read-only for queries or
// for writing. A writer creates the index when it does not exist yet; a
// reader gets ErrNotExist. Either waits at most DefaultTimeout for the
// other side and then returns a *BusyError naming who holds the index.
func Open(libDir string, readOnly bool) (*Index, error) {
	return OpenWithOptions(libDir, Options{ReadOnly: readOnly})
}

// OpenWithOptions is Open with explicit options.
func OpenWithOptions(libDir string, o Options) (*Index, error) {
	timeout := o.Timeout
	if timeout <= 0 {
		timeout = DefaultTimeout
	}
	x := &Index{lib: libDir, path: filepath.Join(libDir, Dir, "bleve"), readOnly: o.ReadOnly}
	deadline := time.Now().Add(timeout)
	if o.ReadOnly {
		if _, err := os.Stat(filepath.Join(x.path, "index_meta.json")); err != nil {
			return nil, fmt.Errorf("%s: %w", x.path, ErrNotExist)
		}
		// Writers go first: wait while a live writer says it holds or wants
		// the index, so a stream of readers cannot starve it.
		for {
			if len(liveHolders(libDir, true)) == 0 {
				break
			}
			if time.Now().After(deadline) {
				return nil, &BusyError{Path: x.path, Timeout: timeout, Holders: liveHolders(libDir, false)}
			}
			time.Sleep(10 * time.Millisecond)
		}
	} else {
		if err := os.MkdirAll(filepath.Join(libDir, Dir), 0o755); err != nil {
			return nil, fmt.Errorf("index: %w", err)
		}
	}
	x.holder = writeHolder(libDir, !o.ReadOnly)
	remaining := max(time.Until(deadline), 10*time.Millisecond)
	cfg := map[string]any{"bolt_timeout": remaining.String()}
	if o.ReadOnly {
		cfg["read_only"] = true
	}
	bi, err := bleve.OpenUsing(x.path, cfg)
	if errors.Is(err, bleve.ErrorIndexPathDoesNotExist) || errors.Is(err, bleve.ErrorIndexMetaMissing) {
		if o.ReadOnly {
			x.dropHolder()
			return nil, fmt.Errorf("%s: %w", x.path, ErrNotExist)
		}
		m, merr := newMapping()
		if merr != nil {
			panic("index: bad mapping: " + merr.Error())
		}
		bi, err = bleve.NewUsing(x.path, m, scorch.Name, scorch.Name,
			map[string]any{"bolt_timeout": remaining.String()})
		if err == nil {
			err = putState(bi, State{Complete: true, VectorVersion: vectorVersion})
		}
	}
	if err != nil {
		x.dropHolder()
		if errors.Is(err, bolt.ErrTimeout) {
			return nil, &BusyError{Path: x.path, Write: !o.ReadOnly, Timeout: timeout, Holders: otherHolders(libDir, x.holder)}
		}
		return nil, fmt.Errorf("index %s: %w", x.path, err)
	}
	x.bi = bi
	return x, nil
}

// Close closes the index; a writer's changes are on disk once each update
// returned, Close releases the lock.
func (x *Index) Close() error {
	if x == nil || x.bi == nil {
		return nil
	}
	err := x.bi.Close()
	x.bi = nil
	x.dropHolder()
	return err
}

// Path returns the folder of the bleve index.
func (x *Index) Path() string { return x.path }

// State returns what the index says it reflects.
func (x *Index) State() (State, error) { return getState(x.bi) }

// Count returns the number of documents.
func (x *Index) Count() (int, error) {
	n, err := x.bi.DocCount()
	return int(n), err
}

func getState(bi bleve.Index) (State, error) {
	b, err := bi.GetInternal([]byte(stateKey))
	if err != nil {
		return State{}, fmt.Errorf("index state: %w", err)
	}
	var st State
	if len(b) == 0 {
		return State{}, nil
	}
	if err := json.Unmarshal(b, &st); err != nil {
		return State{}, fmt.Errorf("index state: %w", err)
	}
	return st, nil
}

func putState(bi bleve.Index, st State) error {
	return bi.SetInternal([]byte(stateKey), st.encode())
}

func (st State) encode() []byte {
	b, _ := json.Marshal(st)
	return b
}

// holdersDir is where processes that have the index open leave a note.
func holdersDir(libDir string) string { return filepath.Join(libDir, Dir, "holders") }

// writeHolder leaves a note that this process holds (or, for a writer,
// waits for) the index and returns its path ("" if the folder is not
// writable, which is fine for a read-only library).
func writeHolder(libDir string, write bool) string {
	dir := holdersDir(libDir)
	if write {
		_ = os.MkdirAll(dir, 0o755)
	}
	role := "r"
	if write {
		role = "w"
	}
	h := Holder{PID: os.Getpid(), Write: write, Command: commandLine(), Since: time.Now()}
	b, _ := json.Marshal(h)
	p := filepath.Join(dir, fmt.Sprintf("%s-%d-%d.json", role, h.PID, time.Now().UnixNano()))
	if err := os.WriteFile(p, b, 0o644); err != nil {
		return ""
	}
	return p
}

func (x *Index) dropHolder() {
	if x.holder != "" {
		_ = os.Remove(x.holder)
		x.holder = ""
	}
}

// commandLine names this process for a holder note: the program and its
// first two arguments ("statemix library add").
func commandLine() string {
	args := os.Args
	if len(args) == 0 {
		return "?"
	}
	parts := []string{filepath.Base(args[0])}
	for _, a := range args[1:min(len(args), 3)] {
		if strings.HasPrefix(a, "-") {
			break
		}
		parts = append(parts, a)
	}
	return strings.Join(parts, " ")
}

// liveHolders returns the notes of processes that are still alive (only
// writers if writersOnly) and removes the notes of dead ones.
func liveHolders(libDir string, writersOnly bool) []Holder {
	return holders(libDir, writersOnly, "")
}

func holders(libDir string, writersOnly bool, skip string) []Holder {
	dir := holdersDir(libDir)
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil
	}
	var out []Holder
	for _, e := range ents {
		name := e.Name()
		if writersOnly && !strings.HasPrefix(name, "w-") {
			continue
		}
		parts := strings.Split(name, "-")
		if len(parts) != 3 {
			continue
		}
		pid, err := strconv.Atoi(parts[1])
		if err != nil {
			continue
		}
		p := filepath.Join(dir, name)
		if p == skip {
			continue
		}
		if !alive(pid) {
			_ = os.Remove(p)
			continue
		}
		b, err := os.ReadFile(p)
		if err != nil {
			continue
		}
		var h Holder
		if json.Unmarshal(b, &h) == nil {
			out = append(out, h)
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Since.Before(out[j].Since) })
	return out
}

// otherHolders is liveHolders without the note at own.
func otherHolders(libDir, own string) []Holder {
	return holders(libDir, false, own)
}

// alive reports whether a process with this pid exists.
func alive(pid int) bool {
	if pid <= 0 {
		return false
	}
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}
