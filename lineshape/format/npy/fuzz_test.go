package npy

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"statemix/lineshape"
)

// FuzzNpy checks that any bytes give an array or an *lineshape.InputError,
// never a panic or a large allocation, that Read and NewReader agree, and
// that an accepted array survives Write and Read.
func FuzzNpy(f *testing.F) {
	files, _ := filepath.Glob(filepath.Join("testdata", "*.npy"))
	for _, p := range files {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(nil))
	f.Add([]byte(magic))
	f.Add(rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (1000000000000, 1000), }\n", 16))
	f.Add(rawV1("{'descr': '<f4', 'fortran_order': False, 'shape': (2, 2), }\n", 16))
	f.Add(rawV1("{'descr': [('a', '<f8')], 'fortran_order': False, 'shape': (2,), }\n", 16))
	f.Add([]byte(magic + "\x02\x00\xff\xff\xff\xff{"))
	f.Add([]byte(magic + "\x03\x00\x40\x00\x00\x00{'descr': '<f8', 'fortran_order': False, 'shape': (0,), }\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		a, err := Read(bytes.NewReader(data), "fuzz")
		r, err2 := NewReader(bytes.NewReader(data), int64(len(data)), "fuzz")
		if (err == nil) != (err2 == nil) {
			t.Fatalf("Read error %v, NewReader error %v", err, err2)
		}
		for _, e := range []error{err, err2} {
			var ie *lineshape.InputError
			if e != nil && !errors.As(e, &ie) {
				t.Fatalf("error %v (%T) is not an InputError", e, e)
			}
		}
		if err != nil {
			return
		}
		got := make([]float64, r.Len())
		if err := r.ReadValues(got, 0); err != nil {
			t.Fatal(err)
		}
		same := func(x, y []float64) bool {
			return slices.EqualFunc(x, y, func(p, q float64) bool {
				return math.Float64bits(p) == math.Float64bits(q) || math.IsNaN(p) && math.IsNaN(q)
			})
		}
		if !same(got, a.Data) || !slices.Equal(r.Shape(), a.Shape) {
			t.Fatal("Read and ReadValues disagree")
		}
		if r.Channels() > 0 && r.Pixels() > 0 {
			row := make([]float64, r.Channels())
			if err := r.ReadRows(row, r.Pixels()-1, 1); err != nil {
				t.Fatal(err)
			}
		}
		var buf bytes.Buffer
		if err := Write(&buf, a.Shape, a.Data, a.DType); err != nil {
			t.Fatal(err)
		}
		b, err := Read(&buf, "again")
		if err != nil {
			t.Fatalf("written array does not read back: %v", err)
		}
		if !same(b.Data, a.Data) || !slices.Equal(b.Shape, a.Shape) || b.DType != a.DType {
			t.Fatal("round trip changed the array")
		}
	})
}

// FuzzParseSidecar: ParseSidecar never panics; what it accepts is valid
// and survives a write and a read unchanged.
func FuzzParseSidecar(f *testing.F) {
	f.Add([]byte(`{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "pixel_um": 0.2}`))
	f.Add([]byte(`{"start_ev": 30, "step_ev": 0.5, "mode": "derivative", "modulation_ev": 2}`))
	f.Add([]byte(`{"start_ev": 30, "step_ev": 0.5, "mode": "direct", "modulation_ev": -2}`))
	f.Add([]byte(`{"start_ev": 30, "step_ev": 1e7, "mode": "direct"}`))
	f.Add([]byte(`{"start_ev": 30, "step_ev": 0.5,, "mode": "direct"}`))
	f.Add([]byte(`{"start_ev": "30"}`))
	f.Add([]byte(`[]`))
	f.Fuzz(func(t *testing.T, b []byte) {
		s, err := ParseSidecar(b, "fuzz.json")
		if err != nil {
			var ie *lineshape.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v (%T) is not an InputError", err, err)
			}
			return
		}
		if err := s.Validate(); err != nil {
			t.Fatalf("accepted %+v fails Validate: %v", *s, err)
		}
		out, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		back, err := ParseSidecar(out, "again.json")
		if err != nil || *back != *s {
			t.Fatalf("round trip of %+v: %+v, %v", *s, back, err)
		}
	})
}
