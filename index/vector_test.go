package index

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

func TestVectorRoundTrip(t *testing.T) {
	s := synthDerivative(350, 450, 0.2, elementPeaks["Ti"], 0, 1)
	v, err := newVector(s, 0)
	if err != nil {
		t.Fatal(err)
	}
	// 350..450 eV on the 0.5 eV grid: channels 700..900.
	if v.K0 != 700 || len(v.Y) != 201 {
		t.Fatalf("grid k0=%d n=%d, want 700 and 201", v.K0, len(v.Y))
	}
	var sum, ss float64
	for _, f := range v.Y {
		sum += float64(f)
		ss += float64(f) * float64(f)
	}
	// float32 storage: mean and norm exact to about 1e-6.
	if math.Abs(sum) > 1e-4 || !scalar.EqualWithinAbsOrRel(ss, 1, 1e-5, 1e-5) {
		t.Errorf("sum %g, norm^2 %g: want 0 and 1", sum, ss)
	}
	w, err := decodeVector(v.encode())
	if err != nil {
		t.Fatal(err)
	}
	if w.K0 != v.K0 || len(w.Y) != len(v.Y) {
		t.Fatalf("decoded k0=%d n=%d", w.K0, len(w.Y))
	}
	for i := range w.Y {
		if w.Y[i] != v.Y[i] {
			t.Fatalf("channel %d: %v != %v", i, w.Y[i], v.Y[i])
		}
	}
	if _, err := decodeVector("not base64!"); err == nil {
		t.Error("bad encoding accepted")
	}
}

// TestCorrelateShift checks the recovered shift and similarity for exact
// shifted copies: the parabolic sub-channel refinement must find shifts off
// the 0.5 eV grid to within 0.1 eV (a fifth of a channel: the parabola's
// bias on peaks of 2-3 eV sigma is a few hundredths of an eV).
func TestCorrelateShift(t *testing.T) {
	ref := synthDerivative(340, 460, 0.5, elementPeaks["Ti"], 0, 1)
	rv, err := newVector(ref, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, dE := range []float64{-4.6, -2.5, -0.3, 0, 0.2, 1.25, 2.5, 3.7, 4.9} {
		q := synthDerivative(330, 470, 0.25, elementPeaks["Ti"], dE, 0.3)
		qv, err := newVector(q, 0)
		if err != nil {
			t.Fatal(err)
		}
		m, ok := newProbe(qv).correlate(rv, 10)
		if !ok {
			t.Fatalf("dE=%v: no overlap", dE)
		}
		if math.Abs(m.ShiftEV-dE) > 0.1 {
			t.Errorf("dE=%v: shift %.3f eV", dE, m.ShiftEV)
		}
		if m.Similarity < 0.99 {
			t.Errorf("dE=%v: similarity %.4f, want > 0.99 for an exact copy", dE, m.Similarity)
		}
	}
}

// TestCorrelateDiscriminates checks that another state's lineshape (shifted
// by more than the search range, and broader) correlates clearly worse than
// a noisy copy of the same one.
func TestCorrelateDiscriminates(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	metal := synthEntry("Ti", "metal", 0, "m").Spectrum
	oxide := synthEntry("Ti", "oxide", 0, "o").Spectrum
	q := addNoise(synthDerivative(330, 460, 0.5, elementPeaks["Ti"], 2.5, 0.3), 20, rng)
	qv, _ := newVector(q, 0)
	p := newProbe(qv)
	mv, _ := newVector(metal, 0)
	ov, _ := newVector(oxide, 0)
	mm, _ := p.correlate(mv, 10)
	mo, _ := p.correlate(ov, 10)
	if !(mm.Similarity > mo.Similarity+0.05) {
		t.Errorf("metal %.3f vs oxide %.3f: the same state should win clearly", mm.Similarity, mo.Similarity)
	}
}

// TestDirectAgainstDerivative compares a direct spectrum with the lock-in
// derivative of itself recorded with the same modulation: lock-in emulation
// on the unknown must make them match.
func TestDirectAgainstDerivative(t *testing.T) {
	n := 601
	y := make([]float64, n)
	for i := range y {
		e := 300 + float64(i)*0.2
		y[i] = 50 - 0.05*(e-300) + 10*math.Exp(-(e-360)*(e-360)/(2*3*3)) + 6*math.Exp(-(e-372)*(e-372)/(2*2*2))
	}
	dir, err := lineshape.NewUniform(300, 0.2, y, lineshape.Direct)
	if err != nil {
		t.Fatal(err)
	}
	der, err := dir.LockIn(2)
	if err != nil {
		t.Fatal(err)
	}
	dv, _ := newVector(der, 0)
	qv, err := newVector(dir.Shift(1.5), 2)
	if err != nil {
		t.Fatal(err)
	}
	m, ok := newProbe(qv).correlate(dv, 10)
	if !ok || m.Similarity < 0.98 || math.Abs(m.ShiftEV-1.5) > 0.15 {
		t.Errorf("direct vs its derivative: %+v, want similarity > 0.98 at 1.5 eV", m)
	}
}

func TestMainMinima(t *testing.T) {
	// The derivative of a Gaussian at E has its minimum at E + sigma.
	s := synthDerivative(340, 460, 0.5, []peak{{387, 1, 2.5}, {418, 1.4, 2.2}}, 0, 1)
	v, _ := newVector(s, 0)
	got := mainMinima(v, 3)
	want := []float64{420.2, 389.5} // deepest first; 0.5 eV grid
	if len(got) != 2 {
		t.Fatalf("minima %v, want 2", got)
	}
	for i := range want {
		if math.Abs(got[i]-want[i]) > 0.6 {
			t.Errorf("minimum %d at %.1f eV, want %.1f +/- 0.6 (one grid step plus smoothing)", i, got[i], want[i])
		}
	}
}
