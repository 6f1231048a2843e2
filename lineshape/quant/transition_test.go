package quant

import (
	"encoding/json"
	"strings"
	"testing"
)

func TestParseTransition(t *testing.T) {
	for _, c := range []struct {
		in, want string // want: canonical String()
		group    bool
	}{
		{"KLL", "KLL", true},
		{"KL23L23", "KL23L23", false},
		{"KL1L1", "KL1L1", false},
		{"KL1L23", "KL1L23", false},
		{"L3M45M45", "L3M45M45", false},
		{"L3M23M45", "L3M23M45", false},
		{"LMM", "LMM", true},
		{"LVV", "LVV", true},
		{"L23VV", "L23VV", false},
		{"L3VV", "L3VV", false},
		{"MNN", "MNN", true},
		{"M5N67N67", "M5N67N67", false},
		{"M45N45N45", "M45N45N45", false},
		{"KVV", "KVV", false},
		{"M2,3VV", "M23VV", false},
		{"L2,3M4,5M4,5", "L23M45M45", false},
		{"L3-M45-M45", "L3M45M45", false},
		{"L3 M45 M45", "L3M45M45", false},
		{"kll", "KLL", true},
		{"L1L23M45", "L1L23M45", false}, // Coster-Kronig
		{"KL23V", "KL23V", false},
	} {
		tr, err := ParseTransition(c.in)
		if err != nil {
			t.Errorf("ParseTransition(%q): %v", c.in, err)
			continue
		}
		if tr.String() != c.want || tr.IsGroup() != c.group {
			t.Errorf("ParseTransition(%q) = %s (group %v), want %s (group %v)", c.in, tr, tr.IsGroup(), c.want, c.group)
		}
		back, err := ParseTransition(tr.String())
		if err != nil || back != tr {
			t.Errorf("round trip of %q: %v, %v", c.in, back, err)
		}
	}
	tr, _ := ParseTransition("L3M23M45")
	if tr.W.Shell != ShellL || len(tr.W.Subshells()) != 1 || tr.W.Subshells()[0] != 3 ||
		tr.Y.Shell != ShellM || len(tr.Y.Subshells()) != 2 || tr.Y.Subshells()[1] != 5 {
		t.Errorf("L3M23M45 levels = %+v", tr)
	}
}

func TestParseTransitionErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"", "empty"},
		{"KL", "want three"},
		{"KLLM", "more than three"},
		{"VKK", "core level"},
		{"LKK", "not less tightly bound"},
		{"L3L2M45", "not less tightly bound"},
		{"LLM", "not less tightly bound"},
		{"K1LL", "no subshells"},
		{"KL4L4", "subshells 1 to 3"},
		{"KL32L32", "ascending"},
		{"KL22L3", "ascending"},
		{"KX", "not a shell letter"},
		{"Al KLL", "not a shell letter"},
		{"KL,2L", "comma"},
		{"KL2,L3", "comma"},
		{"-KLL", "separator"},
		{"KLL-", "separator"},
		{"KVV" + strings.Repeat(" ", 40), "too long"},
		{"M6NN", "subshells 1 to 5"},
	} {
		_, err := ParseTransition(c.in)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseTransition(%q) error %v, want it to contain %q", c.in, err, c.want)
		}
	}
}

func FuzzParseTransition(f *testing.F) {
	for _, s := range []string{"KLL", "KL23L23", "L3M45M45", "M2,3VV", "L3-M45-M45", "LVV", "M5N67N67", "VKK", "K1", "L,,2", "KL4L4", "", "kll", "L1L23M45"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		tr, err := ParseTransition(s)
		if err != nil {
			return
		}
		if tr.W.Shell == Valence {
			t.Fatalf("%q: valence core level accepted", s)
		}
		back, err := ParseTransition(tr.String())
		if err != nil || back != tr {
			t.Fatalf("%q: canonical %q does not round-trip: %v %v", s, tr.String(), back, err)
		}
		// Estimation must not panic for any accepted notation.
		for _, el := range []string{"Li", "Al", "Cu", "Au"} {
			_, _ = EstimateEnergy(el, tr)
		}
	})
}

func TestTransitionJSON(t *testing.T) {
	var v struct{ T Transition }
	if err := json.Unmarshal([]byte(`{"T":"L2,3M4,5M4,5"}`), &v); err != nil {
		t.Fatal(err)
	}
	b, _ := json.Marshal(v)
	if string(b) != `{"T":"L23M45M45"}` {
		t.Errorf("round trip: %s", b)
	}
	if err := json.Unmarshal([]byte(`{"T":"VKK"}`), &v); err == nil {
		t.Error("VKK accepted")
	}
}
