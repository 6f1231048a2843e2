package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"path/filepath"
	"strings"
	"testing"

	"statemix/lineshape"
)

// runApp runs the command tree in-process and returns the exit status and
// what was written to stdout and stderr.
func runApp(t *testing.T, env map[string]string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	app := &App{
		In: strings.NewReader(""), Out: &out, Err: &errb,
		Getenv: func(k string) string { return env[k] },
	}
	code := app.Execute(args)
	return code, out.String(), errb.String()
}

func TestExitCodes(t *testing.T) {
	cases := []struct {
		err  error
		want int
	}{
		{nil, exitOK},
		{errors.New("disk full"), exitFailure},
		{usageErrorf("--window: want LO:HI"), exitUsage},
		{badInputf("all values are zero"), exitBadInput},
		{lineshape.Errorf("x.csv", 3, "not a number"), exitBadInput},
		{errors.Join(errors.New("reading"), lineshape.Errorf("x.csv", 3, "not a number")), exitBadInput},
	}
	for _, c := range cases {
		if got := exitCode(c.err); got != c.want {
			t.Errorf("exitCode(%v) = %d, want %d", c.err, got, c.want)
		}
	}
}

func TestUsageErrorsExit2(t *testing.T) {
	for _, args := range [][]string{{"nosuch"}, {"version", "extra"}, {"--nosuchflag"}} {
		code, _, stderr := runApp(t, nil, args...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d (stderr %q)", args, code, exitUsage, stderr)
		}
		if !strings.HasPrefix(stderr, "statemix: ") {
			t.Errorf("%v: stderr %q does not start with \"statemix: \"", args, stderr)
		}
	}
}

func TestLibraryDirResolution(t *testing.T) {
	cases := []struct {
		flag string
		env  map[string]string
		want string
	}{
		{"/flag", map[string]string{"STATEMIX_LIBRARY": "/env"}, "/flag"},
		{"", map[string]string{"STATEMIX_LIBRARY": "/env", "XDG_DATA_HOME": "/xdg"}, "/env"},
		{"", map[string]string{"XDG_DATA_HOME": "/xdg", "HOME": "/home/a"}, filepath.Join("/xdg", "statemix")},
		{"", map[string]string{"HOME": "/home/a"}, filepath.Join("/home/a", ".local", "share", "statemix")},
	}
	for _, c := range cases {
		app := &App{LibraryFlag: c.flag, Getenv: func(k string) string { return c.env[k] }}
		got, err := app.LibraryDir()
		if err != nil || got != c.want {
			t.Errorf("LibraryDir(flag %q, env %v) = %q, %v; want %q", c.flag, c.env, got, err, c.want)
		}
	}
}

func TestVersionJSON(t *testing.T) {
	code, out, _ := runApp(t, nil, "version", "--json")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	var v map[string]string
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatalf("version --json: %v in %q", err, out)
	}
	if v["schema"] != "statemix.version/v1" || v["version"] != Version {
		t.Errorf("version --json = %v", v)
	}
}

func TestCompletionScripts(t *testing.T) {
	for _, sh := range []string{"bash", "zsh", "fish"} {
		code, out, _ := runApp(t, nil, "completion", sh)
		if code != exitOK || !strings.Contains(out, "statemix") {
			t.Errorf("completion %s: exit %d, %d bytes", sh, code, len(out))
		}
	}
}
