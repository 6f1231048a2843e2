package library

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// The tests here run this test binary again as helper processes (selected
// by helperEnv), so several processes use one library at once without a
// separate build.
const (
	helperEnv    = "STATEMIX_LIBRARY_TEST_HELPER"
	helperDirEnv = "STATEMIX_LIBRARY_TEST_DIR"
	helperArgEnv = "STATEMIX_LIBRARY_TEST_ARG"
	helperAtEnv  = "STATEMIX_LIBRARY_TEST_START" // unix nanoseconds to start at
)

// TestHelperProcess is not a test: it is the body of the helper processes.
func TestHelperProcess(t *testing.T) {
	mode := os.Getenv(helperEnv)
	if mode == "" {
		t.Skip("helper process body for the multi-process tests")
	}
	if err := helper(mode); err != nil {
		fmt.Fprintln(os.Stderr, "helper:", err)
		os.Exit(1)
	}
	os.Exit(0)
}

func helper(mode string) error {
	if at, err := strconv.ParseInt(os.Getenv(helperAtEnv), 10, 64); err == nil {
		time.Sleep(time.Until(time.Unix(0, at)))
	}
	s, err := Open(os.Getenv(helperDirEnv))
	if err != nil {
		return err
	}
	s.LockTimeout = 60 * time.Second
	n, _ := strconv.Atoi(os.Getenv(helperArgEnv))
	switch mode {
	case "add":
		_, _, err := s.Add(tiEntry(fmt.Sprintf("proc %d", n), "metal", 376+2*float64(n), uint64(n)))
		return err
	case "list":
		last := 0
		for i := 0; i < 40; i++ {
			es, errs := s.Entries()
			if len(errs) > 0 {
				return fmt.Errorf("list %d: %v", i, errs)
			}
			if len(es) < last {
				return fmt.Errorf("list %d: %d entries after %d", i, len(es), last)
			}
			last = len(es)
			if rep, err := s.Verify(VerifyOptions{}); err != nil || !rep.OK() {
				return fmt.Errorf("read-only verify beside writers: %+v %v", rep, err)
			}
		}
		return nil
	case "crash-entry", "crash-manifest", "crash-catalog":
		target := "refs"
		switch mode {
		case "crash-manifest":
			target = manifestName
		case "crash-catalog":
			target = catalogName
		}
		testHookAfterTemp = func(tmp string) error {
			if strings.Contains(tmp, target) {
				os.Exit(7) // die with the temporary file written, before the rename
			}
			return nil
		}
		_, _, err := s.Add(tiEntry("doomed", "oxide", 393, 99))
		return fmt.Errorf("add survived the crash hook: %v", err)
	case "crash-edit":
		// Die after the edited entry is in place, before the manifest.
		testHookAfterTemp = func(tmp string) error {
			if strings.Contains(tmp, manifestName) {
				os.Exit(7)
			}
			return nil
		}
		_, _, err := s.Edit("survivor", map[string]string{"name": "renamed"})
		return fmt.Errorf("edit survived the crash hook: %v", err)
	}
	return fmt.Errorf("unknown helper mode %q", mode)
}

// startHelper starts a helper process.
func startHelper(t *testing.T, dir, mode string, arg int, at time.Time) (*exec.Cmd, *bytes.Buffer) {
	t.Helper()
	cmd := exec.Command(os.Args[0], "-test.run=^TestHelperProcess$", "-test.count=1")
	cmd.Env = append(os.Environ(), helperEnv+"="+mode, helperDirEnv+"="+dir,
		helperArgEnv+"="+strconv.Itoa(arg), helperAtEnv+"="+strconv.FormatInt(at.UnixNano(), 10))
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	return cmd, &out
}

// TestConcurrentProcesses runs 8 processes adding and 4 listing at once:
// all 8 entries land, the revision counts 8, verify is clean.
func TestConcurrentProcesses(t *testing.T) {
	s := newLib(t)
	at := time.Now().Add(400 * time.Millisecond)
	type proc struct {
		cmd  *exec.Cmd
		out  *bytes.Buffer
		name string
	}
	var procs []proc
	for i := 0; i < 8; i++ {
		c, o := startHelper(t, s.Dir(), "add", i, at)
		procs = append(procs, proc{c, o, fmt.Sprintf("adder %d", i)})
	}
	for i := 0; i < 4; i++ {
		c, o := startHelper(t, s.Dir(), "list", i, at)
		procs = append(procs, proc{c, o, fmt.Sprintf("lister %d", i)})
	}
	for _, p := range procs {
		if err := p.cmd.Wait(); err != nil {
			t.Errorf("%s: %v\n%s", p.name, err, p.out)
		}
	}
	if err := s.Reload(); err != nil {
		t.Fatal(err)
	}
	if n := countEntries(t, s); n != 8 {
		t.Errorf("%d entries, want 8", n)
	}
	if s.Revision() != 8 {
		t.Errorf("revision %d, want 8", s.Revision())
	}
	ch, _, complete, _ := s.ChangesSince(0)
	if len(ch) != 8 || !complete {
		t.Errorf("change log: %v", ch)
	}
	rep, err := s.Verify(VerifyOptions{})
	if err != nil || !rep.OK() || len(rep.Problems) != 0 || rep.Entries != 8 {
		t.Errorf("verify: %+v %v", rep, err)
	}
}

// TestCrashSafety kills a writer after it wrote a temporary file, once
// before the entry is renamed into place and once before the manifest is:
// the library stays usable, verify reports the leftover (and the lagging
// revision), repair fixes both, and verify is then clean.
func TestCrashSafety(t *testing.T) {
	for _, mode := range []string{"crash-entry", "crash-manifest"} {
		t.Run(mode, func(t *testing.T) {
			s := newLib(t)
			mustAdd(t, s, tiEntry("survivor", "metal", 383, 1))
			c, out := startHelper(t, s.Dir(), mode, 0, time.Now())
			err := c.Wait()
			var ee *exec.ExitError
			if !errors.As(err, &ee) || ee.ExitCode() != 7 {
				t.Fatalf("helper: %v\n%s", err, out)
			}
			// The library is valid and usable.
			s2, err := Open(s.Dir())
			if err != nil {
				t.Fatal(err)
			}
			es, errs := s2.Entries()
			wantN := 1
			if mode == "crash-manifest" {
				wantN = 2 // the entry file was renamed into place before the crash
			}
			if len(errs) > 0 || len(es) != wantN || s2.Revision() != 1 {
				t.Fatalf("after crash: %d entries, errors %v, revision %d", len(es), errs, s2.Revision())
			}
			rep, err := s2.Verify(VerifyOptions{})
			if err != nil {
				t.Fatal(err)
			}
			codes := problemCodes(rep)
			want := ProblemLeftover
			if mode == "crash-manifest" {
				want = ProblemLeftover + "," + ProblemRevision
			}
			if codes != want || rep.OK() {
				t.Fatalf("verify after crash: %q (%+v), want %q", codes, rep.Problems, want)
			}
			rep, err = s2.Verify(VerifyOptions{Repair: true})
			if err != nil || !rep.OK() || problemCodes(rep) != want {
				t.Fatalf("repair: %+v %v", rep, err)
			}
			rep, err = s2.Verify(VerifyOptions{})
			if err != nil || len(rep.Problems) != 0 {
				t.Fatalf("verify after repair: %+v %v", rep, err)
			}
			if mode == "crash-manifest" {
				if s2.Revision() != 2 {
					t.Errorf("repaired revision %d, want 2", s2.Revision())
				}
				ch, _, _, _ := s2.ChangesSince(1)
				if len(ch) != 1 {
					t.Errorf("repair should log the entry it recovered: %v", ch)
				}
			}
			left, _ := filepath.Glob(filepath.Join(s.Dir(), "*", ".*"+tempMarker+"*"))
			left2, _ := filepath.Glob(filepath.Join(s.Dir(), ".*"+tempMarker+"*"))
			if len(left)+len(left2) > 0 {
				t.Errorf("leftovers after repair: %v %v", left, left2)
			}
			mustAdd(t, s2, tiEntry("after", "nitride", 398, 5))
		})
	}
}

func problemCodes(r *Report) string {
	var cs []string
	for _, p := range r.Problems {
		cs = append(cs, p.Code)
	}
	return strings.Join(cs, ",")
}

func TestVerifyFindsTampering(t *testing.T) {
	s := newLib(t)
	added := mustAdd(t, s, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2), tiEntry("c", "nitride", 393, 3))
	refs := filepath.Join(s.Dir(), "refs")
	// Altered value: hash problem.
	p := filepath.Join(refs, added[0].ID+".json")
	b, _ := os.ReadFile(p)
	i := bytes.Index(b, []byte(`"values": [`)) + 20
	b[i] ^= 1
	os.WriteFile(p, b, 0o644)
	// Invalid JSON.
	os.WriteFile(filepath.Join(refs, added[1].ID+".json"), []byte("{\"format\": "), 0o644)
	// A stray file and a name clash by hand.
	os.WriteFile(filepath.Join(refs, "notes.txt"), []byte("hi"), 0o644)
	e := added[2].Clone()
	e.Spectrum.Y[0] += 1
	e.ID, _ = ComputeID(e)
	eb, _ := encodeEntry(e)
	os.WriteFile(filepath.Join(refs, e.ID+".json"), eb, 0o644)
	idx := func(entries []*Entry, rev int, repair bool) ([]Problem, error) {
		return []Problem{{Path: "index", Code: ProblemIndex, Message: fmt.Sprintf("%d entries at %d", len(entries), rev), Repaired: repair}}, nil
	}
	rep, err := s.Verify(VerifyOptions{CheckIndex: idx})
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]string{}
	for _, p := range rep.Problems {
		got[p.Code] += p.Path + " "
	}
	for code, path := range map[string]string{
		ProblemHash: added[0].ID, ProblemJSON: added[1].ID, ProblemStray: "notes.txt", ProblemName: "library.json", ProblemIndex: "index",
	} {
		if !strings.Contains(got[code], path) {
			t.Errorf("problem %s about %s not reported: %+v", code, path, rep.Problems)
		}
	}
	if !strings.Contains(fmt.Sprint(rep.Problems), "2 entries at 1") || rep.Entries != 2 {
		t.Errorf("index checker should get the 2 clean entries at revision 1: %+v", rep)
	}
	rep, err = s.Verify(VerifyOptions{Repair: true, CheckIndex: idx})
	if err != nil || rep.OK() {
		t.Errorf("repair cannot fix altered or broken entries: %+v %v", rep, err)
	}
	if _, err := os.Stat(filepath.Join(refs, added[1].ID+".json")); err != nil {
		t.Error("repair removed a corrupt entry file")
	}
}

func TestVerifyRebuildsManifest(t *testing.T) {
	s := newLib(t)
	mustAdd(t, s, tiEntry("a", "metal", 383, 1))
	mustAdd(t, s, tiEntry("b", "oxide", 388, 2))
	os.Remove(filepath.Join(s.Dir(), manifestName))
	if _, err := Create(s.Dir()); err == nil || !strings.Contains(err.Error(), "--repair") {
		t.Errorf("Create over orphaned entries: %v", err)
	}
	os.WriteFile(filepath.Join(s.Dir(), manifestName), []byte("garbage"), 0o644)
	rep, err := VerifyDir(s.Dir(), VerifyOptions{})
	if err != nil || problemCodes(rep) != ProblemManifest || rep.OK() {
		t.Fatalf("verify: %+v %v", rep, err)
	}
	rep, err = VerifyDir(s.Dir(), VerifyOptions{Repair: true})
	if err != nil || !rep.OK() || rep.Revision != 3 {
		t.Fatalf("repair: %+v %v", rep, err)
	}
	s2, err := Open(s.Dir())
	if err != nil {
		t.Fatal(err)
	}
	if _, _, complete, _ := s2.ChangesSince(2); complete {
		t.Error("after a manifest rebuild the change log cannot be complete for older revisions")
	}
	if n := countEntries(t, s2); n != 2 {
		t.Errorf("%d entries", n)
	}
}

func TestVerifyReportsHandEdits(t *testing.T) {
	s := newLib(t)
	added := mustAdd(t, s, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2))
	for i, edit := range []struct{ from, to string }{
		{`"state": "metal"`, `"state": "plasma"`},
		{`"state": "oxide"`, `"stat": "oxide", "state": "oxide"`},
	} {
		p := filepath.Join(s.Dir(), "refs", added[i].ID+".json")
		b, _ := os.ReadFile(p)
		if !bytes.Contains(b, []byte(edit.from)) {
			t.Fatalf("%s lacks %s", p, edit.from)
		}
		os.WriteFile(p, bytes.Replace(b, []byte(edit.from), []byte(edit.to), 1), 0o644)
	}
	rep, err := s.Verify(VerifyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	msgs := fmt.Sprint(rep.Problems)
	// The state edited by hand also leaves the catalogue stale (it still
	// says metal); the misspelt field changes no catalogued label.
	if problemCodes(rep) != ProblemSchema+","+ProblemSchema+","+ProblemCatalog || !strings.Contains(msgs, "plasma") ||
		!strings.Contains(msgs, `"stat"`) || !strings.Contains(msgs, added[0].ID) {
		t.Errorf("hand edits: %+v", rep.Problems)
	}
	rep, err = s.Verify(VerifyOptions{Repair: true})
	if err != nil || problemCodes(rep) != ProblemSchema+","+ProblemSchema+","+ProblemCatalog || !rep.Problems[2].Repaired {
		t.Errorf("repair should rebuild the catalogue: %+v %v", rep, err)
	}
	if rep, err = s.Verify(VerifyOptions{}); err != nil || problemCodes(rep) != ProblemSchema+","+ProblemSchema {
		t.Errorf("after repair: %+v %v", rep, err)
	}
	if n := countEntries(t, s); n != 2 {
		t.Errorf("hand-edited entries should stay readable: %d", n)
	}
}

// TestAddRollsBack checks that a failed write in the middle of an Add
// removes what the Add already wrote.
func TestAddRollsBack(t *testing.T) {
	s := newLib(t)
	mustAdd(t, s, tiEntry("kept", "metal", 383, 1))
	n := 0
	testHookAfterTemp = func(tmp string) error {
		if strings.Contains(tmp, "refs") {
			n++
			if n == 2 {
				os.Remove(tmp) // a write that fails cleans its own temporary file
				return errors.New("disk full")
			}
		}
		return nil
	}
	defer func() { testHookAfterTemp = nil }()
	_, _, err := s.Add(tiEntry("one", "oxide", 388, 2), tiEntry("two", "nitride", 393, 3))
	if err == nil || !strings.Contains(err.Error(), "disk full") {
		t.Fatalf("add: %v", err)
	}
	testHookAfterTemp = nil
	if c := countEntries(t, s); c != 1 || s.Revision() != 1 {
		t.Errorf("after a failed add: %d entries at revision %d, want 1 at 1", c, s.Revision())
	}
	rep, err := s.Verify(VerifyOptions{})
	if err != nil || len(rep.Problems) != 0 {
		t.Errorf("verify: %+v %v", rep, err)
	}
}
