package index

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"statemix/library"
)

// The process tests run this test binary again as a child with
// STATEMIX_INDEX_CHILD set to its role; TestMain dispatches.
const childEnv = "STATEMIX_INDEX_CHILD"

func TestMain(m *testing.M) {
	if role := os.Getenv(childEnv); role != "" {
		if err := child(role, os.Getenv("STATEMIX_INDEX_LIB"), os.Getenv("STATEMIX_INDEX_N")); err != nil {
			fmt.Fprintln(os.Stderr, "child", role+":", err)
			os.Exit(1)
		}
		os.Exit(0)
	}
	code := m.Run()
	if benchLib.dir != "" {
		os.RemoveAll(benchLib.dir)
	}
	os.Exit(code)
}

func child(role, dir, ns string) error {
	n, _ := strconv.Atoi(ns)
	switch role {
	case "search":
		// Search n times; the number of references seen must never drop.
		last := 0
		for i := 0; i < n; i++ {
			x, err := Open(dir, true)
			if err != nil {
				return fmt.Errorf("search %d: %w", i, err)
			}
			_, total, err := x.Search("kind:reference", 1)
			x.Close()
			if err != nil {
				return fmt.Errorf("search %d: %w", i, err)
			}
			if total < last {
				return fmt.Errorf("search %d: %d references, earlier %d: an entry was lost", i, total, last)
			}
			last = total
		}
		fmt.Println("searched", n, "last", last)
		return nil
	case "add":
		st, err := library.Open(dir)
		if err != nil {
			return err
		}
		for i := 0; i < n; i++ {
			e := synthEntry("Ni", "oxide", i, fmt.Sprintf("added %d", i))
			e.Spectrum.Y[0] += float64(i) * 1e-3 // a distinct spectrum, so a distinct id
			if _, _, err := st.Add(e); err != nil {
				return fmt.Errorf("add %d: %w", i, err)
			}
			x, err := Open(dir, false)
			if err != nil {
				return fmt.Errorf("index after add %d: %w", i, err)
			}
			err = x.Sync(st)
			if cerr := x.Close(); err == nil {
				err = cerr
			}
			if err != nil {
				return fmt.Errorf("index after add %d: %w", i, err)
			}
		}
		return nil
	case "killsync":
		// Add n entries, then index them in batches of 5 and stop after the
		// first batch, waiting to be killed.
		batchSize = 5
		testHookAfterBatch = func(done, total int) {
			fmt.Printf("BATCH %d/%d\n", done, total)
			time.Sleep(time.Minute)
		}
		st, err := library.Open(dir)
		if err != nil {
			return err
		}
		var es []*library.Entry
		for i := 0; i < n; i++ {
			e := synthEntry("Cu", "oxide", i, fmt.Sprintf("killed %d", i))
			e.Spectrum.Y[0] += float64(i) * 1e-3
			es = append(es, e)
		}
		if _, _, err := st.Add(es...); err != nil {
			return err
		}
		x, err := Open(dir, false)
		if err != nil {
			return err
		}
		return x.Sync(st)
	}
	return fmt.Errorf("unknown child role %q", role)
}

func spawn(t *testing.T, role, dir string, n int) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), childEnv+"="+role, "STATEMIX_INDEX_LIB="+dir, "STATEMIX_INDEX_N="+strconv.Itoa(n))
	return cmd
}

// TestConcurrentSearchAndAdd runs two searching processes while a third
// adds entries one by one, each add followed by an index update: no
// process may see an error, the count of references seen by a searcher
// never drops, and at the end every entry is indexed.
func TestConcurrentSearchAndAdd(t *testing.T) {
	var es []*library.Entry
	for i := 0; i < 10; i++ {
		es = append(es, synthEntry("Ti", "metal", i, fmt.Sprintf("base %d", i)))
		es[i].Spectrum.Y[0] += float64(i) * 1e-3
	}
	st, _ := newLibrary(t, es...)
	syncIndex(t, st)
	const adds = 15
	cmds := []*exec.Cmd{spawn(t, "search", st.Dir(), 150), spawn(t, "search", st.Dir(), 150), spawn(t, "add", st.Dir(), adds)}
	outs := make([]strings.Builder, len(cmds))
	var wg sync.WaitGroup
	errs := make([]error, len(cmds))
	for i, c := range cmds {
		c.Stdout, c.Stderr = &outs[i], &outs[i]
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
	}
	for i, c := range cmds {
		wg.Add(1)
		go func() { defer wg.Done(); errs[i] = c.Wait() }()
	}
	wg.Wait()
	for i := range cmds {
		if errs[i] != nil {
			t.Errorf("process %d: %v: %s", i, errs[i], outs[i].String())
		} else {
			t.Logf("process %d: %s", i, strings.TrimSpace(outs[i].String()))
		}
	}
	if err := st.Reload(); err != nil {
		t.Fatal(err)
	}
	stale, probs, err := Check(st)
	if stale || err != nil {
		t.Errorf("after the run: stale=%v %v %v", stale, probs, err)
	}
	x := openReader(t, st)
	if n, _ := x.Count(); n != 10+adds {
		t.Errorf("index has %d entries, want %d", n, 10+adds)
	}
}

// TestKilledWriter kills a writer after the first of several batches: the
// index must be reported stale (by Check and by library verify), and
// verify --repair (Rebuild) must make it whole.
func TestKilledWriter(t *testing.T) {
	st, _ := newLibrary(t, synthEntry("Ti", "metal", 0, "base"))
	syncIndex(t, st)
	cmd := spawn(t, "killsync", st.Dir(), 23)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(out).ReadString('\n')
	if err != nil || !strings.HasPrefix(line, "BATCH") {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("child said %q, %v", line, err)
	}
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	err = cmd.Wait()
	var ee *exec.ExitError
	if !errors.As(err, &ee) {
		t.Fatalf("child: %v, want killed", err)
	}
	if err := st.Reload(); err != nil {
		t.Fatal(err)
	}
	stale, probs, err := Check(st)
	if err != nil {
		t.Fatal(err)
	}
	if !stale {
		t.Fatalf("index of a killed writer not stale: %v", probs)
	}
	t.Logf("check after kill: %v", probs)
	if !strings.Contains(strings.Join(probs, "\n"), "interrupted") {
		t.Errorf("problems do not say the update was interrupted: %v", probs)
	}
	// library verify sees it through Checker, and verify --repair rebuilds.
	rep, err := st.Verify(library.VerifyOptions{CheckIndex: Checker(st.Dir())})
	if err != nil || rep.OK() {
		t.Fatalf("verify after the kill: ok=%v %v %+v", rep != nil && rep.OK(), err, rep)
	}
	rep, err = st.Verify(library.VerifyOptions{Repair: true, CheckIndex: Checker(st.Dir())})
	if err != nil || !rep.OK() {
		t.Fatalf("verify --repair after the kill: %v %+v", err, rep)
	}
	stale, probs, err = Check(st)
	if stale || err != nil {
		t.Fatalf("after repair: stale=%v %v %v", stale, probs, err)
	}
	x := openReader(t, st)
	if n, _ := x.Count(); n != 24 {
		t.Errorf("rebuilt index has %d entries, want 24", n)
	}
	hits, _, err := x.Search("name:killed", 100)
	if err != nil || len(hits) != 23 {
		t.Errorf("rebuilt index: %d hits for the killed writer's entries, want 23 (%v)", len(hits), err)
	}
}
