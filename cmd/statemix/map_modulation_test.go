package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"statemix/lineshape"
	"statemix/lineshape/format/npy"
)

// TestMapSidecarModulation: a derivative cube whose sidecar records
// modulation_ev is mapped with direct references without --modulation;
// without modulation_ev the error names --modulation.
func TestMapSidecarModulation(t *testing.T) {
	const h, w, c = 4, 5, 300
	dir := t.TempDir()
	vals := make([]float64, h*w*c)
	for p := 0; p < h*w; p++ {
		fox := float64(p) / float64(h*w-1)
		y := make([]float64, c)
		for j := range y {
			e := 320 + 0.5*float64(j)
			y[j] = 2*(1-fox)*seriesMetal(e) + 2*fox*seriesOxide(e) + 0.3
		}
		s, err := lineshape.NewUniform(320, 0.5, y, lineshape.Direct)
		if err != nil {
			t.Fatal(err)
		}
		d, err := s.LockIn(2)
		if err != nil {
			t.Fatal(err)
		}
		copy(vals[p*c:], d.Y)
	}
	refArgs := seriesRefFiles(t, t.TempDir())
	for _, tc := range []struct {
		mod  string
		code int
		want string
	}{
		{`, "modulation_ev": 2`, 0, ""},
		{"", 3, "--modulation EV"},
	} {
		cube := filepath.Join(dir, "deriv.npy")
		if err := npy.WriteFile(cube, []int{h, w, c}, vals, "<f4"); err != nil {
			t.Fatal(err)
		}
		sc := `{"start_ev": 320, "step_ev": 0.5, "mode": "derivative"` + tc.mod + `}`
		if err := os.WriteFile(npy.SidecarPath(cube), []byte(sc), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(t.TempDir(), "maps")
		code, _, stderr := runApp(t, nil, append([]string{"map", cube, "--out", out, "--max-shift", "2"}, refArgs...)...)
		if code != tc.code || !strings.Contains(stderr, tc.want) {
			t.Errorf("sidecar %s: exit %d, stderr %q; want exit %d saying %q", sc, code, stderr, tc.code, tc.want)
		}
	}
}
