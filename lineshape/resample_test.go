package lineshape

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/interp"
)

// gaussian returns exp(-(e-mu)^2 / (2 sigma^2)).
func gaussian(e, mu, sigma float64) float64 {
	z := (e - mu) / sigma
	return math.Exp(-z * z / 2)
}

func mustUniform(t testing.TB, start, step float64, y []float64, mode Mode) *Spectrum {
	t.Helper()
	s, err := NewUniform(start, step, y, mode)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// unevenSpectrum returns n channels on an axis with steps between 0.29 and
// 0.38 eV (like the real derivative file) and a noisy two-peak line.
func unevenSpectrum(t testing.TB, n int, seed uint64) *Spectrum {
	t.Helper()
	r := rand.New(rand.NewPCG(seed, 1))
	e := make([]float64, n)
	y := make([]float64, n)
	x := 100.0
	for i := range e {
		e[i] = x
		y[i] = gaussian(x, 100+0.3*float64(n)/3, 3) - 0.6*gaussian(x, 100+0.3*float64(n)/2, 2) + 0.02*r.NormFloat64()
		x += 0.29 + 0.09*r.Float64()
	}
	s, err := New(e, y, Derivative)
	if err != nil {
		t.Fatal(err)
	}
	if s.Axis.Uniform() {
		t.Fatal("test axis came out uniform")
	}
	return s
}

func TestCurveMatchesGonum(t *testing.T) {
	// Our coefficient table must reproduce gonum's Fritsch-Butland
	// interpolant; tolerance 1e-12 absolute on values of order 1 (the two
	// evaluate the same cubic in different coordinates).
	const tol = 1e-12
	r := rand.New(rand.NewPCG(7, 7))
	y := make([]float64, 200)
	for i := range y {
		y[i] = math.Sin(float64(i)/7) + 0.3*r.NormFloat64()
	}
	uni := mustUniform(t, 50, 0.25, y, Direct)
	for _, s := range []*Spectrum{uni, unevenSpectrum(t, 200, 3)} {
		var fb interp.FritschButland
		if err := fb.Fit(s.Axis.Energies(), s.Y); err != nil {
			t.Fatal(err)
		}
		c := s.Curve()
		lo, hi := s.Axis.Lo(), s.Axis.Hi()
		for i := 0; i <= 5000; i++ {
			e := lo + (hi-lo)*float64(i)/5000
			if got, want := c.At(e), fb.Predict(e); !scalar.EqualWithinAbs(got, want, tol) {
				t.Fatalf("uniform=%v At(%v) = %v, gonum %v", s.Axis.Uniform(), e, got, want)
			}
		}
		for i := range s.Y {
			if got := c.At(s.Energy(i)); !scalar.EqualWithinAbs(got, s.Y[i], tol) {
				t.Errorf("At(node %d) = %v, sample %v", i, got, s.Y[i])
			}
		}
		if c.At(lo-5) != s.Y[0] || c.At(hi+5) != s.Y[s.Len()-1] {
			t.Errorf("outside the range At must return the end values")
		}
	}
}

func TestCurveNoOvershoot(t *testing.T) {
	// Fritsch-Butland property: between two samples the curve stays within
	// their values. Tolerance 1e-12 for rounding only.
	for _, s := range []*Spectrum{unevenSpectrum(t, 300, 11), unevenSpectrum(t, 300, 12)} {
		c := s.Curve()
		for j := 0; j+1 < s.Len(); j++ {
			lo, hi := math.Min(s.Y[j], s.Y[j+1]), math.Max(s.Y[j], s.Y[j+1])
			e0, e1 := s.Energy(j), s.Energy(j+1)
			for k := 1; k < 20; k++ {
				v := c.At(e0 + (e1-e0)*float64(k)/20)
				if v < lo-1e-12 || v > hi+1e-12 {
					t.Fatalf("interval %d: value %v outside [%v, %v]", j, v, lo, hi)
				}
			}
		}
	}
	// A step edge: a natural cubic spline rings here, this must not.
	y := make([]float64, 40)
	for i := 20; i < 40; i++ {
		y[i] = 1
	}
	c := mustUniform(t, 0, 1, y, Direct).Curve()
	for e := 0.0; e <= 39; e += 0.01 {
		if v := c.At(e); v < 0 || v > 1 {
			t.Fatalf("step edge: At(%v) = %v outside [0, 1]", e, v)
		}
	}
}

func TestSampleShiftedMatchesAt(t *testing.T) {
	// SampleShifted computes the grid position incrementally; it must agree
	// with At to rounding (1e-12 absolute on values of order 1).
	for _, s := range []*Spectrum{unevenSpectrum(t, 400, 5), mustUniform(t, 10, 0.5, unevenSpectrum(t, 400, 6).Y, Derivative)} {
		c := s.Curve()
		dst := make([]float64, 500)
		for _, dE := range []float64{0, 0.137, -2.9, 40} {
			for _, step := range []float64{0.25, 0.31, -0.2} {
				start := s.Axis.Lo() - 3
				if step < 0 {
					start = s.Axis.Hi() + 3
				}
				c.SampleShifted(dst, start, step, dE)
				for i, v := range dst {
					want := c.At(start + float64(i)*step - dE)
					if !scalar.EqualWithinAbs(v, want, 1e-12) {
						t.Fatalf("uniform=%v dE=%v step=%v: dst[%d] = %v, At gives %v", s.Axis.Uniform(), dE, step, i, v, want)
					}
				}
			}
		}
	}
}

func TestSampleShiftedAllocs(t *testing.T) {
	for _, s := range []*Spectrum{unevenSpectrum(t, 300, 5), mustUniform(t, 10, 0.5, make([]float64, 300), Direct)} {
		c := s.Curve()
		dst := make([]float64, 300)
		if n := testing.AllocsPerRun(100, func() { c.SampleShifted(dst, 20, 0.4, 0.3) }); n != 0 {
			t.Errorf("uniform=%v: SampleShifted allocates %v times per call, want 0", s.Axis.Uniform(), n)
		}
	}
}

func TestShiftRoundTrip(t *testing.T) {
	// A smooth Gaussian (sigma 2 eV) on a 0.1 eV grid: shifting by dE and
	// back by -dE returns the values to within the interpolation error of
	// two passes. The largest error is at the peak, where Fritsch-Butland
	// flattens the curve (measured 2.1e-4 of the height at dE = 0.03 eV;
	// tolerance 5e-4 absolute). A single shift against the analytic curve
	// is held to the same bound.
	y := make([]float64, 401)
	for i := range y {
		y[i] = gaussian(float64(i)*0.1, 20, 2)
	}
	s := mustUniform(t, 0, 0.1, y, Direct)
	for _, dE := range []float64{0.03, 0.5, -1.37, 2.25} {
		back := s.Shift(dE).Shift(-dE)
		for i := 40; i < 360; i++ { // away from the clamped ends
			if !scalar.EqualWithinAbs(back.Y[i], y[i], 5e-4) {
				t.Fatalf("dE=%v: channel %d: %v after round trip, want %v", dE, i, back.Y[i], y[i])
			}
		}
		// The peak must move by dE: compare with the analytic Gaussian.
		sh := s.Shift(dE)
		for i := 40; i < 360; i++ {
			if want := gaussian(s.Energy(i), 20+dE, 2); !scalar.EqualWithinAbs(sh.Y[i], want, 5e-4) {
				t.Fatalf("dE=%v: channel %d: %v, want %v", dE, i, sh.Y[i], want)
			}
		}
	}
	// A whole-channel shift is exact.
	sh := s.Shift(0.3)
	for i := 3; i < len(y); i++ {
		if !scalar.EqualWithinAbs(sh.Y[i], y[i-3], 1e-12) {
			t.Fatalf("whole-channel shift: channel %d: %v, want %v", i, sh.Y[i], y[i-3])
		}
	}
	for i := 0; i < 3; i++ {
		if sh.Y[i] != y[0] {
			t.Errorf("channel %d needs data below the range: %v, want end value %v", i, sh.Y[i], y[0])
		}
	}
}

func TestResampleRoundTrip(t *testing.T) {
	// Uneven grid -> 0.05 eV uniform -> back to the original energies: the
	// original samples come back to within the interpolation error
	// (Gaussian sigma 2 eV sampled every ~0.33 eV; tolerance 2e-3 of the
	// height, measured about 5e-4).
	r := rand.New(rand.NewPCG(1, 2))
	var e, y []float64
	for x := 100.0; x < 160; x += 0.29 + 0.09*r.Float64() {
		e = append(e, x)
		y = append(y, gaussian(x, 130, 2))
	}
	s, err := New(e, y, Direct)
	if err != nil {
		t.Fatal(err)
	}
	n := int((e[len(e)-1]-e[0])/0.05) + 1
	u, err := s.Resample(e[0], 0.05, n)
	if err != nil {
		t.Fatal(err)
	}
	if !u.Axis.Uniform() || u.Len() != n {
		t.Fatalf("resampled axis %+v, want uniform with %d channels", u.Axis, n)
	}
	c := u.Curve()
	for i := range e {
		if e[i] > u.Axis.Hi() {
			break
		}
		if got := c.At(e[i]); !scalar.EqualWithinAbs(got, y[i], 2e-3) {
			t.Errorf("%v eV: %v after round trip, want %v", e[i], got, y[i])
		}
	}
	// Resampling onto the spectrum's own grid is the identity.
	v := mustUniform(t, 5, 0.5, y, Direct)
	same, err := v.Resample(5, 0.5, len(y))
	if err != nil {
		t.Fatal(err)
	}
	for i := range y {
		if !scalar.EqualWithinAbs(same.Y[i], y[i], 1e-12) {
			t.Fatalf("identity resample: channel %d: %v, want %v", i, same.Y[i], y[i])
		}
	}
}

func TestResampleErrors(t *testing.T) {
	s := mustUniform(t, 100, 0.5, make([]float64, 21), Direct) // 100..110 eV
	for _, tc := range []struct {
		start, step float64
		n           int
	}{
		{99, 0.5, 5},   // starts below
		{100, 0.5, 22}, // ends above
		{100, 0, 5},    // zero step
		{100, -0.5, 5}, // negative step
		{100, 0.5, 1},  // one channel
		{math.NaN(), 0.5, 5},
	} {
		if _, err := s.Resample(tc.start, tc.step, tc.n); err == nil {
			t.Errorf("Resample(%v, %v, %v): no error", tc.start, tc.step, tc.n)
		}
	}
	if _, err := s.Resample(100-1e-10, 0.5, 21); err != nil {
		t.Errorf("grid 1e-10 eV outside must be accepted: %v", err)
	}
	u, err := s.ResampleStep(0.3)
	if err != nil {
		t.Fatal(err)
	}
	if u.Len() != 34 || u.Axis.Start != 100 {
		t.Errorf("ResampleStep(0.3) over 100-110 eV: %d channels from %v, want 34 from 100", u.Len(), u.Axis.Start)
	}
}

func TestWindow(t *testing.T) {
	y := make([]float64, 21)
	for i := range y {
		y[i] = float64(i)
	}
	s := mustUniform(t, 100, 0.5, y, Derivative) // 100..110 eV
	w, err := s.Window(101, 102.2)
	if err != nil {
		t.Fatal(err)
	}
	if !w.Axis.Uniform() || w.Len() != 3 || w.Axis.Start != 101 || w.Y[0] != 2 || w.Mode != Derivative {
		t.Errorf("Window(101, 102.2) = %+v, want 3 uniform channels from 101 eV starting with value 2", w)
	}
	// Edges given with rounding error still include the channel.
	w, err = s.Window(101+1e-12, 102-1e-12)
	if err != nil || w.Len() != 3 {
		t.Errorf("Window with rounded edges: %v channels, err %v; want 3", w.Len(), err)
	}
	w, err = s.Window(0, 1000)
	if err != nil || w.Len() != 21 {
		t.Errorf("Window wider than the spectrum: err %v", err)
	}
	w.Y[0] = 99
	if s.Y[0] != 0 {
		t.Errorf("Window result aliases its receiver")
	}
	for _, lh := range [][2]float64{{101.1, 101.4}, {200, 300}, {105, 104}, {math.NaN(), 3}} {
		if _, err := s.Window(lh[0], lh[1]); err == nil {
			t.Errorf("Window(%v, %v): no error", lh[0], lh[1])
		}
	}
	u := unevenSpectrum(t, 100, 9)
	lo, hi := u.Energy(10), u.Energy(20)
	w, err = u.Window(lo, hi)
	if err != nil {
		t.Fatal(err)
	}
	if w.Len() != 11 || w.Energy(0) != lo || w.Energy(10) != hi {
		t.Errorf("explicit Window: %d channels %v-%v, want 11 from %v to %v", w.Len(), w.Energy(0), w.Energy(w.Len()-1), lo, hi)
	}
}

func ExampleSpectrum_Resample() {
	// Four samples on an uneven grid, put onto a 0.5 eV grid.
	s, _ := New([]float64{100, 100.7, 101.2, 102}, []float64{0, 1, 1, 0}, Direct)
	u, _ := s.Resample(100, 0.5, 5)
	for i, v := range u.Y {
		fmt.Printf("%.1f eV %.3f\n", u.Energy(i), v)
	}
	// Output:
	// 100.0 eV 0.000
	// 100.5 eV 0.894
	// 101.0 eV 1.000
	// 101.5 eV 0.826
	// 102.0 eV 0.000
}

func ExampleCurve_SampleShifted() {
	s, _ := NewUniform(0, 1, []float64{0, 0, 1, 0, 0}, Derivative)
	c := s.Curve()
	dst := make([]float64, 5)
	c.SampleShifted(dst, 0, 1, 1) // move the feature up by one channel
	fmt.Printf("%.2f\n", dst)
	// Output:
	// [0.00 0.00 0.00 1.00 0.00]
}

func BenchmarkSampleShifted(b *testing.B) {
	const channels = 300
	y := make([]float64, channels)
	for i := range y {
		y[i] = gaussian(float64(i), 150, 10)
	}
	uni := mustUniform(b, 0, 1, y, Direct)
	e := uni.Axis.Energies()
	for i := range e {
		e[i] += 0.2 * math.Sin(float64(i))
	}
	exp, err := New(e, y, Direct)
	if err != nil {
		b.Fatal(err)
	}
	dst := make([]float64, channels)
	for _, tc := range []struct {
		name string
		s    *Spectrum
	}{{"uniform", uni}, {"explicit", exp}} {
		c := tc.s.Curve()
		b.Run(fmt.Sprintf("channels=%d/axis=%s", channels, tc.name), func(b *testing.B) {
			for b.Loop() {
				c.SampleShifted(dst, 0.5, 0.9, 0.37)
			}
		})
	}
	// The same job through gonum's Predict (binary search per point), for
	// comparison.
	var fb interp.FritschButland
	if err := fb.Fit(uni.Axis.Energies(), y); err != nil {
		b.Fatal(err)
	}
	b.Run(fmt.Sprintf("channels=%d/axis=gonum-predict", channels), func(b *testing.B) {
		for b.Loop() {
			for i := range dst {
				dst[i] = fb.Predict(0.5 + float64(i)*0.9 - 0.37)
			}
		}
	})
}
