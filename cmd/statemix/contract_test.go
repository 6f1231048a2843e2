package main

import (
	"encoding/json"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// The JSON contract of DESIGN.md ("schema ids are stable; add fields,
// never rename"). TestJSONContract runs the real commands on the demo's
// synthetic files and checks that every field DESIGN.md names is present
// under exactly that name, so that a rename can never land silently.
// Extra fields are allowed.

// contractKeys lists, for each object path of a document, the keys
// DESIGN.md requires there. A path is a dot-separated walk from the top;
// "[]" steps into every element of an array.
type contractKeys map[string][]string

var (
	// fitQualityKeys and fitComponentKeys are shared by fit and profile
	// ("components":[as fit], "quality":{as fit}).
	fitComponentKeys = []string{"ref", "name", "element", "state", "coefficient", "coefficient_sd",
		"fraction", "fraction_sd", "fraction_ci95", "shift_ev", "shift_sd_ev", "at_bound"}
	fitQualityKeys = []string{"points", "dof", "chi2_reduced", "r_factor", "residual_rms", "noise_sd"}

	fitContract = contractKeys{
		"":             {"schema", "input", "window_ev", "settings", "components", "quality", "library", "warnings"},
		"input":        {"file", "block", "mode", "sha256"},
		"settings":     {"shift", "max_shift_ev", "background_degree", "normalize", "uncertainty", "samples", "seed"},
		"components[]": fitComponentKeys,
		"quality":      fitQualityKeys,
		"library":      {"revision"},
	}
	profileContract = contractKeys{
		"":                     {"schema", "steps", "interfaces"},
		"steps[]":              {"index", "sputter_time_s", "depth_nm", "components", "quality"},
		"steps[].components[]": fitComponentKeys,
		"steps[].quality":      fitQualityKeys,
		"interfaces[]":         {"state", "position_s", "depth_nm", "width_nm"},
	}
	searchContract = contractKeys{
		"":       {"schema", "hits"},
		"hits[]": {"ref", "kind", "name", "element", "state", "score", "similarity", "shift_ev"},
	}
	addedContract = contractKeys{
		"":        {"schema", "added"},
		"added[]": {"ref", "name"},
	}
	listContract = contractKeys{
		"":          {"schema", "entries"},
		"entries[]": {"ref", "name", "element", "transition", "state", "compound", "kind", "energy_ev"},
	}
	mapContract = contractKeys{
		"": {"schema", "width", "height", "components", "seconds"},
	}
)

// checkContract decodes doc and reports every key of want that is missing,
// and a schema id other than schema. Arrays the contract steps into must
// be non-empty, or the check would pass vacuously.
func checkContract(t *testing.T, what, doc, schema string, want contractKeys) {
	t.Helper()
	var top map[string]any
	if err := json.Unmarshal([]byte(doc), &top); err != nil {
		t.Fatalf("%s: stdout is not one JSON object: %v\n%.500s", what, err, doc)
	}
	if top["schema"] != schema {
		t.Errorf("%s: schema %v, want %q", what, top["schema"], schema)
	}
	for path, keys := range want {
		objs := walkJSON(t, what, top, path)
		for _, o := range objs {
			for _, k := range keys {
				if _, ok := o[k]; !ok {
					t.Errorf("%s: %q lacks field %q (DESIGN.md); it has %v", what, path, k, slices.Sorted(maps.Keys(o)))
				}
			}
		}
	}
}

// walkJSON returns the objects at path in v (see contractKeys).
func walkJSON(t *testing.T, what string, v map[string]any, path string) []map[string]any {
	t.Helper()
	objs := []map[string]any{v}
	if path == "" {
		return objs
	}
	for _, step := range strings.Split(path, ".") {
		name, each := strings.CutSuffix(step, "[]")
		var next []map[string]any
		for _, o := range objs {
			child, ok := o[name]
			if !ok {
				t.Errorf("%s: no field %q on the way to %q", what, name, path)
				continue
			}
			if !each {
				m, ok := child.(map[string]any)
				if !ok {
					t.Errorf("%s: %q is %T, want an object", what, name, child)
					continue
				}
				next = append(next, m)
				continue
			}
			arr, ok := child.([]any)
			if !ok || len(arr) == 0 {
				t.Errorf("%s: %q is %v, want a non-empty array", what, name, child)
				continue
			}
			for _, el := range arr {
				m, ok := el.(map[string]any)
				if !ok {
					t.Errorf("%s: an element of %q is %T, want an object", what, name, el)
					continue
				}
				next = append(next, m)
			}
		}
		objs = next
	}
	return objs
}

func TestJSONContract(t *testing.T) {
	demo := t.TempDir()
	runDemoIn(t, demo)
	lib := filepath.Join(t.TempDir(), "lib")
	p := func(rel string) string { return filepath.Join(demo, filepath.FromSlash(rel)) }
	mustCLI(t, lib, "library", "init")
	run := func(args ...string) string {
		t.Helper()
		code, out, errs := libCLI(t, lib, args...)
		if code != 0 {
			t.Fatalf("statemix %s: exit %d\n%s", strings.Join(args, " "), code, errs)
		}
		return out
	}

	// library add --json, one per standard: the demo's three Ti standards
	// and two Al standards.
	for _, s := range []struct{ file, el, tr, state, name string }{
		{"standards/tin-film.vms", "Ti", "L3M23M45", "nitride", "TiN film"},
		{"standards/tio2-film.vms", "Ti", "L3M23M45", "oxide", "TiO2 film"},
		{"standards/al-foil.csv", "Al", "KL23L23", "metal", "Al foil"},
		{"standards/al2o3-film.csv", "Al", "KL23L23", "oxide", "Al2O3 film"},
	} {
		args := []string{"--json", "library", "add", p(s.file), "--element", s.el, "--transition", s.tr,
			"--state", s.state, "--name", s.name}
		if strings.HasSuffix(s.file, ".csv") {
			args = append(args, "--mode", "direct")
		}
		checkContract(t, "library add "+s.name, run(args...), "statemix.added/v1", addedContract)
	}
	checkContract(t, "library list", run("--json", "library", "list"), "statemix.list/v1", listContract)
	checkContract(t, "search query", run("--json", "search", "element:Ti"), "statemix.search/v1", searchContract)
	checkContract(t, "search --like", run("--json", "search", "--like", p("unknowns/barrier-B2.vms"), "--top", "3"),
		"statemix.search/v1", searchContract)
	for _, u := range []string{"covariance", "bootstrap"} {
		checkContract(t, "fit --uncertainty "+u, run("--json", "fit", p("unknowns/barrier-B2.vms"),
			"--refs", "TiN film,TiO2 film", "--uncertainty", u, "--samples", "40"), "statemix.fit/v1", fitContract)
	}
	checkContract(t, "profile", run("--json", "profile", p("profile/barrier-depth.vms"), "--refs", "TiN film,TiO2 film",
		"--sputter-rate", "2.4"), "statemix.profile/v1", profileContract)

	out := filepath.Join(t.TempDir(), "maps")
	run("--json", "map", p("map/pad-P7-map.npy"), "--refs", "Al foil,Al2O3 film", "--modulation", "3", "--out", out)
	b, err := os.ReadFile(filepath.Join(out, "map.json"))
	if err != nil {
		t.Fatal(err)
	}
	checkContract(t, "map.json", string(b), "statemix.map/v1", mapContract)
}
