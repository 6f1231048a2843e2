package npy

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"statemix/lineshape"
)

func TestSidecarPath(t *testing.T) {
	for in, want := range map[string]string{
		"a/cube.npy": "a/cube.json", "cube.NPY": "cube.json", "cube": "cube.json", "x.npy.gz": "x.npy.gz.json",
	} {
		if got := SidecarPath(in); got != want {
			t.Errorf("SidecarPath(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestSidecar(t *testing.T) {
	cases := []struct {
		name string
		json string
		line int    // line the error names; -1 if no error is expected
		want string // part of the error
	}{
		{"full", `{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "pixel_um": 0.2}`, -1, ""},
		{"no pixel, extra field", `{"start_ev": 30, "step_ev": 0.5, "mode": "direct", "future": [1]}`, -1, ""},
		{"no step", `{"start_ev": 30, "mode": "direct"}`, 0, `"step_ev" missing`},
		{"no mode", `{"start_ev": 30, "step_ev": 1}`, 0, `"mode" missing`},
		{"zero step", `{"start_ev": 30, "step_ev": 0, "mode": "direct"}`, 0, "positive step"},
		{"negative step", `{"start_ev": 30, "step_ev": -0.5, "mode": "direct"}`, 0, "positive step"},
		{"negative start", `{"start_ev": -3, "step_ev": 0.5, "mode": "direct"}`, 0, "start_ev -3"},
		{"bad mode", `{"start_ev": 3, "step_ev": 0.5, "mode": "both"}`, 0, `mode "both"`},
		{"negative pixel", `{"start_ev": 3, "step_ev": 0.5, "mode": "direct", "pixel_um": -1}`, 0, "pixel_um -1"},
		{"syntax", "{\n  \"start_ev\": 3,\n  \"step_ev\": 0.5,,\n}", 3, "invalid character"},
		{"type", "{\n\"start_ev\": \"3\"}", 2, "cannot unmarshal"},
		{"two values", `{"start_ev": 3, "step_ev": 0.5, "mode": "direct"} {}`, 1, "more than one"},
		{"modulation", `{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "pixel_um": 2, "modulation_ev": 3}`, -1, ""},
		{"negative modulation", `{"start_ev": 3, "step_ev": 0.5, "mode": "derivative", "modulation_ev": -1}`, 0, "modulation_ev -1: want a peak-to-peak modulation"},
		{"huge modulation", `{"start_ev": 3, "step_ev": 0.5, "mode": "derivative", "modulation_ev": 1e3}`, 0, "modulation_ev 1000:"},
		{"huge step", `{"start_ev": 3, "step_ev": 2e6, "mode": "direct"}`, 0, "step_ev 2000000: want a positive step of at most 1000000 eV"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			cube := filepath.Join(dir, "cube.npy")
			if err := os.WriteFile(filepath.Join(dir, "cube.json"), []byte(c.json), 0o644); err != nil {
				t.Fatal(err)
			}
			s, err := ReadSidecar(cube)
			if c.line < 0 {
				if err != nil {
					t.Fatal(err)
				}
				if s.StartEV != 30 || s.StepEV != 0.5 {
					t.Errorf("got %+v", s)
				}
				return
			}
			var ie *lineshape.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v (%T) is not an InputError", err, err)
			}
			if ie.Line != c.line || !strings.HasSuffix(ie.File, "cube.json") || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %q (line %d), want line %d saying %q", err, ie.Line, c.line, c.want)
			}
		})
	}
	none := filepath.Join(t.TempDir(), "none.npy")
	_, err := ReadSidecar(none)
	var ie *lineshape.InputError
	if !errors.Is(err, os.ErrNotExist) || !errors.As(err, &ie) || ie.File != SidecarPath(none) || !strings.Contains(err.Error(), "sidecar missing") {
		t.Errorf("missing sidecar: %v (%T), want an InputError naming %s that wraps fs.ErrNotExist", err, err, SidecarPath(none))
	}
}

// TestSidecarModulation: modulation_ev is read back, written only when
// set, and reaches the Meta of a derivative cube but not of a direct one.
func TestSidecarModulation(t *testing.T) {
	s, err := ParseSidecar([]byte(`{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "modulation_ev": 2.5}`), "c.json")
	if err != nil {
		t.Fatal(err)
	}
	if s.ModulationEV != 2.5 || s.Meta("c.npy").ModulationEV != 2.5 || s.Meta("c.npy").Source != "c.npy" {
		t.Errorf("sidecar %+v, meta %+v: want modulation 2.5", *s, s.Meta("c.npy"))
	}
	s.Mode = "direct"
	if m := s.Meta("c.npy"); m.ModulationEV != 0 {
		t.Errorf("direct cube meta %+v records a modulation", m)
	}
	dir := t.TempDir()
	for _, tc := range []struct {
		sc   Sidecar
		json bool // modulation_ev in the file
	}{
		{Sidecar{StartEV: 100, StepEV: 0.25, Mode: "derivative", PixelUM: 1.5, ModulationEV: 3}, true},
		{Sidecar{StartEV: 100, StepEV: 0.25, Mode: "derivative", PixelUM: 1.5}, false},
	} {
		cube := filepath.Join(dir, "m.npy")
		if err := WriteSidecar(cube, tc.sc); err != nil {
			t.Fatal(err)
		}
		b, _ := os.ReadFile(SidecarPath(cube))
		if strings.Contains(string(b), "modulation_ev") != tc.json {
			t.Errorf("sidecar %s: modulation_ev written %v, want %v", b, !tc.json, tc.json)
		}
		got, err := ReadSidecar(cube)
		if err != nil || *got != tc.sc {
			t.Errorf("read back %+v, %v; want %+v", got, err, tc.sc)
		}
	}
}

func TestOpenCube(t *testing.T) {
	dir := t.TempDir()
	cube := filepath.Join(dir, "img.npy")
	data := make([]float64, 2*2*5)
	if err := WriteFile(cube, []int{2, 2, 5}, data, "<f4"); err != nil {
		t.Fatal(err)
	}
	sc := Sidecar{StartEV: 100, StepEV: 0.25, Mode: "derivative", PixelUM: 1.5}
	if err := WriteSidecar(cube, sc); err != nil {
		t.Fatal(err)
	}
	r, got, err := OpenCube(cube)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if *got != sc {
		t.Errorf("sidecar %+v, want %+v", *got, sc)
	}
	if m, _ := got.SpectrumMode(); m != lineshape.Derivative {
		t.Errorf("mode %v", m)
	}
	if a := got.Axis(r.Channels()); a.Len() != 5 || a.Hi() != 101 {
		t.Errorf("axis %+v", a)
	}
	if err := WriteSidecar(cube, Sidecar{StepEV: 1, Mode: "sideways"}); err == nil {
		t.Error("invalid sidecar written")
	}
	// Channel counts that cannot fit.
	for _, shape := range [][]int{{}, {4, 1}, {2, 5000000}} {
		if err := sc.CheckShape(shape); err == nil {
			t.Errorf("shape %v accepted", shape)
		}
	}
	if err := sc.CheckShape([]int{3, 401}); err != nil {
		t.Error(err)
	}
	// A one-channel cube with a valid sidecar is refused by OpenCube.
	one := filepath.Join(dir, "one.npy")
	WriteFile(one, []int{2, 1}, []float64{1, 2}, "<f8")
	WriteSidecar(one, sc)
	if _, _, err := OpenCube(one); err == nil || !strings.Contains(err.Error(), "need at least 2") {
		t.Errorf("one-channel cube: %v", err)
	}
}
