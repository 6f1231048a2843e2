package index

import (
	"strings"
	"testing"
)

// TestCheckSingular: Check counts one stale entry in the singular.
func TestCheckSingular(t *testing.T) {
	st, id := labelledLibrary(t)
	syncIndex(t, st)
	if _, _, err := st.Edit(id["Fe foil"], map[string]string{"note": "edited"}); err != nil {
		t.Fatal(err)
	}
	if _, err := st.Remove(id["Cu foil"]); err != nil {
		t.Fatal(err)
	}
	stale, probs, err := Check(st)
	if err != nil || !stale {
		t.Fatalf("Check: stale=%v %v", stale, err)
	}
	all := strings.Join(probs, "\n")
	for _, want := range []string{
		"index: 1 entry indexed from an older version: " + id["Fe foil"],
		"index: 1 indexed entry no longer in the library: " + id["Cu foil"],
	} {
		if !strings.Contains(all, want) {
			t.Errorf("problems\n%s\nlack %q", all, want)
		}
	}
	if strings.Contains(all, "1 entries") || strings.Contains(all, "1 indexed entries") {
		t.Errorf("problems\n%s\nuse the plural for one", all)
	}
}
