package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/spf13/cobra"

	"statemix/lineshape/format/npy"
)

// Exit statuses and messages for command-line mistakes and bad input that
// the per-command tests do not cover, found by using the program as an
// analyst would. Each message must start with "statemix: " and name what
// is wrong.
func TestCLIMistakes(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	lib := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, lib, "library", "init")
	mustCLI(t, lib, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	missing := filepath.Join(t.TempDir(), "no-such-library")
	refs := []string{"--ref-file", metal, "--ref-file", oxide + ":oxide", "--uncertainty", "covariance"}
	fit := func(extra ...string) []string {
		return append(append([]string{"fit", unknown}, refs...), extra...)
	}
	cases := []struct {
		name string
		args []string
		code int
		msgs []string // each must appear in stderr
	}{
		// search --like follows fit and convert: a block the file lacks,
		// or no block for a file of several, is a usage error.
		{"search like block out of range", []string{"--library", lib, "search", "--like", tiVMS, "--block", "7"}, exitUsage,
			[]string{"--block", "block 7", "has 2"}},
		{"search like several blocks", []string{"--library", lib, "search", "--like", tiVMS}, exitUsage,
			[]string{"2 spectra", "--block N"}},
		// A library folder that does not exist says so and how to make
		// one; fit adds how to work without a library.
		{"fit library missing", []string{"--library", missing, "fit", unknown, "--refs", "Ti foil"}, exitFailure,
			[]string{missing, "does not exist", "statemix library init", "--ref-file FILE:STATE"}},
		{"list library missing", []string{"--library", missing, "library", "list"}, exitFailure,
			[]string{missing, "does not exist", "statemix library init"}},
		{"default library missing", []string{"library", "list"}, exitFailure,
			[]string{"does not exist", "the default folder"}},
		{"fit no references", []string{"fit", unknown}, exitBadInput,
			[]string{"no references", "--refs", "--suggest", "--ref-file FILE:STATE"}},
		// --element is checked as library add checks it.
		{"fit element helium", fit("--element", "He"), exitUsage, []string{"--element He", "no Auger transition"}},
		{"fit element unknown", fit("--element", "Xx"), exitUsage, []string{"--element Xx", `"Xx"`}},
		// A bundle is a gzipped tar: export refuses a name that says otherwise.
		{"export zip name", []string{"--library", lib, "library", "export", filepath.Join(t.TempDir(), "refs.zip")}, exitUsage,
			[]string{"refs.zip", ".tar.gz"}},
		// --top 0 gave the default 10 hits without a word.
		{"search top 0", []string{"--library", lib, "search", "element:Ti", "--top", "0"}, exitUsage, []string{"--top 0", "positive"}},
		// --block 0 is not "the only block": blocks count from 1.
		{"fit block 0", fit("--block", "0"), exitUsage, []string{"--block 0", "count from 1"}},
		{"search block 0", []string{"--library", lib, "search", "--like", tiVMS, "--block", "0"}, exitUsage, []string{"--block 0"}},
		{"convert block 0", []string{"convert", tiVMS, "--block", "0"}, exitUsage, []string{"--block 0"}},
		{"library add block 0", []string{"--library", lib, "library", "add", tiVMS, "--block", "0", "--element", "Ti",
			"--transition", "LMM", "--state", "metal"}, exitUsage, []string{"--block 0"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, stdout, stderr := runApp(t, map[string]string{"HOME": missing}, c.args...)
			if code != c.code {
				t.Errorf("exit %d, want %d; stderr %q", code, c.code, stderr)
			}
			if !strings.HasPrefix(stderr, "statemix: ") {
				t.Errorf("stderr %q does not start with \"statemix: \"", stderr)
			}
			for _, m := range c.msgs {
				if !strings.Contains(stderr, m) {
					t.Errorf("stderr %q lacks %q", stderr, m)
				}
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing on failure", stdout)
			}
		})
	}
}

// A flag value that does not parse is explained in words, not with the
// strconv function that failed.
func TestFlagValueMessages(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"fit", "x.vms", "--samples", "abc"}, `invalid argument "abc" for "--samples" flag: want a whole number`},
		{[]string{"fit", "x.vms", "--seed", "-1"}, `"--seed" flag: want a whole number, 0 or more`},
		{[]string{"fit", "x.vms", "--max-shift", "two"}, `"--max-shift" flag: want a number`},
		{[]string{"map", "x.npy", "--workers", "1e9999"}, `"--workers" flag: want a whole number`},
		{[]string{"--quiet=maybe", "version"}, `"--quiet" flag: want true or false`},
	} {
		code, _, stderr := runApp(t, nil, c.args...)
		if code != exitUsage || !strings.HasPrefix(stderr, "statemix: ") || !strings.Contains(stderr, c.want) || strings.Contains(stderr, "strconv") {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 and %q", c.args, code, stderr, c.want)
		}
	}
}

// --suggest takes an optional K, so "--suggest 3" leaves 3 as a second
// file argument; the message says to write --suggest=3.
func TestSuggestSpaceK(t *testing.T) {
	for _, cmd := range []string{"fit", "map"} {
		code, _, stderr := runApp(t, nil, cmd, "x.vms", "--suggest", "3")
		if code != exitUsage || !strings.Contains(stderr, "write --suggest=3") {
			t.Errorf("%s --suggest 3: exit %d, stderr %q; want exit 2 and the advice to write --suggest=3", cmd, code, stderr)
		}
	}
	// Two files are still refused as before.
	if code, _, stderr := runApp(t, nil, "fit", "a.vms", "b.vms"); code != exitUsage || !strings.Contains(stderr, "received 2") {
		t.Errorf("fit a b: exit %d, stderr %q", code, stderr)
	}
}

// A thickness and its SD are printed to the same decimal place.
func TestThicknessText(t *testing.T) {
	for _, c := range []struct {
		nm, sd float64
		want   string
	}{
		{3.0412, 0.0331, "3.041 ± 0.033 nm"}, // printed "3.04 ± 0.033 nm" before
		{25.04, 3.1, "25.0 ± 3.1 nm"},
		{3.0412, 0.31, "3.04 ± 0.31 nm"},
		{140.2, 12, "140 ± 12 nm"},
		{3.0412, 0, "3.04 nm"},
		{0.5, 0.00004, "0.500 ± 0.000 nm"},
	} {
		if got := thicknessText(c.nm, c.sd); got != c.want {
			t.Errorf("thicknessText(%v, %v) = %q, want %q", c.nm, c.sd, got, c.want)
		}
	}
}

// The map's timing line counts workers in words and pixels per second
// without an exponent (it printed "1 workers (7.61e+04 pixels/s)").
func TestMapTiming(t *testing.T) {
	for _, c := range []struct {
		s       float64
		workers int
		pixels  int
		want    string
	}{
		{0.0135, 1, 1024, "fitted in 0.0135 s with 1 worker (75852 pixels/s)"},
		{12.5, 2, 262144, "fitted in 12.5 s with 2 workers (20972 pixels/s)"},
	} {
		if got := mapTiming(c.s, c.workers, c.pixels); got != c.want {
			t.Errorf("mapTiming(%v, %d, %d) = %q, want %q", c.s, c.workers, c.pixels, got, c.want)
		}
	}
}

// convert counts "1 spectrum", and says when --to asks for the mode a
// spectrum already has (it wrote the data unchanged without a word).
func TestConvertMessages(t *testing.T) {
	_, metal, _, _ := fitFixture(t) // a derivative spectrum
	out := filepath.Join(t.TempDir(), "m.csv")
	code, _, stderr := runApp(t, nil, "convert", metal, "--to", "derivative", "-o", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{"block 1 is already derivative: written unchanged", "wrote 1 spectrum to "} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr %q lacks %q", stderr, want)
		}
	}
	if _, _, stderr := runApp(t, nil, "--quiet", "convert", metal, "--to", "derivative", "-o", out); stderr != "" {
		t.Errorf("--quiet: stderr %q, want nothing", stderr)
	}
}

// calc prints the numbers it was given as given: 1000000 eV, not 1e+06 eV.
func TestCalcPlainNumbers(t *testing.T) {
	code, out, stderr := runApp(t, nil, "calc", "imfp", "--formula", "SiO2", "--energy", "1000000")
	if code != 0 || !strings.Contains(out, "1000000 eV electrons") || strings.Contains(out, "e+") {
		t.Errorf("calc imfp: exit %d, stdout %q (%s); want the energy as 1000000 eV", code, out, stderr)
	}
	code, out, stderr = runApp(t, nil, "calc", "overlayer", "--ratio", "2500000", "--n-overlayer", "1", "--n-substrate", "1",
		"--lambda-overlayer", "2", "--lambda-substrate", "2", "--take-off", "42")
	if code != 0 || !strings.Contains(out, "ratio 2500000") || !strings.Contains(out, "take-off 42°") {
		t.Errorf("calc overlayer: exit %d, stdout %q (%s)", code, out, stderr)
	}
}

// --refs completes after the unknown's FILE too, after a comma, and offers
// references only (it offered nothing once FILE was typed, and archived
// measurements, which --refs refuses).
func TestRefsCompletion(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	mustCLI(t, dir, "library", "add", oxide, "--element", "Ti", "--transition", "L3M23M23", "--state", "oxide", "--name", "TiO2 film")
	mustCLI(t, dir, "fit", unknown, "--refs", "Ti foil,TiO2 film", "--uncertainty", "covariance", "--save")
	for _, c := range []struct {
		args      []string
		want, not []string
	}{
		{[]string{"fit", unknown, "--refs", ""}, []string{"Ti foil\t", "TiO2 film\t"}, []string{"unknown"}},
		{[]string{"profile", unknown, "--refs", "Ti foil,"}, []string{"Ti foil,TiO2 film\t"}, []string{"Ti foil,Ti foil"}},
		{[]string{"map", unknown, "--refs", "TiO"}, []string{"TiO2 film\t"}, []string{"Ti foil"}},
	} {
		code, out, stderr := libCLI(t, dir, append([]string{"__complete"}, c.args...)...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", c.args, code, stderr)
		}
		for _, w := range c.want {
			if !strings.Contains(out, w) {
				t.Errorf("%v: completions %q lack %q", c.args, out, w)
			}
		}
		for _, n := range c.not {
			if strings.Contains(out, n) {
				t.Errorf("%v: completions %q offer %q", c.args, out, n)
			}
		}
	}
}

func TestSigNum(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{13903.6, "13900"}, // printed 1.39e+04 before
		{0.022345, "0.02235"},
		{10, "10"},
		{2.5e-7, "2.5e-07"},
		{-1393.27, "-1393"},
		{0, "0"},
	} {
		if got := sigNum(c.v, 4); got != c.want {
			t.Errorf("sigNum(%v, 4) = %q, want %q", c.v, got, c.want)
		}
	}
}

// An archived measurement has no state: the search tables print "-" in
// its column rather than a blank that shifts the eye to the next column.
func TestSearchTableBlankState(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	mustCLI(t, dir, "fit", unknown, "--refs", "Ti foil", "--ref-file", oxide+":oxide", "--uncertainty", "covariance", "--save")
	for _, args := range [][]string{{"search", "kind:measurement"}, {"search", "--like", unknown}} {
		out := mustCLI(t, dir, args...)
		found := false
		for _, line := range strings.Split(out, "\n") {
			if !strings.Contains(line, "measurement") || strings.HasPrefix(line, "REF") {
				continue
			}
			found = true
			cols := regexp.MustCompile(`\s{2,}`).Split(strings.TrimSpace(line), -1)
			if len(cols) != 7 || cols[4] != "-" {
				t.Errorf("%v: row %q splits into %q, want 7 columns with state \"-\"", args, line, cols)
			}
		}
		if !found {
			t.Errorf("%v: no measurement row in\n%s", args, out)
		}
	}
}

// Writing into a folder that does not exist names the folder, not the
// temporary file the atomic write could not create.
func TestWriteMissingFolder(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	gone := filepath.Join(t.TempDir(), "no", "such")
	code, _, stderr := runApp(t, nil, "fit", unknown, "--ref-file", metal, "--ref-file", oxide+":oxide",
		"--uncertainty", "covariance", "--report", filepath.Join(gone, "fit.html"))
	want := "--report " + filepath.Join(gone, "fit.html") + ": folder " + gone + " does not exist"
	if code != exitFailure || !strings.Contains(stderr, want) || strings.Contains(stderr, ".tmp") {
		t.Errorf("exit %d, stderr %q; want exit 1 and %q", code, stderr, want)
	}
}

// A .npy cube without its sidecar is bad input that names the sidecar and
// shows what goes in it (it was "open X.json: no such file", exit 1).
func TestMapMissingSidecar(t *testing.T) {
	cube, refArgs := mapFixture(t, "")
	if err := os.Remove(npy.SidecarPath(cube)); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runApp(t, nil, append([]string{"map", cube, "--out", filepath.Join(t.TempDir(), "m")}, refArgs...)...)
	if code != exitBadInput || !strings.Contains(stderr, "no sidecar "+npy.SidecarPath(cube)) || !strings.Contains(stderr, `"step_ev"`) {
		t.Errorf("exit %d, stderr %q; want exit 3 naming the sidecar", code, stderr)
	}
}

// --atomic with a --ref-file reference that lacks its element or compound
// says where they come from; library edit cannot change a file.
func TestAtomicRefFileAdvice(t *testing.T) {
	dir, metal, _, unknown := fitFixture(t)
	bare := filepath.Join(dir, "bare.json")
	writeSpectrumJSON(t, bare, 350, 450, oxideShape, nil) // no element, no compound
	noCompound := filepath.Join(dir, "nocompound.json")
	writeSpectrumJSON(t, noCompound, 350, 450, oxideShape, map[string]string{"element": "Ti"})
	for _, c := range []struct{ file, want string }{
		{bare, "names no element: a --ref-file reference takes them from the file"},
		{noCompound, "has no compound: a --ref-file reference takes them from the file"},
	} {
		code, _, stderr := runApp(t, nil, "fit", unknown, "--ref-file", metal, "--ref-file", c.file+":oxide",
			"--uncertainty", "covariance", "--atomic")
		if code != exitBadInput || !strings.Contains(stderr, c.want) || strings.Contains(stderr, "library edit") {
			t.Errorf("%s: exit %d, stderr %q; want exit 3 and %q", filepath.Base(c.file), code, stderr, c.want)
		}
	}
}

// Every flag that takes a value names it in --help as DESIGN.md does
// (--energy EV, --shift MODE, --library DIR), never with pflag's type name
// ("--energy float", "--shift string").
func TestHelpValuePlaceholders(t *testing.T) {
	app := &App{In: strings.NewReader(""), Out: &strings.Builder{}, Err: &strings.Builder{}, Getenv: func(string) string { return "" }}
	root := newRootCmd(app)
	typeNames := regexp.MustCompile(`--[a-z0-9-]+ (string|float|int|uint|strings|stringArray|float64|uint64|duration)\s`)
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		if c.Name() == "completion" || c.Name() == "help" {
			return
		}
		usage := c.LocalFlags().FlagUsages() + c.InheritedFlags().FlagUsages()
		for _, m := range typeNames.FindAllString(usage, -1) {
			t.Errorf("%s --help: %q shows a type name instead of what the value is", c.CommandPath(), strings.TrimSpace(m))
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(root)
}

// library list --element takes the symbol in any case, as fit --element
// does ("ti" listed nothing), and refuses a symbol that is no element.
func TestLibraryListElement(t *testing.T) {
	_, metal, _, _ := fitFixture(t)
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	for _, el := range []string{"Ti", "ti", "TI"} {
		if out := mustCLI(t, dir, "library", "list", "--element", el); !strings.Contains(out, "Ti foil") {
			t.Errorf("--element %s: %q lacks Ti foil", el, out)
		}
	}
	if code, _, stderr := libCLI(t, dir, "library", "list", "--element", "Zz"); code != exitUsage || !strings.Contains(stderr, `"Zz"`) {
		t.Errorf("--element Zz: exit %d, stderr %q; want exit 2", code, stderr)
	}
}

// Removing a reference that archived fits used warns, naming them.
func TestRemoveReferenceUsedByRuns(t *testing.T) {
	_, metal, oxide, unknown := fitFixture(t)
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", metal, "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	mustCLI(t, dir, "library", "add", oxide, "--element", "Ti", "--transition", "L3M23M23", "--state", "oxide", "--name", "TiO2 film")
	var saved struct{ Saved string }
	out := mustCLI(t, dir, "--json", "fit", unknown, "--refs", "Ti foil,TiO2 film", "--uncertainty", "covariance", "--save")
	if err := json.Unmarshal([]byte(out), &saved); err != nil || saved.Saved == "" {
		t.Fatalf("--save: %v %q", err, out)
	}
	code, _, stderr := libCLI(t, dir, "library", "remove", "Ti foil")
	if code != 0 || !strings.Contains(stderr, "1 archived measurement was fitted with Ti foil ("+saved.Saved+")") {
		t.Errorf("remove: exit %d, stderr %q; want a warning naming %s", code, stderr, saved.Saved)
	}
	// A reference no fit used goes without a warning.
	other := filepath.Join(t.TempDir(), "other.json")
	writeSpectrumJSON(t, other, 350, 450, func(e float64) float64 { return metalShape(e - 7) }, nil)
	mustCLI(t, dir, "library", "add", other, "--element", "Ti", "--transition", "L3M23M23", "--state", "carbide", "--name", "Ti foil 2")
	if code, _, stderr := libCLI(t, dir, "library", "remove", "Ti foil 2"); code != 0 || stderr != "" {
		t.Errorf("remove unused: exit %d, stderr %q", code, stderr)
	}
}

// The profile tables print each column to one number of decimals, so that
// the column lines up and 1.9 does not stand beside 2.01 (they printed
// depth 0.48 / 2.4 / 6, chi-square 1.9 / 2.01, interface depth 5.739 beside
// width 2.17).
func TestProfileTableDecimals(t *testing.T) {
	dir, refArgs := profileFixture(t, nil)
	code, out, stderr := runApp(t, nil, append([]string{"profile", dir, "--sputter-rate", "2.4"}, refArgs...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	twoDecimals := regexp.MustCompile(`^-?\d+\.\d\d$`)
	oneDecimal := regexp.MustCompile(`^-?\d+\.\d$`)
	table := ""
	for _, line := range strings.Split(out, "\n") {
		cols := regexp.MustCompile(`\s{2,}`).Split(strings.TrimSpace(line), -1)
		switch {
		case strings.HasPrefix(line, "step "):
			table = "steps"
		case strings.HasPrefix(line, "state "):
			table = "interfaces"
		case line == "" || strings.HasPrefix(line, "---") || strings.HasPrefix(line, "interfaces"):
		case table == "steps":
			// step, time, depth, fractions..., shift, chi2
			if !twoDecimals.MatchString(cols[2]) || !twoDecimals.MatchString(cols[len(cols)-1]) {
				t.Errorf("step row %q: depth %q and chi2 %q want two decimals", line, cols[2], cols[len(cols)-1])
			}
		case table == "interfaces":
			// state, direction, position, width, depth, width
			if len(cols) != 6 || !oneDecimal.MatchString(cols[2]) || !oneDecimal.MatchString(cols[3]) ||
				!twoDecimals.MatchString(cols[4]) || !twoDecimals.MatchString(cols[5]) {
				t.Errorf("interface row %q: want position and width in s to 1 decimal, depth and width in nm to 2", line)
			}
		}
	}
	if table != "interfaces" {
		t.Fatalf("no interface table in\n%s", out)
	}
}

// A shift bound beyond what chemistry or charging can do is a usage error
// caught before any file is read, in plain notation.
func TestMaxShiftLimit(t *testing.T) {
	code, _, stderr := runApp(t, nil, "fit", "nosuch.vms", "--ref-file", "a.csv", "--max-shift", "1e6")
	if code != exitUsage || !strings.Contains(stderr, "--max-shift 1000000: at most 50 eV") {
		t.Errorf("--max-shift 1e6: exit %d, stderr %q; want exit 2 naming the 50 eV limit", code, stderr)
	}
	// With --shift none the bound is not used, so it is not checked.
	if code, _, stderr := runApp(t, nil, "fit", "nosuch.vms", "--ref-file", "a.csv", "--max-shift", "1e6", "--shift", "none"); code == exitUsage {
		t.Errorf("--shift none --max-shift 1e6: exit %d, stderr %q; the bound should not be checked", code, stderr)
	}
}
