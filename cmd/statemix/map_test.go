package main

import (
	"bytes"
	"context"
	"encoding/json"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
	"statemix/lineshape/format"
	"statemix/lineshape/format/npy"
)

// mapFixture writes a 20 x 16 cube (oxide fraction rising along x, shift
// along y) of 300 channels as .npy with a sidecar; extra is added to the
// sidecar JSON.
func mapFixture(t *testing.T, extra string) (cube string, refArgs []string) {
	t.Helper()
	dir := t.TempDir()
	const h, w, c = 16, 20, 300
	rng := rand.New(rand.NewPCG(9, 9))
	vals := make([]float64, h*w*c)
	for r := range h {
		for col := range w {
			fox := float64(col) / float64(w-1)
			d := -1 + 2*float64(r)/float64(h-1)
			for j := range c {
				e := 320 + 0.5*float64(j) - d
				vals[(r*w+col)*c+j] = 2*(1-fox)*seriesMetal(e) + 2*fox*seriesOxide(e) + 0.3 + 0.01*rng.NormFloat64()
			}
		}
	}
	cube = filepath.Join(dir, "area.npy")
	if err := npy.WriteFile(cube, []int{h, w, c}, vals, "<f4"); err != nil {
		t.Fatal(err)
	}
	sc := `{"start_ev": 320, "step_ev": 0.5, "mode": "direct", "pixel_um": 0.25` + extra + `}`
	if err := os.WriteFile(npy.SidecarPath(cube), []byte(sc), 0o644); err != nil {
		t.Fatal(err)
	}
	return cube, seriesRefFiles(t, t.TempDir())
}

func TestMapCLI(t *testing.T) {
	cube, refArgs := mapFixture(t, "")
	out := filepath.Join(t.TempDir(), "maps")
	code, stdout, stderr := runApp(t, nil, append([]string{"map", cube, "--out", out, "--max-shift", "2", "--json"}, refArgs...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Schema     string `json:"schema"`
		Width      int    `json:"width"`
		Height     int    `json:"height"`
		Components []struct {
			State string `json:"state"`
			File  string `json:"file"`
		} `json:"components"`
		Seconds *float64 `json:"seconds"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err, stdout)
	}
	if doc.Schema != "statemix.map/v1" || doc.Width != 20 || doc.Height != 16 || len(doc.Components) != 2 || doc.Seconds == nil {
		t.Fatalf("map document %+v", doc)
	}
	for _, f := range []string{"fraction-metal.npy", "fraction-metal.png", "fraction-oxide.npy", "fraction-oxide.png", "shift.npy", "chi2.npy", "map.json"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s: %v", f, err)
		}
	}
	ox, err := npy.ReadFile(filepath.Join(out, "fraction-oxide.npy"))
	if err != nil {
		t.Fatal(err)
	}
	// Column 10 of 20 has oxide fraction 10/19; noise SD 0.01 against
	// peaks near 2 moves a pixel's fraction by well under 0.02.
	if got := ox.Data[5*20+10]; !scalar.EqualWithinAbs(got, 10.0/19, 0.02) {
		t.Errorf("oxide fraction at (10, 5) = %v, want %v", got, 10.0/19)
	}
	sh, _ := npy.ReadFile(filepath.Join(out, "shift.npy"))
	if got, want := sh.Data[12*20+3], -1+2*12.0/15; math.Abs(got-want) > 0.05 {
		t.Errorf("shift at (3, 12) = %v eV, want %v eV", got, want)
	}
	f, err := os.Open(filepath.Join(out, "fraction-oxide.png"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := png.Decode(f); err != nil {
		t.Errorf("fraction-oxide.png: %v", err)
	}
	// Human output.
	code, stdout, stderr = runApp(t, nil, append([]string{"map", cube, "--out", out, "--max-shift", "2"}, refArgs...)...)
	if code != 0 || !strings.Contains(stdout, "20 x 16 pixels") || !strings.Contains(stdout, "fraction-oxide.npy/.png") {
		t.Errorf("exit %d, stdout:\n%s\nstderr %s", code, stdout, stderr)
	}
}

func TestMapCLIWorkersIdentical(t *testing.T) {
	cube, refArgs := mapFixture(t, "")
	var first map[string][]byte
	for _, w := range []string{"1", "2", "3"} {
		out := filepath.Join(t.TempDir(), "m")
		code, _, stderr := runApp(t, nil, append([]string{"map", cube, "--out", out, "--workers", w}, refArgs...)...)
		if code != 0 {
			t.Fatalf("workers %s: exit %d: %s", w, code, stderr)
		}
		got := map[string][]byte{}
		for _, f := range []string{"fraction-metal.npy", "fraction-oxide.npy", "shift.npy", "chi2.npy"} {
			b, err := os.ReadFile(filepath.Join(out, f))
			if err != nil {
				t.Fatal(err)
			}
			got[f] = b
		}
		if first == nil {
			first = got
			continue
		}
		for f, b := range got {
			if !bytes.Equal(b, first[f]) {
				t.Errorf("--workers %s: %s differs from --workers 1", w, f)
			}
		}
	}
}

func TestMapCLIBadInput(t *testing.T) {
	cube, refArgs := mapFixture(t, `, "channels": 299`)
	out := filepath.Join(t.TempDir(), "m")
	code, _, stderr := runApp(t, nil, append([]string{"map", cube, "--out", out}, refArgs...)...)
	if code != exitBadInput || !strings.Contains(stderr, "sidecar says 299 channels") {
		t.Errorf("exit %d, stderr %q, want 3 and the channel count", code, stderr)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output folder created for a bad cube")
	}
	cube, refArgs = mapFixture(t, "")
	code, _, stderr = runApp(t, nil, append([]string{"map", cube, "--shift", "each"}, refArgs...)...)
	if code != exitUsage {
		t.Errorf("--shift each: exit %d (%s), want 2", code, stderr)
	}
}

func TestMapCLIInterrupted(t *testing.T) {
	cube, refArgs := mapFixture(t, "")
	out := filepath.Join(t.TempDir(), "m")
	ctx, cancel := context.WithCancel(context.Background())
	cancel() // as if Ctrl-C came before the first tile
	var so, se bytes.Buffer
	app := &App{In: strings.NewReader(""), Out: &so, Err: &se, Getenv: func(string) string { return "" }, Ctx: ctx}
	code := app.Execute(append([]string{"map", cube, "--out", out}, refArgs...))
	if code != exitFailure || !strings.Contains(se.String(), "interrupted: nothing written") {
		t.Errorf("exit %d, stderr %q", code, se.String())
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output folder exists after an interrupted run: %v", err)
	}
}

func TestMapCLIVAMAS(t *testing.T) {
	// A 3 x 2 ISO 14976 map (MAP blocks with x and y), oxide fraction
	// rising with x.
	var specs []*lineshape.Spectrum
	for y := range 2 {
		for x := range 3 {
			fox := float64(x) / 2
			s := seriesSpectrum(320, 0.5, 300, func(e float64) float64 {
				return 2*(1-fox)*seriesMetal(e) + 2*fox*seriesOxide(e) + 0.3
			}, 0.005, 10*y+x+1)
			xx, yy := x, y
			s.Meta.PixelX, s.Meta.PixelY = &xx, &yy
			specs = append(specs, s)
		}
	}
	dir := t.TempDir()
	p := filepath.Join(dir, "map.vms")
	if err := format.WriteFile(p, specs, format.FormatVAMAS); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	code, _, stderr := runApp(t, nil, append([]string{"map", p, "--out", out, "--max-shift", "1"}, seriesRefFiles(t, t.TempDir())...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	a, err := npy.ReadFile(filepath.Join(out, "fraction-oxide.npy"))
	if err != nil {
		t.Fatal(err)
	}
	if a.Shape[0] != 2 || a.Shape[1] != 3 {
		t.Fatalf("shape %v, want [2 3]", a.Shape)
	}
	for i, want := range []float64{0, 0.5, 1, 0, 0.5, 1} {
		// Noise SD 0.005 against peaks near 2: fractions within 0.01.
		if !scalar.EqualWithinAbs(a.Data[i], want, 0.01) {
			t.Errorf("pixel %d: oxide fraction %v, want %v", i, a.Data[i], want)
		}
	}
}
