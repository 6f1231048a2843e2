package series

import (
	"context"
	"errors"
	"strings"
	"testing"

	"statemix/lineshape"
	"statemix/lineshape/fit"
)

// TestCubeModulationReachesPrepare: a derivative cube whose sidecar
// records modulation_ev is fitted with direct references without
// Options.Modulation; without modulation_ev the error asks for
// --modulation.
func TestCubeModulationReachesPrepare(t *testing.T) {
	sm := newSynthMap(3, 4, 300, 1, 0.002, 7)
	dc := *sm.cube
	dc.Values = make([]float64, len(sm.cube.Values))
	dc.SpectrumMode = lineshape.Derivative
	for p := 0; p < 12; p++ {
		s := &lineshape.Spectrum{Axis: sm.cube.EnergyAxis, Y: sm.cube.Values[p*300 : (p+1)*300], Mode: lineshape.Direct}
		d, err := s.LockIn(2)
		if err != nil {
			t.Fatal(err)
		}
		copy(dc.Values[p*300:], d.Y)
	}
	side := func(mod string) string {
		return `{"start_ev": 320, "step_ev": 0.5, "mode": "derivative"` + mod + `}`
	}
	ax := sm.cube.EnergyAxis
	if ax.Start != 320 || ax.Step != 0.5 {
		t.Fatalf("synthetic axis %+v, the sidecars below assume 320 eV in 0.5 eV steps", ax)
	}
	opts := MapOptions{Fit: fit.Options{MaxShift: 2}}

	withMod, err := OpenNPY(writeCube(t, t.TempDir(), &dc, side(`, "modulation_ev": 2`)))
	if err != nil {
		t.Fatal(err)
	}
	defer withMod.Close()
	if got := CubeModulation(withMod); got != 2 {
		t.Errorf("CubeModulation = %v, want 2 from the sidecar", got)
	}
	res, err := Map(context.Background(), withMod, testRefs(3), opts)
	if err != nil {
		t.Fatalf("derivative cube with modulation_ev 2: %v", err)
	}
	// The same fit with the modulation given as an option agrees exactly:
	// it is the same model.
	given := opts
	given.Fit.Modulation = 2
	ref, err := Map(context.Background(), &dc, testRefs(3), given)
	if err != nil {
		t.Fatal(err)
	}
	for i := range res.Fractions {
		for q := range res.Fractions[i] {
			if d := res.Fractions[i][q] - ref.Fractions[i][q]; d > 1e-4 || d < -1e-4 { // float32 storage
				t.Fatalf("pixel %d component %d: %v from the sidecar, %v from the option", q, i, res.Fractions[i][q], ref.Fractions[i][q])
			}
		}
	}

	without, err := OpenNPY(writeCube(t, t.TempDir(), &dc, side("")))
	if err != nil {
		t.Fatal(err)
	}
	defer without.Close()
	_, err = Map(context.Background(), without, testRefs(3), opts)
	var ie *lineshape.InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "--modulation EV") {
		t.Errorf("no modulation_ev: %v, want an InputError asking for --modulation EV", err)
	}
	// MemCube carries its own.
	mc := dc
	mc.Modulation = 2
	if _, err := Map(context.Background(), &mc, testRefs(3), opts); err != nil {
		t.Errorf("MemCube with Modulation 2: %v", err)
	}
}
