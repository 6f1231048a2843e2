package lineshape

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"testing"
)

func TestNewOrdersAndDetectsUniform(t *testing.T) {
	// Descending, evenly spaced to 1e-7 eV (well inside the 1e-6 relative
	// step tolerance of New):
	// reordered and stored as uniform.
	s, err := New([]float64{102, 101.5, 101.0000001, 100.5, 100}, []float64{5, 4, 3, 2, 1}, Direct)
	if err != nil {
		t.Fatal(err)
	}
	if !s.Axis.Uniform() || s.Axis.Start != 100 || math.Abs(s.Axis.Step-0.5) > 1e-12 || s.Y[0] != 1 || s.Y[4] != 5 {
		t.Errorf("descending near-uniform input: axis %+v values %v", s.Axis, s.Y)
	}
	// Uneven: explicit axis.
	s, err = New([]float64{1, 2, 4}, []float64{0, 1, 2}, Derivative)
	if err != nil || s.Axis.Uniform() {
		t.Errorf("uneven input: axis %+v, err %v", s.Axis, err)
	}
	// Unordered: sorted by energy with the values following.
	s, err = New([]float64{3, 1, 2}, []float64{30, 10, 20}, Direct)
	if err != nil || s.Y[0] != 10 || s.Y[2] != 30 {
		t.Errorf("unordered input: %v, %v", s, err)
	}
	for _, tc := range []struct{ e, y []float64 }{
		{[]float64{1, 2}, []float64{1}},
		{[]float64{1}, []float64{1}},
		{[]float64{1, 1, 2}, []float64{1, 2, 3}},
		{[]float64{1, math.NaN()}, []float64{1, 2}},
		{[]float64{1, 2}, []float64{1, math.Inf(1)}},
	} {
		if _, err := New(tc.e, tc.y, Direct); err == nil {
			t.Errorf("New(%v, %v): no error", tc.e, tc.y)
		}
	}
	in := []float64{2, 1}
	if _, err := New(in, []float64{0, 0}, Direct); err != nil || in[0] != 2 {
		t.Errorf("New must not reorder its argument in place")
	}
}

func TestNewUniform(t *testing.T) {
	s, err := NewUniform(110, -0.5, []float64{1, 2, 3}, Derivative)
	if err != nil {
		t.Fatal(err)
	}
	if s.Axis.Start != 109 || s.Axis.Step != 0.5 || s.Y[0] != 3 {
		t.Errorf("negative step: axis %+v values %v; want start 109, step 0.5, reversed values", s.Axis, s.Y)
	}
	for _, tc := range []struct {
		start, step float64
		y           []float64
	}{
		{0, 0, []float64{1, 2}},
		{math.NaN(), 1, []float64{1, 2}},
		{0, 1, []float64{1}},
		{0, 1, []float64{1, math.NaN()}},
	} {
		if _, err := NewUniform(tc.start, tc.step, tc.y, Direct); err == nil {
			t.Errorf("NewUniform(%v, %v, %v): no error", tc.start, tc.step, tc.y)
		}
	}
}

func TestKineticFromBinding(t *testing.T) {
	ke, err := KineticFromBinding([]float64{0, 100.5}, 1486.6) // Al K-alpha, common practice
	if err != nil || ke[0] != 1486.6 || math.Abs(ke[1]-1386.1) > 1e-9 {
		t.Errorf("KineticFromBinding: %v, %v", ke, err)
	}
	for _, hv := range []float64{0, -1, math.Inf(1), math.NaN()} {
		if _, err := KineticFromBinding([]float64{1}, hv); err == nil {
			t.Errorf("excitation %v: no error", hv)
		}
	}
}

func TestValidateAndClone(t *testing.T) {
	x := 3.5
	s := &Spectrum{Axis: Axis{Start: 1, Step: 1, N: 3}, Y: []float64{1, 2, 3},
		Meta: Meta{Comments: []string{"a"}, Extra: map[string]string{"k": "v"}, SputterTimeS: &x}}
	if err := s.Validate(); err != nil {
		t.Fatal(err)
	}
	c := s.Clone()
	c.Y[0], c.Meta.Comments[0], c.Meta.Extra["k"], *c.Meta.SputterTimeS = 9, "b", "w", 7
	if s.Y[0] != 1 || s.Meta.Comments[0] != "a" || s.Meta.Extra["k"] != "v" || *s.Meta.SputterTimeS != 3.5 {
		t.Errorf("Clone shares storage with the original")
	}
	for _, bad := range []*Spectrum{
		{Axis: Axis{Start: 1, Step: 1, N: 4}, Y: []float64{1, 2, 3}},
		{Axis: Axis{Start: 1, Step: 0, N: 3}, Y: []float64{1, 2, 3}},
		{Axis: Axis{Values: []float64{1, 3, 2}}, Y: []float64{1, 2, 3}},
		{Axis: Axis{Start: 1, Step: 1, N: 3}, Y: []float64{1, math.NaN(), 3}},
		{Axis: Axis{Start: 1, Step: 1, N: 1}, Y: []float64{1}},
	} {
		if err := bad.Validate(); err == nil {
			t.Errorf("Validate(%+v): no error", bad)
		}
	}
	defer func() {
		if recover() == nil {
			t.Errorf("Curve of an invalid spectrum must panic")
		}
	}()
	(&Spectrum{Axis: Axis{Start: 1, Step: 1, N: 4}, Y: []float64{1, 2, 3}}).Curve()
}

func TestModeText(t *testing.T) {
	for in, want := range map[string]Mode{"direct": Direct, "N(E)": Direct, "Derivative": Derivative, "dN/dE": Derivative, "diff": Derivative} {
		if got, err := ParseMode(in); err != nil || got != want {
			t.Errorf("ParseMode(%q) = %v, %v", in, got, err)
		}
	}
	if _, err := ParseMode("second"); err == nil {
		t.Errorf("ParseMode(second): no error")
	}
	b, _ := json.Marshal(struct{ M Mode }{Derivative})
	if string(b) != `{"M":"derivative"}` {
		t.Errorf("JSON %s", b)
	}
}

func TestInputError(t *testing.T) {
	err := fmt.Errorf("reading: %w", &InputError{File: "a.vms", Line: 12, Block: 2, Err: errors.New("bad number")})
	var ie *InputError
	if !errors.As(err, &ie) || ie.Error() != "a.vms: line 12: block 3: bad number" {
		t.Errorf("InputError: %v", err)
	}
	if got := Errorf("x.csv", 0, "empty file").Error(); got != "x.csv: empty file" {
		t.Errorf("Errorf: %q", got)
	}
}
