package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// cliHelperEnv makes the test binary run statemix with the JSON-encoded
// arguments it holds (see TestLibraryHelperProcess), so the multi-process
// test needs no separate build.
const (
	cliHelperEnv   = "STATEMIX_CLI_TEST_ARGS"
	cliHelperAtEnv = "STATEMIX_CLI_TEST_START" // unix nanoseconds to start at
)

// TestLibraryHelperProcess is not a test: it is the body of the helper
// processes of TestLibraryConcurrentCLI.
func TestLibraryHelperProcess(t *testing.T) {
	raw := os.Getenv(cliHelperEnv)
	if raw == "" {
		t.Skip("helper process body for TestLibraryConcurrentCLI")
	}
	var args []string
	if err := json.Unmarshal([]byte(raw), &args); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	if at, err := strconv.ParseInt(os.Getenv(cliHelperAtEnv), 10, 64); err == nil {
		time.Sleep(time.Until(time.Unix(0, at)))
	}
	os.Exit(run(args, strings.NewReader(""), os.Stdout, os.Stderr))
}

// writeLineCSV writes an invented derivative Gaussian line at e0 eV.
func writeLineCSV(t *testing.T, path string, e0 float64) {
	t.Helper()
	var b bytes.Buffer
	b.WriteString("energy_ev,dN/dE\n")
	for i := 0; i < 201; i++ {
		e := 330 + 0.5*float64(i)
		x := e - e0
		fmt.Fprintf(&b, "%.1f,%.8g\n", e, -100*x/9*math.Exp(-x*x/18))
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLibraryConcurrentCLI runs 8 statemix processes adding at once and 4
// listing at once against one library: all 8 land, the revision counts 8,
// and verify (including the index check) is clean.
func TestLibraryConcurrentCLI(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	data := t.TempDir()
	at := time.Now().Add(500 * time.Millisecond)
	type proc struct {
		cmd  *exec.Cmd
		out  *bytes.Buffer
		name string
	}
	start := func(name string, args ...string) proc {
		raw, _ := json.Marshal(append([]string{"--library", dir}, args...))
		cmd := exec.Command(os.Args[0], "-test.run=^TestLibraryHelperProcess$", "-test.count=1")
		cmd.Env = append(os.Environ(), cliHelperEnv+"="+string(raw), cliHelperAtEnv+"="+strconv.FormatInt(at.UnixNano(), 10))
		var out bytes.Buffer
		cmd.Stdout, cmd.Stderr = &out, &out
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		return proc{cmd, &out, name}
	}
	var procs []proc
	for i := 0; i < 8; i++ {
		f := filepath.Join(data, fmt.Sprintf("line%d.csv", i))
		writeLineCSV(t, f, 370+2*float64(i))
		procs = append(procs, start(fmt.Sprintf("adder %d", i), "library", "add", f, "--element", "Ti",
			"--transition", "L3M23M23", "--state", "other:batch", "--name", fmt.Sprintf("line %d", i)))
	}
	for i := 0; i < 4; i++ {
		procs = append(procs, start(fmt.Sprintf("lister %d", i), "--json", "library", "list"))
	}
	for _, p := range procs {
		if err := p.cmd.Wait(); err != nil {
			t.Errorf("%s: %v\n%s", p.name, err, p.out)
		}
		if strings.Contains(p.out.String(), "index was not updated") {
			t.Errorf("%s: %s", p.name, p.out)
		}
	}
	var list struct {
		Entries  []struct{ Name string }
		Revision int
	}
	if err := json.Unmarshal([]byte(mustCLI(t, dir, "--json", "library", "list")), &list); err != nil {
		t.Fatal(err)
	}
	if len(list.Entries) != 8 || list.Revision != 8 {
		t.Errorf("%d entries at revision %d, want 8 at 8", len(list.Entries), list.Revision)
	}
	code, out, stderr := libCLI(t, dir, "library", "verify")
	if code != 0 || !strings.Contains(out, "all files check out") {
		t.Errorf("verify: exit %d\n%s%s", code, out, stderr)
	}
}
