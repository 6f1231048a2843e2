package main

import (
	"archive/tar"
	"bytes"
	"compress/gzip"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"statemix/library"
	"statemix/lineshape"
)

// The small spectrum files live with package library.
var (
	tiVMS = filepath.Join("..", "..", "library", "testdata", "ti-two-blocks.vms")
	alCSV = filepath.Join("..", "..", "library", "testdata", "al-oxide.csv")
)

// libCLI runs statemix in-process on the library in dir.
func libCLI(t *testing.T, dir string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	app := &App{
		In: strings.NewReader(""), Out: &out, Err: &errb,
		Getenv: func(k string) string { return "" },
		Now:    func() time.Time { return time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC) },
	}
	code = app.Execute(append([]string{"--library", dir}, args...))
	return code, out.String(), errb.String()
}

// mustCLI runs statemix and fails the test unless it exits 0.
func mustCLI(t *testing.T, dir string, args ...string) string {
	t.Helper()
	code, out, errs := libCLI(t, dir, args...)
	if code != 0 {
		t.Fatalf("statemix %s: exit %d\n%s", strings.Join(args, " "), code, errs)
	}
	return out
}

// showEntry returns the entry statemix library show --json prints.
func showEntry(t *testing.T, dir, ref string) *library.Entry {
	t.Helper()
	var doc struct {
		Schema string
		Entry  library.Entry
	}
	if err := json.Unmarshal([]byte(mustCLI(t, dir, "--json", "library", "show", ref)), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Schema != "statemix.entry/v1" {
		t.Errorf("show schema %q", doc.Schema)
	}
	return &doc.Entry
}

func sameFloatBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// TestLibraryRoundTrip adds from ISO 14976 and delimited files, shows,
// edits, exports, imports into a fresh library and compares: values
// bit-identical, metadata equal.
func TestLibraryRoundTrip(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	var added struct {
		Schema string
		Added  []struct{ Ref, Name string }
	}
	out := mustCLI(t, dir, "--json", "library", "add", tiVMS, "--block", "1", "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	if err := json.Unmarshal([]byte(out), &added); err != nil || added.Schema != "statemix.added/v1" || len(added.Added) != 1 || added.Added[0].Name != "Ti foil" {
		t.Fatalf("add --json: %s (%v)", out, err)
	}
	tiRef := added.Added[0].Ref
	mustCLI(t, dir, "library", "add", tiVMS, "--block", "2", "--element", "Ti", "--transition", "l3m23m23", "--state", "Nitride", "--compound", "TiN", "--note", "reactive sputtering")
	_, _, stderr := libCLI(t, dir, "library", "add", alCSV, "--element", "Al", "--transition", "KL23L23", "--state", "oxide",
		"--compound", "Al2O3", "--tag", "lab=north", "--tag", "batch=7", "--mode", "derivative")
	if stderr != "" && !strings.Contains(stderr, "added 1 entry") {
		t.Errorf("unexpected warnings: %s", stderr)
	}

	// list --json follows the schema.
	var list struct {
		Schema  string
		Entries []map[string]any
	}
	out = mustCLI(t, dir, "--json", "library", "list")
	if err := json.Unmarshal([]byte(out), &list); err != nil || list.Schema != "statemix.list/v1" || len(list.Entries) != 3 {
		t.Fatalf("list --json: %s", out)
	}
	for _, k := range []string{"ref", "name", "element", "transition", "state", "compound", "kind", "energy_ev"} {
		if _, ok := list.Entries[0][k]; !ok {
			t.Errorf("list entry lacks %q: %v", k, list.Entries[0])
		}
	}
	out = mustCLI(t, dir, "library", "list", "--element", "Ti", "--state", "nitride")
	if !strings.Contains(out, "Ti nitride L3M23M23") || strings.Contains(out, "Ti foil") || !strings.HasPrefix(out, "REF ") {
		t.Errorf("filtered list:\n%s", out)
	}

	// show: the values are the file's, bit for bit; provenance and
	// acquisition conditions come from the file.
	specs, err := readSpectraFile(tiVMS, nil)
	if err != nil {
		t.Fatal(err)
	}
	ti := showEntry(t, dir, tiRef[:6])
	sum, _ := fileSHA256(tiVMS)
	if !sameFloatBits(ti.Spectrum.Y, specs[0].Y) || ti.Spectrum.Axis.Start != specs[0].Axis.Start || ti.Spectrum.Mode != lineshape.Derivative {
		t.Error("stored spectrum differs from the file's")
	}
	if ti.Provenance.SourceSHA256 != sum || ti.Provenance.Block != 0 || ti.Provenance.ToolVersion != "statemix "+Version ||
		!ti.Provenance.ImportedAt.Equal(time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)) {
		t.Errorf("provenance %+v", ti.Provenance)
	}
	if a := ti.Acquisition; a.BeamEnergyKeV != 10 || a.BeamCurrentNA != 5 || a.ModulationEV != 2 || a.DwellS != 0.1 || a.Scans != 3 || a.AnalyserMode != "FRR" {
		t.Errorf("acquisition %+v", a)
	}
	al := showEntry(t, dir, "Al oxide KL23L23")
	if al.Tags["lab"] != "north" || al.Tags["batch"] != "7" || al.Compound != "Al2O3" || al.Spectrum.Len() != 201 {
		t.Errorf("Al entry %+v", al)
	}
	human := mustCLI(t, dir, "library", "show", "Ti foil")
	for _, want := range []string{"id:", tiRef, "beam energy:", "10 keV", "main feature:", "source sha256:"} {
		if !strings.Contains(human, want) {
			t.Errorf("show lacks %q:\n%s", want, human)
		}
	}

	// edit keeps the id.
	out = mustCLI(t, dir, "library", "edit", "Ti foil", "--set", "note=sputter-cleaned", "--set", "tag.lab=south", "--set", "density_g_cm3=4.506")
	if !strings.Contains(out, "edited "+tiRef) {
		t.Errorf("edit output %q", out)
	}
	ti = showEntry(t, dir, tiRef)
	if ti.Note != "sputter-cleaned" || ti.Tags["lab"] != "south" || ti.Density != 4.506 || ti.ID != tiRef {
		t.Errorf("edited %+v", ti)
	}

	// export, import into a fresh library, compare.
	bundle := filepath.Join(t.TempDir(), "refs.tar.gz")
	out = mustCLI(t, dir, "library", "export", bundle)
	if !strings.Contains(out, "exported 3 entries") {
		t.Errorf("export: %q", out)
	}
	dir2 := filepath.Join(t.TempDir(), "lib2")
	mustCLI(t, dir2, "library", "init")
	out = mustCLI(t, dir2, "library", "import", bundle)
	if !strings.Contains(out, "imported 3 entries") {
		t.Errorf("import: %q", out)
	}
	for _, ref := range []string{tiRef, "Ti nitride L3M23M23", "Al oxide KL23L23"} {
		a, b := showEntry(t, dir, ref), showEntry(t, dir2, ref)
		if !sameFloatBits(a.Spectrum.Y, b.Spectrum.Y) {
			t.Errorf("%s: values differ after export/import", ref)
		}
		b.Revision = a.Revision
		if !reflect.DeepEqual(a, b) {
			t.Errorf("%s: metadata differ after export/import:\n%+v\n%+v", ref, a, b)
		}
	}
	out = mustCLI(t, dir2, "library", "import", bundle)
	if !strings.Contains(out, "imported 0 entries from") || !strings.Contains(out, "3 already present") {
		t.Errorf("second import: %q", out)
	}
	// A filtered export.
	b2 := filepath.Join(t.TempDir(), "ti.tar.gz")
	var ex struct {
		Schema  string
		Entries []struct{ Ref, Name string }
	}
	json.Unmarshal([]byte(mustCLI(t, dir, "--json", "library", "export", b2, "--query", "element:Ti state:nitride")), &ex)
	if ex.Schema != "statemix.exported/v1" || len(ex.Entries) != 1 || ex.Entries[0].Name != "Ti nitride L3M23M23" {
		t.Errorf("filtered export %+v", ex)
	}

	// verify is clean; remove works.
	var ver struct {
		Schema   string
		OK       bool
		Entries  int
		Problems []library.Problem
	}
	out = mustCLI(t, dir2, "--json", "library", "verify")
	if err := json.Unmarshal([]byte(out), &ver); err != nil || ver.Schema != "statemix.verify/v1" || !ver.OK || ver.Entries != 3 || len(ver.Problems) != 0 {
		t.Errorf("verify: %s", out)
	}
	out = mustCLI(t, dir2, "library", "remove", tiRef[:4])
	if !strings.Contains(out, "removed "+tiRef) {
		t.Errorf("remove: %q", out)
	}
	if code, _, _ := libCLI(t, dir2, "library", "show", tiRef); code != exitFailure {
		t.Errorf("show of a removed entry: exit %d", code)
	}
	mustCLI(t, dir2, "library", "verify")
}

// TestLibraryBadInput checks exit statuses and messages for bad input,
// and that nothing is lost.
func TestLibraryBadInput(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", tiVMS, "--block", "1", "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	add := func(extra ...string) []string {
		return append([]string{"library", "add", tiVMS, "--block", "2"}, extra...)
	}
	cases := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"hydrogen", add("--element", "H", "--transition", "KLL", "--state", "metal"), exitBadInput, "three electrons"},
		{"helium", add("--element", "He", "--transition", "KLL", "--state", "metal"), exitBadInput, "three electrons"},
		{"unknown element", add("--element", "Tx", "--transition", "KLL", "--state", "metal"), exitBadInput, `"Tx"`},
		{"bad transition", add("--element", "Ti", "--transition", "L3X9", "--state", "metal"), exitBadInput, "transition"},
		{"bad state", add("--element", "Ti", "--transition", "LMM", "--state", "amorphous"), exitBadInput, "unknown state"},
		{"duplicate name", add("--element", "Ti", "--transition", "LMM", "--state", "nitride", "--name", "Ti foil"), exitBadInput, "already taken"},
		{"same spectrum again", []string{"library", "add", tiVMS, "--block", "1", "--element", "Ti", "--transition", "LMM", "--state", "metal"}, exitBadInput, "already in the library"},
		{"missing state", []string{"library", "add", tiVMS, "--element", "Ti", "--transition", "LMM"}, exitUsage, "state"},
		{"block and all", add("--all-blocks", "--element", "Ti", "--transition", "LMM", "--state", "metal"), exitUsage, "block"},
		{"no such block", []string{"library", "add", tiVMS, "--block", "5", "--element", "Ti", "--transition", "LMM", "--state", "metal"}, exitBadInput, "no block 5"},
		{"which block", []string{"library", "add", tiVMS, "--element", "Ti", "--transition", "LMM", "--state", "metal"}, exitBadInput, "--all-blocks"},
		{"bad mode", add("--element", "Ti", "--transition", "LMM", "--state", "metal", "--mode", "sideways"), exitUsage, "mode"},
		{"bad tag", add("--element", "Ti", "--transition", "LMM", "--state", "metal", "--tag", "novalue"), exitUsage, "KEY=VALUE"},
		{"no such file", []string{"library", "add", "nosuch.csv", "--element", "Ti", "--transition", "LMM", "--state", "metal"}, exitFailure, "nosuch.csv"},
		{"edit unknown key", []string{"library", "edit", "Ti foil", "--set", "colour=red"}, exitUsage, "unknown key"},
		{"edit bad value", []string{"library", "edit", "Ti foil", "--set", "element=He"}, exitBadInput, "three electrons"},
		{"edit nothing", []string{"library", "edit", "Ti foil"}, exitUsage, "--set"},
		{"show unknown", []string{"library", "show", "nothing-like-it"}, exitFailure, "no entry"},
		{"show plot format", []string{"library", "show", "Ti foil", "--plot", "x.pdf"}, exitUsage, ".svg or .png"},
		{"bad query", []string{"library", "export", filepath.Join(t.TempDir(), "x.tar.gz"), "--query", "colour:red"}, exitUsage, "unknown field"},
	}
	for _, c := range cases {
		code, _, stderr := libCLI(t, dir, c.args...)
		if code != c.code || !strings.Contains(stderr, c.msg) || !strings.HasPrefix(stderr, "statemix: ") {
			t.Errorf("%s: exit %d, stderr %q; want exit %d mentioning %q", c.name, code, stderr, c.code, c.msg)
		}
	}
	// Bad bundles.
	bundle := filepath.Join(t.TempDir(), "good.tar.gz")
	mustCLI(t, dir, "library", "export", bundle)
	good, _ := os.ReadFile(bundle)
	trunc := filepath.Join(t.TempDir(), "trunc.tar.gz")
	os.WriteFile(trunc, good[:len(good)*2/3], 0o644)
	badsum := filepath.Join(t.TempDir(), "badsum.tar.gz")
	os.WriteFile(badsum, tamperBundle(t, good), 0o644)
	other := filepath.Join(t.TempDir(), "other")
	mustCLI(t, other, "library", "init")
	mustCLI(t, other, "library", "add", alCSV, "--element", "Al", "--transition", "KL23L23", "--state", "oxide", "--name", "Ti foil")
	for _, c := range []struct {
		file, msg string
		args      []string
	}{
		{trunc, "truncated or damaged", nil},
		{badsum, "checksum mismatch", nil},
		{bundle, "name \"Ti foil\"", nil},
	} {
		code, _, stderr := libCLI(t, other, append([]string{"library", "import", c.file}, c.args...)...)
		if code != exitBadInput || !strings.Contains(stderr, c.msg) {
			t.Errorf("import %s: exit %d, %q; want exit 3 mentioning %q", filepath.Base(c.file), code, stderr, c.msg)
		}
	}
	var list struct{ Entries []struct{ Name string } }
	json.Unmarshal([]byte(mustCLI(t, other, "--json", "library", "list")), &list)
	if len(list.Entries) != 1 {
		t.Errorf("refused imports changed the library: %+v", list)
	}
	out := mustCLI(t, other, "library", "import", bundle, "--rename")
	if !strings.Contains(out, `renamed to "Ti foil (2)"`) {
		t.Errorf("import --rename: %q", out)
	}
	// Nothing lost in the first library either.
	json.Unmarshal([]byte(mustCLI(t, dir, "--json", "library", "list")), &list)
	if len(list.Entries) != 1 || list.Entries[0].Name != "Ti foil" {
		t.Errorf("bad input changed the library: %+v", list)
	}
}

// tamperBundle changes one digit of the first entry member of a bundle,
// keeping its manifest (so the checksum no longer matches).
func tamperBundle(t *testing.T, b []byte) []byte {
	t.Helper()
	zr, err := gzip.NewReader(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	tr := tar.NewReader(zr)
	var out bytes.Buffer
	zw := gzip.NewWriter(&out)
	tw := tar.NewWriter(zw)
	done := false
	for {
		h, err := tr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		data, _ := io.ReadAll(tr)
		if !done && strings.HasPrefix(h.Name, "refs/") {
			i := bytes.Index(data, []byte(`"values": [`)) + 20
			if data[i] == '3' {
				data[i] = '4'
			} else {
				data[i] = '3'
			}
			done = true
		}
		tw.WriteHeader(h)
		tw.Write(data)
	}
	tw.Close()
	zw.Close()
	return out.Bytes()
}

// TestLibraryVerifyCommand checks verify's exit status and --repair.
func TestLibraryVerifyCommand(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", tiVMS, "--all-blocks", "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti")
	// A leftover temporary file and a corrupt entry.
	os.WriteFile(filepath.Join(dir, "refs", ".abc.json.tmp-1-x"), []byte("{"), 0o644)
	var list struct{ Entries []struct{ Ref, Name string } }
	json.Unmarshal([]byte(mustCLI(t, dir, "--json", "library", "list")), &list)
	if len(list.Entries) != 2 || list.Entries[0].Name != "Ti (ti-two-blocks.vms block 1)" {
		t.Fatalf("all-blocks names: %+v", list)
	}
	bad := filepath.Join(dir, "refs", list.Entries[1].Ref+".json")
	os.WriteFile(bad, []byte(`{"format":"statemix-entry"`), 0o644)

	code, out, stderr := libCLI(t, dir, "library", "verify")
	if code != exitFailure || !strings.Contains(out, "leftover") || !strings.Contains(out, list.Entries[1].Ref) || !strings.Contains(stderr, "--repair") {
		t.Errorf("verify: exit %d\n%s\n%s", code, out, stderr)
	}
	// list still works and names the bad file.
	code, out, stderr = libCLI(t, dir, "library", "list")
	if code != 0 || !strings.Contains(out, list.Entries[0].Ref) || !strings.Contains(stderr, bad) {
		t.Errorf("list beside a corrupt file: exit %d\n%s\n%s", code, out, stderr)
	}
	code, out, _ = libCLI(t, dir, "library", "verify", "--repair")
	if code != exitFailure || !strings.Contains(out, "repaired") || !strings.Contains(out, "1 problem left") {
		t.Errorf("repair: exit %d\n%s", code, out)
	}
	if _, err := os.Stat(filepath.Join(dir, "refs", ".abc.json.tmp-1-x")); err == nil {
		t.Error("repair left the temporary file")
	}
	os.Remove(bad)
	code, out, stderr = libCLI(t, dir, "library", "verify", "--repair")
	if code != 0 {
		t.Errorf("after removing the bad file: exit %d\n%s\n%s", code, out, stderr)
	}
	code, out, _ = libCLI(t, dir, "library", "verify")
	if code != 0 || !strings.Contains(out, "all files check out") {
		t.Errorf("verify: exit %d\n%s", code, out)
	}
}

func TestLibraryInitTwice(t *testing.T) {
	dir := t.TempDir()
	mustCLI(t, dir, "library", "init")
	if code, _, stderr := libCLI(t, dir, "library", "init"); code != exitFailure || !strings.Contains(stderr, "already holds a library") {
		t.Errorf("second init: %d %q", code, stderr)
	}
	if code, _, stderr := libCLI(t, filepath.Join(dir, "none"), "library", "list"); code != exitFailure || !strings.Contains(stderr, "library init") {
		t.Errorf("list without a library: %d %q", code, stderr)
	}
}

func TestLibraryCompletion(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", tiVMS, "--block", "1", "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	out := mustCLI(t, dir, "__complete", "library", "show", "Ti")
	if !strings.Contains(out, "Ti foil\t") {
		t.Errorf("REF completion:\n%s", out)
	}
	out = mustCLI(t, dir, "__complete", "library", "add", "x.vms", "--state", "")
	if !strings.Contains(out, "nitride") || !strings.Contains(out, "other:") {
		t.Errorf("--state completion:\n%s", out)
	}
	out = mustCLI(t, dir, "__complete", "library", "add", "x.vms", "--mode", "")
	if !strings.Contains(out, "direct") || !strings.Contains(out, "derivative") {
		t.Errorf("--mode completion:\n%s", out)
	}
	out = mustCLI(t, dir, "__complete", "library", "list", "--element", "")
	if !strings.Contains(out, "Ti") {
		t.Errorf("--element completion:\n%s", out)
	}
}

func TestLibraryHelp(t *testing.T) {
	root := newRootCmd(&App{Getenv: func(string) string { return "" }})
	lib, _, err := root.Find([]string{"library"})
	if err != nil {
		t.Fatal(err)
	}
	if lib.Hidden {
		t.Error("library command is hidden")
	}
	names := map[string]bool{}
	for _, c := range append(lib.Commands(), lib) {
		names[c.Name()] = true
		if c.Short == "" || c.Long == "" || c.Example == "" {
			t.Errorf("%s: help needs a summary, a paragraph and examples", c.CommandPath())
		}
	}
	for _, n := range []string{"init", "add", "list", "show", "edit", "remove", "export", "import", "verify"} {
		if !names[n] {
			t.Errorf("no library %s", n)
		}
	}
}

// TestLibraryInitThenVerify checks that a fresh library verifies clean
// (init makes its empty index).
func TestLibraryInitThenVerify(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	if code, out, stderr := libCLI(t, dir, "library", "verify"); code != 0 {
		t.Errorf("verify of a fresh library: exit %d\n%s%s", code, out, stderr)
	}
}

func TestLibraryShowPlot(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "lib")
	mustCLI(t, dir, "library", "init")
	mustCLI(t, dir, "library", "add", tiVMS, "--block", "1", "--element", "Ti", "--transition", "L3M23M23", "--state", "metal", "--name", "Ti foil")
	for _, name := range []string{"ti.svg", "ti.png"} {
		path := filepath.Join(t.TempDir(), name)
		mustCLI(t, dir, "library", "show", "Ti foil", "--plot", path)
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if name == "ti.svg" && !bytes.Contains(b, []byte("<svg")) || name == "ti.png" && !bytes.HasPrefix(b, []byte("\x89PNG")) {
			t.Errorf("%s: not a figure (%d bytes)", name, len(b))
		}
		if len(b) < 1000 {
			t.Errorf("%s: only %d bytes", name, len(b))
		}
	}
}
